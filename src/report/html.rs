//! The HTML page of a run: one self-contained file (inline CSS and SVG, the bands CSV
//! embedded as a data link, no scripts, no fonts, nothing fetched). Written as polyglot
//! XHTML so that an XML parser reads it too.

use std::fmt::Write as _;

use super::diagnostics_view::DiagnosticsView;
use super::encode::{base64, html_escape, utc_date};
use crate::plot::canvas::tick_formatter;
use crate::plot::{style, Figures, RunInputs};
use crate::summary::level_label;

/// What the page is made from.
pub struct PageParts<'a> {
    pub inputs: &'a RunInputs,
    pub figures: &'a Figures,
    pub diagnostics: Option<&'a DiagnosticsView>,
    /// RUN/bands.csv, verbatim.
    pub bands_csv: &'a str,
    /// RUN/config.toml, verbatim.
    pub config_text: &'a str,
    /// RUN/summary.json, parsed, when the run has one.
    pub summary: Option<&'a serde_json::Value>,
    /// RUN/checks.json, when the run has one.
    pub checks: Option<&'a crate::check::CheckReport>,
}

/// The verdict the banner shows.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Verdict {
    Converged,
    NotConverged,
    NotAssessed,
}

/// The verdict of a run: the gate's, and never better than what bands.json says.
pub fn verdict(inp: &RunInputs, diag: Option<&DiagnosticsView>) -> Verdict {
    match (diag.map(|d| d.passed), inp.bands.converged) {
        (_, Some(false)) | (Some(false), _) => Verdict::NotConverged,
        (Some(true), _) => Verdict::Converged,
        (None, _) => Verdict::NotAssessed,
    }
}

/// Four significant digits, plain for moderate magnitudes.
pub fn sig4(v: f64) -> String {
    if !v.is_finite() {
        return if v.is_nan() {
            "—".into()
        } else {
            "∞".into()
        };
    }
    if v == 0.0 {
        return "0".into();
    }
    let a = v.abs();
    if !(1e-4..1e7).contains(&a) {
        return format!("{v:.3e}");
    }
    let decimals = (3 - a.log10().floor() as i32).max(0) as usize;
    format!("{v:.decimals$}")
}

/// An SVG document prepared for inline use in HTML (no XML declaration).
fn inline_svg(svg: &str) -> &str {
    match svg.find("<svg") {
        Some(i) => &svg[i..],
        None => svg,
    }
}

fn figure(out: &mut String, svg: &str, caption: &str) {
    let _ = writeln!(
        out,
        "<figure>{}<figcaption>{}</figcaption></figure>",
        inline_svg(svg),
        html_escape(caption)
    );
}

fn banner(out: &mut String, p: &PageParts<'_>) {
    let v = verdict(p.inputs, p.diagnostics);
    let thresholds = p
        .diagnostics
        .map(|d| {
            d.thresholds
                .iter()
                .map(|(k, v)| format!("{k} = {v}"))
                .collect::<Vec<_>>()
                .join(", ")
        })
        .unwrap_or_default();
    match v {
        Verdict::Converged => {
            let _ = writeln!(
                out,
                "<div class=\"banner ok\" id=\"verdict\"><strong>CONVERGED</strong> · the chains passed the convergence gate{}.</div>",
                if thresholds.is_empty() { String::new() } else { format!(" ({})", html_escape(&thresholds)) }
            );
        }
        Verdict::NotConverged => {
            let run = html_escape(&p.inputs.layout.root.display().to_string());
            out.push_str("<div class=\"banner fail\" id=\"verdict\"><strong>NOT CONVERGED</strong> · the chains failed the convergence gate; do not report these bands.");
            let failures = p.diagnostics.map(|d| d.failures.as_slice()).unwrap_or(&[]);
            if !failures.is_empty() {
                out.push_str("<ul>");
                for m in failures {
                    let _ = write!(out, "<li>{}</li>", html_escape(m));
                }
                out.push_str("</ul>");
            }
            out.push_str("<p>What to try:</p><ul>");
            match p.diagnostics.map(|d| d.advice.as_slice()) {
                Some(advice) if !advice.is_empty() => {
                    for a in advice {
                        let _ = write!(out, "<li>{}</li>", html_escape(a));
                    }
                }
                _ => {
                    let _ = write!(
                        out,
                        "<li>more draws: <code>mixband extend {run} --draws N</code></li><li>a longer warm-up or more chains \
                         (edit the config and sample again)</li><li>the other kernel (location instead of location-scale, or the reverse)</li>"
                    );
                }
            }
            out.push_str("</ul><p>The trace and rank plots below show which quantity does not mix.</p></div>\n");
        }
        Verdict::NotAssessed => {
            out.push_str(
                "<div class=\"banner unknown\" id=\"verdict\"><strong>CONVERGENCE NOT ASSESSED</strong> · this run has no \
                 diagnostics.json, so nothing here says the chains converged. Check convergence before reporting these bands.</div>\n",
            );
        }
    }
}

fn metadata(out: &mut String, inp: &RunInputs) {
    let m = &inp.manifest;
    let c = &inp.prep.config;
    let secs: Vec<f64> = m.chains.iter().map(|ch| ch.seconds).collect();
    let total: f64 = secs.iter().sum();
    let longest = secs.iter().copied().fold(0.0, f64::max);
    let mut rows: Vec<(&str, String)> = vec![
        ("tool", format!("{} {}", m.tool, m.version)),
        ("run directory", inp.layout.root.display().to_string()),
        ("status", format!("{:?}", m.status).to_lowercase()),
        ("started", utc_date(m.started_unix)),
        ("data file", m.data.file.clone()),
        ("data SHA-256", m.data.sha256.clone()),
        ("column", m.data.column.clone()),
        ("observations", {
            let mut t = format!("n = {}", m.data.n);
            if let Some(of) = m.data.subsample_of {
                t += &format!(
                    ", a random subsample of the {of} observations in the data ([data] \
                         subsample): the bands are for what the subsample shows, wider than the \
                         whole sample's would be"
                );
            }
            if m.data.dropped > 0 {
                t += &format!(" ({} empty cells dropped)", m.data.dropped);
            }
            t
        }),
        (
            "recording",
            super::recording::treatment(inp.prep.record.recording.as_ref(), c.resolution),
        ),
        ("seed", m.seed.to_string()),
        (
            "model",
            format!(
                "{} kernel, {} weights ({}), K = {}",
                c.kernel,
                c.weights,
                concentration_prior(c),
                c.components
            ),
        ),
        (
            "sampling",
            format!(
                "{} chains × {} kept draws (warm-up {}, thin {}); {}",
                c.chains,
                c.draws,
                c.warmup,
                c.thin,
                sweep_description(c)
            ),
        ),
        ("draws used for the bands", inp.bands.draws_used.to_string()),
        (
            "levels",
            inp.bands
                .levels
                .iter()
                .map(|l| format!("{}%", level_label(*l)))
                .collect::<Vec<_>>()
                .join(", "),
        ),
        ("grid", {
            let g = &inp.bands.grid;
            let fx = tick_formatter(g[g.len() - 1] - g[0], 20);
            format!(
                "{} points from {} to {}",
                g.len(),
                fx(&g[0]),
                fx(&g[g.len() - 1])
            )
        }),
        (
            "timing",
            format!(
                "{:.1} s of sampling over all chains; longest chain {:.1} s",
                total, longest
            ),
        ),
    ];
    if let Some(line) = crate::run::grow::describe(&m.grown, m.not_grown.as_deref()) {
        let at = rows
            .iter()
            .position(|(k, _)| *k == "sampling")
            .map_or(rows.len(), |i| i + 1);
        rows.insert(at, ("growth", line));
    }
    out.push_str("<dl class=\"meta\">");
    for (k, v) in rows {
        let _ = write!(
            out,
            "<dt>{}</dt><dd>{}</dd>",
            html_escape(k),
            html_escape(&v)
        );
    }
    out.push_str("</dl>\n");
}

fn diagnostics_table(out: &mut String, d: Option<&DiagnosticsView>) {
    let Some(d) = d else {
        out.push_str("<p>No diagnostics were recorded for this run.</p>\n");
        return;
    };
    if !d.thresholds.is_empty() {
        let t: Vec<String> = d
            .thresholds
            .iter()
            .map(|(k, v)| format!("{k} = {v}"))
            .collect();
        let _ = writeln!(
            out,
            "<p>Gate thresholds: {}.</p>",
            html_escape(&t.join(", "))
        );
    }
    out.push_str("<table id=\"diagnostics\"><thead><tr><th>quantity</th><th>R-hat</th><th>bulk ESS</th><th>tail ESS</th><th>MCSE of mean</th><th></th></tr></thead><tbody>");
    let cell = |v: Option<f64>| v.map(sig4).unwrap_or_else(|| "—".into());
    for r in &d.rows {
        let bad = |fails: bool| {
            if r.failing && fails {
                " class=\"bad\""
            } else {
                ""
            }
        };
        let rhat_bad = bad(r.rhat.is_some_and(|v| v > d.max_rhat));
        let bulk_bad = bad(r.ess_bulk.is_some_and(|v| v < d.min_ess));
        let tail_bad = bad(r.ess_tail.is_some_and(|v| v < d.min_ess));
        let _ = write!(
            out,
            "<tr><td>{}</td><td{rhat_bad}>{}</td><td{bulk_bad}>{}</td><td{tail_bad}>{}</td><td>{}</td><td>{}</td></tr>",
            html_escape(&r.name),
            cell(r.rhat),
            cell(r.ess_bulk),
            cell(r.ess_tail),
            cell(r.mcse_mean),
            html_escape(r.note.as_deref().unwrap_or(if r.failing { "fails" } else { "" }))
        );
    }
    out.push_str("</tbody></table>\n");
    if !d.notes.is_empty() {
        out.push_str("<ul>");
        for n in &d.notes {
            let _ = write!(out, "<li>{}</li>", html_escape(n));
        }
        out.push_str("</ul>\n");
    }
}

/// Rows of the bands preview: about `max` evenly spaced grid points.
fn preview_rows(g: usize, max: usize) -> Vec<usize> {
    if g <= max {
        return (0..g).collect();
    }
    let mut v: Vec<usize> = (0..max).map(|i| i * (g - 1) / (max - 1)).collect();
    v.dedup();
    v
}

fn bands_section(out: &mut String, p: &PageParts<'_>) {
    let b = &p.inputs.bands;
    let _ = writeln!(
        out,
        "<p><a class=\"download\" id=\"bands-download\" download=\"bands.csv\" href=\"data:text/csv;base64,{}\">Download bands.csv</a> \
         (all {} grid points; the same file as RUN/bands.csv). {} evenly spaced rows are shown below.</p>",
        base64(p.bands_csv.as_bytes()),
        b.grid.len(),
        preview_rows(b.grid.len(), 15).len()
    );
    out.push_str("<table id=\"bands\"><thead><tr><th>x</th><th>mean</th>");
    let order = b.widest_first();
    for &l in &order {
        let lab = level_label(b.bands[l].level);
        let _ = write!(out, "<th>{lab}% lower</th><th>{lab}% upper</th>");
    }
    out.push_str("</tr></thead><tbody>");
    let fx = tick_formatter(b.grid[b.grid.len() - 1] - b.grid[0], 15);
    for i in preview_rows(b.grid.len(), 15) {
        let _ = write!(
            out,
            "<tr><td>{}</td><td>{}</td>",
            fx(&b.grid[i]),
            sig4(b.mean[i])
        );
        for &l in &order {
            let _ = write!(
                out,
                "<td>{}</td><td>{}</td>",
                sig4(b.bands[l].lower[i]),
                sig4(b.bands[l].upper[i])
            );
        }
        out.push_str("</tr>");
    }
    out.push_str("</tbody></table>\n");
}

/// The whole page.
pub fn page(p: &PageParts<'_>) -> String {
    let inp = p.inputs;
    let column = &inp.prep.config.column;
    let mut out = String::with_capacity(1 << 20);
    out.push_str("<!DOCTYPE html>\n<html xmlns=\"http://www.w3.org/1999/xhtml\" lang=\"en\">\n<head>\n<meta charset=\"utf-8\"/>\n");
    out.push_str("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\"/>\n<link rel=\"icon\" href=\"data:,\"/>\n");
    let _ = writeln!(
        out,
        "<title>mixband report: {}</title>",
        html_escape(column)
    );
    let _ = writeln!(
        out,
        "<style>{}</style>\n</head>\n<body>\n<main>",
        style::report_css()
    );
    let _ = writeln!(out, "<h1>Density of {}</h1>", html_escape(column));
    let _ = writeln!(
        out,
        "<p class=\"sub\">mixband {} · {} observations · seed {}</p>",
        html_escape(&inp.manifest.version),
        inp.manifest.data.n,
        inp.manifest.seed
    );
    banner(&mut out, p);
    super::recording::recording_note(&mut out, inp.prep.record.recording.as_ref());
    figure(
        &mut out,
        &p.figures.density,
        &format!("Posterior mean density (line) with pointwise equal-tailed credible bands (shaded, widest lightest) over a histogram of the data scaled to density. {}", super::bumps::MARKS_CAPTION),
    );
    out.push_str("<h2>Run</h2>\n");
    metadata(&mut out, inp);
    out.push_str("<h2>Convergence diagnostics</h2>\n");
    diagnostics_table(&mut out, p.diagnostics);
    if let Some(g) = &p.figures.grid {
        figure(&mut out, g, "R-hat and bulk effective sample size of the density at each grid point; shaded stretches fail the gate.");
    }
    out.push_str("<h2>Bands</h2>\n");
    bands_section(&mut out, p);
    if let Some(c) = &p.figures.cdf {
        figure(&mut out, c, super::bumps::CDF_CAPTION);
    }
    out.push_str("<h2>Shape of the distribution</h2>\n");
    super::shape::shape_section(&mut out, p.summary);
    super::model_check::model_check_section(&mut out, p.checks);
    out.push_str("<h2>Traces</h2>\n");
    figure(&mut out, &p.figures.trace, "Per-chain traces of label-invariant quantities (long chains are thinned evenly for drawing).");
    out.push_str("<h2>Rank plots</h2>\n");
    figure(&mut out, &p.figures.ranks, "Rank histograms per chain (Vehtari et al. 2021): near-uniform bars in every chain mean the chains agree.");
    out.push_str("<h2>Caution</h2>\n");
    let _ = writeln!(
        out,
        "<p class=\"caution\" id=\"caution\">{} The bands describe uncertainty within the model; they are not a substitute for \
         checking the model against the data: compare the mean with the histogram, and refit with the other kernel or other \
         priors to see what changes.</p>",
        html_escape(&inp.bands.caution)
    );
    out.push_str("<h2>Resolved config</h2>\n");
    let _ = writeln!(out, "<pre>{}</pre>", html_escape(p.config_text));
    out.push_str("</main>\n</body>\n</html>\n");
    out
}

/// The weight prior's concentration as the report states it: fixed, or its Gamma prior.
fn concentration_prior(c: &crate::config::RunConfig) -> String {
    use crate::config::{HyperChoice, WeightsKind};
    let p = &c.prior;
    match (c.weights, p.delta_prior, p.alpha_prior) {
        (WeightsKind::Dirichlet, HyperChoice::Fixed, _) => format!("δ = {}", p.dirichlet_delta),
        (WeightsKind::Dirichlet, HyperChoice::Gamma, _) => {
            format!("δ ~ Gamma({}, {})", p.delta_shape, p.delta_rate)
        }
        (WeightsKind::StickBreaking, _, HyperChoice::Fixed) => format!("α = {}", p.alpha),
        (WeightsKind::StickBreaking, _, HyperChoice::Gamma) => {
            format!("α ~ Gamma({}, {})", p.alpha_shape, p.alpha_rate)
        }
    }
}

/// What one sweep of the run does, for the report's run table.
fn sweep_description(c: &crate::config::RunConfig) -> String {
    let step = match (c.allocation, c.resolution.is_some()) {
        (crate::config::AllocationKind::Collapsed, _) => {
            "collapsed allocation scan with split–merge moves"
        }
        (crate::config::AllocationKind::Conditional, true) => {
            "conditional step on counts per recorded cell"
        }
        (crate::config::AllocationKind::Conditional, false) => "conditional allocation step",
    };
    let mut out = step.to_string();
    if c.resplit_moves > 0 {
        out += &format!(
            ", then {} re-split moves of a pair of components",
            c.resplit_moves
        );
    }
    if c.relocate_moves > 0 {
        out += &format!(
            ", then {} relocation moves of one component",
            c.relocate_moves
        );
    }
    out
}

//! The "Model check" section of report.html, from RUN/checks.json: the verdict, the table
//! of posterior predictive p-values with the statistics in the tails marked, the LOO-PIT
//! figure with its Pareto k̂ summary, and what to try when something misfits.

use std::fmt::Write as _;

use super::encode::html_escape;
use super::html::sig4;
use crate::check::{stats::describe, CheckReport, Tail};
use crate::plot::loo_pit::loo_pit_svg;

/// Appends the section (heading included) for the run's checks, or a note when it has none.
pub fn model_check_section(out: &mut String, checks: Option<&CheckReport>) {
    out.push_str("<h2 id=\"model-check\">Model check</h2>\n");
    let Some(r) = checks else {
        out.push_str("<p>This run has no checks.json: the model was not checked against the data. Run <code>mixband check RUN</code>.</p>\n");
        return;
    };
    let v = &r.verdict;
    let _ = writeln!(
        out,
        "<div class=\"banner {}\" id=\"check-verdict\"><strong>{}</strong> · {}{}</div>",
        if v.misfit { "fail" } else { "ok" },
        if v.misfit {
            "MISFIT"
        } else {
            "NO MISFIT FOUND"
        },
        html_escape(v.summary.trim_start_matches("Misfit: ")),
        if v.advice.is_empty() {
            String::new()
        } else {
            let items: String = v
                .advice
                .iter()
                .map(|a| format!("<li>{}</li>", html_escape(a)))
                .collect();
            format!("<p>What to try:</p><ul>{items}</ul>")
        }
    );
    let rep = &r.replicates;
    let _ = writeln!(
        out,
        "<p>Posterior predictive checks (Gelman, Meng &amp; Stern 1996): {} replicated data sets of {} observations, one from each of {} evenly spaced kept draws (of {}){}. p = P(T(replicate) ≥ T(data)) with its Monte Carlo error; a statistic is flagged when p &lt; {} or p &gt; {} (for the mode count, when P(T(replicate) ≤ T(data)) &lt; {}). The check never blocks the run.</p>",
        rep.draws_used,
        rep.size,
        rep.draws_used,
        rep.draws_total,
        if rep.subsampled {
            format!(
                "; the data have {} observations and are compared on a random subsample of {}",
                rep.observations, rep.size
            )
        } else {
            String::new()
        },
        r.tail_low,
        r.tail_high,
        ((1.0 - r.tail_high) * 1e12).round() / 1e12
    );
    out.push_str("<table id=\"checks\"><thead><tr><th>statistic</th><th>data</th><th>replicates: median</th><th>95% interval</th><th>p</th><th>± MCSE</th><th>tail</th></tr></thead><tbody>");
    for s in &r.statistics {
        let bad = if s.tail.is_some() {
            " class=\"bad\""
        } else {
            ""
        };
        let _ = write!(
            out,
            "<tr><td title=\"{}\">{}</td><td>{}</td><td>{}</td><td style=\"white-space: nowrap\">{} to {}</td><td{bad}>{:.3}</td><td>{:.3}</td><td{bad}>{}</td></tr>",
            html_escape(&s.name),
            html_escape(&describe(&s.name)),
            if s.name == "kde_modes" { format!("{}", s.observed) } else { sig4(s.observed) },
            sig4(s.replicated.median),
            sig4(s.replicated.lower_95),
            sig4(s.replicated.upper_95),
            s.p_value,
            s.p_value_mcse,
            match s.tail {
                Some(Tail::ObservedHigh) => "data high",
                Some(Tail::ObservedLow) => "data low",
                None => "",
            }
        );
    }
    out.push_str("</tbody></table>\n");
    let l = &r.loo_pit;
    if let Ok(svg) = loo_pit_svg(l) {
        let at = svg.find("<svg").unwrap_or(0);
        let _ = writeln!(
            out,
            "<figure>{}<figcaption>{}</figcaption></figure>",
            &svg[at..],
            html_escape(&format!(
                "LOO-PIT: the probability integral transform of each observation under its leave-one-out predictive \
                 (Pareto-smoothed importance sampling over {} draws{}), shown as ECDF(z) − z with the {}% simultaneous \
                 band for uniformity (Säilynoja, Bürkner & Vehtari 2022, simulation method). Uniformity p = {:.3}; \
                 {:.1}% of the observations have Pareto k̂ above 0.7.",
                l.draws_used,
                if l.subsampled {
                    format!(", a random {} of the {} {}", l.rows_used, l.rows_total, l.unit)
                } else {
                    String::new()
                },
                (l.band.level * 100.0).round(),
                l.uniformity_p_value,
                100.0 * l.share_k_above_0_7
            ))
        );
    }
    let _ = writeln!(out, "<p class=\"caution\">{}</p>", html_escape(&r.caution));
}

//! The report's tables of where the bumps are, read from RUN/summary.json: each bump with
//! the probability that it exists, its location, height and prominence; each dip between
//! neighbouring bumps with its depth and the probability that it is visible; each region
//! of interest with the probability of a mode inside and its mass. Also the captions that
//! explain how to read the bump marks of density.svg and the CDF figure.

use std::fmt::Write as _;

use serde_json::Value;

use super::encode::html_escape;
use super::html::sig4;

/// How to read the marks on density.svg.
pub const MARKS_CAPTION: &str = "Each bump that exists with posterior probability above one half is marked under the \
curve: the orange bar is its location's credible interval at the widest level, the tick its posterior median, and p the \
probability that the density has a mode there (see the bump table below).";

/// The caption of cdf.svg.
pub const CDF_CAPTION: &str = "Posterior mean of the distribution function P(X ≤ x) (line) with pointwise equal-tailed \
credible bands (shaded, widest lightest) and the empirical distribution function of the data (steps); the same numbers \
as cdf.csv.";

fn num(v: &Value) -> String {
    v.as_f64().map_or_else(|| "—".into(), sig4)
}

/// "median (lower to upper)" at `level`, or a dash when the posterior is absent.
fn spread(post: &Value, level: f64) -> String {
    let Some(median) = post["median"].as_f64() else {
        return "—".into();
    };
    let iv = post["intervals"]
        .as_array()
        .and_then(|a| a.iter().find(|i| i["level"].as_f64() == Some(level)));
    match iv {
        Some(i) => format!(
            "{} ({} to {})",
            sig4(median),
            num(&i["lower"]),
            num(&i["upper"])
        ),
        None => sig4(median),
    }
}

/// Appends the bump, dip and region tables at credible `level`.
pub fn bump_tables(out: &mut String, s: &Value, level: f64) {
    let Some(bumps) = s["bumps"].as_array() else {
        return;
    };
    let lab = crate::summary::level_label(level);
    out.push_str("<h3>Where the bumps are</h3>\n");
    if bumps.is_empty() {
        out.push_str("<p>The posterior mean density has no mode inside the grid.</p>\n");
        return;
    }
    let _ = write!(
        out,
        "<table id=\"bumps\"><thead><tr><th>bump</th><th>probability it exists</th><th>location, median ({lab}% interval)</th>\
         <th>height</th><th>prominence</th></tr></thead><tbody>"
    );
    for (i, b) in bumps.iter().enumerate() {
        let _ = write!(
            out,
            "<tr><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td></tr>",
            i + 1,
            num(&b["probability"]),
            spread(&b["location"], level),
            spread(&b["height"], level),
            spread(&b["prominence"], level)
        );
    }
    out.push_str("</tbody></table>\n");
    if let Some(rule) = s["bump_rule"].as_str() {
        let _ = writeln!(
            out,
            "<p class=\"note\">Bumps: {}. Height and prominence are in density units.</p>",
            html_escape(rule)
        );
    }
    if let Some(dips) = s["dips"].as_array().filter(|d| !d.is_empty()) {
        let ratio = dips[0]["visible_below"].as_f64().unwrap_or(f64::NAN);
        let _ = write!(
            out,
            "<table id=\"dips\"><thead><tr><th>dip between bumps</th><th>probability both exist</th>\
             <th>probability of a visible dip</th><th>location, median ({lab}% interval)</th>\
             <th>depth ratio, median ({lab}% interval)</th></tr></thead><tbody>"
        );
        for d in dips {
            let _ = write!(
                out,
                "<tr><td>{} and {}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td></tr>",
                d["between"][0],
                d["between"][1],
                num(&d["probability_both"]),
                num(&d["probability_visible"]),
                spread(&d["location"], level),
                spread(&d["ratio"], level)
            );
        }
        out.push_str("</tbody></table>\n");
        let _ = writeln!(
            out,
            "<p class=\"note\">The depth ratio is the density at the lowest point between the two bumps over the lower of \
             their peaks (1: no dip). A dip is visible when the ratio is below {ratio} (<code>[shape] dip_ratio</code>).</p>"
        );
    }
    if let Some(regions) = s["regions"].as_array().filter(|r| !r.is_empty()) {
        let _ = write!(
            out,
            "<h3>Regions</h3>\n<table id=\"regions\"><thead><tr><th>region</th><th>probability of a mode inside</th>\
             <th>mass, median ({lab}% interval)</th><th>probability the mass exceeds <code>[shape] region_mass</code></th></tr></thead><tbody>"
        );
        for r in regions {
            let _ = write!(
                out,
                "<tr><td>{} to {}</td><td>{}</td><td>{}</td><td>P(mass &gt; {}) = {}</td></tr>",
                num(&r["from"]),
                num(&r["to"]),
                num(&r["probability_mode"]),
                spread(&r["mass"], level),
                r["mass_above"]
                    .as_f64()
                    .map_or_else(|| num(&r["mass_above"]), |v| format!("{v}")),
                num(&r["probability_mass_above"])
            );
        }
        out.push_str("</tbody></table>\n");
    }
}

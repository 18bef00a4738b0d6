//! The report's "Shape of the distribution" section, read from RUN/summary.json: the
//! posterior probability of each number of modes, the distribution's mean, sd and
//! quantiles with credible intervals, and the number of occupied components with the
//! warning that it is not the number of modes.

use std::fmt::Write as _;

use serde_json::Value;

use super::encode::html_escape;
use super::html::sig4;

/// A number of summary.json for a table cell: 4 significant digits, the words
/// "not finite" where summary.json has them, a dash where the value is missing.
fn number_cell(v: &Value) -> String {
    match v.as_f64() {
        Some(x) => sig4(x),
        None if v.as_str() == Some(crate::summary::NOT_FINITE) => crate::summary::NOT_FINITE.into(),
        None => "—".into(),
    }
}

fn interval_cells(post: &Value, level: f64) -> String {
    let iv = post["intervals"]
        .as_array()
        .and_then(|a| a.iter().find(|i| i["level"].as_f64() == Some(level)));
    match iv {
        Some(i) => format!(
            "{} to {}",
            number_cell(&i["lower"]),
            number_cell(&i["upper"])
        ),
        None => "—".into(),
    }
}

fn widest_level(summary: &Value) -> Option<f64> {
    summary["levels"]
        .as_array()?
        .iter()
        .filter_map(Value::as_f64)
        .fold(None, |m: Option<f64>, l| Some(m.map_or(l, |m| m.max(l))))
}

fn count_table(out: &mut String, id: &str, what: &str, c: &Value) {
    let Some(dist) = c["distribution"].as_array() else {
        return;
    };
    let _ = write!(
        out,
        "<table id=\"{id}\"><thead><tr><th>{what}</th><th>posterior probability</th></tr></thead><tbody>"
    );
    for d in dist {
        let _ = write!(
            out,
            "<tr><td>{}</td><td>{}</td></tr>",
            d["count"].as_u64().unwrap_or(0),
            sig4(d["probability"].as_f64().unwrap_or(f64::NAN))
        );
    }
    out.push_str("</tbody></table>\n");
    if let Some(def) = c["definition"].as_str() {
        let _ = writeln!(out, "<p class=\"note\">{}</p>", html_escape(def));
    }
}

/// Appends the section; without a summary it says where the numbers would be.
pub fn shape_section(out: &mut String, summary: Option<&Value>) {
    let Some(s) = summary else {
        out.push_str("<p>No summary.json in this run (rerun <code>mixband bands RUN</code> to write it).</p>\n");
        return;
    };
    let level = widest_level(s).unwrap_or(0.95);
    let lab = crate::summary::level_label(level);
    out.push_str("<h3>Number of modes</h3>\n");
    count_table(out, "modes", "modes", &s["modes"]);
    super::bumps::bump_tables(out, s, level);
    let _ = writeln!(
        out,
        "<h3>Mean, sd and quantiles of the distribution</h3>\n<table id=\"functionals\"><thead><tr><th>feature</th>\
         <th>posterior mean</th><th>posterior sd</th><th>{lab}% credible interval</th></tr></thead><tbody>"
    );
    let mut row = |name: String, post: &Value| {
        let _ = write!(
            out,
            "<tr><td>{name}</td><td>{}</td><td>{}</td><td>{}</td></tr>",
            number_cell(&post["mean"]),
            number_cell(&post["sd"]),
            interval_cells(post, level)
        );
    };
    row("mean".into(), &s["mean"]);
    row("standard deviation".into(), &s["sd"]);
    for q in s["quantiles"].as_array().into_iter().flatten() {
        let p = q["p"].as_f64().unwrap_or(f64::NAN);
        row(
            format!("{}% quantile", crate::summary::level_label(p)),
            &q["posterior"],
        );
    }
    out.push_str("</tbody></table>\n");
    out.push_str("<h3>Occupied components</h3>\n");
    count_table(
        out,
        "occupied",
        "occupied components",
        &s["occupied_components"],
    );
}

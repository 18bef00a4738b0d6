//! The readable forms of a report: the fixed-width table `mixband diagnose` prints, and
//! the short verdict `sample` prints at the end of a run.

use std::fmt::Write;

use super::density::DENSITY_SUMMARY_NAME;
use super::format::{fmt_ess, fmt_rhat, fmt_sig};
use super::quantity::QuantityReport;
use super::report::{DiagnosticsReport, RhatScope};

fn gate_cell(q: &QuantityReport) -> &'static str {
    match (q.gated, q.passed) {
        (false, _) => "info",
        (true, true) => "ok",
        (true, false) => "FAIL",
    }
}

fn row(out: &mut String, width: usize, q: &QuantityReport) {
    let _ = writeln!(
        out,
        "{:<width$}  {:>9}  {:>8}  {:>8}  {:>10}  {:<11}  {}",
        q.name,
        fmt_rhat(q.rhat),
        fmt_ess(q.ess_bulk),
        fmt_ess(q.ess_tail),
        fmt_sig(q.mcse_mean),
        q.status.as_str(),
        gate_cell(q)
    );
    if let Some(at) = q.worst_at {
        let _ = writeln!(
            out,
            "{:<width$}  worst R-hat at x = {}, lowest bulk ESS at x = {}, lowest tail ESS at x = {}",
            "",
            fmt_sig(at.rhat_x),
            fmt_sig(at.ess_bulk_x),
            fmt_sig(at.ess_tail_x)
        );
    }
    if let Some(n) = &q.note {
        let _ = writeln!(out, "{:<width$}  note: {n}", "");
    }
}

fn list(out: &mut String, title: &str, items: &[String]) {
    if items.is_empty() {
        return;
    }
    let _ = writeln!(out, "\n{title}");
    for i in items {
        let _ = writeln!(out, "  - {i}");
    }
}

/// The diagnostics table: a header with the verdict and limits, one row per quantity
/// (per-component rows only with `components`), then failures, advice and notes.
pub fn render_table(r: &DiagnosticsReport, components: bool) -> String {
    let mut out = String::new();
    let t = &r.thresholds;
    let verdict = if r.passed {
        "PASSED"
    } else {
        "NOT CONVERGED (gate failed)"
    };
    let _ = writeln!(out, "convergence gate: {verdict}");
    let scope = match r.rhat_scope {
        RhatScope::BetweenChains => "R-hat between chains",
        RhatScope::WithinChain => "R-hat within the single chain only",
    };
    let _ = writeln!(
        out,
        "{} chain(s) x {} draws ({scope}); limits: R-hat <= {}, bulk and tail ESS >= {}, chains >= {}\n",
        r.chains, r.draws_per_chain, t.max_rhat, t.min_ess, t.min_chains
    );
    let shown: Vec<&QuantityReport> = r
        .quantities
        .iter()
        .filter(|q| components || q.label_invariant)
        .collect();
    let width = shown
        .iter()
        .map(|q| q.name.len())
        .max()
        .unwrap_or(0)
        .max(DENSITY_SUMMARY_NAME.len());
    let _ = writeln!(
        out,
        "{:<width$}  {:>9}  {:>8}  {:>8}  {:>10}  {:<11}  gate",
        "quantity", "R-hat", "bulk ESS", "tail ESS", "MCSE mean", "status"
    );
    let _ = writeln!(out, "{}", "-".repeat(width + 62));
    let mut header_done = false;
    for q in shown {
        if !q.label_invariant && !header_done {
            let _ = writeln!(
                out,
                "-- per component (not label-invariant; never gated) --"
            );
            header_done = true;
        }
        row(&mut out, width, q);
    }
    if !components && r.quantities.iter().any(|q| !q.label_invariant) {
        let _ = writeln!(out, "(per-component parameters: --components, or --json)");
    }
    list(&mut out, "failures:", &r.failures);
    list(&mut out, "what to try:", &r.advice);
    list(&mut out, "notes:", &r.notes);
    out
}

/// A value and where it occurs.
type Located = Option<(f64, String)>;

/// Worst R-hat and lowest ESS over the gated quantities, with where they occur.
fn extremes(r: &DiagnosticsReport) -> (Located, Located) {
    let mut worst: Located = None;
    let mut lowest: Located = None;
    for q in r.quantities.iter().filter(|q| q.gated) {
        let at = |x: Option<f64>| match x {
            Some(x) => format!("density at x = {}", fmt_sig(Some(x))),
            None => q.name.clone(),
        };
        if let Some(v) = q.rhat {
            if worst.as_ref().map_or(true, |(w, _)| v > *w) {
                worst = Some((v, at(q.worst_at.and_then(|a| a.rhat_x))));
            }
        }
        for (v, x, which) in [
            (q.ess_bulk, q.worst_at.and_then(|a| a.ess_bulk_x), "bulk"),
            (q.ess_tail, q.worst_at.and_then(|a| a.ess_tail_x), "tail"),
        ] {
            if let Some(v) = v {
                if lowest.as_ref().map_or(true, |(l, _)| v < *l) {
                    lowest = Some((v, format!("{}, {which}", at(x))));
                }
            }
        }
    }
    (worst, lowest)
}

/// A plain verdict: one line when the gate passed, the failures and advice when it failed.
pub fn verdict(r: &DiagnosticsReport) -> String {
    if r.passed {
        let (worst, lowest) = extremes(r);
        let w = worst.map_or("n/a".into(), |(v, at)| {
            format!("{} ({at})", fmt_rhat(Some(v)))
        });
        let l = lowest.map_or("n/a".into(), |(v, at)| {
            format!("{} ({at})", fmt_ess(Some(v)))
        });
        return format!("converged: passed the gate; worst R-hat {w}, lowest ESS {l}\n");
    }
    let mut out = String::from(
        "NOT CONVERGED: the run failed the convergence gate; do not report its numbers.\n",
    );
    for f in &r.failures {
        let _ = writeln!(out, "  - {f}");
    }
    out.push_str("what to try:\n");
    for a in &r.advice {
        let _ = writeln!(out, "  - {a}");
    }
    out
}

//! The density at every grid point as a gated quantity: per-point diagnostics for the
//! `density_grid` array, and one summary entry, `density (worst over grid)`, with the
//! worst R-hat, the lowest bulk and tail ESS, and the x where each occurs.

use serde::{Deserialize, Serialize};

use super::failure::{Failure, FailureKind};
use super::format::fmt_sig;
use super::quantity::{ess_sentence, evaluate, rhat_sentence, QuantityReport, QuantityStatus};
use super::series::{QuantityKind, Series};
use super::thresholds::Thresholds;
use crate::summary::DensityDraws;

/// Name of the summary entry in `quantities`.
pub const DENSITY_SUMMARY_NAME: &str = "density (worst over grid)";

/// Diagnostics of the density at one grid point (an element of `density_grid`).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct GridPoint {
    pub x: f64,
    /// Posterior mean of the density at x.
    pub mean: Option<f64>,
    pub rhat: Option<f64>,
    pub ess_bulk: Option<f64>,
    pub ess_tail: Option<f64>,
    pub mcse_mean: Option<f64>,
    pub status: QuantityStatus,
    /// Whether this point meets the thresholds.
    pub passed: bool,
}

/// Where on the grid the worst values of the summary entry occur (the first such x on ties).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct WorstAt {
    pub rhat_x: Option<f64>,
    pub ess_bulk_x: Option<f64>,
    pub ess_tail_x: Option<f64>,
}

/// Per-point reports and the summary, with one failure sentence per failing test.
pub(super) fn assess_grid(
    dens: &DensityDraws,
    t: &Thresholds,
    within_chain: bool,
) -> (Vec<GridPoint>, QuantityReport, Vec<Failure>) {
    let mut acc = GridAssessment::new(dens.grid.len());
    for (g, &x) in dens.grid.iter().enumerate() {
        let chains = (0..dens.chains).map(|c| dens.series(c, g)).collect();
        acc.push_point(x, chains, t, within_chain);
    }
    acc.finish(t, within_chain)
}

/// The density grid assessed one point at a time, in grid order, from that point's series
/// (one vector per chain); only the per-point reports are kept.
#[derive(Debug, Clone)]
pub struct GridAssessment {
    points: Vec<GridPoint>,
    reports: Vec<QuantityReport>,
    fails: Vec<(f64, Failure)>,
}

impl GridAssessment {
    /// An assessment of a grid of `points` points, none assessed yet.
    pub fn new(points: usize) -> Self {
        GridAssessment {
            points: Vec::with_capacity(points),
            reports: Vec::with_capacity(points),
            fails: Vec::new(),
        }
    }

    /// Assesses the density at the next grid point `x`, one series per chain.
    pub fn push_point(
        &mut self,
        x: f64,
        chains: Vec<Vec<f64>>,
        t: &Thresholds,
        within_chain: bool,
    ) {
        let s = Series {
            name: format!("density@{x}"),
            kind: QuantityKind::Density,
            label_invariant: true,
            chains,
        };
        let (r, f) = evaluate(&s, true, t, within_chain);
        self.points.push(GridPoint {
            x,
            mean: r.mean,
            rhat: r.rhat,
            ess_bulk: r.ess_bulk,
            ess_tail: r.ess_tail,
            mcse_mean: r.mcse_mean,
            status: r.status,
            passed: r.passed,
        });
        self.fails.extend(f.into_iter().map(|f| (x, f)));
        self.reports.push(r);
    }

    /// Per-point reports, the summary entry, and one failure sentence per failing test.
    pub(crate) fn finish(
        self,
        t: &Thresholds,
        within_chain: bool,
    ) -> (Vec<GridPoint>, QuantityReport, Vec<Failure>) {
        let summary = summarise(&self.points, &self.reports);
        let failures =
            summarise_failures(&self.fails, self.points.len(), &summary, t, within_chain);
        (self.points, summary, failures)
    }
}

/// Index of the largest (`max`) or smallest value of `f` over the points that have one.
fn extreme(
    points: &[GridPoint],
    f: impl Fn(&GridPoint) -> Option<f64>,
    max: bool,
) -> Option<usize> {
    let mut best: Option<(usize, f64)> = None;
    for (i, p) in points.iter().enumerate() {
        if let Some(v) = f(p) {
            let better = match best {
                None => true,
                Some((_, b)) => (max && v > b) || (!max && v < b),
            };
            if better {
                best = Some((i, v));
            }
        }
    }
    best.map(|(i, _)| i)
}

fn max_of(reports: &[QuantityReport], f: impl Fn(&QuantityReport) -> Option<f64>) -> Option<f64> {
    reports.iter().filter_map(f).reduce(f64::max)
}

fn summarise(points: &[GridPoint], reports: &[QuantityReport]) -> QuantityReport {
    let unavailable = reports
        .iter()
        .filter(|r| r.status == QuantityStatus::Unavailable)
        .count();
    let status = if points.is_empty() || unavailable > 0 {
        QuantityStatus::Unavailable
    } else if reports
        .iter()
        .any(|r| r.status == QuantityStatus::StuckChain)
    {
        QuantityStatus::StuckChain
    } else if reports.iter().all(|r| r.status == QuantityStatus::Constant) {
        QuantityStatus::Constant
    } else {
        QuantityStatus::Varying
    };
    let ir = extreme(points, |p| p.rhat, true);
    let ib = extreme(points, |p| p.ess_bulk, false);
    let it = extreme(points, |p| p.ess_tail, false);
    let stuck_zero = reports
        .iter()
        .filter(|r| r.note.is_some() && r.status == QuantityStatus::StuckChain)
        .count();
    let note = if unavailable > 0 {
        reports
            .iter()
            .find_map(|r| r.note.clone())
            .map(|n| format!("{unavailable} grid point(s): {n}"))
    } else if points.is_empty() {
        Some("no grid points".into())
    } else if stuck_zero > 0 {
        Some(format!(
            "{stuck_zero} grid point(s) far in a tail are exactly 0 in some half-chain (underflow), not a stuck chain"
        ))
    } else {
        None
    };
    QuantityReport {
        name: DENSITY_SUMMARY_NAME.into(),
        label_invariant: true,
        gated: true,
        passed: !points.is_empty() && points.iter().all(|p| p.passed),
        status,
        mean: None,
        sd: None,
        rhat: ir.and_then(|i| points[i].rhat),
        rhat_split: max_of(reports, |r| r.rhat_split),
        ess_bulk: ib.and_then(|i| points[i].ess_bulk),
        ess_tail: it.and_then(|i| points[i].ess_tail),
        mcse_mean: max_of(reports, |r| r.mcse_mean),
        mcse_q05: max_of(reports, |r| r.mcse_q05),
        mcse_q95: max_of(reports, |r| r.mcse_q95),
        worst_at: Some(WorstAt {
            rhat_x: ir.map(|i| points[i].x),
            ess_bulk_x: ib.map(|i| points[i].x),
            ess_tail_x: it.map(|i| points[i].x),
        }),
        note,
    }
}

/// One sentence per failing test, naming the worst grid point and how many points fail.
fn summarise_failures(
    fails: &[(f64, Failure)],
    n_points: usize,
    summary: &QuantityReport,
    t: &Thresholds,
    within_chain: bool,
) -> Vec<Failure> {
    let name = DENSITY_SUMMARY_NAME;
    let mut out = Vec::new();
    if n_points == 0 {
        out.push(Failure {
            kind: FailureKind::Unavailable,
            quantity: Some(name.into()),
            value: None,
            sentence: format!("{name}: no grid points to assess"),
        });
        return out;
    }
    let at = summary.worst_at.unwrap_or(WorstAt {
        rhat_x: None,
        ess_bulk_x: None,
        ess_tail_x: None,
    });
    let kinds = [
        FailureKind::Unavailable,
        FailureKind::Stuck,
        FailureKind::Rhat,
        FailureKind::EssBulk,
        FailureKind::EssTail,
    ];
    for kind in kinds {
        let hits: Vec<&(f64, Failure)> = fails.iter().filter(|(_, f)| f.kind == kind).collect();
        let Some((first_x, first)) = hits.first() else {
            continue;
        };
        let count = format!("{} of {n_points} grid points fail this test", hits.len());
        let (value, base) = match kind {
            FailureKind::Rhat => {
                let r = summary.rhat.unwrap_or(first.value.unwrap_or(0.0));
                let x = at.rhat_x.unwrap_or(*first_x);
                (
                    Some(r),
                    rhat_sentence(
                        &format!("{name} at x = {}", fmt_sig(Some(x))),
                        r,
                        t,
                        within_chain,
                    ),
                )
            }
            FailureKind::EssBulk | FailureKind::EssTail => {
                let (e, x, which) = if kind == FailureKind::EssBulk {
                    (summary.ess_bulk, at.ess_bulk_x, "bulk")
                } else {
                    (summary.ess_tail, at.ess_tail_x, "tail")
                };
                let e = e.unwrap_or(first.value.unwrap_or(0.0));
                let x = x.unwrap_or(*first_x);
                (
                    Some(e),
                    ess_sentence(&format!("{name} at x = {}", fmt_sig(Some(x))), which, e, t),
                )
            }
            _ => (
                None,
                format!(
                    "{name}: first at x = {}: {}",
                    fmt_sig(Some(*first_x)),
                    first.sentence
                ),
            ),
        };
        out.push(Failure {
            kind,
            quantity: Some(name.into()),
            value,
            sentence: format!("{base}; {count}"),
        });
    }
    out
}

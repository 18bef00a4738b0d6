//! Diagnostics of one quantity and the gate's tests on them: R-hat, bulk and tail ESS,
//! and what a half-chain stuck at one value means for each kind of quantity.

use serde::{Deserialize, Serialize};

use super::density::WorstAt;
use super::failure::{Failure, FailureKind};
use super::format::{fmt_ess, fmt_rhat};
use super::series::{QuantityKind, Series};
use super::thresholds::Thresholds;
use crate::diagnostics::{scalar_diagnostics, ChainStatus, ScalarDiagnostics, RHAT_UNBOUNDED};

/// A count whose most common value holds at least this share of all draws is "nearly
/// constant": reported, but its R-hat and ESS do not drive the gate (docs/diagnostics.md).
pub const NEARLY_CONSTANT_SHARE: f64 = 0.99;

/// How the draws of a quantity vary, as [`ChainStatus`], or why they could not be assessed.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum QuantityStatus {
    Varying,
    Constant,
    StuckChain,
    /// No diagnostics: too few draws, or a value that is not finite (see `note`).
    Unavailable,
}

impl From<ChainStatus> for QuantityStatus {
    fn from(s: ChainStatus) -> Self {
        match s {
            ChainStatus::Varying => QuantityStatus::Varying,
            ChainStatus::Constant => QuantityStatus::Constant,
            ChainStatus::StuckChain => QuantityStatus::StuckChain,
        }
    }
}

impl QuantityStatus {
    /// Lower-case name as in the JSON.
    pub fn as_str(self) -> &'static str {
        match self {
            QuantityStatus::Varying => "varying",
            QuantityStatus::Constant => "constant",
            QuantityStatus::StuckChain => "stuck_chain",
            QuantityStatus::Unavailable => "unavailable",
        }
    }
}

/// One entry of `quantities` in diagnostics.json. Numbers are `null` only when the status
/// is `unavailable`; an unbounded R-hat is `RHAT_UNBOUNDED` (f64::MAX).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct QuantityReport {
    pub name: String,
    /// Unchanged when component labels are permuted.
    pub label_invariant: bool,
    /// Whether this quantity's tests decide the gate.
    pub gated: bool,
    /// Whether it meets the thresholds (for a quantity that is not gated: for information).
    pub passed: bool,
    pub status: QuantityStatus,
    pub mean: Option<f64>,
    pub sd: Option<f64>,
    /// Rank-normalised split R-hat, max(bulk, folded).
    pub rhat: Option<f64>,
    /// Classic split R-hat.
    pub rhat_split: Option<f64>,
    pub ess_bulk: Option<f64>,
    pub ess_tail: Option<f64>,
    pub mcse_mean: Option<f64>,
    pub mcse_q05: Option<f64>,
    pub mcse_q95: Option<f64>,
    /// For the density summary: the grid points where the worst values occur.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub worst_at: Option<WorstAt>,
    /// Why a test was not applied, or why the quantity could not be assessed.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub note: Option<String>,
}

impl QuantityReport {
    fn from_diagnostics(s: &Series, gated: bool, d: &ScalarDiagnostics) -> Self {
        QuantityReport {
            name: s.name.clone(),
            label_invariant: s.label_invariant,
            gated,
            passed: true,
            status: d.status.into(),
            mean: Some(d.mean),
            sd: Some(d.sd),
            rhat: Some(d.rhat),
            rhat_split: Some(d.rhat_split),
            ess_bulk: Some(d.ess_bulk),
            ess_tail: Some(d.ess_tail),
            mcse_mean: Some(d.mcse_mean),
            mcse_q05: Some(d.mcse_q05),
            mcse_q95: Some(d.mcse_q95),
            worst_at: None,
            note: None,
        }
    }

    /// An entry with no numbers, for a quantity that could not be assessed.
    pub(super) fn unavailable(name: &str, label_invariant: bool, gated: bool, why: String) -> Self {
        QuantityReport {
            name: name.to_string(),
            label_invariant,
            gated,
            passed: false,
            status: QuantityStatus::Unavailable,
            mean: None,
            sd: None,
            rhat: None,
            rhat_split: None,
            ess_bulk: None,
            ess_tail: None,
            mcse_mean: None,
            mcse_q05: None,
            mcse_q95: None,
            worst_at: None,
            note: Some(why),
        }
    }
}

/// "R-hat" or "within-chain R-hat" (one chain: the two halves of that chain).
pub(super) fn rhat_label(within_chain: bool) -> &'static str {
    if within_chain {
        "within-chain R-hat"
    } else {
        "R-hat"
    }
}

pub(super) fn rhat_sentence(name: &str, r: f64, t: &Thresholds, within_chain: bool) -> String {
    let label = rhat_label(within_chain);
    if r >= RHAT_UNBOUNDED {
        format!(
            "{name}: {label} is unbounded (each half-chain stays at one value and they differ), limit {}",
            t.max_rhat
        )
    } else {
        format!(
            "{name}: {label} {} is above the limit {} (by {:.4})",
            fmt_rhat(Some(r)),
            t.max_rhat,
            r - t.max_rhat
        )
    }
}

pub(super) fn ess_sentence(name: &str, which: &str, e: f64, t: &Thresholds) -> String {
    format!(
        "{name}: {which} ESS {} is below the minimum {} ({:.0}% of it)",
        fmt_ess(Some(e)),
        t.min_ess,
        100.0 * e / t.min_ess
    )
}

/// The R-hat and ESS tests on diagnostics `d` of the quantity `name`.
pub(super) fn threshold_failures(
    name: &str,
    d: &ScalarDiagnostics,
    t: &Thresholds,
    within_chain: bool,
) -> Vec<Failure> {
    let mut out = Vec::new();
    let q = Some(name.to_string());
    if d.rhat > t.max_rhat {
        out.push(Failure {
            kind: FailureKind::Rhat,
            quantity: q.clone(),
            value: Some(d.rhat),
            sentence: rhat_sentence(name, d.rhat, t, within_chain),
        });
    }
    if d.ess_bulk < t.min_ess {
        out.push(Failure {
            kind: FailureKind::EssBulk,
            quantity: q.clone(),
            value: Some(d.ess_bulk),
            sentence: ess_sentence(name, "bulk", d.ess_bulk, t),
        });
    }
    if d.ess_tail < t.min_ess {
        out.push(Failure {
            kind: FailureKind::EssTail,
            quantity: q,
            value: Some(d.ess_tail),
            sentence: ess_sentence(name, "tail", d.ess_tail, t),
        });
    }
    out
}

/// Half-chains as the diagnostics cut them: first and last ⌊n/2⌋ draws of each chain.
fn halves(s: &Series) -> impl Iterator<Item = &[f64]> {
    s.chains.iter().flat_map(|c| {
        let h = c.len() / 2;
        [&c[..h], &c[c.len() - h..]]
    })
}

/// True when every half-chain that stays at one value stays at exactly 0: the density
/// far in a tail underflowing, not a chain that stopped moving.
fn stuck_only_at_zero(s: &Series) -> bool {
    halves(s)
        .filter(|h| h.iter().all(|v| *v == h[0]))
        .all(|h| h.first().is_none_or(|v| *v == 0.0))
}

/// Share of all draws equal to the most common value.
fn modal_share(s: &Series) -> (f64, f64) {
    let mut all: Vec<f64> = s.chains.iter().flatten().copied().collect();
    all.sort_by(f64::total_cmp);
    let (mut best, mut best_v, mut run) = (0usize, f64::NAN, 0usize);
    for i in 0..all.len() {
        run = if i > 0 && all[i] == all[i - 1] {
            run + 1
        } else {
            1
        };
        if run > best {
            best = run;
            best_v = all[i];
        }
    }
    (best as f64 / all.len().max(1) as f64, best_v)
}

/// Diagnostics of `s` and, when `gated`, the reasons it fails the gate.
///
/// A half-chain stuck at one value (or all draws equal) fails a continuous quantity
/// outright; it does not fail
/// a count (runs of equal counts are normal), which is judged on R-hat and ESS, and it does
/// not fail a density point whose stuck half-chains sit at exactly 0 (underflow). A count
/// that is nearly constant (share ≥ [`NEARLY_CONSTANT_SHARE`]) is not gated.
pub(crate) fn evaluate(
    s: &Series,
    gated: bool,
    t: &Thresholds,
    within_chain: bool,
) -> (QuantityReport, Vec<Failure>) {
    let d = match scalar_diagnostics(&s.slices()) {
        Ok(d) => d,
        Err(e) => {
            let why = format!("cannot be assessed: {e}");
            let f = Failure {
                kind: FailureKind::Unavailable,
                quantity: Some(s.name.clone()),
                value: None,
                sentence: format!("{}: {why}", s.name),
            };
            let r = QuantityReport::unavailable(&s.name, s.label_invariant, gated, why);
            return (r, if gated { vec![f] } else { Vec::new() });
        }
    };
    let mut r = QuantityReport::from_diagnostics(s, gated, &d);
    let mut fails = threshold_failures(&s.name, &d, t, within_chain);
    if d.status == ChainStatus::StuckChain {
        let stuck_fails = match s.kind {
            QuantityKind::Continuous => true,
            QuantityKind::Count => {
                r.note = Some(
                    "a half-chain stays at one value: normal for a count with a concentrated posterior, \
                     so judged on R-hat and ESS only"
                        .into(),
                );
                false
            }
            QuantityKind::Density => {
                let zero = stuck_only_at_zero(s);
                if zero {
                    r.note = Some("a half-chain is exactly 0 here (underflow far in a tail), not a stuck chain".into());
                }
                !zero
            }
        };
        if stuck_fails {
            fails.push(Failure {
                kind: FailureKind::Stuck,
                quantity: Some(s.name.clone()),
                value: None,
                sentence: format!(
                    "{}: a chain stayed at one value for at least half its draws (the sampler did not move)",
                    s.name
                ),
            });
        }
    }
    if d.status == ChainStatus::Constant {
        // A continuous parameter redrawn every sweep cannot repeat exactly; a density that
        // is exactly 0 in every draw (far outside the data) or a constant count is fine.
        let all_zero = d.mean == 0.0;
        let moved = match s.kind {
            QuantityKind::Continuous => false,
            QuantityKind::Count => true,
            QuantityKind::Density => all_zero,
        };
        if moved {
            if s.kind == QuantityKind::Density {
                r.note = Some("exactly 0 in every draw (underflow far in a tail)".into());
            }
        } else {
            fails.push(Failure {
                kind: FailureKind::Stuck,
                quantity: Some(s.name.clone()),
                value: None,
                sentence: format!(
                    "{}: every draw of every chain is the same value (the sampler did not move)",
                    s.name
                ),
            });
        }
    }
    if s.kind == QuantityKind::Count && d.status != ChainStatus::Constant {
        let (share, mode) = modal_share(s);
        if share >= NEARLY_CONSTANT_SHARE {
            r.gated = false;
            r.note = Some(format!(
                "nearly constant: {:.1}% of draws equal {mode}; R-hat and ESS of a near point mass rest on a \
                 handful of draws, so they are shown but do not drive the gate",
                100.0 * share
            ));
        }
    }
    r.passed = fails.is_empty();
    if !r.gated {
        fails.clear();
    }
    (r, fails)
}

//! One reason a run fails the gate: which quantity, which test, and a sentence for people.

use serde::{Deserialize, Serialize};

/// Which test failed; the advice is chosen from these.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum FailureKind {
    /// Fewer chains than `min_chains`.
    TooFewChains,
    /// The quantity could not be assessed at all (too few draws, a non-finite value).
    Unavailable,
    /// A continuous quantity stayed at one value for a whole half-chain.
    Stuck,
    /// R-hat above `max_rhat`.
    Rhat,
    /// Bulk ESS below `min_ess`.
    EssBulk,
    /// Tail ESS below `min_ess`.
    EssTail,
}

/// A failed test with its human sentence.
#[derive(Debug, Clone, PartialEq)]
pub struct Failure {
    pub kind: FailureKind,
    /// The quantity concerned (`None` for run-wide failures such as too few chains).
    pub quantity: Option<String>,
    /// The worst value behind the failure (R-hat or ESS), when there is one.
    pub value: Option<f64>,
    pub sentence: String,
}

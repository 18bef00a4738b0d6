//! Errors returned by the convergence diagnostics for draws they cannot summarise.

use std::fmt;

/// Why a diagnostic could not be computed from the given draws.
///
/// Chain and draw indices in messages are 0-based, as in the slices passed in.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum DiagnosticsError {
    /// No chains were given.
    NoChains,
    /// Chains are shorter than the minimum the split diagnostics need.
    TooFewDraws {
        /// Draws per chain that were given.
        draws: usize,
        /// Minimum draws per chain accepted.
        min: usize,
    },
    /// Chains differ in length.
    UnequalChainLengths {
        /// Index of the first chain whose length differs from chain 0.
        chain: usize,
        /// Its length.
        len: usize,
        /// Length of chain 0.
        expected: usize,
    },
    /// A draw is NaN or infinite.
    NonFinite {
        /// Chain holding the draw.
        chain: usize,
        /// Index of the draw in that chain.
        draw: usize,
        /// The offending value.
        value: f64,
    },
    /// A quantile probability outside the open interval (0, 1).
    InvalidProbability {
        /// The probability that was given.
        prob: f64,
    },
    /// Finite draws whose magnitude overflows the variance computation.
    Overflow {
        /// The quantity being computed when the overflow was met.
        quantity: &'static str,
    },
}

impl fmt::Display for DiagnosticsError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match *self {
            DiagnosticsError::NoChains => write!(f, "diagnostics need at least one chain, got none"),
            DiagnosticsError::TooFewDraws { draws, min } => write!(
                f,
                "diagnostics need at least {min} draws per chain, got {draws}"
            ),
            DiagnosticsError::UnequalChainLengths {
                chain,
                len,
                expected,
            } => write!(
                f,
                "chains must have equal lengths: chain {chain} has {len} draws, chain 0 has {expected}"
            ),
            DiagnosticsError::NonFinite { chain, draw, value } => write!(
                f,
                "draw {draw} of chain {chain} is {value}; diagnostics need finite draws"
            ),
            DiagnosticsError::InvalidProbability { prob } => write!(
                f,
                "quantile probability must lie strictly between 0 and 1, got {prob}"
            ),
            DiagnosticsError::Overflow { quantity } => write!(
                f,
                "draws too large in magnitude: {quantity} overflowed to a non-finite value"
            ),
        }
    }
}

impl std::error::Error for DiagnosticsError {}

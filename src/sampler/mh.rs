//! The Metropolis–Hastings acceptance step the sampler's moves share.

use rand::Rng;

/// Accepts a proposal with log ratio `log_r`: ln U < ln r, U uniform on (0, 1]; a ratio
/// of at least 1 is accepted without a draw, and NaN rejects.
pub(crate) fn accept<R: Rng + ?Sized>(log_r: f64, rng: &mut R) -> bool {
    log_r >= 0.0 || (1.0 - rng.random::<f64>()).ln() < log_r
}

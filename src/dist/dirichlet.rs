//! Dirichlet draws returned as log weights, normalised by log-sum-exp of log-Gamma draws.

use rand::Rng;

use super::gamma::log_gamma;
use super::logsumexp::log_sum_exp;

/// Fills `out` with ln w for w ~ Dirichlet(`alpha`); `out.len() == alpha.len()`.
pub fn log_dirichlet<R: Rng + ?Sized>(alpha: &[f64], rng: &mut R, out: &mut [f64]) {
    debug_assert_eq!(alpha.len(), out.len());
    for (o, &a) in out.iter_mut().zip(alpha) {
        *o = log_gamma(a, rng);
    }
    let total = log_sum_exp(out);
    for o in out.iter_mut() {
        *o -= total;
    }
}

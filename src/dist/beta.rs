//! Beta draws as a pair of logarithms (ln v, ln(1 − v)), from two log-Gamma draws, so that
//! sticks of a stick-breaking prior with a tiny concentration keep their precision.

use rand::Rng;

use super::gamma::log_gamma;
use super::logsumexp::log_add_exp;

/// Returns (ln v, ln(1 − v)) for v ~ Beta(a, b), a, b > 0.
pub fn log_beta<R: Rng + ?Sized>(a: f64, b: f64, rng: &mut R) -> (f64, f64) {
    let ga = log_gamma(a, rng);
    let gb = log_gamma(b, rng);
    let total = log_add_exp(ga, gb);
    (ga - total, gb - total)
}

//! Full conditionals of the component parameters given the sufficient statistics.
//!
//! Location kernel (common σ²): μ_k | σ², z ~ N(m_k, v_k) with v_k = 1/(1/s² + n_k/σ²),
//! m_k = v_k (m/s² + S1_k/σ²); then σ² | μ, z ~ IG(a + N/2, b + ½ Σ_k Σ_{i∈k} (x_i − μ_k)²).
//!
//! Location-scale kernel (normal-inverse-gamma, conjugate): with x̄_k, SS_k the mean and
//! centred sum of squares of component k, κ_n = κ + n_k, m_n = (κ m + n_k x̄_k)/κ_n,
//! a_n = a + n_k/2, b_n = b + SS_k/2 + κ n_k (x̄_k − m)²/(2κ_n);
//! σ_k² ~ IG(a_n, b_n), then μ_k | σ_k² ~ N(m_n, σ_k²/κ_n) (Murphy 2007, §6; BDA3 §3.3).

use rand::Rng;

use super::allocate::SuffStats;
use crate::config::Kernel;
use crate::dist::{inv_gamma, normal};
use crate::model::{Prior, State};

pub fn update_components<R: Rng + ?Sized>(
    prior: &Prior,
    stats: &SuffStats,
    state: &mut State,
    rng: &mut R,
) {
    match prior.kernel {
        Kernel::Location => update_location(prior, stats, state, rng),
        Kernel::LocationScale => update_location_scale(prior, stats, state, rng),
    }
}

fn update_location<R: Rng + ?Sized>(
    prior: &Prior,
    stats: &SuffStats,
    state: &mut State,
    rng: &mut R,
) {
    let k = state.k();
    let sigma2 = state.var[0];
    let prior_prec = 1.0 / (prior.centre_sd * prior.centre_sd);
    let mut resid = 0.0;
    for j in 0..k {
        let nk = stats.n[j] as f64;
        let prec = prior_prec + nk / sigma2;
        let mean = (prior.centre * prior_prec + stats.sum[j] / sigma2) / prec;
        let mu = normal(mean, prec.recip().sqrt(), rng);
        state.mu[j] = mu;
        // Σ_{i∈k} (x_i − μ)² = S2 − 2μ S1 + n μ², clamped against rounding below zero.
        resid += (stats.sumsq[j] - 2.0 * mu * stats.sum[j] + nk * mu * mu).max(0.0);
    }
    let n = stats.total() as f64;
    let v = inv_gamma(
        prior.var_shape + 0.5 * n,
        state.var_scale + 0.5 * resid,
        rng,
    );
    state.var.iter_mut().for_each(|s| *s = v);
}

fn update_location_scale<R: Rng + ?Sized>(
    prior: &Prior,
    stats: &SuffStats,
    state: &mut State,
    rng: &mut R,
) {
    let (m, kappa, a) = (prior.centre, prior.centre_shrink, prior.var_shape);
    for j in 0..state.k() {
        let nk = stats.n[j] as f64;
        let (xbar, ss) = if stats.n[j] > 0 {
            let xbar = stats.sum[j] / nk;
            (xbar, (stats.sumsq[j] - nk * xbar * xbar).max(0.0))
        } else {
            (0.0, 0.0)
        };
        let kn = kappa + nk;
        let mn = (kappa * m + nk * xbar) / kn;
        let an = a + 0.5 * nk;
        let bn = state.var_scale + 0.5 * ss + kappa * nk * (xbar - m) * (xbar - m) / (2.0 * kn);
        let v = inv_gamma(an, bn, rng);
        state.var[j] = v;
        state.mu[j] = normal(mn, (v / kn).sqrt(), rng);
    }
}

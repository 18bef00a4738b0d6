//! The variance scale b of the location-scale kernel, drawn with every component's mean
//! and variance integrated out.
//!
//! Under σ_k² ~ IG(a, b), μ_k | σ_k² ~ N(m, σ_k²/κ), the points of component k have the
//! marginal likelihood Γ(a_n)/Γ(a) · b^a / (b + C_k)^{a_n} · (κ/κ_n)^{1/2} (2π)^{−n_k/2}
//! with a_n = a + n_k/2 and C_k = SS_k/2 + κ n_k (x̄_k − m)²/(2κ_n) (the b_n − b of the
//! component update; Murphy 2007, §6). With b ~ Gamma(g, h) the conditional of η = ln b
//! given the allocations alone is therefore, up to a constant,
//!
//! ln p(η | z, x) = g η − h e^η + Σ_{k occupied} [a η − a_n ln(e^η + C_k)],
//!
//! concave in η (each −ln(e^η + C) is), and empty components contribute nothing. b is
//! drawn from it by slice sampling, and the component parameters are drawn next given b,
//! so (b, μ, σ²) | z is one block. The Gibbs step b | σ² ~ Gamma(g + K a, h + Σ 1/σ_k²)
//! is also valid, but it couples b to every σ_k², including those of empty components
//! that were just drawn from IG(a, b): with most components empty (the sparse default)
//! b, the narrowest components and the number of occupied components then drift together
//! slowly (measured in docs/performance.md, "Mixing").

use rand::Rng;

use super::allocate::SuffStats;
use super::slice::slice_step;
use crate::config::Kernel;
use crate::dist::log_add_exp;
use crate::model::{Prior, State, VarScale};

/// Slice updates of ln b a sweep.
const SLICE_STEPS: usize = 2;
/// Initial width of the slice interval on ln b: about twice the conditional's sd when a
/// handful of components are occupied.
const SLICE_WIDTH: f64 = 1.0;

/// ln p(η = ln b | z, x) up to a constant, from the sufficient statistics (see the module
/// comment).
pub fn log_conditional(prior: &Prior, stats: &SuffStats, shape: f64, rate: f64, eta: f64) -> f64 {
    let (m, kappa, a) = (prior.centre, prior.centre_shrink, prior.var_shape);
    let mut s = shape * eta - rate * eta.exp();
    for j in 0..stats.n.len() {
        if stats.n[j] == 0 {
            continue;
        }
        let nk = stats.n[j] as f64;
        let xbar = stats.sum[j] / nk;
        let ss = (stats.sumsq[j] - nk * xbar * xbar).max(0.0);
        let c = 0.5 * ss + kappa * nk * (xbar - m) * (xbar - m) / (2.0 * (kappa + nk));
        s += a * eta - (a + 0.5 * nk) * log_add_exp(eta, c.ln());
    }
    s
}

/// Draws b given the allocations' statistics with the component parameters integrated
/// out, for the location-scale kernel with b ~ Gamma; otherwise does nothing and draws no
/// random numbers. Call it before the component update.
pub fn update_var_scale_given_stats<R: Rng + ?Sized>(
    prior: &Prior,
    stats: &SuffStats,
    state: &mut State,
    rng: &mut R,
) {
    update_var_scale_with(prior, stats, state, rng, log_conditional);
}

/// The signature of [`log_conditional`].
pub type VarScaleTarget = fn(&Prior, &SuffStats, f64, f64, f64) -> f64;

/// [`update_var_scale_given_stats`] with the target given explicitly; only the
/// joint-distribution test passes anything but [`log_conditional`] (to show that a wrong
/// one is caught).
#[doc(hidden)]
pub fn update_var_scale_with<R: Rng + ?Sized>(
    prior: &Prior,
    stats: &SuffStats,
    state: &mut State,
    rng: &mut R,
    target: VarScaleTarget,
) {
    let VarScale::Gamma { shape, rate } = prior.var_scale else {
        return;
    };
    if prior.kernel != Kernel::LocationScale {
        return;
    }
    let mut eta = state.var_scale.ln();
    for _ in 0..SLICE_STEPS {
        eta = slice_step(
            eta,
            SLICE_WIDTH,
            |e| target(prior, stats, shape, rate, e),
            rng,
        );
    }
    state.var_scale = eta.exp();
}

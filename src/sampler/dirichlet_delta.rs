//! The Dirichlet concentration δ under a Gamma prior: a random-walk Metropolis–Hastings
//! update on ln δ (the sparse finite mixture of Malsiner-Walli, Frühwirth-Schnatter &
//! Grün 2016, who update their e₀ the same way).
//!
//! With w ~ Dirichlet(δ, …, δ) on K components and δ ~ Gamma(a, b) (shape, rate), the full
//! conditional is p(δ | w) ∝ δ^{a−1} e^{−bδ} Γ(Kδ) / Γ(δ)^K · Π_k w_k^{δ−1}. On η = ln δ the
//! target gains the Jacobian e^η, so ln p(η | w) = a η − b e^η + ln Γ(K e^η) − K ln Γ(e^η)
//! + (e^η − 1) Σ_k ln w_k + const. Σ_k ln w_k is read from the log weights, so tiny weights
//! (routine when δ is small) enter exactly.

use rand::Rng;
use statrs::function::gamma::ln_gamma;

use crate::config::WeightsKind;
use crate::dist::std_normal;
use crate::model::{Concentration, Prior, State};

/// Standard deviation of the random-walk proposal on ln δ. For small δ the conditional
/// of ln δ has sd about 1/√(K − 1 + a) (from ψ′(δ) ≈ 1/δ²), 0.2–0.35 for the K and a
/// used here; 2.4 times that is the usual random-walk scale (Gelman, Roberts & Gilks 1996).
pub const STEP: f64 = 0.6;
/// Proposals per sweep; each costs K + 2 log-Gamma evaluations.
pub const STEPS_PER_SWEEP: usize = 4;

/// ln p(ln δ = `eta` | w) up to a constant, for the Gamma(`shape`, `rate`) prior.
pub fn log_target(eta: f64, shape: f64, rate: f64, sum_log_w: f64, k: usize) -> f64 {
    let d = eta.exp();
    if !(d > 0.0 && d.is_finite()) {
        return f64::NEG_INFINITY;
    }
    let kf = k as f64;
    shape * eta - rate * d + ln_gamma(kf * d) - kf * ln_gamma(d) + (d - 1.0) * sum_log_w
}

/// Updates δ when the weights are Dirichlet and δ has a Gamma prior; otherwise does
/// nothing and draws no random numbers. Returns how many proposals were accepted.
pub fn update_delta<R: Rng + ?Sized>(prior: &Prior, state: &mut State, rng: &mut R) -> usize {
    let (WeightsKind::Dirichlet, Concentration::Gamma { shape, rate }) = (prior.weights, prior.concentration) else {
        return 0;
    };
    let k = state.k();
    let sum_log_w: f64 = state.log_w.iter().sum();
    let mut eta = state.concentration.ln();
    let mut current = log_target(eta, shape, rate, sum_log_w, k);
    let mut accepted = 0;
    for _ in 0..STEPS_PER_SWEEP {
        let proposal = eta + STEP * std_normal(rng);
        let lp = log_target(proposal, shape, rate, sum_log_w, k);
        let log_u = (1.0 - rng.random::<f64>()).ln();
        if log_u < lp - current {
            eta = proposal;
            current = lp;
            accepted += 1;
        }
    }
    state.concentration = eta.exp();
    accepted
}

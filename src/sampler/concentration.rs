//! The weight-prior concentration given the allocation counts, with the weights integrated
//! out: a random-walk Metropolis–Hastings update on its logarithm, made after the
//! allocation step (and the label moves) and before the weights are drawn, so that
//! (concentration, weights) | z is drawn as one block.
//!
//! Drawing α | v (Ishwaran & James 2001, §5.3) couples α to every stick, including the
//! many empty ones beyond the last occupied label, which are themselves drawn from
//! Beta(1, α): that data augmentation mixes slowly. Integrating the weights out removes
//! the coupling (the empty tail drops out of the likelihood below).
//!
//! - Dirichlet(δ) on K components, δ ~ Gamma(a, b): p(n | δ) ∝ Γ(Kδ)/Γ(Kδ + N)
//!   Π_k Γ(δ + n_k)/Γ(δ) (Dirichlet-multinomial; Malsiner-Walli, Frühwirth-Schnatter &
//!   Grün 2016 update δ by MH as here, there given w).
//! - Truncated stick-breaking, α ~ Gamma(a, b): with T_k = Σ_{j>k} n_j,
//!   p(z | α) = Π_{k<K} E[v_k^{n_k} (1 − v_k)^{T_k}] = Π_{k<K} α B(1 + n_k, α + T_k), since
//!   v_k ~ Beta(1, α); a factor with n_k = T_k = 0 equals 1.
//!
//! On η = ln c the target is ln p(counts | e^η) + a η − b e^η (prior with its Jacobian).

use rand::Rng;
use statrs::function::gamma::ln_gamma;

use super::label_moves::log_label_prior;
use crate::config::WeightsKind;
use crate::dist::std_normal;
use crate::model::{Concentration, Prior, State};

/// Standard deviation of the random-walk proposal on the log concentration: about 2.4
/// times the posterior sd of ln c for a few occupied components (Gelman, Roberts & Gilks
/// 1996 scale; the sd of ln α given k occupied clusters is roughly 1/√k).
pub const STEP: f64 = 0.8;
/// Proposals per sweep; each costs O(K) log-Gamma evaluations, against O(N K) for the
/// allocation step.
pub const STEPS_PER_SWEEP: usize = 5;

/// ln p(n | δ) up to a constant in δ, for Dirichlet(δ) weights on `n.len()` components.
pub fn log_lik_dirichlet(delta: f64, n: &[u64]) -> f64 {
    let k = n.len() as f64;
    let total: u64 = n.iter().sum();
    let mut s = ln_gamma(k * delta) - ln_gamma(k * delta + total as f64);
    for &c in n.iter().filter(|&&c| c > 0) {
        s += ln_gamma(delta + c as f64) - ln_gamma(delta);
    }
    s
}

/// ln p(z | α) up to a constant in α, for stick-breaking weights truncated at `n.len()`:
/// [`log_label_prior`] without its Γ(1 + n_k) terms, which do not depend on α.
pub fn log_lik_stick(alpha: f64, n: &[u64]) -> f64 {
    let k = n.len().saturating_sub(1);
    log_label_prior(alpha, n)
        - n[..k]
            .iter()
            .map(|&c| ln_gamma(1.0 + c as f64))
            .sum::<f64>()
}

/// ln p(ln c = `eta` | counts) up to a constant.
pub fn log_target(weights: WeightsKind, eta: f64, shape: f64, rate: f64, n: &[u64]) -> f64 {
    let c = eta.exp();
    if !(c > 0.0 && c.is_finite()) {
        return f64::NEG_INFINITY;
    }
    let ll = match weights {
        WeightsKind::Dirichlet => log_lik_dirichlet(c, n),
        WeightsKind::StickBreaking => log_lik_stick(c, n),
    };
    shape * eta - rate * c + ll
}

/// Updates the concentration given the counts `n` when it has a Gamma prior; otherwise
/// does nothing and draws no random numbers. Returns how many proposals were accepted.
pub fn update_concentration_given_counts<R: Rng + ?Sized>(
    prior: &Prior,
    n: &[u64],
    state: &mut State,
    rng: &mut R,
) -> usize {
    let Concentration::Gamma { shape, rate } = prior.concentration else {
        return 0;
    };
    let mut eta = state.concentration.ln();
    let mut current = log_target(prior.weights, eta, shape, rate, n);
    let mut accepted = 0;
    for _ in 0..STEPS_PER_SWEEP {
        let proposal = eta + STEP * std_normal(rng);
        let lp = log_target(prior.weights, proposal, shape, rate, n);
        if (1.0 - rng.random::<f64>()).ln() < lp - current {
            eta = proposal;
            current = lp;
            accepted += 1;
        }
    }
    state.concentration = eta.exp();
    accepted
}

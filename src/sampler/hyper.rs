//! Full conditionals of the hyperparameters.
//!
//! Variance scale, b ~ Gamma(g, h) with σ_j² ~ IG(a, b) for J variances:
//! b | σ² ~ Gamma(g + J a, h + Σ_j 1/σ_j²).
//! Stick-breaking concentration, α ~ Gamma(a_α, b_α) with v_k ~ Beta(1, α), k < K:
//! α | v ~ Gamma(a_α + K − 1, b_α − Σ_{k<K} ln(1 − v_k)) (Ishwaran & James 2001, §5.3).

use rand::Rng;

use crate::config::{Kernel, WeightsKind};
use crate::dist::gamma_rate;
use crate::model::{Concentration, Prior, State, VarScale};

/// Sets hyperparameters that the prior holds fixed, so a state built by hand cannot
/// silently run a different model.
pub fn pin_fixed(prior: &Prior, state: &mut State) {
    if let VarScale::Fixed(b) = prior.var_scale {
        state.var_scale = b;
    }
    if let Concentration::Fixed(c) = prior.concentration {
        state.concentration = c;
    }
}

pub fn update_var_scale<R: Rng + ?Sized>(prior: &Prior, state: &mut State, rng: &mut R) {
    if let VarScale::Gamma { shape, rate } = prior.var_scale {
        let vars: &[f64] = match prior.kernel {
            Kernel::Location => &state.var[..1],
            Kernel::LocationScale => &state.var,
        };
        let inv_sum: f64 = vars.iter().map(|v| 1.0 / v).sum();
        let j = vars.len() as f64;
        state.var_scale = gamma_rate(shape + j * prior.var_shape, rate + inv_sum, rng);
    }
}

pub fn update_concentration<R: Rng + ?Sized>(prior: &Prior, state: &mut State, rng: &mut R) {
    if let (WeightsKind::StickBreaking, Concentration::Gamma { shape, rate }) =
        (prior.weights, prior.concentration)
    {
        let k = state.k();
        let sum_log: f64 = state.log_1mv[..k - 1].iter().sum();
        state.concentration = gamma_rate(shape + (k - 1) as f64, rate - sum_log, rng);
    }
}

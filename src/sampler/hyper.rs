//! Full conditionals of the hyperparameters.
//!
//! Variance scale of the location kernel, b ~ Gamma(g, h) with its one σ² ~ IG(a, b):
//! b | σ² ~ Gamma(g + a, h + 1/σ²). (The location-scale kernel's b is drawn with the
//! component parameters integrated out, before them: see `var_scale`.)
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

/// b | σ² for the location kernel; does nothing for the location-scale kernel, whose b is
/// drawn by [`super::var_scale::update_var_scale_given_stats`].
pub fn update_var_scale<R: Rng + ?Sized>(prior: &Prior, state: &mut State, rng: &mut R) {
    if let (Kernel::Location, VarScale::Gamma { shape, rate }) = (prior.kernel, prior.var_scale) {
        let v = state.var[0];
        state.var_scale = gamma_rate(shape + prior.var_shape, rate + 1.0 / v, rng);
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

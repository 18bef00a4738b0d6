//! One Gibbs sweep: allocations, weights, component parameters, hyperparameters.

use super::allocate::{allocate, ComponentTable};
use super::components::update_components;
use super::hyper::{pin_fixed, update_concentration, update_var_scale};
use super::rng::StreamKey;
use super::weights::update_weights;
use crate::model::{Prior, State};

/// What a sweep reports besides the new state.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SweepOutcome {
    /// Observed-data log-likelihood of the state the sweep started from.
    pub loglik_before: f64,
    /// Components holding at least one observation after this sweep's allocation.
    pub occupied: usize,
}

/// Advances `state` by one sweep numbered `index` (from 1).
pub fn sweep(
    x: &[f64],
    prior: &Prior,
    state: &mut State,
    key: &StreamKey,
    index: u64,
) -> SweepOutcome {
    pin_fixed(prior, state);
    let table = ComponentTable::new(state);
    let alloc = allocate(x, &table, key, index);
    let mut rng = key.sweep_rng(index);
    update_weights(prior.weights, &alloc.stats.n, state, &mut rng);
    update_components(prior, &alloc.stats, state, &mut rng);
    update_var_scale(prior, state, &mut rng);
    update_concentration(prior, state, &mut rng);
    SweepOutcome {
        loglik_before: alloc.loglik,
        occupied: alloc.stats.occupied(),
    }
}

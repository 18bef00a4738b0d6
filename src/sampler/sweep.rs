//! One sweep: allocations, label-switching moves (stick-breaking weights), the
//! concentration given the counts (weights integrated out), weights, component
//! parameters, hyperparameters.

use super::allocate::{allocate_weighted, allocate_with, AllocOptions, ComponentTable};
use super::components::update_components;
use super::concentration::update_concentration_given_counts;
use super::hyper::{pin_fixed, update_concentration, update_var_scale};
use super::label_moves::{label_moves, MoveRatios, MoveTally, EXACT};
use super::rng::StreamKey;
use super::weights::update_weights;
use crate::config::WeightsKind;
use crate::model::{Prior, State};

/// What a sweep reports besides the new state.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SweepOutcome {
    /// Observed-data log-likelihood of the state the sweep started from.
    pub loglik_before: f64,
    /// Components holding at least one observation after this sweep's allocation.
    pub occupied: usize,
    /// Proposals and acceptances of the label-switching moves (zero when they are off).
    pub moves: MoveTally,
}

/// Advances `state` by one sweep numbered `index` (from 1), allocating on one thread.
pub fn sweep(
    x: &[f64],
    prior: &Prior,
    state: &mut State,
    key: &StreamKey,
    index: u64,
) -> SweepOutcome {
    sweep_with(x, prior, state, key, index, &EXACT)
}

/// [`sweep`] with the label moves accepted by `ratios`; only the joint-distribution test
/// passes anything but the exact ratios.
pub fn sweep_with(
    x: &[f64],
    prior: &Prior,
    state: &mut State,
    key: &StreamKey,
    index: u64,
    ratios: &MoveRatios,
) -> SweepOutcome {
    sweep_alloc(x, prior, state, key, index, ratios, AllocOptions::default())
}

/// [`sweep_with`] with explicit allocation options (threads for the blocks); the result
/// does not depend on `alloc.threads` or `alloc.simd`.
pub fn sweep_alloc(
    x: &[f64],
    prior: &Prior,
    state: &mut State,
    key: &StreamKey,
    index: u64,
    ratios: &MoveRatios,
    alloc: AllocOptions,
) -> SweepOutcome {
    sweep_counts(x, None, prior, state, key, index, ratios, alloc)
}

/// [`sweep_alloc`] for rows with integer frequency weights `counts` (one per row of `x`;
/// `None`: every row counts once, the fast path).
#[allow(clippy::too_many_arguments)]
pub fn sweep_counts(
    x: &[f64],
    counts: Option<&[u64]>,
    prior: &Prior,
    state: &mut State,
    key: &StreamKey,
    index: u64,
    ratios: &MoveRatios,
    alloc: AllocOptions,
) -> SweepOutcome {
    pin_fixed(prior, state);
    let table = ComponentTable::new(state);
    let mut alloc = match counts {
        Some(c) => allocate_weighted(x, c, &table, key, index),
        None => allocate_with(x, &table, key, index, alloc),
    };
    let mut moves = MoveTally::default();
    if prior.label_moves && prior.weights == WeightsKind::StickBreaking {
        moves = label_moves(&mut alloc.stats, state, ratios, &mut key.label_rng(index));
    }
    let mut rng = key.sweep_rng(index);
    update_concentration_given_counts(prior, &alloc.stats.n, state, &mut rng);
    update_weights(prior.weights, &alloc.stats.n, state, &mut rng);
    update_components(prior, &alloc.stats, state, &mut rng);
    update_var_scale(prior, state, &mut rng);
    update_concentration(prior, state, &mut rng);
    SweepOutcome {
        loglik_before: alloc.loglik,
        occupied: alloc.stats.occupied(),
        moves,
    }
}

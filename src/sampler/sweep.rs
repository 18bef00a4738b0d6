//! One sweep: allocations, label-switching moves (stick-breaking weights), the
//! concentration given the counts (weights integrated out), weights, the location-scale
//! kernel's variance scale given the statistics (component parameters integrated out),
//! component parameters, the remaining hyperparameters.

use super::allocate::SuffStats;
use super::allocate::{
    allocate_labelled, allocate_weighted, allocate_with, AllocOptions, Allocation, ComponentTable,
};
use super::cell_counts::allocate_cell_counts;
use super::cell_params::{update_components_given_cells, CellRatio, CellTally};
use super::censored::allocate_censored;
use super::collapsed::collapsed_scan;
use super::split_merge::split_merge;

/// Split–merge proposals per collapsed sweep; each costs O(size of the components
/// involved), against O(N K) for the scan. Twenty rather than ten raised the lowest density
/// ESS per draw 20–40 % at about the same ESS per second (docs/performance.md, "Mixing").
pub const SPLIT_MERGE_PROPOSALS: usize = 20;
use super::components::update_components;
use super::concentration::update_concentration_given_counts;
use super::hyper::{pin_fixed, update_concentration, update_var_scale};
use super::label_moves::{
    label_moves, label_moves_carrying, label_moves_counts, MoveRatios, MoveTally, EXACT,
};
use super::pair_target::Terms;
use super::relocate::{relocate, RelocateTally, RelocateTarget};
use super::resplit::{resplit, PairData, ResplitTally, ResplitTarget};
use super::rng::StreamKey;
use super::var_scale::update_var_scale_given_stats;
use super::weights::update_weights;
use crate::config::WeightsKind;
use crate::data::Cells;
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
    /// Proposals and acceptances of the parameter updates given counts per cell (the
    /// conditional sweep for data recorded at a resolution; zero otherwise).
    pub cell_moves: CellTally,
    /// Pairs tried and moved by the re-split moves.
    pub resplits: ResplitTally,
    /// Relocation proposals made and accepted.
    pub relocations: RelocateTally,
}

/// How a sweep runs beyond the model: none of these change what it samples from.
#[derive(Debug, Clone, Copy)]
pub struct SweepOptions<'a> {
    /// Acceptance ratios of the label moves; only the joint-distribution test passes
    /// anything but [`EXACT`].
    pub ratios: &'a MoveRatios,
    /// Threads and instruction set of the allocation; the draws do not depend on them.
    pub alloc: AllocOptions,
    /// Integer frequency weights, one per row of `x` (`None`: every row counts once, the
    /// fast path). Read by the conditional step only: a collapsed run takes a weighted
    /// table as its rows written out (`run::prepare`).
    pub counts: Option<&'a [u64]>,
    /// The cells the data stand for when they were recorded at a resolution; when given,
    /// the sweep samples given the cells and `x` and `counts` are not read.
    pub cells: Option<&'a Cells>,
    /// Ratio of the parameter updates given counts per cell (conditional sweep with
    /// cells); only the joint-distribution test passes anything but the exact one.
    pub cell_ratio: CellRatio,
    /// Re-split moves per sweep (`resplit`), run after the parameters are drawn; 0: none.
    pub resplit_pairs: usize,
    /// Density of the re-split moves; only the joint-distribution test passes anything
    /// but the exact one.
    pub resplit_target: ResplitTarget,
    /// Relocation proposals per sweep (`relocate`), after the re-split moves; 0: none.
    pub relocate_moves: usize,
    /// Ratio of the relocation moves; only the joint-distribution test passes anything
    /// but the exact one.
    pub relocate_target: RelocateTarget,
}

impl Default for SweepOptions<'_> {
    fn default() -> Self {
        SweepOptions {
            ratios: &EXACT,
            alloc: AllocOptions::default(),
            counts: None,
            cells: None,
            cell_ratio: CellRatio::Exact,
            resplit_pairs: 0,
            resplit_target: ResplitTarget::Exact,
            relocate_moves: 0,
            relocate_target: RelocateTarget::Exact,
        }
    }
}

/// Advances `state` by one sweep numbered `index` (from 1), allocating on one thread.
pub fn sweep(
    x: &[f64],
    prior: &Prior,
    state: &mut State,
    key: &StreamKey,
    index: u64,
) -> SweepOutcome {
    sweep_opts(x, prior, state, key, index, &SweepOptions::default())
}

/// [`sweep`] with the label moves accepted by `ratios` (joint-distribution tests).
pub fn sweep_with(
    x: &[f64],
    prior: &Prior,
    state: &mut State,
    key: &StreamKey,
    index: u64,
    ratios: &MoveRatios,
) -> SweepOutcome {
    let opts = SweepOptions {
        ratios,
        ..SweepOptions::default()
    };
    sweep_opts(x, prior, state, key, index, &opts)
}

/// [`sweep`] with explicit [`SweepOptions`].
pub fn sweep_opts(
    x: &[f64],
    prior: &Prior,
    state: &mut State,
    key: &StreamKey,
    index: u64,
    opts: &SweepOptions<'_>,
) -> SweepOutcome {
    pin_fixed(prior, state);
    if let (Some(cells), false) = (opts.cells, prior.collapsed) {
        return cell_sweep(cells, prior, state, key, index, opts);
    }
    let table = ComponentTable::new(state);
    let mut alloc = match (opts.cells, opts.counts) {
        (Some(cells), _) => censored_allocation(cells, prior, state, key, index),
        (None, Some(c)) => allocate_weighted(x, c, &table, key, index),
        (None, None) if prior.collapsed => {
            collapsed_allocation(x, prior, state, &table, key, index, opts.alloc)
        }
        (None, None) => allocate_with(x, &table, key, index, opts.alloc),
    };
    let mut moves = MoveTally::default();
    if prior.label_moves && prior.weights == WeightsKind::StickBreaking && prior.collapsed {
        moves = label_moves_counts(
            &mut alloc.stats,
            state.concentration,
            &mut key.label_rng(index),
        );
    } else if prior.label_moves && prior.weights == WeightsKind::StickBreaking {
        moves = label_moves(
            &mut alloc.stats,
            state,
            opts.ratios,
            &mut key.label_rng(index),
        );
    }
    let mut rng = key.sweep_rng(index);
    update_concentration_given_counts(prior, &alloc.stats.n, state, &mut rng);
    update_weights(prior.weights, &alloc.stats.n, state, &mut rng);
    update_var_scale_given_stats(prior, &alloc.stats, state, &mut rng);
    update_components(prior, &alloc.stats, state, &mut rng);
    update_var_scale(prior, state, &mut rng);
    update_concentration(prior, state, &mut rng);
    let data = PairData::Values {
        x,
        counts: opts.counts,
    };
    let (resplits, relocations) = run_pair_moves(&data, prior, state, key, index, opts);
    SweepOutcome {
        loglik_before: alloc.loglik,
        occupied: alloc.stats.occupied(),
        moves,
        cell_moves: CellTally::default(),
        resplits,
        relocations,
    }
}

/// The conditional sweep for data recorded at a resolution: counts per cell given the
/// parameters (no exact values drawn), the label moves on those counts, the weights and
/// concentration given the counts, then the component parameters and the variance scale
/// by Metropolis–Hastings given the counts (`cell_params`). O(cells × K) a sweep.
fn cell_sweep(
    cells: &Cells,
    prior: &Prior,
    state: &mut State,
    key: &StreamKey,
    index: u64,
    opts: &SweepOptions<'_>,
) -> SweepOutcome {
    let (mut counts, loglik) = allocate_cell_counts(cells, state, key, index);
    let mut n = counts.totals();
    let mut moves = MoveTally::default();
    if prior.label_moves && prior.weights == WeightsKind::StickBreaking {
        // The moves read only the counts; the cells each component holds swap with it.
        let k = state.k();
        let mut stats = SuffStats {
            n,
            sum: vec![0.0; k],
            sumsq: vec![0.0; k],
        };
        moves = label_moves_carrying(
            &mut stats,
            state,
            opts.ratios,
            &mut key.label_rng(index),
            Some(&mut counts.held),
        );
        n = stats.n;
    }
    let mut rng = key.sweep_rng(index);
    update_concentration_given_counts(prior, &n, state, &mut rng);
    update_weights(prior.weights, &n, state, &mut rng);
    let cell_moves =
        update_components_given_cells(prior, cells, &counts, state, opts.cell_ratio, &mut rng);
    update_var_scale(prior, state, &mut rng);
    update_concentration(prior, state, &mut rng);
    let (resplits, relocations) =
        run_pair_moves(&PairData::Cells(cells), prior, state, key, index, opts);
    SweepOutcome {
        loglik_before: loglik,
        occupied: n.iter().filter(|&&c| c > 0).count(),
        moves,
        cell_moves,
        resplits,
        relocations,
    }
}

/// The re-split and relocation moves of a sweep, each on its own stream, sharing one
/// table of the components' terms.
fn run_pair_moves(
    data: &PairData<'_>,
    prior: &Prior,
    state: &mut State,
    key: &StreamKey,
    index: u64,
    opts: &SweepOptions<'_>,
) -> (ResplitTally, RelocateTally) {
    if opts.resplit_pairs == 0 && opts.relocate_moves == 0 {
        return Default::default();
    }
    let mut terms = Terms::new(data, state);
    let resplits = resplit(
        data,
        &mut terms,
        prior,
        state,
        opts.resplit_pairs,
        opts.resplit_target,
        &mut key.resplit_rng(index),
    );
    let relocations = relocate(
        data,
        &mut terms,
        prior,
        state,
        opts.relocate_moves,
        opts.relocate_target,
        &mut key.relocate_rng(index),
    );
    (resplits, relocations)
}

/// The allocation drawn given the parameters (recording each observation's component,
/// `allocate::labelled`), then one collapsed scan and the split–merge proposals; the
/// log-likelihood is that of the
/// state the sweep started from, as on the fast path.
fn collapsed_allocation(
    x: &[f64],
    prior: &Prior,
    state: &State,
    table: &ComponentTable,
    key: &StreamKey,
    index: u64,
    alloc: AllocOptions,
) -> Allocation {
    let mut z = vec![0u32; x.len()];
    let first = allocate_labelled(x, table, key, index, &mut z, alloc.simd);
    let mut stats = collapsed_scan(x, &mut z, prior, state, &mut key.collapsed_rng(index));
    split_merge(
        x,
        &mut z,
        &mut stats,
        prior,
        state,
        SPLIT_MERGE_PROPOSALS,
        &mut key.split_merge_rng(index),
    );
    Allocation {
        stats,
        loglik: first.loglik,
    }
}

/// Components and exact values drawn given the parameters and the cells; for the collapsed
/// sweep, then one collapsed scan and the split–merge proposals on the exact values drawn.
fn censored_allocation(
    cells: &Cells,
    prior: &Prior,
    state: &State,
    key: &StreamKey,
    index: u64,
) -> Allocation {
    let (first, latent) = allocate_censored(cells, state, key, index, prior.collapsed);
    let Some(mut latent) = latent else {
        return first;
    };
    let mut stats = collapsed_scan(
        &latent.y,
        &mut latent.z,
        prior,
        state,
        &mut key.collapsed_rng(index),
    );
    split_merge(
        &latent.y,
        &mut latent.z,
        &mut stats,
        prior,
        state,
        SPLIT_MERGE_PROPOSALS,
        &mut key.split_merge_rng(index),
    );
    Allocation {
        stats,
        loglik: first.loglik,
    }
}

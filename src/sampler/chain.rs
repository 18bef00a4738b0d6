//! Runs one chain: warm-up, then kept draws every `thin` sweeps, handing each kept draw to
//! a [`DrawSink`] (the trace store, or a test's collector).
//!
//! A kept draw's log-likelihood is the one the next sweep's allocation pass computes for
//! free; only the chain's last draw needs a separate pass. Both use the same arithmetic, so
//! a chain that is stopped, resumed or extended writes exactly the rows an uninterrupted
//! chain writes.

use std::sync::atomic::{AtomicBool, Ordering};

use serde::{Deserialize, Serialize};

use super::allocate::{loglik_labelled, loglik_weighted, loglik_with, ComponentTable};
use super::censored::loglik_censored;
use super::rng::StreamKey;
use super::sweep::{sweep_opts, SweepOptions};
use crate::error::Result;
use crate::model::{Prior, State};

/// Length of a chain.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ChainPlan {
    pub warmup: u64,
    pub draws: u64,
    pub thin: u64,
}

impl ChainPlan {
    pub fn total_sweeps(&self) -> u64 {
        self.warmup + self.draws * self.thin
    }

    /// Whether the state after sweep `t` (from 1) is kept.
    pub fn is_kept(&self, t: u64) -> bool {
        t > self.warmup && (t - self.warmup).is_multiple_of(self.thin)
    }
}

/// A kept draw, in standard units.
#[derive(Debug, Clone, Copy)]
pub struct KeptDraw<'a> {
    /// Sweep number the draw was taken after, counted from 1 including warm-up.
    pub iteration: u64,
    pub loglik: f64,
    pub occupied: usize,
    pub state: &'a State,
}

/// Everything needed to continue a chain exactly.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Checkpoint {
    pub sweeps_done: u64,
    pub state: State,
    /// Occupied count of the last sweep when its draw is kept but not yet written (its
    /// log-likelihood comes from the next sweep).
    pub pending_occupied: Option<usize>,
}

/// Receives a chain's output.
pub trait DrawSink {
    fn draw(&mut self, draw: KeptDraw<'_>) -> Result<()>;
    /// Called after every sweep; the sink decides whether to store a checkpoint now.
    /// `force` is set at the end of the chain and when it is stopped.
    fn checkpoint(&mut self, cp: &dyn Fn() -> Checkpoint, force: bool) -> Result<()>;
}

/// How a chain ended.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ChainStop {
    Finished,
    Interrupted { sweeps_done: u64 },
}

/// Runs the chain from `start` (a fresh state with `sweeps_done = 0`, or a stored
/// checkpoint) until `plan` is complete or `stop` is raised.
pub fn run_chain(
    x: &[f64],
    prior: &Prior,
    key: &StreamKey,
    plan: ChainPlan,
    start: Checkpoint,
    sink: &mut dyn DrawSink,
    stop: &AtomicBool,
) -> Result<ChainStop> {
    let opts = SweepOptions::default();
    run_chain_opts(x, prior, key, plan, start, sink, stop, &opts)
}

/// [`run_chain`] with explicit [`SweepOptions`] (allocation threads, frequency weights);
/// the draws do not depend on the thread count.
#[allow(clippy::too_many_arguments)]
pub fn run_chain_opts(
    x: &[f64],
    prior: &Prior,
    key: &StreamKey,
    plan: ChainPlan,
    start: Checkpoint,
    sink: &mut dyn DrawSink,
    stop: &AtomicBool,
    opts: &SweepOptions<'_>,
) -> Result<ChainStop> {
    let Checkpoint {
        sweeps_done,
        mut state,
        mut pending_occupied,
    } = start;
    let total = plan.total_sweeps();
    let mut t = sweeps_done;
    while t < total {
        if stop.load(Ordering::Relaxed) {
            let snapshot = || Checkpoint {
                sweeps_done: t,
                state: state.clone(),
                pending_occupied,
            };
            sink.checkpoint(&snapshot, true)?;
            return Ok(ChainStop::Interrupted { sweeps_done: t });
        }
        let previous = pending_occupied.take().map(|occ| (occ, state.clone()));
        let out = sweep_opts(x, prior, &mut state, key, t + 1, opts);
        if let Some((occupied, prev_state)) = previous {
            sink.draw(KeptDraw {
                iteration: t,
                loglik: out.loglik_before,
                occupied,
                state: &prev_state,
            })?;
        }
        t += 1;
        if plan.is_kept(t) {
            pending_occupied = Some(out.occupied);
        }
        let snapshot = || Checkpoint {
            sweeps_done: t,
            state: state.clone(),
            pending_occupied,
        };
        sink.checkpoint(&snapshot, false)?;
    }
    if let Some(occupied) = pending_occupied.take() {
        let table = ComponentTable::new(&state);
        let ll = match (opts.cells, opts.counts) {
            (Some(cells), _) => loglik_censored(cells, &state),
            (None, Some(c)) => loglik_weighted(x, c, &table),
            // The collapsed sweep's first pass records the allocations (allocate::labelled).
            (None, None) if prior.collapsed => loglik_labelled(x, &table, opts.alloc.simd),
            (None, None) => loglik_with(x, &table, opts.alloc),
        };
        sink.draw(KeptDraw {
            iteration: t,
            loglik: ll,
            occupied,
            state: &state,
        })?;
    }
    let snapshot = || Checkpoint {
        sweeps_done: t,
        state: state.clone(),
        pending_occupied: None,
    };
    sink.checkpoint(&snapshot, true)?;
    Ok(ChainStop::Finished)
}

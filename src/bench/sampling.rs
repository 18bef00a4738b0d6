//! The sampler workload of one case: every chain in memory (no run directory), chains
//! spread over threads first and spare threads given to each chain's allocation blocks,
//! recording the density on the run's grid at every kept draw for the ESS column.

use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};
use std::sync::Mutex;
use std::time::Instant;

use crate::diagnostics::ess_bulk;
use crate::error::{Error, Result};
use crate::run::Prepared;
use crate::sampler::rng::StreamKey;
use crate::sampler::{
    initial_state, run_chain_opts, thread_split, AllocOptions, ChainPlan, Checkpoint, DrawSink,
    KeptDraw, SweepOptions,
};
use crate::summary::linspace;

/// Density of every kept draw at every grid point (standard units), grid-major.
struct DensitySink {
    grid: Vec<f64>,
    series: Vec<Vec<f64>>,
}

impl DrawSink for DensitySink {
    fn draw(&mut self, d: KeptDraw<'_>) -> Result<()> {
        for (g, s) in self.grid.iter().zip(self.series.iter_mut()) {
            s.push(d.state.density(*g));
        }
        Ok(())
    }
    fn checkpoint(
        &mut self,
        _cp: &dyn Fn() -> crate::sampler::Checkpoint,
        _force: bool,
    ) -> Result<()> {
        Ok(())
    }
}

/// One chain's density series (grid-major), filled in by its worker thread.
type ChainSlot = Mutex<Option<Result<Vec<Vec<f64>>>>>;

/// What one sampler workload measured.
#[derive(Debug, Clone, Copy)]
pub struct SamplingResult {
    pub sweeps_total: u64,
    pub wall_s: f64,
    /// Lowest bulk-ESS of the density over the grid points (None if no point had one).
    pub min_ess_bulk: Option<f64>,
    pub chain_workers: usize,
    pub threads_per_chain: usize,
}

/// Runs every chain of `prep` on `threads` threads.
pub fn run_sampling(prep: &Prepared, threads: usize) -> Result<SamplingResult> {
    let cfg = &prep.config;
    let plan = ChainPlan {
        warmup: cfg.warmup as u64,
        draws: cfg.draws as u64,
        thin: cfg.thin as u64,
    };
    let grid: Vec<f64> = linspace(cfg.grid_from, cfg.grid_to, cfg.grid_points)
        .into_iter()
        .map(|g| (g - prep.data.centre) / prep.data.scale)
        .collect();
    let chains = cfg.chains;
    let (workers, per_chain) = thread_split(threads, chains);
    let alloc = AllocOptions::fast(per_chain);
    let next = AtomicUsize::new(0);
    let stop = AtomicBool::new(false);
    let slots: Vec<ChainSlot> = (0..chains).map(|_| Mutex::new(None)).collect();
    let (x, _) = prep.sampler_data();
    let t0 = Instant::now();
    std::thread::scope(|s| {
        for _ in 0..workers {
            s.spawn(|| loop {
                let i = next.fetch_add(1, Ordering::SeqCst);
                if i >= chains {
                    break;
                }
                let key = StreamKey::new(cfg.seed, i as u64 + 1);
                let start = Checkpoint {
                    sweeps_done: 0,
                    state: initial_state(x, &prep.prior, &key),
                    pending_occupied: None,
                };
                let mut sink = DensitySink {
                    grid: grid.clone(),
                    series: vec![Vec::with_capacity(cfg.draws); grid.len()],
                };
                let opts = SweepOptions {
                    alloc,
                    ..SweepOptions::default()
                };
                let r = run_chain_opts(x, &prep.prior, &key, plan, start, &mut sink, &stop, &opts)
                    .map(|_| sink.series);
                if let Ok(mut slot) = slots[i].lock() {
                    *slot = Some(r);
                }
            });
        }
    });
    let wall_s = t0.elapsed().as_secs_f64();
    let mut per_chain_series = Vec::with_capacity(chains);
    for slot in slots {
        let r = slot
            .into_inner()
            .map_err(|_| Error::internal("a bench chain panicked"))?
            .unwrap_or_else(|| Err(Error::internal("a bench chain did not run")));
        per_chain_series.push(r?);
    }
    let mut min_ess: Option<f64> = None;
    for g in 0..grid.len() {
        let views: Vec<&[f64]> = per_chain_series.iter().map(|c| c[g].as_slice()).collect();
        if let Ok(e) = ess_bulk(&views) {
            if e.is_finite() {
                min_ess = Some(min_ess.map_or(e, |m: f64| m.min(e)));
            }
        }
    }
    Ok(SamplingResult {
        sweeps_total: plan.total_sweeps() * chains as u64,
        wall_s,
        min_ess_bulk: min_ess,
        chain_workers: workers,
        threads_per_chain: per_chain,
    })
}

//! `mixband bench`: synthetic workloads (N from 10^3 to 10^6, K from 5 to 50) run through
//! the real sampler, reporting ns per (observation × component) per sweep, sweeps per
//! second, wall time, peak memory and ESS per second of the density on the grid (lowest
//! bulk-ESS over the grid points divided by wall time); optionally the allocation kernels
//! alone. Speed figures come from here, never from tests.

mod cputime;
mod kernels;
mod memory;
mod report;
mod sampling;
mod workload;

pub use kernels::{run_kernels, KernelResult};
pub use report::{table_header, table_row, to_json, to_table, BenchRow};
pub use sampling::{run_sampling, SamplingResult};
pub use workload::{default_cases, prepare, Case};

use crate::error::Result;

/// How to run the benchmark.
#[derive(Debug, Clone)]
pub struct BenchOptions {
    pub cases: Vec<Case>,
    pub chains: usize,
    pub warmup: usize,
    pub draws: usize,
    pub threads: usize,
    pub seed: u64,
    /// Also time the allocation kernels alone, for about this many seconds each.
    pub kernel_seconds: Option<f64>,
}

/// Runs every case; `progress` is called with each finished row.
pub fn run_bench(
    opts: &BenchOptions,
    mut progress: impl FnMut(&BenchRow),
) -> Result<Vec<BenchRow>> {
    let mut rows = Vec::new();
    for &case in &opts.cases {
        let prep = prepare(case, opts.chains, opts.warmup, opts.draws, opts.seed)?;
        let mem_reset = memory::reset_peak();
        let cpu0 = cputime::process_s();
        let r = run_sampling(&prep, opts.threads)?;
        let cpu_s = match (cpu0, cputime::process_s()) {
            (Some(a), Some(b)) => Some(b - a),
            _ => None,
        };
        let peak = if mem_reset {
            memory::peak_bytes()
        } else {
            None
        };
        let kernels = match opts.kernel_seconds {
            Some(b) => run_kernels(&prep, b),
            None => Vec::new(),
        };
        let pairs = (case.n * case.k) as f64 * r.sweeps_total as f64;
        let row = BenchRow {
            n: case.n,
            k: case.k,
            chains: opts.chains,
            chain_workers: r.chain_workers,
            threads_per_chain: r.threads_per_chain,
            sweeps: r.sweeps_total,
            wall_s: r.wall_s,
            // Core-seconds per pair: wall time × threads in use, so the figure is per core.
            ns_per_pair: r.wall_s * 1e9 * (r.chain_workers * r.threads_per_chain) as f64 / pairs,
            cpu_ns_per_pair: cpu_s.map(|c| c * 1e9 / pairs),
            sweeps_per_s: r.sweeps_total as f64 / r.wall_s,
            peak_mib: peak.map(|b| b as f64 / (1024.0 * 1024.0)),
            min_ess_bulk: r.min_ess_bulk,
            ess_per_s: r.min_ess_bulk.map(|e| e / r.wall_s),
            kernels,
        };
        progress(&row);
        rows.push(row);
    }
    Ok(rows)
}

//! `mixband bench`: runs the synthetic benchmark and prints its table (or JSON).

use std::path::PathBuf;

use crate::bench::{
    default_cases, run_bench, table_header, table_row, to_json, BenchOptions, Case,
};
use crate::error::{Error, Result};
use crate::store::write_atomic;

/// Command-line options of `bench`.
#[derive(Debug, Clone, clap::Args)]
pub struct BenchArgs {
    /// Sample sizes, comma separated (default 1000,10000,100000,1000000).
    #[arg(long, value_delimiter = ',')]
    pub n: Option<Vec<usize>>,
    /// Component counts, comma separated (default 5,30,50).
    #[arg(long, value_delimiter = ',')]
    pub k: Option<Vec<usize>>,
    /// Chains per case.
    #[arg(long, default_value_t = 2)]
    pub chains: usize,
    /// Warm-up sweeps per chain.
    #[arg(long, default_value_t = 100)]
    pub warmup: usize,
    /// Kept draws per chain.
    #[arg(long, default_value_t = 200)]
    pub draws: usize,
    /// Threads (default: all cores).
    #[arg(long)]
    pub threads: Option<usize>,
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
    /// Also time the allocation kernels alone (reference and each blocked build), about
    /// this many seconds each.
    #[arg(long)]
    pub kernels: Option<f64>,
    /// Print JSON instead of the table.
    #[arg(long)]
    pub json: bool,
    /// Also write the JSON to this file.
    #[arg(long)]
    pub json_out: Option<PathBuf>,
}

pub(super) fn bench(a: &BenchArgs) -> Result<i32> {
    let ns = a.n.clone();
    let ks = a.k.clone();
    let cases: Vec<Case> = match (ns, ks) {
        (None, None) => default_cases(),
        (ns, ks) => {
            let ns = ns.unwrap_or_else(|| vec![1_000, 10_000, 100_000, 1_000_000]);
            let ks = ks.unwrap_or_else(|| vec![5, 30, 50]);
            ns.iter()
                .flat_map(|&n| ks.iter().map(move |&k| Case { n, k }))
                .collect()
        }
    };
    if cases.iter().any(|c| c.n < 2 || c.k < 1) {
        return Err(Error::input(
            "--n values must be at least 2 and --k values at least 1",
        ));
    }
    if a.chains < 1 || a.draws < 4 || a.threads == Some(0) {
        return Err(Error::input(
            "--chains and --threads must be at least 1, --draws at least 4",
        ));
    }
    let threads = a.threads.unwrap_or_else(|| {
        std::thread::available_parallelism()
            .map(|n| n.get())
            .unwrap_or(1)
    });
    let opts = BenchOptions {
        cases,
        chains: a.chains,
        warmup: a.warmup,
        draws: a.draws,
        threads,
        seed: a.seed,
        kernel_seconds: a.kernels,
    };
    if !a.json {
        println!("{}", table_header());
    }
    let rows = run_bench(&opts, |r| {
        if !a.json {
            println!("{}", table_row(r));
        }
    })?;
    let json = to_json(&rows);
    if a.json {
        println!("{json}");
    }
    if let Some(p) = &a.json_out {
        write_atomic(p, json.as_bytes())?;
    }
    Ok(0)
}

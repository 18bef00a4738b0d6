//! Synthetic workloads: a sample of N points from a fixed four-component normal mixture,
//! prepared through the same config path as a real run (location-scale kernel,
//! stick-breaking weights truncated at K, every other setting at its default).

use std::path::Path;

use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;

use crate::error::Result;
use crate::model::State;
use crate::run::Prepared;

/// One benchmark case.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Case {
    pub n: usize,
    pub k: usize,
}

/// The default grid of cases: N = 10^3 … 10^6, K = 5, 30, 50.
pub fn default_cases() -> Vec<Case> {
    let mut v = Vec::new();
    for n in [1_000, 10_000, 100_000, 1_000_000] {
        for k in [5, 30, 50] {
            v.push(Case { n, k });
        }
    }
    v
}

/// The data-generating mixture (weights, means, sds), in arbitrary units.
const TRUTH: [(f64, f64, f64); 4] = [
    (0.35, 10.0, 1.0),
    (0.3, 14.0, 0.7),
    (0.2, 17.0, 1.5),
    (0.15, 22.0, 0.5),
];

fn truth_state() -> State {
    State {
        log_w: TRUTH.iter().map(|t| t.0.ln()).collect(),
        log_v: Vec::new(),
        log_1mv: Vec::new(),
        mu: TRUTH.iter().map(|t| t.1).collect(),
        var: TRUTH.iter().map(|t| t.2 * t.2).collect(),
        concentration: 1.0,
        var_scale: 1.0,
    }
}

/// Prepares case `c`: data simulated with `seed`, config with `chains`, `warmup`, `draws`.
pub fn prepare(c: Case, chains: usize, warmup: usize, draws: usize, seed: u64) -> Result<Prepared> {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let x = crate::model::simulate_data(&truth_state(), c.n, &mut rng);
    let mut csv = String::with_capacity(c.n * 20 + 8);
    csv.push_str("x\n");
    for v in &x {
        csv.push_str(&crate::numfmt::fmt_f64(*v));
        csv.push('\n');
    }
    // The vectorised conditional allocation at every N (the default switches to the
    // collapsed scan up to 20 000 observations; its cost is in `cargo bench --bench mixing`).
    let config = format!(
        "[data]\nfile = \"synthetic.csv\"\ncolumn = \"x\"\n\n[model]\nkernel = \"location-scale\"\n\
         weights = \"stick-breaking\"\ncomponents = {}\n\n[sampler]\nchains = {chains}\nwarmup = {warmup}\n\
         draws = {draws}\nseed = {seed}\nallocation = \"conditional\"\n",
        c.k
    );
    Prepared::from_text(
        &config,
        "bench (built in)",
        Path::new("."),
        Some(csv.as_bytes()),
    )
}

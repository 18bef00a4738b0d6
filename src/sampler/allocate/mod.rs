//! The allocation step, z_i | rest, for every observation: the N × K hot loop.
//!
//! For each observation the unnormalised log posterior of each component is
//! ln w_k − ½ ln(2πσ_k²) − (x − μ_k)²/(2σ_k²); probabilities follow by log-sum-exp and one
//! uniform picks the component. Only sufficient statistics per component are kept,
//! accumulated per block of [`BLOCK`] observations (each block with its own random stream
//! keyed by (seed, chain, sweep, block)) and added in block order, so the result does not
//! depend on how blocks are spread over threads. The same pass returns the observed-data
//! log-likelihood of the state it was given; [`loglik`] computes it alone with the same
//! arithmetic, bit for bit.
//!
//! - [`reference`](mod@reference): the straightforward loop, the yardstick for tests;
//! - [`blocked`]: the fast kernel (register-blocked tiles, [`fastexp`], [`fastln`]),
//!   written once over `lanes` (vectors of 1, 2, 4 or 8 doubles);
//! - [`dispatch`]: the instruction set chosen at run time;
//! - `parallel`: blocks split over threads;
//! - [`weighted`]: rows with integer frequency weights (reference arithmetic);
//! - [`labelled`]: the pass that records each observation's component (collapsed sweep).

pub mod blocked;
pub mod dispatch;
pub mod fastexp;
pub mod fastln;
pub mod labelled;
mod lanes;
mod parallel;
pub mod reference;
pub mod shortchain;
mod types;
pub mod weighted;

pub use dispatch::{ExpKind, Simd};
pub use labelled::{allocate_labelled, loglik_labelled};
pub use parallel::thread_split;
pub use reference::{allocate_reference, allocate_reference_labels, loglik_reference};
pub use types::{Allocation, ComponentTable, SuffStats, BLOCK};
pub use weighted::{allocate_weighted, loglik_weighted};

use crate::sampler::rng::StreamKey;

/// How the allocation step runs. Draws depend on `exp` only; `simd` and `threads` change
/// the speed, never the bits.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct AllocOptions {
    pub simd: Simd,
    pub exp: ExpKind,
    /// Threads the blocks of one pass are split over (1: the calling thread only).
    pub threads: usize,
}

impl AllocOptions {
    /// The production path: fast exp, best instruction set, `threads` threads.
    pub fn fast(threads: usize) -> Self {
        AllocOptions {
            simd: Simd::detect(),
            exp: ExpKind::Fast,
            threads: threads.max(1),
        }
    }
}

impl Default for AllocOptions {
    fn default() -> Self {
        AllocOptions::fast(1)
    }
}

/// Draws z_i for every observation and returns the sufficient statistics (fast path, one
/// thread).
pub fn allocate(x: &[f64], table: &ComponentTable, key: &StreamKey, sweep: u64) -> Allocation {
    allocate_with(x, table, key, sweep, AllocOptions::default())
}

/// [`allocate`] with explicit options.
pub fn allocate_with(
    x: &[f64],
    table: &ComponentTable,
    key: &StreamKey,
    sweep: u64,
    opts: AllocOptions,
) -> Allocation {
    parallel::run(x, table, Some((key, sweep)), opts)
}

/// Observed-data log-likelihood of the state behind `table`, summed exactly as
/// [`allocate`] sums it.
pub fn loglik(x: &[f64], table: &ComponentTable) -> f64 {
    loglik_with(x, table, AllocOptions::default())
}

/// [`loglik`] with explicit options; equals [`allocate_with`]'s `loglik` for the same
/// `opts.exp`.
pub fn loglik_with(x: &[f64], table: &ComponentTable, opts: AllocOptions) -> f64 {
    parallel::run(x, table, None, opts).loglik
}

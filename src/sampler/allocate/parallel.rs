//! Spreading one allocation pass over threads by observation blocks. Each block has its
//! own random stream, and the per-block sums are added in block order after all threads
//! finish, so the result is the same for any thread count.

use super::blocked::Scratch;
use super::dispatch::run_block;
use super::types::{Allocation, ComponentTable, SuffStats, BLOCK};
use super::AllocOptions;
use crate::sampler::rng::StreamKey;

/// Fewest blocks per thread worth a thread's start-up cost.
const MIN_BLOCKS_PER_THREAD: usize = 4;

/// Runs blocks `first..` of `x` (the slice `xs` starting at block `first`), writing each
/// block's statistics and log-likelihood into `out`.
fn run_range(
    xs: &[f64],
    first: usize,
    table: &ComponentTable,
    draw: Option<(&StreamKey, u64)>,
    opts: AllocOptions,
    out: &mut [(SuffStats, f64)],
) {
    let mut sc = Scratch::new(table.k());
    for (i, (chunk, slot)) in xs.chunks(BLOCK).zip(out.iter_mut()).enumerate() {
        let b = (first + i) as u64;
        let mut rng = draw.map(|(key, sweep)| key.block_rng(sweep, b));
        slot.1 = run_block(
            opts.simd,
            opts.exp,
            chunk,
            table,
            &mut sc,
            rng.as_mut(),
            &mut slot.0,
        );
    }
}

/// One pass: allocations when `draw` = Some((key, sweep)), the log-likelihood always.
pub fn run(
    x: &[f64],
    table: &ComponentTable,
    draw: Option<(&StreamKey, u64)>,
    opts: AllocOptions,
) -> Allocation {
    let k = table.k();
    let blocks = x.len().div_ceil(BLOCK);
    let threads = opts.threads.min(blocks / MIN_BLOCKS_PER_THREAD).max(1);
    let mut stats = SuffStats::zeros(k);
    let mut loglik = 0.0;
    if threads == 1 {
        // Same arithmetic as below without the per-block buffer.
        let mut sc = Scratch::new(k);
        let mut block = SuffStats::zeros(k);
        for (b, chunk) in x.chunks(BLOCK).enumerate() {
            let mut rng = draw.map(|(key, sweep)| key.block_rng(sweep, b as u64));
            let ll = run_block(
                opts.simd,
                opts.exp,
                chunk,
                table,
                &mut sc,
                rng.as_mut(),
                &mut block,
            );
            stats.add(&block);
            loglik += ll;
        }
        return Allocation { stats, loglik };
    }
    let mut results: Vec<(SuffStats, f64)> =
        (0..blocks).map(|_| (SuffStats::zeros(k), 0.0)).collect();
    let per = blocks.div_ceil(threads);
    std::thread::scope(|s| {
        for (t, out) in results.chunks_mut(per).enumerate() {
            let first = t * per;
            let lo = first * BLOCK;
            let hi = ((first + out.len()) * BLOCK).min(x.len());
            let xs = &x[lo..hi];
            s.spawn(move || run_range(xs, first, table, draw, opts, out));
        }
    });
    for (block, ll) in &results {
        stats.add(block);
        loglik += ll;
    }
    Allocation { stats, loglik }
}

/// Splits `threads` between `chains` chains: as many chains at once as there are threads
/// (chains first), and the threads left over shared out to each running chain's blocks.
/// Returns (chains run at once, threads per chain).
pub fn thread_split(threads: usize, chains: usize) -> (usize, usize) {
    let threads = threads.max(1);
    let workers = threads.min(chains.max(1));
    (workers, (threads / workers).max(1))
}

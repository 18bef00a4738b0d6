//! The allocation step for tabulated data: row i stands for c_i identical observations
//! (integer frequency weights). The c_i allocations of a row are independent draws from
//! the row's probabilities, i.e. one multinomial(c_i, p_i) draw (a row of one takes the
//! categorical draw, a larger row the chain of binomials, O(K) whatever c_i); sufficient
//! statistics add the picks (n_k += m_ik, sum += m_ik·x_i, sumsq += m_ik·x_i²) and the
//! log-likelihood adds c_i · ln f(x_i). Built on the reference arithmetic ([`terms`], std's
//! `exp`), with the same per-block streams keyed by (seed, chain, sweep, block) and block
//! order summation; [`loglik_weighted`] sums exactly as [`allocate_weighted`] does, so a
//! chain's last kept draw gets the same bits as the others.

use rand::Rng;

use super::reference::{pick, terms};
use super::types::{Allocation, ComponentTable, SuffStats, BLOCK};
use crate::dist::multinomial;
use crate::sampler::rng::StreamKey;

/// Draws the allocations of every row (`counts[i]` of them for row i) and returns the
/// sufficient statistics.
pub fn allocate_weighted(
    x: &[f64],
    counts: &[u64],
    table: &ComponentTable,
    key: &StreamKey,
    sweep: u64,
) -> Allocation {
    assert_eq!(x.len(), counts.len(), "one count per row");
    let k = table.k();
    let mut stats = SuffStats::zeros(k);
    let mut loglik = 0.0;
    let mut p = vec![0.0; k];
    let mut picks = vec![0u64; k];
    let mut tail = vec![0.0; k];
    let mut block_stats = SuffStats::zeros(k);
    for (b, (chunk, cchunk)) in x.chunks(BLOCK).zip(counts.chunks(BLOCK)).enumerate() {
        let mut rng = key.block_rng(sweep, b as u64);
        block_stats.clear();
        let mut block_ll = 0.0;
        for (&xi, &ci) in chunk.iter().zip(cchunk) {
            let (m, s) = terms(xi, table, &mut p);
            block_ll += ci as f64 * (m + s.ln());
            picks.iter_mut().for_each(|v| *v = 0);
            if ci == 1 {
                picks[pick(&p, rng.random::<f64>() * s)] += 1;
            } else {
                multinomial(ci, &p, &mut tail, &mut picks, &mut rng);
            }
            for (j, &mj) in picks.iter().enumerate() {
                if mj > 0 {
                    let w = mj as f64;
                    block_stats.n[j] += mj;
                    block_stats.sum[j] += w * xi;
                    block_stats.sumsq[j] += w * (xi * xi);
                }
            }
        }
        stats.add(&block_stats);
        loglik += block_ll;
    }
    Allocation { stats, loglik }
}

/// Σ_i c_i ln f(x_i) at the state behind `table`, summed exactly as [`allocate_weighted`]
/// sums it.
pub fn loglik_weighted(x: &[f64], counts: &[u64], table: &ComponentTable) -> f64 {
    let mut p = vec![0.0; table.k()];
    let mut total = 0.0;
    for (chunk, cchunk) in x.chunks(BLOCK).zip(counts.chunks(BLOCK)) {
        let mut block_ll = 0.0;
        for (&xi, &ci) in chunk.iter().zip(cchunk) {
            let (m, s) = terms(xi, table, &mut p);
            block_ll += ci as f64 * (m + s.ln());
        }
        total += block_ll;
    }
    total
}

//! The reference allocation step, z_i | rest, for every observation: the straightforward
//! N × K loop with std's `exp`, kept as the yardstick the fast path ([`super::blocked`]) is
//! tested against.
//!
//! For each observation the unnormalised log posterior of each component is
//! ln w_k − ½ ln(2πσ_k²) − (x − μ_k)²/(2σ_k²); probabilities follow by log-sum-exp and one
//! uniform picks the component. Only sufficient statistics per component are kept (counts,
//! sums, sums of squares), accumulated per block of [`BLOCK`] observations and added in
//! block order, so sums do not depend on how blocks are spread over threads. The same pass
//! returns the observed-data log-likelihood of the state it was given.

use rand::Rng;

use super::types::{Allocation, ComponentTable, SuffStats, BLOCK};
use crate::sampler::rng::StreamKey;

/// Fills `p` with exp(t_k − max) and returns (max, Σ p): the log-sum-exp pieces for one
/// observation. Shared by the allocation and the log-likelihood so both agree bit for bit.
#[inline]
pub fn terms(x: f64, t: &ComponentTable, p: &mut [f64]) -> (f64, f64) {
    let mut m = f64::NEG_INFINITY;
    let params = t.mu.iter().zip(&t.log_const).zip(&t.half_prec);
    for (pj, ((&mu, &lc), &hp)) in p.iter_mut().zip(params) {
        let d = x - mu;
        let v = lc - d * d * hp;
        *pj = v;
        m = m.max(v);
    }
    let mut s = 0.0;
    for pj in p.iter_mut() {
        *pj = (*pj - m).exp();
        s += *pj;
    }
    (m, s)
}

/// The component whose cumulative share of `p` first exceeds `u` (a uniform on
/// [0, Σp)); the last one if rounding leaves `u` beyond the running sum.
#[inline]
pub fn pick(p: &[f64], u: f64) -> usize {
    let mut acc = 0.0;
    for (j, &pj) in p.iter().enumerate() {
        acc += pj;
        if u < acc {
            return j;
        }
    }
    p.len() - 1
}

/// Draws z_i for every observation and returns the sufficient statistics.
pub fn allocate_reference(
    x: &[f64],
    table: &ComponentTable,
    key: &StreamKey,
    sweep: u64,
) -> Allocation {
    allocate_reference_labels(x, table, key, sweep, None)
}

/// [`allocate_reference`] that also writes each observation's component into `labels`
/// (same streams, same draws), for moves that need the allocations themselves.
pub fn allocate_reference_labels(
    x: &[f64],
    table: &ComponentTable,
    key: &StreamKey,
    sweep: u64,
    mut labels: Option<&mut [u32]>,
) -> Allocation {
    let k = table.k();
    let mut stats = SuffStats::zeros(k);
    let mut loglik = 0.0;
    let mut p = vec![0.0; k];
    let mut block_stats = SuffStats::zeros(k);
    for (b, chunk) in x.chunks(BLOCK).enumerate() {
        let mut rng = key.block_rng(sweep, b as u64);
        block_stats.clear();
        let mut block_ll = 0.0;
        for (i, &xi) in chunk.iter().enumerate() {
            let (m, s) = terms(xi, table, &mut p);
            block_ll += m + s.ln();
            let pick = pick(&p, rng.random::<f64>() * s);
            if let Some(l) = labels.as_deref_mut() {
                l[b * BLOCK + i] = pick as u32;
            }
            block_stats.push(pick, xi);
        }
        stats.add(&block_stats);
        loglik += block_ll;
    }
    Allocation { stats, loglik }
}

/// Observed-data log-likelihood of the state behind `table`, summed exactly as
/// [`allocate_reference`] sums it.
pub fn loglik_reference(x: &[f64], table: &ComponentTable) -> f64 {
    let mut p = vec![0.0; table.k()];
    let mut total = 0.0;
    for chunk in x.chunks(BLOCK) {
        let mut block_ll = 0.0;
        for &xi in chunk {
            let (m, s) = terms(xi, table, &mut p);
            block_ll += m + s.ln();
        }
        total += block_ll;
    }
    total
}

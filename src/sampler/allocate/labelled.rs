//! The allocation given the parameters that also records each observation's component,
//! for the collapsed sweep (which needs the allocations themselves to start its scan
//! from). The reference loop's arithmetic and streams (one uniform an observation from the
//! block's stream, in order, [`pick`]), with the fast exp ([`super::fastexp`], vectorised
//! a block at a time by [`exp_fast_in_place`], the same bits on every instruction set) and
//! the fast ln in place of std's. [`loglik_labelled`] gives the pass's log-likelihood alone,
//! bit for bit, for a chain's last draw.

use rand::Rng;

use super::dispatch::exp_fast_in_place;
use super::fastln::ln_fast_f64;
use super::reference::pick;
use super::types::{Allocation, ComponentTable, SuffStats, BLOCK};
use super::Simd;
use crate::sampler::rng::StreamKey;

/// t_ik − max_k t_ik for the observations of `chunk` into `buf` (row-major, K a row), then
/// their exponentials; returns each row's max in `maxes`.
fn block_terms(
    chunk: &[f64],
    t: &ComponentTable,
    simd: Simd,
    buf: &mut Vec<f64>,
    maxes: &mut Vec<f64>,
) {
    let k = t.k();
    buf.clear();
    maxes.clear();
    for &xi in chunk {
        let start = buf.len();
        let mut m = f64::NEG_INFINITY;
        let params = t.mu.iter().zip(&t.log_const).zip(&t.half_prec);
        for ((&mu, &lc), &hp) in params {
            let d = xi - mu;
            let v = lc - d * d * hp;
            buf.push(v);
            m = m.max(v);
        }
        for v in &mut buf[start..start + k] {
            *v -= m;
        }
        maxes.push(m);
    }
    exp_fast_in_place(simd, buf);
}

/// Draws z_i for every observation given the parameters behind `table`, writing them into
/// `labels`; returns the statistics and the log-likelihood of those parameters.
pub fn allocate_labelled(
    x: &[f64],
    table: &ComponentTable,
    key: &StreamKey,
    sweep: u64,
    labels: &mut [u32],
    simd: Simd,
) -> Allocation {
    let k = table.k();
    let mut stats = SuffStats::zeros(k);
    let mut block_stats = SuffStats::zeros(k);
    let (mut buf, mut maxes) = (Vec::new(), Vec::new());
    let mut loglik = 0.0;
    for (b, chunk) in x.chunks(BLOCK).enumerate() {
        let mut rng = key.block_rng(sweep, b as u64);
        block_terms(chunk, table, simd, &mut buf, &mut maxes);
        block_stats.clear();
        let mut block_ll = 0.0;
        for (i, (&xi, &m)) in chunk.iter().zip(&maxes).enumerate() {
            let p = &buf[i * k..(i + 1) * k];
            let s: f64 = p.iter().sum();
            // s ≥ 1: the largest term is e^0.
            block_ll += m + ln_fast_f64(s);
            let j = pick(p, rng.random::<f64>() * s);
            labels[b * BLOCK + i] = j as u32;
            block_stats.push(j, xi);
        }
        stats.add(&block_stats);
        loglik += block_ll;
    }
    Allocation { stats, loglik }
}

/// The log-likelihood [`allocate_labelled`] returns, computed alone with the same
/// arithmetic.
pub fn loglik_labelled(x: &[f64], table: &ComponentTable, simd: Simd) -> f64 {
    let k = table.k();
    let (mut buf, mut maxes) = (Vec::new(), Vec::new());
    let mut loglik = 0.0;
    for chunk in x.chunks(BLOCK) {
        block_terms(chunk, table, simd, &mut buf, &mut maxes);
        let mut block_ll = 0.0;
        for (i, &m) in maxes.iter().enumerate() {
            let s: f64 = buf[i * k..(i + 1) * k].iter().sum();
            block_ll += m + ln_fast_f64(s);
        }
        loglik += block_ll;
    }
    loglik
}

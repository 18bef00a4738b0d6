//! The fast allocation kernel: one block of observations at a time, laid out as a
//! structure of arrays with components outer and a tile of observations inner, so every
//! inner loop is a straight pass over contiguous memory that the compiler vectorises.
//!
//! Arithmetic per (observation, component) is the reference's, in the same order: the
//! same log-probability expression, the same running maximum, the terms summed over
//! components in component order, and the pick found from the same running sum (the
//! first k with u < Σ_{j≤k} p_j is the number of k with Σ_{j≤k} p_j ≤ u, as the running
//! sum never decreases). So with std's `exp` this kernel gives the reference's bits; with
//! [`super::fastexp::exp_fast`] only the exponentials differ (relative 1e-15).

use rand::Rng;
use rand_chacha::ChaCha8Rng;

use super::fastexp::exp_fast;
use super::types::{ComponentTable, SuffStats};

/// Observations per tile: K × TILE doubles of scratch stay in the first-level cache for K
/// up to about 40.
pub const TILE: usize = 128;

/// Which exponential the kernel uses.
pub trait ExpFn {
    fn exp(x: f64) -> f64;
}

/// std's `exp` (the reference's).
pub struct StdExp;
/// [`exp_fast`].
pub struct FastExp;

impl ExpFn for StdExp {
    #[inline(always)]
    fn exp(x: f64) -> f64 {
        x.exp()
    }
}

impl ExpFn for FastExp {
    #[inline(always)]
    fn exp(x: f64) -> f64 {
        exp_fast(x)
    }
}

/// Per-thread scratch for one tile.
#[derive(Debug, Clone)]
pub struct Scratch {
    /// K × TILE terms, component-major.
    p: Vec<f64>,
    m: Vec<f64>,
    s: Vec<f64>,
    u: Vec<f64>,
    acc: Vec<f64>,
    count: Vec<u64>,
}

impl Scratch {
    pub fn new(k: usize) -> Self {
        Scratch {
            p: vec![0.0; k * TILE],
            m: vec![0.0; TILE],
            s: vec![0.0; TILE],
            u: vec![0.0; TILE],
            acc: vec![0.0; TILE],
            count: vec![0; TILE],
        }
    }
}

/// Fills the tile's terms exp(t_jk − m_i) (component-major, row length `x.len()`), the
/// maxima m_i and the sums s_i.
#[inline(always)]
fn tile_terms<E: ExpFn>(x: &[f64], t: &ComponentTable, sc: &mut Scratch) {
    let n = x.len();
    let k = t.k();
    let m = &mut sc.m[..n];
    let s = &mut sc.s[..n];
    m.fill(f64::NEG_INFINITY);
    for j in 0..k {
        let (mu, lc, hp) = (t.mu[j], t.log_const[j], t.half_prec[j]);
        let row = &mut sc.p[j * n..(j + 1) * n];
        for ((r, &xi), mi) in row.iter_mut().zip(x).zip(m.iter_mut()) {
            let d = xi - mu;
            let v = lc - d * d * hp;
            *r = v;
            // f64::max without its NaN fix-up; the same value, as m is never NaN.
            *mi = if v > *mi { v } else { *mi };
        }
    }
    s.fill(0.0);
    for j in 0..k {
        let row = &mut sc.p[j * n..(j + 1) * n];
        for ((r, &mi), si) in row.iter_mut().zip(m.iter()).zip(s.iter_mut()) {
            let e = E::exp(*r - mi);
            *r = e;
            *si += e;
        }
    }
}

/// Σ_i (m_i + ln s_i) over the tile, summed in observation order onto `ll`.
#[inline(always)]
fn tile_loglik(n: usize, sc: &Scratch, mut ll: f64) -> f64 {
    for (&mi, &si) in sc.m[..n].iter().zip(&sc.s[..n]) {
        ll += mi + si.ln();
    }
    ll
}

/// Draws the tile's allocations from `rng` (one uniform per observation, in order) and
/// adds them to `stats`.
#[inline(always)]
fn tile_pick(x: &[f64], k: usize, sc: &mut Scratch, rng: &mut ChaCha8Rng, stats: &mut SuffStats) {
    let n = x.len();
    for (ui, &si) in sc.u[..n].iter_mut().zip(&sc.s[..n]) {
        *ui = rng.random::<f64>() * si;
    }
    let acc = &mut sc.acc[..n];
    let count = &mut sc.count[..n];
    let u = &sc.u[..n];
    acc.fill(0.0);
    count.fill(0);
    for j in 0..k {
        let row = &sc.p[j * n..(j + 1) * n];
        for (((a, c), &ui), &pj) in acc.iter_mut().zip(count.iter_mut()).zip(u).zip(row) {
            *a += pj;
            *c += u64::from(*a <= ui);
        }
    }
    let last = (k - 1) as u64;
    for (&xi, &c) in x.iter().zip(count.iter()) {
        let pick = c.min(last) as usize;
        stats.n[pick] += 1;
        stats.sum[pick] += xi;
        stats.sumsq[pick] += xi * xi;
    }
}

/// One block: allocations drawn from `rng` into `stats` (cleared first) when `rng` is
/// given; returns the block's log-likelihood, summed in observation order from 0.
#[inline(always)]
pub fn block_pass<E: ExpFn>(
    x: &[f64],
    t: &ComponentTable,
    sc: &mut Scratch,
    mut rng: Option<&mut ChaCha8Rng>,
    stats: &mut SuffStats,
) -> f64 {
    stats.clear();
    let mut ll = 0.0;
    for tile in x.chunks(TILE) {
        tile_terms::<E>(tile, t, sc);
        ll = tile_loglik(tile.len(), sc, ll);
        if let Some(r) = rng.as_deref_mut() {
            tile_pick(tile, t.k(), sc, r, stats);
        }
    }
    ll
}

/// Allocation probabilities of every observation (row i holds p_i1..p_iK), from the fast
/// kernel; for tests against the reference.
pub fn probabilities<E: ExpFn>(x: &[f64], t: &ComponentTable) -> Vec<Vec<f64>> {
    let k = t.k();
    let mut sc = Scratch::new(k);
    let mut out = Vec::with_capacity(x.len());
    for tile in x.chunks(TILE) {
        tile_terms::<E>(tile, t, &mut sc);
        let n = tile.len();
        for i in 0..n {
            out.push((0..k).map(|j| sc.p[j * n + i] / sc.s[i]).collect());
        }
    }
    out
}

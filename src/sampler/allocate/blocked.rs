//! The fast allocation kernel: one block of observations at a time, in tiles of [`TILE`]
//! observations, register-blocked: for each group of `W` observations (one vector of
//! `Lanes`) the loop over components keeps the running maximum, the running sum and, in
//! the pick, the count in registers, and the group's values lie contiguously (components ×
//! lanes). The exp pass stores the running sums, which the pick compares with its
//! uniform. Written once against `Lanes`; [`super::dispatch`] compiles it for each
//! instruction set.
//!
//! Arithmetic per (observation, component) is the reference's, in the same order: the
//! same log-probability expression, the same running maximum (`if v > m { v } else { m }`
//! in component order, which is what `maxpd(v, m)` computes and, m never being NaN, what
//! `m.max(v)` gives), the terms summed over components in component order, and the pick
//! found from the same running sum (the first k with u < Σ_{j≤k} p_j is the number of k
//! with Σ_{j≤k} p_j ≤ u, as the running sum never decreases). So with std's `exp` this
//! kernel gives the reference's bits; with [`super::fastexp::exp_fast`] only the
//! exponentials differ (relative 6e-15 for terms near the largest, under 1.9e-13 for the
//! smallest normal ones), and the log-likelihood, summed from products of the s_i with
//! [`super::fastln::ln_fast`] (see `tile_loglik`).

use rand::Rng;
use rand_chacha::ChaCha8Rng;

use super::lanes::{Lanes, MAX_W};
use super::types::{ComponentTable, SuffStats};

/// Observations per tile: K × TILE doubles of scratch stay in the first-level cache (48 KiB
/// on the development machine) for K up to about 80; 64 measured slightly faster than 128
/// at K = 30 and 50. A multiple of every vector width.
pub const TILE: usize = 64;
const _: () = assert!(TILE.is_multiple_of(MAX_W) && TILE / MAX_W <= 32);

/// Which exponential and logarithm the kernel uses, on a vector.
pub trait ExpFn {
    /// Whether the log-likelihood takes one `ln` per observation in observation order
    /// (the reference's arithmetic) rather than one per product of TILE/8 (see
    /// `tile_loglik`).
    const LN_EACH: bool;
    fn exp<L: Lanes>(v: L) -> L;
    fn ln<L: Lanes>(v: L) -> L;
}

/// std's `exp` and `ln` (the reference's).
pub struct StdExp;
/// [`super::fastexp::exp_fast`] and [`super::fastln::ln_fast`].
pub struct FastExp;

impl ExpFn for StdExp {
    const LN_EACH: bool = true;
    #[inline(always)]
    fn exp<L: Lanes>(v: L) -> L {
        v.exp_std()
    }
    #[inline(always)]
    fn ln<L: Lanes>(v: L) -> L {
        v.ln_std()
    }
}

impl ExpFn for FastExp {
    const LN_EACH: bool = false;
    #[inline(always)]
    fn exp<L: Lanes>(v: L) -> L {
        v.exp_fast()
    }
    #[inline(always)]
    fn ln<L: Lanes>(v: L) -> L {
        v.ln_fast()
    }
}

/// Per-thread scratch for one tile.
#[derive(Debug, Clone)]
pub struct Scratch {
    k: usize,
    /// K × TILE terms: groups of W observations, then components, then lanes.
    p: Vec<f64>,
    /// The tile's observations, padded with zeros to a whole number of groups.
    x: Vec<f64>,
    m: Vec<f64>,
    s: Vec<f64>,
    u: Vec<f64>,
    /// Random words for the tile's uniforms.
    bits: Vec<u64>,
    count: Vec<u64>,
}

impl Scratch {
    pub fn new(k: usize) -> Self {
        Scratch {
            k,
            p: vec![0.0; k * TILE],
            x: vec![0.0; TILE],
            m: vec![0.0; TILE],
            s: vec![0.0; TILE],
            u: vec![0.0; TILE],
            bits: vec![0; TILE],
            count: vec![0; TILE],
        }
    }
}

/// Fills the tile's terms exp(t_jk − m_i) (with `PREFIX`, their running sums over
/// components instead, which is all the pick needs: the sequence of additions is the
/// pick's own, so the same bits), the maxima m_i and the sums s_i. Lanes past `x.len()`
/// in the last group hold the values of x = 0, never read.
#[inline(always)]
fn tile_terms<L: Lanes, E: ExpFn, const PREFIX: bool>(
    x: &[f64],
    t: &ComponentTable,
    sc: &mut Scratch,
) {
    let n = x.len();
    let k = t.k();
    let w = L::W;
    assert!(n <= TILE && sc.k == k && t.log_const.len() == k && t.half_prec.len() == k);
    sc.x[..n].copy_from_slice(x);
    sc.x[n..].fill(0.0);
    for g in 0..n.div_ceil(w) {
        // SAFETY: g · w + w ≤ TILE (TILE is a multiple of w), so the group's w entries of
        // x, m and s and its k · w terms at g · k · w lie inside the scratch.
        unsafe {
            let xv = L::load(sc.x.as_ptr().add(g * w));
            let base = sc.p.as_mut_ptr().add(g * k * w);
            let mut m = L::splat(f64::NEG_INFINITY);
            for j in 0..k {
                let d = xv.sub(L::splat(t.mu[j]));
                let v = L::splat(t.log_const[j]).sub(d.mul(d).mul(L::splat(t.half_prec[j])));
                v.store(base.add(j * w));
                m = v.max_of(m);
            }
            let mut s = L::splat(0.0);
            for j in 0..k {
                let r = base.add(j * w);
                let e = E::exp(L::load(r).sub(m));
                s = s.add(e);
                if PREFIX {
                    s.store(r);
                } else {
                    e.store(r);
                }
            }
            m.store(sc.m.as_mut_ptr().add(g * w));
            s.store(sc.s.as_mut_ptr().add(g * w));
        }
    }
}

/// Σ_i (m_i + ln s_i) over the tile, added onto `ll`.
///
/// With std's `ln` ([`ExpFn::LN_EACH`]), one `ln` per observation, summed in observation
/// order (the reference's arithmetic). Otherwise in eight fixed interleaved streams,
/// r = i mod 8, whatever the vector width: per stream the sum of m_i and the product of
/// s_i (TILE/8 = 8 factors in [1, K], so no overflow), one [`ExpFn::ln`] per stream, then
/// the streams' sums and logarithms added in stream order. That is one logarithm per
/// TILE/8 observations and no serial chain of additions per observation.
#[inline(always)]
fn tile_loglik<L: Lanes, E: ExpFn>(n: usize, sc: &mut Scratch, mut ll: f64) -> f64 {
    if E::LN_EACH {
        for (&mi, &si) in sc.m[..n].iter().zip(&sc.s[..n]) {
            ll += mi + si.ln();
        }
        return ll;
    }
    let w = L::W;
    let per = MAX_W / w;
    // Observations past n count as m = 0, s = 1.
    sc.m[n..].fill(0.0);
    sc.s[n..].fill(1.0);
    let mut msum = [L::splat(0.0); MAX_W];
    let mut prod = [L::splat(1.0); MAX_W];
    for g in 0..n.div_ceil(MAX_W) {
        for h in 0..per {
            // SAFETY: g · 8 + 8 ≤ TILE, the length of m and s.
            unsafe {
                let at = g * MAX_W + h * w;
                msum[h] = msum[h].add(L::load(sc.m.as_ptr().add(at)));
                prod[h] = prod[h].mul(L::load(sc.s.as_ptr().add(at)));
            }
        }
    }
    let mut ms = [0.0; MAX_W];
    let mut ls = [0.0; MAX_W];
    for h in 0..per {
        // SAFETY: h · w + w ≤ MAX_W.
        unsafe {
            msum[h].store(ms.as_mut_ptr().add(h * w));
            E::ln(prod[h]).store(ls.as_mut_ptr().add(h * w));
        }
    }
    for (&a, &b) in ms.iter().zip(&ls) {
        ll += a + b;
    }
    ll
}

/// Draws the tile's allocations from `rng` (one uniform per observation, in order) and
/// adds them to `stats`.
#[inline(always)]
fn tile_pick<L: Lanes>(
    x: &[f64],
    k: usize,
    sc: &mut Scratch,
    rng: &mut ChaCha8Rng,
    stats: &mut SuffStats,
) {
    let n = x.len();
    let w = L::W;
    // The uniforms `rng.random::<f64>()` would give, one per observation in order: the
    // same 64-bit words (the block generator's fill and next_u64 read its buffer alike;
    // the reference test checks it), top 53 bits scaled to [0, 1), drawn in one call.
    rng.fill(&mut sc.bits[..n]);
    let scale = 1.0 / (1u64 << 53) as f64;
    for ((ui, &b), &si) in sc.u[..n].iter_mut().zip(&sc.bits[..n]).zip(&sc.s[..n]) {
        *ui = scale * ((b >> 11) as f64) * si;
    }
    assert!(n <= TILE && sc.k == k);
    for g in 0..n.div_ceil(w) {
        // SAFETY: as in `tile_terms`; lanes past n read stale u and their counts are unused.
        unsafe {
            let base = sc.p.as_ptr().add(g * k * w);
            let u = L::load(sc.u.as_ptr().add(g * w));
            let mut count = L::count_zero();
            for j in 0..k {
                count = L::count_le(count, L::load(base.add(j * w)), u);
            }
            L::store_count(count, sc.count.as_mut_ptr().add(g * w));
        }
    }
    let last = (k - 1) as u64;
    // Slices of length k, so the indexing below needs no bounds checks (pick < k).
    let (sn, ssum, ssq) = (
        &mut stats.n[..k],
        &mut stats.sum[..k],
        &mut stats.sumsq[..k],
    );
    for (&xi, &c) in x.iter().zip(&sc.count[..n]) {
        let pick = c.min(last) as usize;
        sn[pick] += 1;
        ssum[pick] += xi;
        ssq[pick] += xi * xi;
    }
}

/// One block: allocations drawn from `rng` into `stats` (cleared first) when `rng` is
/// given; returns the block's log-likelihood, summed in observation order from 0.
#[inline(always)]
pub fn block_pass<L: Lanes, E: ExpFn>(
    x: &[f64],
    t: &ComponentTable,
    sc: &mut Scratch,
    mut rng: Option<&mut ChaCha8Rng>,
    stats: &mut SuffStats,
) -> f64 {
    stats.clear();
    let mut ll = 0.0;
    for tile in x.chunks(TILE) {
        tile_terms::<L, E, true>(tile, t, sc);
        ll = tile_loglik::<L, E>(tile.len(), sc, ll);
        if let Some(r) = rng.as_deref_mut() {
            tile_pick::<L>(tile, t.k(), sc, r, stats);
        }
    }
    ll
}

/// Allocation probabilities of every observation (row i holds p_i1..p_iK); for tests
/// against the reference.
#[inline(always)]
pub fn probabilities<L: Lanes, E: ExpFn>(x: &[f64], t: &ComponentTable) -> Vec<Vec<f64>> {
    let k = t.k();
    let w = L::W;
    let mut sc = Scratch::new(k);
    let mut out = Vec::with_capacity(x.len());
    for tile in x.chunks(TILE) {
        tile_terms::<L, E, false>(tile, t, &mut sc);
        for i in 0..tile.len() {
            let (g, lane) = (i / w, i % w);
            out.push(
                (0..k)
                    .map(|j| sc.p[(g * k + j) * w + lane] / sc.s[i])
                    .collect(),
            );
        }
    }
    out
}

//! The allocation step, z_i | rest, for every observation: the N × K hot loop.
//!
//! For each observation the unnormalised log posterior of each component is
//! ln w_k − ½ ln(2πσ_k²) − (x − μ_k)²/(2σ_k²); probabilities follow by log-sum-exp and one
//! uniform picks the component. Only sufficient statistics per component are kept (counts,
//! sums, sums of squares), accumulated per block of [`BLOCK`] observations and added in
//! block order, so sums do not depend on how blocks are spread over threads. The same pass
//! returns the observed-data log-likelihood of the state it was given.

use rand::Rng;

use super::rng::StreamKey;
use crate::dist::LN_SQRT_2PI;
use crate::model::State;

/// Observations per allocation block (and per random stream).
pub const BLOCK: usize = 1024;

/// Per-component constants of the allocation log-probabilities.
#[derive(Debug, Clone, PartialEq)]
pub struct ComponentTable {
    /// ln w_k − ln σ_k − ln √(2π).
    pub log_const: Vec<f64>,
    pub mu: Vec<f64>,
    /// 1 / (2σ_k²).
    pub half_prec: Vec<f64>,
}

impl ComponentTable {
    pub fn new(state: &State) -> Self {
        let k = state.k();
        let mut t = ComponentTable {
            log_const: Vec::with_capacity(k),
            mu: state.mu.clone(),
            half_prec: Vec::with_capacity(k),
        };
        for j in 0..k {
            let v = state.var[j];
            t.log_const
                .push(state.log_w[j] - 0.5 * v.ln() - LN_SQRT_2PI);
            t.half_prec.push(0.5 / v);
        }
        t
    }

    pub fn k(&self) -> usize {
        self.mu.len()
    }
}

/// Per-component counts, sums and sums of squares of the allocated observations.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct SuffStats {
    pub n: Vec<u64>,
    pub sum: Vec<f64>,
    pub sumsq: Vec<f64>,
}

impl SuffStats {
    pub fn zeros(k: usize) -> Self {
        SuffStats {
            n: vec![0; k],
            sum: vec![0.0; k],
            sumsq: vec![0.0; k],
        }
    }

    /// Adds `other` component-wise.
    pub fn add(&mut self, other: &SuffStats) {
        for j in 0..self.n.len() {
            self.n[j] += other.n[j];
            self.sum[j] += other.sum[j];
            self.sumsq[j] += other.sumsq[j];
        }
    }

    /// Number of components holding at least one observation.
    pub fn occupied(&self) -> usize {
        self.n.iter().filter(|&&c| c > 0).count()
    }

    pub fn total(&self) -> u64 {
        self.n.iter().sum()
    }
}

/// Result of one allocation pass.
#[derive(Debug, Clone, PartialEq)]
pub struct Allocation {
    pub stats: SuffStats,
    /// Σ_i ln Σ_k w_k N(x_i; μ_k, σ_k²) at the state the pass was given.
    pub loglik: f64,
}

/// Fills `p` with exp(t_k − max) and returns (max, Σ p): the log-sum-exp pieces for one
/// observation. Shared by the allocation and the log-likelihood so both agree bit for bit.
#[inline]
fn terms(x: f64, t: &ComponentTable, p: &mut [f64]) -> (f64, f64) {
    let mut m = f64::NEG_INFINITY;
    for j in 0..t.k() {
        let d = x - t.mu[j];
        let v = t.log_const[j] - d * d * t.half_prec[j];
        p[j] = v;
        m = m.max(v);
    }
    let mut s = 0.0;
    for pj in p.iter_mut() {
        *pj = (*pj - m).exp();
        s += *pj;
    }
    (m, s)
}

/// Draws z_i for every observation and returns the sufficient statistics.
pub fn allocate(x: &[f64], table: &ComponentTable, key: &StreamKey, sweep: u64) -> Allocation {
    let k = table.k();
    let mut stats = SuffStats::zeros(k);
    let mut loglik = 0.0;
    let mut p = vec![0.0; k];
    let mut block_stats = SuffStats::zeros(k);
    for (b, chunk) in x.chunks(BLOCK).enumerate() {
        let mut rng = key.block_rng(sweep, b as u64);
        block_stats.n.iter_mut().for_each(|v| *v = 0);
        block_stats.sum.iter_mut().for_each(|v| *v = 0.0);
        block_stats.sumsq.iter_mut().for_each(|v| *v = 0.0);
        let mut block_ll = 0.0;
        for &xi in chunk {
            let (m, s) = terms(xi, table, &mut p);
            block_ll += m + s.ln();
            let u = rng.random::<f64>() * s;
            let mut acc = 0.0;
            let mut pick = k - 1;
            for (j, &pj) in p.iter().enumerate() {
                acc += pj;
                if u < acc {
                    pick = j;
                    break;
                }
            }
            block_stats.n[pick] += 1;
            block_stats.sum[pick] += xi;
            block_stats.sumsq[pick] += xi * xi;
        }
        stats.add(&block_stats);
        loglik += block_ll;
    }
    Allocation { stats, loglik }
}

/// Observed-data log-likelihood of the state behind `table`, summed exactly as
/// [`allocate`] sums it.
pub fn loglik(x: &[f64], table: &ComponentTable) -> f64 {
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

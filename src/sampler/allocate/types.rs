//! The data the allocation step reads and returns: per-component constants of the
//! log-probabilities, per-component sufficient statistics, and the result of one pass.

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

    /// Sets every entry back to zero.
    /// Adds observation `x` to component `k`.
    #[inline(always)]
    pub fn push(&mut self, k: usize, x: f64) {
        self.n[k] += 1;
        self.sum[k] += x;
        self.sumsq[k] += x * x;
    }

    pub fn clear(&mut self) {
        self.n.iter_mut().for_each(|v| *v = 0);
        self.sum.iter_mut().for_each(|v| *v = 0.0);
        self.sumsq.iter_mut().for_each(|v| *v = 0.0);
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

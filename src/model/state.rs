//! The sampler's state: weights (as logarithms), component means and variances, and the
//! hyperparameters that are sampled. Everything the next sweep needs, so a stored state
//! continues a chain exactly.

use serde::{Deserialize, Serialize};

/// One point of the Markov chain, in standard units.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct State {
    /// ln w_k, k = 1..K.
    pub log_w: Vec<f64>,
    /// Stick-breaking only: ln v_k and ln(1 − v_k) (v_K = 1, so ln(1 − v_K) = −∞ is not stored
    /// meaningfully and is set to 0 by convention). Empty for Dirichlet weights.
    pub log_v: Vec<f64>,
    pub log_1mv: Vec<f64>,
    /// μ_k.
    pub mu: Vec<f64>,
    /// σ_k²; for the location kernel every entry equals the common σ².
    pub var: Vec<f64>,
    /// δ (Dirichlet) or α (stick-breaking).
    pub concentration: f64,
    /// b of the Inverse-Gamma prior on variances.
    pub var_scale: f64,
}

impl State {
    /// Number of components.
    pub fn k(&self) -> usize {
        self.mu.len()
    }

    /// Weights on the linear scale.
    pub fn weights(&self) -> Vec<f64> {
        self.log_w.iter().map(|l| l.exp()).collect()
    }

    /// Mixture density at `x` (standard units).
    pub fn density(&self, x: f64) -> f64 {
        (0..self.k())
            .map(|k| {
                let sd = self.var[k].sqrt();
                (self.log_w[k] + crate::dist::ln_normal_pdf(x, self.mu[k], sd)).exp()
            })
            .sum()
    }

    /// Recompute ln w from the sticks: ln w_k = ln v_k + Σ_{j<k} ln(1 − v_j).
    pub fn weights_from_sticks(&mut self) {
        let mut acc = 0.0;
        for k in 0..self.k() {
            self.log_w[k] = self.log_v[k] + acc;
            acc += self.log_1mv[k];
        }
    }
}

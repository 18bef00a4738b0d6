//! Expected log pointwise predictive density by PSIS leave-one-out cross-validation
//! (Vehtari, Gelman & Gabry 2017, Statistics and Computing 27, 1413–1432): for each
//! observation the importance ratios 1/p(y_i | θ_s) are Pareto smoothed ([`super::psis`])
//! and elpd_i = ln Σ_s w_is p(y_i | θ_s) with normalised smoothed weights w_is. The
//! standard error is √(n · Var(elpd_i)) (population variance, as ArviZ) and
//! p_loo = lppd − elpd_loo.

use serde::Serialize;

use super::psis::psis;
use super::LogLik;
use crate::dist::log_sum_exp;

/// PSIS-LOO estimate with pointwise values.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Loo {
    pub elpd: f64,
    pub se: f64,
    pub p_loo: f64,
    #[serde(skip)]
    pub pointwise: Vec<f64>,
    pub pareto_k: Vec<f64>,
    /// The k above which a PSIS estimate is unreliable for this many draws:
    /// min(1 − 1/log10 S, 0.7) (Vehtari et al. 2024).
    pub k_threshold: f64,
    /// Observations (1-based, in data order) with k̂ above the threshold.
    pub bad_k: Vec<usize>,
}

/// PSIS-LOO of a log-likelihood matrix with relative efficiency `r_eff`.
pub fn loo(ll: &LogLik, r_eff: f64) -> Loo {
    let (s, n) = (ll.draws, ll.obs);
    let mut pointwise = Vec::with_capacity(n);
    let mut pareto_k = Vec::with_capacity(n);
    let mut lppd = 0.0;
    let mut col = vec![0.0; s];
    let mut terms = vec![0.0; s];
    for i in 0..n {
        ll.column(i, &mut col);
        let ratios: Vec<f64> = col.iter().map(|v| -v).collect();
        let sm = psis(&ratios, r_eff);
        for d in 0..s {
            terms[d] = sm.log_weights[d] + col[d];
        }
        pointwise.push(log_sum_exp(&terms));
        pareto_k.push(sm.k);
        lppd += log_sum_exp(&col) - (s as f64).ln();
    }
    let elpd: f64 = pointwise.iter().sum();
    let k_threshold = (1.0 - 1.0 / (s as f64).log10()).min(0.7);
    let bad_k = pareto_k
        .iter()
        .enumerate()
        .filter(|(_, &k)| k > k_threshold)
        .map(|(i, _)| i + 1)
        .collect();
    Loo {
        elpd,
        se: super::sum_se(&pointwise),
        p_loo: lppd - elpd,
        pointwise,
        pareto_k,
        k_threshold,
        bad_k,
    }
}

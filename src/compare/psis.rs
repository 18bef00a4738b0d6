//! Pareto smoothed importance sampling (PSIS) of one vector of log importance ratios.
//!
//! The largest M = ⌈min(S/5, 3√(S/r_eff))⌉ ratios are replaced by expected order
//! statistics of a generalized Pareto distribution fitted to them, and its shape k̂ is the
//! diagnostic (Vehtari, Simpson, Gelman, Yao & Gabry 2024, "Pareto smoothed importance
//! sampling", JMLR 25(72)). The fit is the empirical-Bayes estimate of Zhang & Stephens
//! (2009, Technometrics 51, 316–325) with the weakly informative prior on k that pulls it
//! towards 0.5 (10 pseudo-observations), as ArviZ 0.23 computes it (`_psislw`, `_gpdfit`,
//! `_gpinv` in arviz/stats/stats.py, read for this port); the tests compare with ArviZ.

use crate::dist::log_sum_exp;

/// Smoothed, normalised log weights and the Pareto shape estimate (∞ when the tail has
/// too few draws to fit).
#[derive(Debug, Clone, PartialEq)]
pub struct Smoothed {
    pub log_weights: Vec<f64>,
    pub k: f64,
}

/// PSIS of `log_ratios` (S ≥ 2 values) with relative efficiency `r_eff` (1 for
/// independent draws).
pub fn psis(log_ratios: &[f64], r_eff: f64) -> Smoothed {
    let s = log_ratios.len();
    let max = log_ratios.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let mut x: Vec<f64> = log_ratios.iter().map(|&v| v - max).collect();
    let m = (s as f64 / 5.0).min(3.0 * (s as f64 / r_eff).sqrt()).ceil() as usize;
    let mut order: Vec<usize> = (0..s).collect();
    order.sort_by(|&a, &b| x[a].total_cmp(&x[b]));
    // The cut is the (M + 1)-th largest value (ArviZ: sorted[-M - 1]), kept above the
    // smallest positive double.
    let cut_at = s.saturating_sub(m + 1);
    let cutoff = x[order[cut_at]].max(f64::MIN_POSITIVE.ln());
    let exp_cut = cutoff.exp();
    let tail: Vec<usize> = order.iter().copied().filter(|&i| x[i] > cutoff).collect();
    let k = if tail.len() <= 4 {
        f64::INFINITY
    } else {
        let t: Vec<f64> = tail.iter().map(|&i| x[i].exp() - exp_cut).collect();
        let (k, sigma) = gpd_fit(&t);
        if k.is_finite() && sigma > 0.0 && sigma.is_finite() {
            let n = tail.len() as f64;
            for (j, &i) in tail.iter().enumerate() {
                let p = (j as f64 + 0.5) / n;
                x[i] = (gpd_inverse(p, k, sigma) + exp_cut).ln().min(0.0);
            }
        }
        k
    };
    let lse = log_sum_exp(&x);
    for v in &mut x {
        *v -= lse;
    }
    Smoothed { log_weights: x, k }
}

/// Zhang & Stephens (2009) estimate of (k, σ) of a generalized Pareto distribution from
/// ascending exceedances `t` (at least 5), with ArviZ's prior on k.
pub fn gpd_fit(t: &[f64]) -> (f64, f64) {
    const PRIOR_BS: f64 = 3.0;
    const PRIOR_K: f64 = 10.0;
    let n = t.len();
    let nf = n as f64;
    let m = 30 + (nf.sqrt()) as usize;
    let q = t[((nf / 4.0 + 0.5) as usize).saturating_sub(1)];
    let last = t[n - 1];
    let b: Vec<f64> = (1..=m)
        .map(|j| (1.0 - (m as f64 / (j as f64 - 0.5)).sqrt()) / (PRIOR_BS * q) + 1.0 / last)
        .collect();
    let mean_log1p = |bj: f64| t.iter().map(|&v| (-bj * v).ln_1p()).sum::<f64>() / nf;
    let len_scale: Vec<f64> = b
        .iter()
        .map(|&bj| {
            let kj = mean_log1p(bj);
            nf * ((-(bj / kj)).ln() - kj - 1.0)
        })
        .collect();
    let mut w: Vec<f64> = len_scale
        .iter()
        .map(|&lj| 1.0 / len_scale.iter().map(|&li| (li - lj).exp()).sum::<f64>())
        .collect();
    let mut bs = b;
    let keep: Vec<bool> = w.iter().map(|&wj| wj >= 10.0 * f64::EPSILON).collect();
    let mut it = keep.iter();
    w.retain(|_| *it.next().unwrap_or(&false));
    let mut it = keep.iter();
    bs.retain(|_| *it.next().unwrap_or(&false));
    let total: f64 = w.iter().sum();
    let b_post: f64 = bs.iter().zip(&w).map(|(b, w)| b * w / total).sum();
    let k_post = mean_log1p(b_post);
    let sigma = -k_post / b_post;
    let k = (nf * k_post + PRIOR_K * 0.5) / (nf + PRIOR_K);
    (k, sigma)
}

/// Quantile function of the generalized Pareto distribution with shape k and scale σ at
/// 0 < p < 1: σ((1 − p)^(−k) − 1)/k, or −σ ln(1 − p) for k = 0.
pub fn gpd_inverse(p: f64, k: f64, sigma: f64) -> f64 {
    if k.abs() < f64::EPSILON {
        -sigma * (-p).ln_1p()
    } else {
        sigma * (-k * (-p).ln_1p()).exp_m1() / k
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn gpd_inverse_inverts_the_cdf() {
        // GPD CDF F(x) = 1 − (1 + kx/σ)^(−1/k) (Zhang & Stephens 2009, eq. 1, from memory).
        for &(k, s) in &[(0.3, 2.0), (-0.2, 1.0), (0.0, 1.5)] {
            for p in [0.1, 0.5, 0.9] {
                let x = gpd_inverse(p, k, s);
                let f = if k == 0.0 {
                    1.0 - (-x / s).exp()
                } else {
                    1.0 - (1.0 + k * x / s).powf(-1.0 / k)
                };
                assert!((f - p).abs() < 1e-12);
            }
        }
    }

    #[test]
    fn equal_ratios_give_uniform_weights() {
        // With every ratio equal there is no tail above the cut: weights are 1/S, k = ∞
        // (ArviZ's convention for a tail too short to fit).
        let sm = psis(&[0.3; 100], 1.0);
        assert!(sm
            .log_weights
            .iter()
            .all(|&w| (w + 100f64.ln()).abs() < 1e-12));
        assert!(sm.k.is_infinite());
    }
}

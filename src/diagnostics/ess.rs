//! Effective sample size (ESS): bulk, tail, mean and quantile variants.
//!
//! The core estimator (BDA3 section 11.5; Vehtari et al. 2021, section 3.2,
//! as implemented by ArviZ's `_ess`) works on `M` (split) chains of `N` draws:
//!
//! * per-chain autocovariances `acov_m(t)` (biased, by FFT);
//! * `W = mean_m acov_m(0) * N / (N - 1)`, the mean within-chain variance;
//! * `var+ = W (N - 1) / N + B/N` with `B/N` the variance (divisor `M - 1`) of
//!   the chain means, left out for a single chain;
//! * combined autocorrelations `rho(t) = 1 - (W - mean_m acov_m(t)) / var+`;
//! * Geyer's initial positive sequence: pairs `rho(2k) + rho(2k+1)` are summed
//!   while positive (stopping before lag `N - 3`), then made monotone
//!   (Geyer's initial monotone sequence); the last even-lag value before the
//!   truncation is kept when positive;
//! * `tau = -1 + 2 sum_{t <= T} rho(t) + rho(T + 1)`, floored at
//!   `1 / log10(M N)` so that antithetic chains cannot claim more than
//!   `M N log10(M N)` effective draws; `ESS = M N / tau`.
//!
//! A transformed array whose range is below 1e-15 (numpy's float
//! "resolution", ArviZ's test) is constant and gets `ESS = M N`.
//!
//! Bulk-ESS applies this to the rank-normalised split chains; tail-ESS is the
//! minimum of the ESS of the indicators `x <= q` at the 5% and 95% quantiles;
//! the mean ESS (used by the MCSE of the mean) uses the raw split chains.

use super::autocov::Autocovariance;
use super::draws::{mean, split_rows, variance, Prepared};
use super::error::DiagnosticsError;
use super::quantile::quantile_type7_sorted;
use super::rank::rank_normalize;

/// Range below which ArviZ treats an array as constant (numpy `finfo(float).resolution`).
const CONSTANT_RANGE: f64 = 1e-15;

/// Tail probabilities used by [`ess_tail`].
pub const TAIL_PROBS: (f64, f64) = (0.05, 0.95);

/// ESS of an `M x N` array of rows, or `None` if a non-finite value arises.
pub(crate) fn ess_rows(rows: &[Vec<f64>]) -> Option<f64> {
    let n_chain = rows.len();
    let n_draw = rows[0].len();
    let total = (n_chain * n_draw) as f64;
    let (lo, hi) = rows
        .iter()
        .flatten()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), &v| {
            (lo.min(v), hi.max(v))
        });
    if hi - lo < CONSTANT_RANGE {
        return Some(total);
    }
    let mut ac = Autocovariance::new();
    let acov: Vec<Vec<f64>> = rows.iter().map(|r| ac.compute(r)).collect();
    let mean_acov = |t: usize| acov.iter().map(|a| a[t]).sum::<f64>() / n_chain as f64;
    let nf = n_draw as f64;
    let mean_var = mean_acov(0) * nf / (nf - 1.0);
    let mut var_plus = mean_var * (nf - 1.0) / nf;
    if n_chain > 1 {
        let chain_means: Vec<f64> = rows.iter().map(|r| mean(r)).collect();
        var_plus += variance(&chain_means);
    }

    let rho_at = |t: usize| 1.0 - (mean_var - mean_acov(t)) / var_plus;
    let mut rho = vec![0.0; n_draw];
    let mut rho_even = 1.0;
    rho[0] = rho_even;
    let mut rho_odd = rho_at(1);
    rho[1] = rho_odd;

    // Geyer's initial positive sequence.
    let mut t = 1usize;
    while t + 3 < n_draw && rho_even + rho_odd > 0.0 {
        rho_even = rho_at(t + 1);
        rho_odd = rho_at(t + 2);
        if rho_even + rho_odd >= 0.0 {
            rho[t + 1] = rho_even;
            rho[t + 2] = rho_odd;
        }
        t += 2;
    }
    // ArviZ's max_t = t - 2 may be -1; keep it as `last = max_t + 1 = t - 1 >= 0`.
    let last = t - 1;
    if rho_even > 0.0 {
        rho[last] = rho_even;
    }
    // Geyer's initial monotone sequence: for odd s with s + 2 <= max_t, i.e. s + 3 <= last.
    let mut s = 1usize;
    while s + 3 <= last {
        let prev = rho[s - 1] + rho[s];
        if rho[s + 1] + rho[s + 2] > prev {
            rho[s + 1] = prev / 2.0;
            rho[s + 2] = rho[s + 1];
        }
        s += 2;
    }
    let head: f64 = rho[..last].iter().sum();
    let tail = rho.get(last).copied().unwrap_or(0.0);
    let tau = (-1.0 + 2.0 * head + tail).max(1.0 / total.log10());
    let ess = total / tau;
    if rho.iter().all(|r| r.is_finite()) && ess.is_finite() {
        Some(ess)
    } else {
        None
    }
}

fn finite(ess: Option<f64>, quantity: &'static str) -> Result<f64, DiagnosticsError> {
    ess.ok_or(DiagnosticsError::Overflow { quantity })
}

pub(crate) fn bulk(p: &Prepared) -> Result<f64, DiagnosticsError> {
    finite(ess_rows(&rank_normalize(&p.split)), "bulk ESS")
}

pub(crate) fn of_mean(p: &Prepared) -> Result<f64, DiagnosticsError> {
    finite(ess_rows(&p.split), "mean ESS")
}

pub(crate) fn check_prob(prob: f64) -> Result<(), DiagnosticsError> {
    if prob > 0.0 && prob < 1.0 {
        Ok(())
    } else {
        Err(DiagnosticsError::InvalidProbability { prob })
    }
}

pub(crate) fn of_quantile(p: &Prepared, prob: f64) -> Result<f64, DiagnosticsError> {
    check_prob(prob)?;
    let q = quantile_type7_sorted(&p.sorted, prob);
    let indicators: Vec<Vec<f64>> = p
        .chains
        .iter()
        .map(|c| c.iter().map(|&x| if x <= q { 1.0 } else { 0.0 }).collect())
        .collect();
    finite(ess_rows(&split_rows(&indicators)), "quantile ESS")
}

/// Bulk-ESS: ESS of the rank-normalised split chains (Vehtari et al. 2021, eq. 10 ff.).
pub fn ess_bulk(chains: &[&[f64]]) -> Result<f64, DiagnosticsError> {
    bulk(&Prepared::new(chains)?)
}

/// Tail-ESS: the smaller ESS of the indicators `x <= q05` and `x <= q95`
/// (Vehtari et al. 2021, section 4.3).
pub fn ess_tail(chains: &[&[f64]]) -> Result<f64, DiagnosticsError> {
    let p = Prepared::new(chains)?;
    Ok(of_quantile(&p, TAIL_PROBS.0)?.min(of_quantile(&p, TAIL_PROBS.1)?))
}

/// ESS of the split chains themselves (no rank normalisation): the ESS that
/// the Monte Carlo standard error of the mean uses.
pub fn ess_mean(chains: &[&[f64]]) -> Result<f64, DiagnosticsError> {
    of_mean(&Prepared::new(chains)?)
}

/// ESS of the indicator `x <= q_prob` over split chains, with `q_prob` the
/// definition-7 sample quantile of all draws; `prob` must lie in (0, 1).
pub fn ess_quantile(chains: &[&[f64]], prob: f64) -> Result<f64, DiagnosticsError> {
    of_quantile(&Prepared::new(chains)?, prob)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn constant_rows_give_total_draws() {
        let rows = vec![vec![2.0; 6], vec![2.0; 6]];
        assert_eq!(ess_rows(&rows), Some(12.0));
    }

    #[test]
    fn alternating_chain_hits_the_antithetic_cap() {
        // x_t = (-1)^t has rho(1) = -1 exactly; tau would be near 0, so the
        // floor 1/log10(MN) binds: ESS = MN log10(MN).
        let rows: Vec<Vec<f64>> = (0..2)
            .map(|_| {
                (0..100)
                    .map(|t| if t % 2 == 0 { 1.0 } else { -1.0 })
                    .collect()
            })
            .collect();
        let ess = ess_rows(&rows).unwrap();
        assert!((ess - 200.0 * 200f64.log10()).abs() < 1e-9, "{ess}");
    }
}

//! Monte Carlo standard errors of the posterior mean and of posterior quantiles.
//!
//! * Mean: `sd / sqrt(ESS_mean)` with `sd` the standard deviation (divisor
//!   `S - 1`) of all draws and `ESS_mean` the ESS of the raw split chains
//!   (BDA3 section 11.5; ArviZ `mcse(method="mean")`).
//! * Quantile at probability `p` (Vehtari et al. 2021, section 4.4; ArviZ
//!   `mcse(method="quantile")`): with `E` the ESS of the indicator `x <= q_p`,
//!   take the 15.86553% and 84.13447% points (a normal's +-1 sd) `a`, `b` of
//!   `Beta(E p + 1, E (1 - p) + 1)`; with the `S` sorted draws `x_(0..S)`, the
//!   interval runs from `x_(floor(max(a S - 1, 0)))` to
//!   `x_(ceil(min(b S - 1, S - 1)))` and the MCSE is half its width.

use statrs::function::beta::inv_beta_reg;

use super::draws::{variance, Prepared};
use super::error::DiagnosticsError;
use super::ess;

/// Probabilities of the standard normal at -1 and +1 sd, as ArviZ writes them.
const ONE_SD_PROBS: (f64, f64) = (0.1586553, 0.8413447);

pub(crate) fn sd(p: &Prepared) -> f64 {
    variance(&p.sorted).sqrt()
}

pub(crate) fn of_mean(p: &Prepared, ess_mean: f64) -> f64 {
    sd(p) / ess_mean.sqrt()
}

pub(crate) fn of_quantile(p: &Prepared, prob: f64, ess_q: f64) -> f64 {
    let a = ess_q * prob + 1.0;
    let b = ess_q * (1.0 - prob) + 1.0;
    let lo = inv_beta_reg(a, b, ONE_SD_PROBS.0);
    let hi = inv_beta_reg(a, b, ONE_SD_PROBS.1);
    let sorted = &p.sorted;
    let size = sorted.len() as f64;
    let last = sorted.len() - 1;
    // f64::max / f64::min ignore NaN like numpy's nanmax / nanmin.
    let i_lo = ((lo * size - 1.0).max(0.0).floor() as usize).min(last);
    let i_hi = ((hi * size - 1.0).min(size - 1.0).ceil().max(0.0) as usize).min(last);
    (sorted[i_hi] - sorted[i_lo]) / 2.0
}

/// Monte Carlo standard error of the mean of all draws.
pub fn mcse_mean(chains: &[&[f64]]) -> Result<f64, DiagnosticsError> {
    let p = Prepared::new(chains)?;
    let e = ess::of_mean(&p)?;
    Ok(of_mean(&p, e))
}

/// Monte Carlo standard error of the `prob` quantile; `prob` must lie in (0, 1).
pub fn mcse_quantile(chains: &[&[f64]], prob: f64) -> Result<f64, DiagnosticsError> {
    ess::check_prob(prob)?;
    let p = Prepared::new(chains)?;
    let e = ess::of_quantile(&p, prob)?;
    Ok(of_quantile(&p, prob, e))
}

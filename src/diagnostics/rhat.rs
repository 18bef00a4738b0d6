//! Potential scale reduction factor R-hat: classic split R-hat (BDA3 section
//! 11.4) and the rank-normalised, folded version of Vehtari et al. (2021).
//!
//! For `M` rows of `N` draws with chain means `m_j` and variances `s_j^2`
//! (divisor `N - 1`): `B = N var(m_j)` (divisor `M - 1`), `W = mean(s_j^2)`,
//! `R-hat = sqrt(((N - 1)/N W + B/N) / W)`.  "Split" means the rows are the
//! first and last halves of every chain, so one chain still yields an R-hat
//! (comparing its halves).
//!
//! Conventions where the formula breaks down (`W = 0`: every half-chain
//! constant): if also `B = 0` the quantity is constant and R-hat is 1.0; if
//! `B > 0` the halves are stuck at different values, R-hat is unbounded and
//! [`RHAT_UNBOUNDED`] is returned.

use super::draws::{mean, variance, Prepared};
use super::error::DiagnosticsError;
use super::rank::{fold, rank_normalize};

/// Value reported for an unbounded R-hat (every half-chain constant, not all
/// equal).  Finite so that it survives JSON/CSV round trips, and larger than
/// any computed R-hat.
pub const RHAT_UNBOUNDED: f64 = f64::MAX;

/// Classic R-hat of the given rows (no splitting here), with the conventions above.
pub(crate) fn rhat_rows(rows: &[Vec<f64>]) -> Result<f64, DiagnosticsError> {
    let n = rows[0].len() as f64;
    let chain_means: Vec<f64> = rows.iter().map(|r| mean(r)).collect();
    let within = rows.iter().map(|r| variance(r)).sum::<f64>() / rows.len() as f64;
    let between = n * variance(&chain_means);
    if !within.is_finite() || !between.is_finite() {
        return Err(DiagnosticsError::Overflow { quantity: "R-hat" });
    }
    if within == 0.0 {
        return Ok(if between == 0.0 { 1.0 } else { RHAT_UNBOUNDED });
    }
    let r = ((between / within + n - 1.0) / n).sqrt();
    Ok(if r.is_finite() { r } else { RHAT_UNBOUNDED })
}

pub(crate) fn split(p: &Prepared) -> Result<f64, DiagnosticsError> {
    rhat_rows(&p.split)
}

pub(crate) fn rank_bulk(p: &Prepared) -> Result<f64, DiagnosticsError> {
    rhat_rows(&rank_normalize(&p.split))
}

pub(crate) fn rank_folded(p: &Prepared) -> Result<f64, DiagnosticsError> {
    rhat_rows(&rank_normalize(&fold(&p.split)))
}

/// Classic split R-hat (BDA3 section 11.4) on the raw draws.
pub fn split_rhat(chains: &[&[f64]]) -> Result<f64, DiagnosticsError> {
    split(&Prepared::new(chains)?)
}

/// Split R-hat of the rank-normalised draws ("bulk" R-hat, Vehtari et al. 2021, eq. 14).
pub fn rank_rhat_bulk(chains: &[&[f64]]) -> Result<f64, DiagnosticsError> {
    rank_bulk(&Prepared::new(chains)?)
}

/// Split R-hat of the rank-normalised folded draws `|x - median|`
/// ("tail" R-hat, Vehtari et al. 2021, section 4.2).
pub fn rank_rhat_folded(chains: &[&[f64]]) -> Result<f64, DiagnosticsError> {
    rank_folded(&Prepared::new(chains)?)
}

/// Rank-normalised split R-hat: the maximum of [`rank_rhat_bulk`] and
/// [`rank_rhat_folded`], as Vehtari et al. (2021) recommend and ArviZ's
/// `rhat(method="rank")` reports.
pub fn rank_rhat(chains: &[&[f64]]) -> Result<f64, DiagnosticsError> {
    let p = Prepared::new(chains)?;
    Ok(rank_bulk(&p)?.max(rank_folded(&p)?))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn worked_example_by_hand() {
        // Rows (1,2,3) and (3,4,5): means 2 and 4, variances 1 and 1.
        // W = 1, B = 3 * var(2, 4) = 3 * 2 = 6, R-hat = sqrt((6/1 + 2)/3) = sqrt(8/3).
        let rows = vec![vec![1.0, 2.0, 3.0], vec![3.0, 4.0, 5.0]];
        let r = rhat_rows(&rows).unwrap();
        assert!((r - (8.0f64 / 3.0).sqrt()).abs() < 1e-15);
    }

    #[test]
    fn degenerate_within_variance() {
        assert_eq!(rhat_rows(&[vec![1.0; 3], vec![1.0; 3]]), Ok(1.0));
        assert_eq!(rhat_rows(&[vec![1.0; 3], vec![2.0; 3]]), Ok(RHAT_UNBOUNDED));
    }
}

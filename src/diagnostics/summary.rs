//! One-call summary of a scalar quantity's draws: location, spread, R-hat,
//! ESS and MCSE, with the mixing status that the edge-case conventions need.

use serde::{Deserialize, Serialize};

use super::draws::{row_is_constant, Prepared};
use super::error::DiagnosticsError;
use super::rank::rank_normalize;
use super::{ess, mcse, rhat};

/// How the draws of a quantity vary, decided before any diagnostic is read.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum ChainStatus {
    /// The draws vary within every half-chain: all numbers are ordinary.
    Varying,
    /// Every draw of every chain is the same value. Not a convergence
    /// failure: R-hat is reported as 1.0, ESS as the number of (split)
    /// draws, MCSE and sd as 0.
    Constant,
    /// The quantity varies overall, but at least one half-chain has all its
    /// draws equal (a chain stuck, or stuck for half the run). A convergence
    /// failure whatever the R-hat says; R-hat may be [`rhat::RHAT_UNBOUNDED`].
    StuckChain,
}

/// Diagnostics of one scalar quantity from several chains (each chain a slice of equal length).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct ScalarDiagnostics {
    /// Mean of all draws.
    pub mean: f64,
    /// Standard deviation of all draws (divisor `S - 1`).
    pub sd: f64,
    /// Rank-normalised split R-hat: max(rank-normalised bulk, folded).
    pub rhat: f64,
    /// Classic split R-hat on the raw draws.
    pub rhat_split: f64,
    /// Bulk effective sample size.
    pub ess_bulk: f64,
    /// Tail effective sample size (5% and 95% quantiles).
    pub ess_tail: f64,
    /// Monte Carlo standard error of the mean.
    pub mcse_mean: f64,
    /// Monte Carlo standard error of the 5% quantile.
    pub mcse_q05: f64,
    /// Monte Carlo standard error of the 95% quantile.
    pub mcse_q95: f64,
    /// Whether the draws are constant, stuck in some half-chain, or varying.
    pub status: ChainStatus,
}

fn status(p: &Prepared) -> ChainStatus {
    if p.is_constant() {
        ChainStatus::Constant
    } else if p.split.iter().any(|r| row_is_constant(r)) {
        ChainStatus::StuckChain
    } else {
        ChainStatus::Varying
    }
}

/// Computes every diagnostic of one scalar quantity, sharing the sorting,
/// splitting and indicator ESS between them.
///
/// With a single chain, the R-hats compare its two halves (label them
/// within-chain when reporting). Errors on no chains, unequal lengths, fewer
/// than 4 draws per chain, or a non-finite draw.
pub fn scalar_diagnostics(chains: &[&[f64]]) -> Result<ScalarDiagnostics, DiagnosticsError> {
    let p = Prepared::new(chains)?;
    let status = status(&p);
    let mean = super::draws::mean(&p.sorted);
    if status == ChainStatus::Constant {
        let n = p.split.iter().map(Vec::len).sum::<usize>() as f64;
        return Ok(ScalarDiagnostics {
            mean,
            sd: 0.0,
            rhat: 1.0,
            rhat_split: 1.0,
            ess_bulk: n,
            ess_tail: n,
            mcse_mean: 0.0,
            mcse_q05: 0.0,
            mcse_q95: 0.0,
            status,
        });
    }
    let ess_q05 = ess::of_quantile(&p, ess::TAIL_PROBS.0)?;
    let ess_q95 = ess::of_quantile(&p, ess::TAIL_PROBS.1)?;
    let ess_mean = ess::of_mean(&p)?;
    // The rank-normalised split draws feed both the bulk R-hat and the bulk ESS.
    let z = rank_normalize(&p.split);
    let sum: f64 = p.chains.iter().flatten().sum();
    Ok(ScalarDiagnostics {
        mean: sum / p.total_draws() as f64,
        sd: mcse::sd(&p),
        rhat: rhat::rhat_rows(&z)?.max(rhat::rank_folded(&p)?),
        rhat_split: rhat::split(&p)?,
        ess_bulk: ess::ess_rows(&z).ok_or(DiagnosticsError::Overflow {
            quantity: "bulk ESS",
        })?,
        ess_tail: ess_q05.min(ess_q95),
        mcse_mean: mcse::of_mean(&p, ess_mean),
        mcse_q05: mcse::of_quantile(&p, ess::TAIL_PROBS.0, ess_q05),
        mcse_q95: mcse::of_quantile(&p, ess::TAIL_PROBS.1, ess_q95),
        status,
    })
}

//! Convergence diagnostics of MCMC draws: pure functions from several chains
//! of one scalar quantity to R-hat, effective sample sizes and Monte Carlo
//! standard errors.
//!
//! Definitions follow Vehtari, Gelman, Simpson, Carpenter & Buerkner (2021),
//! "Rank-normalization, folding, and localization: an improved R-hat for
//! assessing convergence of MCMC" (Bayesian Analysis 16(2)), and BDA3 sections
//! 11.4-11.5, computed exactly as ArviZ does (`rhat` methods "rank" and
//! "split", `ess` methods "bulk" and "tail", `mcse` methods "mean" and
//! "quantile"). Every function takes `&[&[f64]]`, one slice per chain, all of
//! equal length, and returns a `Result`; none panics on user data and none
//! returns NaN. See docs/diagnostics.md for formulas and edge-case conventions.

mod autocov;
mod draws;
mod error;
mod ess;
mod mcse;
mod quantile;
mod rank;
mod rhat;
mod summary;

pub use autocov::autocovariance;
pub use draws::MIN_DRAWS;
pub use error::DiagnosticsError;
pub use ess::{ess_bulk, ess_mean, ess_quantile, ess_tail, TAIL_PROBS};
pub use mcse::{mcse_mean, mcse_quantile};
pub use rhat::{rank_rhat, rank_rhat_bulk, rank_rhat_folded, split_rhat, RHAT_UNBOUNDED};
pub use summary::{scalar_diagnostics, ChainStatus, ScalarDiagnostics};

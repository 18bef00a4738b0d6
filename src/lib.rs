//! # mixband
//!
//! Bayesian density estimation with mixtures of normal distributions. Given one sample of
//! a continuous measurement, mixband fits a location mixture (one common bandwidth) or a
//! location-scale mixture (a bandwidth per component) by Gibbs sampling, with a finite
//! Dirichlet or a truncated stick-breaking prior on the weights, and reports the posterior
//! over densities: the pointwise posterior mean on a grid and credible bands, after
//! convergence checks.
//!
//! The pipeline, one module a stage:
//! - [`config`]: the TOML run description and its defaults;
//! - [`data`]: loading and standardising the sample;
//! - [`model`] and [`dist`]: priors, state and the random draws the sampler needs;
//! - [`sampler`]: the Gibbs sweep and chains;
//! - [`store`]: the run directory (draws, checkpoints, manifest);
//! - [`summary`]: densities on a grid and pointwise bands;
//! - [`diagnostics`]: R-hat, effective sample size and Monte Carlo error;
//! - [`compare`]: PSIS-LOO and WAIC comparison of runs on the same data;
//! - [`gate`]: the convergence gate on a run's label-invariant quantities;
//! - [`check`]: the model checked against the data (posterior predictive checks, LOO-PIT);
//! - [`run`]: the whole job; [`cli`]: the thin command line over it;
//! - [`bench`]: synthetic speed and memory workloads (`mixband bench`).

pub mod bench;
pub mod check;
pub mod cli;
pub mod compare;
pub mod config;
pub mod data;
pub mod diagnostics;
pub mod dist;
pub mod error;
pub mod gate;
pub mod model;
pub mod numfmt;
pub mod plot;
pub mod report;
pub mod run;
pub mod sampler;
pub mod store;
pub mod summary;

pub use error::{Error, Result};

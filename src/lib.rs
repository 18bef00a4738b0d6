//! mixband: Bayesian density estimation with mixtures of normal distributions.
pub mod diagnostics;

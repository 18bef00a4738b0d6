//! Random draws the Gibbs sampler needs, computed in log space where small shapes would
//! underflow (Gamma, Beta and Dirichlet with shape 0.01 are routine for sparse mixtures).
//!
//! One distribution a file; each draw takes `&mut impl Rng` so the caller owns the stream.

mod beta;
mod dirichlet;
mod gamma;
mod logsumexp;
mod multinomial;
mod normal;
mod truncnorm;

pub use beta::log_beta;
pub use dirichlet::log_dirichlet;
pub use gamma::{gamma_rate, inv_gamma, log_gamma};
pub use logsumexp::{log_add_exp, log_sum_exp};
pub use multinomial::multinomial;
pub use normal::{ln_normal_pdf, normal, std_normal, LN_SQRT_2PI};
pub use truncnorm::{
    ln_std_normal_interval, ln_upper_tail, truncated_std_normal, truncated_std_normal_moments,
    truncated_std_normal_moments_given, truncated_std_normal_summary,
};

//! The mixture model in standard units: its prior ([`Prior`]), the state the Gibbs sampler
//! moves ([`State`]), draws from the prior and data simulated from the model (both used by
//! the joint-distribution and calibration tests).

mod prior;
mod simulate;
mod state;

pub use prior::{Concentration, Prior, VarScale};
pub use simulate::{draw_from_prior, simulate_data};
pub use state::State;

//! The Gibbs sampler: one sweep updates allocations, then (stick-breaking weights) runs the
//! label-switching moves, then updates weights, component parameters and hyperparameters; [`chain::run_chain`] strings sweeps into a chain.
//!
//! Every random number comes from a stream keyed by (seed, chain, sweep, block), see
//! [`rng`], so a chain is a function of the seed and its id alone, and a stored state
//! continues it exactly.

pub mod allocate;
pub mod cell_counts;
pub mod cell_params;
pub mod censored;
pub mod chain;
pub mod collapsed;
// The single full conditionals are public (hidden from the docs) so the joint-distribution
// tests can rebuild a sweep with one conditional deliberately wrong.
#[doc(hidden)]
pub mod components;
pub mod concentration;
#[doc(hidden)]
pub mod hyper;
mod init;
pub mod label_moves;
mod mh;
pub mod pair_coords;
mod pair_target;
pub mod relocate;
pub mod resplit;
pub mod rng;
mod slice;
pub mod split_merge;
mod sweep;
pub mod var_scale;
#[doc(hidden)]
pub mod weights;

pub use allocate::{thread_split, AllocOptions, ComponentTable, SuffStats};
pub use chain::{run_chain, run_chain_opts, ChainPlan, ChainStop, Checkpoint, DrawSink, KeptDraw};
pub use init::{initial_state, initial_state_from_cells};
pub use label_moves::{MoveRatios, MoveTally};
pub use sweep::{sweep, sweep_opts, sweep_with, SweepOptions, SweepOutcome};

//! The run configuration: what a user writes in TOML ([`raw::RawConfig`]), the checked and
//! fully resolved form the sampler uses ([`RunConfig`]), and the commented starter file.
//!
//! Every key a run depends on is filled in by [`resolve`] and written back to the run
//! directory as `config.toml`, so sampling that file again reproduces the run exactly.

pub mod check;
pub mod locate;
pub mod raw;
mod resolve;
pub mod shape;
mod template;

pub use check::CheckSettings;
pub use raw::{AllocationKind, HyperChoice, Kernel, MissingPolicy, RawConfig, WeightsKind};
pub use resolve::{
    allocation_for, check_chain_ids, check_levels as resolve_check_levels, default_components,
    parse_config_file, parse_config_str, resolve, PriorValues, RunConfig, MAX_SCAN_ROWS,
};
pub use template::TEMPLATE;

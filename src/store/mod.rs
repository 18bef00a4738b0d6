//! The run directory on disk: per-chain draw tables, checkpoints to continue chains, the
//! manifest, and atomic file replacement. Layout (documented in docs/outputs.md):
//!
//! ```text
//! RUN/manifest.json          what ran, on which data, how far each chain got
//! RUN/config.toml            the resolved config
//! RUN/draws/chain-<i>.csv    one row per kept draw, data units
//! RUN/state/chain-<i>.json   checkpoint: sampler state and store length
//! RUN/bands.csv, bands.json  density summaries on the grid
//! RUN/cdf.csv, summary.json  CDF bands; quantiles, moments, modes, occupied components
//! RUN/.mixband-lock          while a process writes the run: who it is (lock.rs)
//! ```

mod atomic;
mod checkpoint;
mod draws;
mod layout;
mod lock;
mod manifest;
mod scalars;
mod stream;

pub use atomic::write_atomic;
pub use checkpoint::{read_checkpoint, StoredCheckpoint};
pub use draws::{
    parse_chain, read_chain, read_run_draws, ChainDraws, ChainWriter, DrawRow, RunDraws, Units,
};
pub use layout::RunLayout;
pub use lock::{host_name, utc_text, LockHolder, RunLock, LOCK_FILE};
pub use manifest::{ChainRecord, DataRecord, Growth, Manifest, RunStatus};
pub use scalars::{ChainScalars, ScalarDraws};
pub use stream::{Columns, RowReader, StoredChains};

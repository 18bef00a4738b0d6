//! Checkpoint files: the sampler state of one chain together with the length of its draw
//! table at that moment, written atomically after the table is flushed.

use std::path::Path;

use serde::{Deserialize, Serialize};

use crate::error::{Error, Result};
use crate::sampler::Checkpoint;

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct StoredCheckpoint {
    pub chain: u64,
    /// Bytes of the draw table that belong to the checkpoint (header included).
    pub bytes: u64,
    pub draws_written: u64,
    pub checkpoint: Checkpoint,
}

pub fn read_checkpoint(path: &Path) -> Result<StoredCheckpoint> {
    let text = std::fs::read_to_string(path).map_err(|e| Error::io(path, e))?;
    serde_json::from_str(&text)
        .map_err(|e| Error::input(format!("{}: unreadable checkpoint: {e}", path.display())))
}

/// Whether every number in the checkpoint is finite (JSON cannot hold the others, and a
/// state holding them could not continue the chain).
pub fn is_finite(c: &Checkpoint) -> bool {
    let s = &c.state;
    [&s.log_w, &s.log_v, &s.log_1mv, &s.mu, &s.var]
        .iter()
        .all(|v| v.iter().all(|x| x.is_finite()))
        && s.concentration.is_finite()
        && s.var_scale.is_finite()
}

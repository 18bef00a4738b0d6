//! `manifest.json`: what ran (tool version, resolved config, seed), on which data (path,
//! SHA-256, n), and how far each chain got, with its timing.

use std::path::Path;

use serde::{Deserialize, Serialize};

use super::atomic::write_atomic;
use crate::error::{Error, Result};

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum RunStatus {
    /// Sampling is under way, or the process died while it was.
    Running,
    /// Stopped before every chain reached its configured length; `mixband resume` continues.
    Incomplete,
    Complete,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DataRecord {
    /// Absolute path of the data file when the run was made.
    pub file: String,
    pub column: String,
    pub sha256: String,
    pub n: usize,
    pub dropped: usize,
    pub mean: f64,
    pub sd: f64,
    pub min: f64,
    pub max: f64,
    /// How the values were recorded: the resolution in force, and the lattice or heaping
    /// found in them (absent in runs made before it was recorded).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub recording: Option<crate::data::Recording>,
    /// With `[data] subsample`: the observations in the data, of which the run fitted the
    /// random subsample of `n` (absent when every observation was fitted).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub subsample_of: Option<u64>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ChainRecord {
    pub id: u64,
    pub sweeps_done: u64,
    pub sweeps_planned: u64,
    pub draws_written: u64,
    pub seconds: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Manifest {
    pub tool: String,
    pub version: String,
    pub status: RunStatus,
    pub seed: u64,
    pub data: DataRecord,
    /// The resolved config (the same content as config.toml).
    pub config: serde_json::Value,
    pub chains: Vec<ChainRecord>,
    /// Seconds since the Unix epoch when the run was started.
    pub started_unix: u64,
    /// The times the run was grown after failing the gate (`[sampler] max_draws`), in
    /// order; absent when it never was.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub grown: Vec<Growth>,
    /// Why a run that failed the gate was not grown (further), when that was considered.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub not_grown: Option<String>,
}

/// One growth of a run that failed the gate: from how many kept draws per chain to how
/// many, and the gate's worst figures that asked for it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Growth {
    pub from_draws: usize,
    pub to_draws: usize,
    /// The lowest gated bulk or tail ESS at `from_draws`.
    pub lowest_ess: f64,
    /// The largest gated R-hat at `from_draws`.
    pub largest_rhat: f64,
}

impl Manifest {
    pub fn write(&self, path: &Path) -> Result<()> {
        let mut json = serde_json::to_vec_pretty(self)
            .map_err(|e| Error::internal(format!("cannot encode manifest: {e}")))?;
        json.push(b'\n');
        write_atomic(path, &json)
    }

    pub fn read(path: &Path) -> Result<Manifest> {
        let text = std::fs::read_to_string(path).map_err(|e| {
            Error::input(format!(
                "cannot read {}: {e}; is this a mixband run directory?",
                path.display()
            ))
        })?;
        serde_json::from_str(&text)
            .map_err(|e| Error::input(format!("{}: unreadable manifest: {e}", path.display())))
    }

    pub fn chain_ids(&self) -> Vec<u64> {
        self.chains.iter().map(|c| c.id).collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const OLD: &str = r#"{"file": "/d.csv", "column": "y", "sha256": "ab", "n": 3, "dropped": 0,
        "mean": 1.0, "sd": 0.5, "min": 0.5, "max": 1.5}"#;

    #[test]
    fn a_data_record_without_recording_still_reads_and_writes_the_same() {
        // Manifests written before `recording` existed (exact: the field is optional).
        let d: DataRecord = serde_json::from_str(OLD).unwrap();
        assert_eq!(d.recording, None);
        let back = serde_json::to_value(&d).unwrap();
        assert!(back.get("recording").is_none());
        let mut with = d.clone();
        with.recording = Some(crate::data::Recording::detect(&[1.0, 1.0, 1.5], None, None));
        let text = serde_json::to_string(&with).unwrap();
        assert_eq!(serde_json::from_str::<DataRecord>(&text).unwrap(), with);
    }
}

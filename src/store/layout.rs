//! Paths inside a run directory.

use std::path::{Path, PathBuf};

#[derive(Debug, Clone)]
pub struct RunLayout {
    pub root: PathBuf,
}

impl RunLayout {
    pub fn new(root: impl AsRef<Path>) -> Self {
        RunLayout {
            root: root.as_ref().to_path_buf(),
        }
    }
    pub fn manifest(&self) -> PathBuf {
        self.root.join("manifest.json")
    }
    pub fn config(&self) -> PathBuf {
        self.root.join("config.toml")
    }
    pub fn draws_dir(&self) -> PathBuf {
        self.root.join("draws")
    }
    pub fn chain_draws(&self, chain: u64) -> PathBuf {
        self.draws_dir().join(format!("chain-{chain}.csv"))
    }
    pub fn state_dir(&self) -> PathBuf {
        self.root.join("state")
    }
    pub fn chain_state(&self, chain: u64) -> PathBuf {
        self.state_dir().join(format!("chain-{chain}.json"))
    }
    pub fn bands_csv(&self) -> PathBuf {
        self.root.join("bands.csv")
    }
    pub fn bands_json(&self) -> PathBuf {
        self.root.join("bands.json")
    }
    pub fn cdf_csv(&self) -> PathBuf {
        self.root.join("cdf.csv")
    }
    pub fn summary_json(&self) -> PathBuf {
        self.root.join("summary.json")
    }
    pub fn diagnostics_json(&self) -> PathBuf {
        self.root.join("diagnostics.json")
    }
}

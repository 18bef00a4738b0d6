//! The assessment of a run as written to `RUN/diagnostics.json` and printed by
//! `mixband diagnose --json`. Readers (plots, reports) deserialise it with
//! [`DiagnosticsReport::read`]. Nothing in it depends on timing or on the run's path, so
//! the same config and seed give the same bytes.

use std::path::Path;

use serde::{Deserialize, Serialize};

use super::density::GridPoint;
use super::quantity::QuantityReport;
use super::thresholds::Thresholds;
use crate::error::{Error, Result};
use crate::store::{write_atomic, RunLayout};

/// Version of this file's layout; raised when a field changes meaning or disappears.
pub const DIAGNOSTICS_FORMAT: u32 = 1;

/// What the R-hat values compare.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum RhatScope {
    /// Two or more chains: the halves of every chain against each other.
    BetweenChains,
    /// One chain: its two halves only, a within-chain check.
    WithinChain,
}

/// The content of diagnostics.json (documented in docs/diagnostics.md).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DiagnosticsReport {
    pub tool: String,
    pub version: String,
    /// [`DIAGNOSTICS_FORMAT`].
    pub format: u32,
    /// Whether the run passed the convergence gate.
    pub passed: bool,
    pub thresholds: Thresholds,
    pub chains: usize,
    /// Draws per chain used: every chain is cut to the shortest.
    pub draws_per_chain: usize,
    pub rhat_scope: RhatScope,
    /// Whether every chain reached its configured length.
    pub run_complete: bool,
    /// Label-invariant quantities first (with the density summary), then per-component ones.
    pub quantities: Vec<QuantityReport>,
    /// The density at every grid point.
    pub density_grid: Vec<GridPoint>,
    /// One sentence per failed test: which quantity, and by how much.
    pub failures: Vec<String>,
    /// What to try when the gate fails.
    pub advice: Vec<String>,
    /// Facts that qualify the numbers without failing the gate.
    pub notes: Vec<String>,
}

impl DiagnosticsReport {
    /// Pretty JSON with a final newline.
    pub fn to_json(&self) -> Result<Vec<u8>> {
        let mut json = serde_json::to_vec_pretty(self)
            .map_err(|e| Error::internal(format!("cannot encode diagnostics: {e}")))?;
        json.push(b'\n');
        Ok(json)
    }

    /// Writes `RUN/diagnostics.json` atomically.
    pub fn write(&self, layout: &RunLayout) -> Result<()> {
        write_atomic(&layout.diagnostics_json(), &self.to_json()?)
    }

    /// Reads a diagnostics.json back.
    pub fn read(path: &Path) -> Result<Self> {
        let text = std::fs::read_to_string(path).map_err(|e| Error::io(path, e))?;
        serde_json::from_str(&text).map_err(|e| {
            Error::input(format!(
                "{}: unreadable diagnostics file: {e}",
                path.display()
            ))
        })
    }

    /// The entry called `name`, if any.
    pub fn quantity(&self, name: &str) -> Option<&QuantityReport> {
        self.quantities.iter().find(|q| q.name == name)
    }
}

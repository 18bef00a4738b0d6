//! Everything the figures and the report read from a run directory: the manifest, the
//! resolved config with its data, the scalars of the stored draws, and the bands as written to
//! bands.json. Nothing here computes a summary; the figures show what the run wrote.

use std::path::Path;

use serde::Deserialize;

use super::observations::Observations;
use crate::config::Kernel;
use crate::error::{Error, Result};
use crate::run::Prepared;
use crate::store::{Manifest, RunLayout, ScalarDraws, StoredChains};

/// One credible level as stored in bands.json.
#[derive(Debug, Clone, PartialEq, Deserialize)]
pub struct StoredLevel {
    pub level: f64,
    pub lower: Vec<f64>,
    pub upper: Vec<f64>,
}

/// The part of bands.json the figures use.
#[derive(Debug, Clone, PartialEq, Deserialize)]
pub struct StoredBands {
    pub converged: Option<bool>,
    pub caution: String,
    pub grid: Vec<f64>,
    pub levels: Vec<f64>,
    pub draws_used: usize,
    pub mean: Vec<f64>,
    pub median: Vec<f64>,
    pub bands: Vec<StoredLevel>,
}

impl StoredBands {
    /// Reads and checks bands.json (every array the grid's length, every value finite).
    pub fn read(path: &Path) -> Result<StoredBands> {
        let text = std::fs::read_to_string(path).map_err(|e| {
            Error::input(format!(
                "cannot read {}: {e}; run `mixband bands RUN` first",
                path.display()
            ))
        })?;
        let b: StoredBands = serde_json::from_str(&text)
            .map_err(|e| Error::input(format!("{}: unreadable bands file: {e}", path.display())))?;
        let g = b.grid.len();
        let bad = |what: &str| Error::input(format!("{}: {what}", path.display()));
        if g < 2 {
            return Err(bad("the grid has fewer than 2 points"));
        }
        let mut arrays: Vec<&[f64]> = vec![&b.grid, &b.mean, &b.median];
        for l in &b.bands {
            arrays.push(&l.lower);
            arrays.push(&l.upper);
        }
        if arrays.iter().any(|a| a.len() != g) {
            return Err(bad("arrays of different lengths"));
        }
        if arrays.iter().any(|a| a.iter().any(|v| !v.is_finite())) {
            return Err(bad("a non-finite value"));
        }
        if b.bands.is_empty() {
            return Err(bad("no credible levels"));
        }
        Ok(b)
    }

    /// Indices of the levels from widest to narrowest.
    pub fn widest_first(&self) -> Vec<usize> {
        let mut idx: Vec<usize> = (0..self.bands.len()).collect();
        idx.sort_by(|&a, &b| self.bands[b].level.total_cmp(&self.bands[a].level));
        idx
    }
}

/// A run directory read for plotting and reporting.
#[derive(Debug, Clone)]
pub struct RunInputs {
    pub layout: RunLayout,
    pub manifest: Manifest,
    pub prep: Prepared,
    /// The scalars of every stored draw (the component parameters are not read: the
    /// figures show only label-invariant quantities and what bands.json holds).
    pub draws: ScalarDraws,
    pub bands: StoredBands,
    /// The observations on the data scale.
    pub observations: Observations,
}

impl RunInputs {
    /// Reads a finished (or partly finished) run. The data file must still hash to the
    /// value recorded in the manifest.
    pub fn read(run: &Path) -> Result<RunInputs> {
        let layout = RunLayout::new(run);
        let manifest = Manifest::read(&layout.manifest())?;
        let prep = Self::prepare(&layout, &manifest)?;
        if prep.record.sha256 != manifest.data.sha256 {
            return Err(Error::input(format!(
                "{}: the data file {} has changed since the run (SHA-256 {} now, {} recorded); plots would not match the draws",
                run.display(),
                prep.record.file,
                prep.record.sha256,
                manifest.data.sha256
            )));
        }
        let draws = ScalarDraws::read(&StoredChains::new(
            &layout.draws_dir(),
            &manifest.chain_ids(),
        ))?;
        if draws.min_len() < 4 {
            return Err(Error::input(format!(
                "{}: fewer than 4 stored draws in some chain; nothing to plot yet",
                run.display()
            )));
        }
        let bands = StoredBands::read(&layout.bands_json())?;
        let d = &prep.data;
        // Frequency-weighted rows and the cells of values recorded at a resolution stay
        // counted: histogram, rug and kernel estimate read the sample they stand for
        // without it being expanded in memory.
        let observations = Observations::new(
            d.z.iter().map(|z| d.centre + d.scale * z).collect(),
            d.counts.clone(),
            prep.config.resolution.is_some(),
        );
        Ok(RunInputs {
            layout,
            manifest,
            prep,
            draws,
            bands,
            observations,
        })
    }

    /// The resolved config with its data. A data path in RUN/config.toml that is relative
    /// to the original config's folder does not resolve from RUN; then the absolute path
    /// recorded in the manifest is read instead (the hash check below still applies).
    fn prepare(layout: &RunLayout, manifest: &Manifest) -> Result<Prepared> {
        let cfg = layout.config();
        match Prepared::from_config_file(&cfg) {
            Ok(p) => Ok(p),
            Err(first) => {
                let recorded = Path::new(&manifest.data.file);
                if !recorded.is_absolute() || !recorded.exists() {
                    return Err(first);
                }
                let bytes = std::fs::read(recorded).map_err(|e| Error::io(recorded, e))?;
                let text = std::fs::read_to_string(&cfg).map_err(|e| Error::io(&cfg, e))?;
                Prepared::from_text(
                    &text,
                    &cfg.display().to_string(),
                    &layout.root,
                    Some(&bytes),
                )
            }
        }
    }

    /// The axis label of the measurement: the column name, with the configured units.
    pub fn value_label(&self) -> String {
        match &self.prep.config.units {
            Some(u) if !u.trim().is_empty() => {
                format!("{} ({})", self.prep.config.column, u.trim())
            }
            _ => self.prep.config.column.clone(),
        }
    }

    /// The density axis label: density per unit of the measurement.
    pub fn density_label(&self) -> String {
        match &self.prep.config.units {
            Some(u) if !u.trim().is_empty() => format!("density (per {})", u.trim()),
            _ => "density".to_string(),
        }
    }

    pub fn is_location_kernel(&self) -> bool {
        self.prep.config.kernel == Kernel::Location
    }
}

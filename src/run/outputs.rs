//! Writing the density summaries of a run: `bands.csv` and `bands.json`.

use serde::Serialize;

use crate::error::{Error, Result};
use crate::store::{write_atomic, RunLayout};
use crate::summary::Bands;

/// The content of `bands.json`.
#[derive(Debug, Clone, Serialize)]
pub struct BandsFile<'a> {
    pub tool: &'static str,
    pub version: &'static str,
    /// Whether the run passed the convergence gate; `None` when it was not assessed.
    pub converged: Option<bool>,
    /// Plain statement of what the bands mean and what they are conditional on.
    pub caution: String,
    pub grid: &'a [f64],
    pub levels: &'a [f64],
    pub draws_used: usize,
    pub mean: &'a [f64],
    pub median: &'a [f64],
    pub bands: Vec<LevelBand<'a>>,
}

#[derive(Debug, Clone, Serialize)]
pub struct LevelBand<'a> {
    pub level: f64,
    pub lower: &'a [f64],
    pub upper: &'a [f64],
}

/// The caution that travels with every summary.
pub fn caution(converged: Option<bool>) -> String {
    let base = "Pointwise posterior mean (the posterior predictive density) and equal-tailed pointwise \
                credible bands. They are conditional on the mixture model and its priors and do not \
                replace checking the model against the data.";
    match converged {
        Some(false) => format!("NOT CONVERGED: the chains failed the convergence gate; do not report these numbers. {base}"),
        _ => base.to_string(),
    }
}

/// Writes bands.csv and bands.json into the run directory.
pub fn write_bands(layout: &RunLayout, bands: &Bands, converged: Option<bool>) -> Result<()> {
    write_atomic(&layout.bands_csv(), bands.to_csv().as_bytes())?;
    let file = BandsFile {
        tool: "mixband",
        version: env!("CARGO_PKG_VERSION"),
        converged,
        caution: caution(converged),
        grid: &bands.x,
        levels: &bands.levels,
        draws_used: bands.draws_used,
        mean: &bands.mean,
        median: &bands.median,
        bands: bands
            .levels
            .iter()
            .enumerate()
            .map(|(l, &level)| LevelBand {
                level,
                lower: &bands.lower[l],
                upper: &bands.upper[l],
            })
            .collect(),
    };
    let mut json = serde_json::to_vec_pretty(&file)
        .map_err(|e| Error::internal(format!("cannot encode bands: {e}")))?;
    json.push(b'\n');
    write_atomic(&layout.bands_json(), &json)
}

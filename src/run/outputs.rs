//! Writing the summaries of a run: `bands.csv` and `bands.json` (density bands), and
//! `cdf.csv` and `summary.json` (CDF bands, quantiles, moments, modes, occupied components).

use serde::Serialize;

use crate::error::{Error, Result};
use crate::store::{write_atomic, RunLayout};
use crate::summary::{
    distribution, shape_summary, Bands, CountProbability, DrawFeatures, Posterior, ShapeSummary,
    MIN_RELATIVE_PROMINENCE,
};

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
    /// Simultaneous bands (columns simul_lower_<L>, simul_upper_<L> of bands.csv).
    pub simultaneous: Vec<LevelBand<'a>>,
    pub simultaneous_multipliers: Vec<SimulMultiplier>,
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
        simultaneous: bands
            .simul
            .iter()
            .map(|b| LevelBand {
                level: b.level,
                lower: &b.lower,
                upper: &b.upper,
            })
            .collect(),
        simultaneous_multipliers: simul_multipliers(bands),
    };
    let mut json = serde_json::to_vec_pretty(&file)
        .map_err(|e| Error::internal(format!("cannot encode bands: {e}")))?;
    json.push(b'\n');
    write_atomic(&layout.bands_json(), &json)
}

/// The multiplier of one simultaneous band, for bands.json and summary.json.
#[derive(Debug, Clone, Serialize)]
pub struct SimulMultiplier {
    pub level: f64,
    /// The band is mean ± c·sd at every grid point (clipped at 0).
    pub c: f64,
}

fn simul_multipliers(bands: &Bands) -> Vec<SimulMultiplier> {
    bands
        .simul
        .iter()
        .map(|b| SimulMultiplier {
            level: b.level,
            c: b.c,
        })
        .collect()
}

/// One quantile of the distribution and its posterior.
#[derive(Debug, Clone, Serialize)]
pub struct QuantileSummary {
    pub p: f64,
    pub posterior: Posterior,
}

/// The posterior of a count, with how it was defined.
#[derive(Debug, Clone, Serialize)]
pub struct CountSummary {
    pub definition: String,
    pub distribution: Vec<CountProbability>,
}

/// The content of `summary.json`.
#[derive(Debug, Clone, Serialize)]
pub struct SummaryFile {
    pub tool: &'static str,
    pub version: &'static str,
    pub converged: Option<bool>,
    pub caution: String,
    pub draws_used: usize,
    pub levels: Vec<f64>,
    /// Multipliers of the simultaneous density bands in bands.csv.
    pub simultaneous_density: Vec<SimulMultiplier>,
    /// The CDF with pointwise and simultaneous bands, on the same grid, is in this file.
    pub cdf_file: &'static str,
    pub mean: Posterior,
    pub sd: Posterior,
    pub quantiles: Vec<QuantileSummary>,
    pub modes: CountSummary,
    pub occupied_components: CountSummary,
    /// Where the bumps are: "bump_rule", "bumps", "dips", "regions".
    #[serde(flatten)]
    pub shape: ShapeSummary,
    /// The model check's mark (checks.json), when the run has one.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub model_check: Option<crate::check::CheckMark>,
}

/// Probabilities of the distribution's quantiles summarised in summary.json.
pub const QUANTILE_PROBS: [f64; 3] = [0.05, 0.5, 0.95];

/// The content of summary.json from the features of every draw used (`f`), the density
/// `bands` (for the grid, the levels and the simultaneous multipliers) and the verdict.
pub fn summary_file(f: &DrawFeatures, bands: &Bands, converged: Option<bool>) -> SummaryFile {
    let levels = &bands.levels;
    let grid = &bands.x;
    let g = grid.len();
    SummaryFile {
        tool: "mixband",
        version: env!("CARGO_PKG_VERSION"),
        converged,
        caution: caution(converged),
        draws_used: f.len(),
        levels: levels.clone(),
        simultaneous_density: simul_multipliers(bands),
        cdf_file: "cdf.csv",
        mean: Posterior::of(&f.mean, levels),
        sd: Posterior::of(&f.sd, levels),
        quantiles: f
            .probs
            .iter()
            .zip(&f.quantiles)
            .map(|(&p, q)| QuantileSummary {
                p,
                posterior: Posterior::of(q, levels),
            })
            .collect(),
        modes: CountSummary {
            definition: format!(
                "interior local maxima of each draw's density on the {g}-point grid from {} to {}, ignoring bumps whose \
                 prominence is below {}% of that draw's highest value",
                grid[0],
                grid[g - 1],
                MIN_RELATIVE_PROMINENCE * 100.0
            ),
            distribution: distribution(f.modes.iter().copied()),
        },
        occupied_components: CountSummary {
            definition: "components with at least one observation allocated in the sweep; this is NOT the number of \
                         modes: overlapping components form one mode and a skewed bump takes several components"
                .into(),
            distribution: distribution(f.occupied.iter().copied()),
        },
        shape: shape_summary(f, grid, &bands.mean, levels),
        model_check: None,
    }
}

/// Writes cdf.csv (the CDF's bands) and summary.json.
pub fn write_summaries(layout: &RunLayout, cdf: &Bands, summary: &SummaryFile) -> Result<()> {
    write_atomic(&layout.cdf_csv(), cdf.to_csv().as_bytes())?;
    let mut json = serde_json::to_vec_pretty(summary)
        .map_err(|e| Error::internal(format!("cannot encode summary: {e}")))?;
    json.push(b'\n');
    write_atomic(&layout.summary_json(), &json)
}

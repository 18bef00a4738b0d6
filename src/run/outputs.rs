//! Writing the summaries of a run: `bands.csv` and `bands.json` (density bands), and
//! `cdf.csv` and `summary.json` (CDF bands, quantiles, moments, modes, occupied components).

use serde::Serialize;

use crate::data::Transform;
use crate::error::{Error, Result};
use crate::store::{write_atomic, DrawRow, RunDraws, RunLayout};
use crate::summary::{
    cdf_draws, count_modes, distribution, mixture_mean_on, mixture_quantile_on, mixture_sd_on,
    Bands, CountProbability, DensityDraws, Posterior, MIN_RELATIVE_PROMINENCE,
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
}

/// Probabilities of the distribution's quantiles summarised in summary.json.
pub const QUANTILE_PROBS: [f64; 3] = [0.05, 0.5, 0.95];

/// Computes and writes cdf.csv and summary.json from the draws and their densities on the
/// grid (`dens`, `bands` as written to bands.csv); `t` is the scale the draws were fitted
/// on, and every summary is on the original scale.
pub fn write_summaries(
    layout: &RunLayout,
    draws: &RunDraws,
    dens: &DensityDraws,
    bands: &Bands,
    t: Transform,
    converged: Option<bool>,
) -> Result<()> {
    let levels = &bands.levels;
    let cdf = Bands::new_clipped(&cdf_draws(draws, &dens.grid, t), levels, 0.0, 1.0);
    write_atomic(&layout.cdf_csv(), cdf.to_csv().as_bytes())?;

    let n = draws.min_len();
    let rows: Vec<&DrawRow> = draws.chains.iter().flat_map(|c| &c.rows[..n]).collect();
    let feature = |f: &dyn Fn(&DrawRow) -> f64| {
        Posterior::of(&rows.iter().map(|r| f(r)).collect::<Vec<_>>(), levels)
    };
    let g = dens.grid.len();
    let file = SummaryFile {
        tool: "mixband",
        version: env!("CARGO_PKG_VERSION"),
        converged,
        caution: caution(converged),
        draws_used: rows.len(),
        levels: levels.clone(),
        simultaneous_density: simul_multipliers(bands),
        cdf_file: "cdf.csv",
        mean: feature(&|r| mixture_mean_on(r, t)),
        sd: feature(&|r| mixture_sd_on(r, t)),
        quantiles: QUANTILE_PROBS
            .iter()
            .map(|&p| QuantileSummary {
                p,
                posterior: feature(&|r| mixture_quantile_on(r, p, t)),
            })
            .collect(),
        modes: CountSummary {
            definition: format!(
                "interior local maxima of each draw's density on the {g}-point grid from {} to {}, ignoring bumps whose \
                 prominence is below {}% of that draw's highest value",
                dens.grid[0],
                dens.grid[g - 1],
                MIN_RELATIVE_PROMINENCE * 100.0
            ),
            distribution: distribution(dens.values.chunks_exact(g).map(count_modes)),
        },
        occupied_components: CountSummary {
            definition: "components with at least one observation allocated in the sweep; this is NOT the number of \
                         modes: overlapping components form one mode and a skewed bump takes several components"
                .into(),
            distribution: distribution(rows.iter().map(|r| r.occupied as usize)),
        },
    };
    let mut json = serde_json::to_vec_pretty(&file)
        .map_err(|e| Error::internal(format!("cannot encode summary: {e}")))?;
    json.push(b'\n');
    write_atomic(&layout.summary_json(), &json)
}

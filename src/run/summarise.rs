//! The summaries of a stored run in bounded memory: the convergence gate's report, the
//! density bands, the CDF bands and the per-draw features of summary.json, computed from
//! the draw tables read as a stream, never from every draw held at once.
//!
//! Every summary of a curve at a grid point (its mean, sd, quantiles, split R-hat, bulk
//! and tail ESS) needs that point's full series over all draws, so the curves are
//! evaluated a window of columns at a time: each window is one reading of the tables,
//! holding `columns × draws` values; the columns are the density and the CDF at each grid
//! point and (for the gate) each per-component parameter. The simultaneous bands need each
//! draw's largest standardised deviation over the whole grid; it is a maximum, so it is
//! folded in point by point as each point's mean and sd become known, one number a draw.
//! The scalars the gate needs whole (log-likelihood, occupied, concentration, σ) are read
//! once before ([`ScalarDraws`]), and the features of summary.json (mean, sd and quantiles
//! of each draw's distribution, its number of modes) are taken during the first window.
//! Per draw that is about a dozen numbers plus the window; the results are the same, bit
//! for bit, as [`super::in_memory::summarise_in_memory`] (tests/summaries_streamed.rs).

use crate::data::Transform;
use crate::error::Result;
use crate::gate::{
    assemble, evaluate, scalar_series, ComponentParam, DiagnosticsReport, GateSpec, GridAssessment,
};
use crate::store::{DrawRow, ScalarDraws, StoredChains};
use crate::summary::{
    fold_max_deviation, mixture_cdf_on, Bands, BandsBuilder, DrawDensity, DrawFeatures, ShapeSpec,
};

use super::outputs::QUANTILE_PROBS;

/// Bytes of curve values one window may hold; the window is never narrower than
/// [`MIN_COLUMNS`] columns, so a run with more draws than this allows reads its tables more
/// often but holds at most `8 × MIN_COLUMNS` bytes of window a draw.
pub const WINDOW_BUDGET_BYTES: usize = 64 << 20;

/// The narrowest window (columns evaluated per reading of the tables) chosen by default.
pub const MIN_COLUMNS: usize = 16;

/// What to summarise.
#[derive(Debug, Clone, Copy)]
pub struct SummaryPlan<'a> {
    pub grid: &'a [f64],
    /// The scale the draws were fitted on; density and CDF are on the original scale.
    pub transform: Transform,
    /// Levels of the bands; `None`: no bands, CDF or features (the gate alone).
    pub levels: Option<&'a [f64]>,
    /// Assess the gate with this spec.
    pub gate: Option<GateSpec>,
    /// Columns evaluated per reading of the tables; `None`: as many as
    /// [`WINDOW_BUDGET_BYTES`] allows, at least [`MIN_COLUMNS`].
    pub columns_per_pass: Option<usize>,
    /// Regions and thresholds of the shape summaries; `None`: the defaults, no regions.
    pub shape: Option<&'a ShapeSpec>,
}

/// Everything summarised from a run; each part is present when the plan asked for it.
#[derive(Debug, Clone, PartialEq)]
pub struct Summaries {
    pub report: Option<DiagnosticsReport>,
    pub bands: Option<Bands>,
    pub cdf: Option<Bands>,
    pub features: Option<DrawFeatures>,
}

/// One column of a window: a curve at a grid point, or a component parameter.
#[derive(Debug, Clone, Copy)]
enum Column {
    Density(usize),
    Cdf(usize),
    Component(ComponentParam),
}

/// Pointwise bands being built, with each draw's running maximal standardised deviation.
struct CurveBands {
    builder: BandsBuilder,
    max_dev: Vec<f64>,
}

impl CurveBands {
    fn new(grid: &[f64], levels: &[f64], draws: usize) -> Self {
        CurveBands {
            builder: BandsBuilder::new(grid, levels, draws),
            max_dev: vec![0.0; draws],
        }
    }

    fn push_point(&mut self, pooled: &[f64]) {
        let (mean, sd) = self.builder.push_point(pooled.to_vec());
        fold_max_deviation(&mut self.max_dev, pooled, mean, sd);
    }

    fn finish(self, lo: f64, hi: f64) -> Bands {
        self.builder.finish(&self.max_dev, lo, hi)
    }
}

/// The default window width (columns per reading of the tables) for `draws` draws in all.
pub fn window_width(draws: usize) -> usize {
    (WINDOW_BUDGET_BYTES / (8 * draws.max(1))).max(MIN_COLUMNS)
}

/// Summarises the tables `stored`, whose scalars `scalars` were read from them, as `plan`
/// says; every chain is cut to the shortest. Bands need at least one draw.
pub fn summarise_stored(
    stored: &StoredChains,
    scalars: &ScalarDraws,
    plan: &SummaryPlan,
) -> Result<Summaries> {
    let (grid, t) = (plan.grid, plan.transform);
    let lens = scalars.lens();
    let len = scalars.min_len();
    let within_chain = lens.len() == 1;
    let draws = lens.len() * len;
    let mut cols: Vec<Column> = (0..grid.len()).map(Column::Density).collect();
    if plan.levels.is_some() {
        cols.extend((0..grid.len()).map(Column::Cdf));
    }
    if let Some(spec) = &plan.gate {
        let params = ComponentParam::all(scalars.k, spec.location_kernel);
        cols.extend(params.into_iter().map(Column::Component));
    }
    let width = plan
        .columns_per_pass
        .unwrap_or_else(|| window_width(draws))
        .max(1);

    let mut dens = plan.levels.map(|l| CurveBands::new(grid, l, draws));
    let mut cdf = plan.levels.map(|l| CurveBands::new(grid, l, draws));
    let new_features = || DrawFeatures::new(&QUANTILE_PROBS).with_shape(plan.shape);
    let mut features = plan.levels.map(|_| new_features());
    let mut gate_grid = plan.gate.map(|_| GridAssessment::new(grid.len()));
    let mut components = Vec::new();
    let threads = std::thread::available_parallelism().map_or(1, |n| n.get());
    for (pass, window) in cols.chunks(width).enumerate() {
        // The first pass also takes each draw's features from its whole curve; its
        // density columns then read the same values from that curve. Chains are read in
        // parallel, each with its own features, appended in chain order.
        let whole = pass == 0 && features.is_some();
        let init = || (whole.then(new_features), vec![0.0; grid.len()]);
        let fill = |(feat, curve): &mut (Option<DrawFeatures>, Vec<f64>),
                    row: &DrawRow,
                    out: &mut [f64]| {
            let density = DrawDensity::new(row);
            if let Some(f) = feat.as_mut() {
                for (c, &x) in curve.iter_mut().zip(grid) {
                    *c = density.at_on(x, t);
                }
                f.push(row, t, grid, curve);
            }
            for (o, col) in out.iter_mut().zip(window) {
                *o = match *col {
                    Column::Density(i) if whole => curve[i],
                    Column::Density(i) => density.at_on(grid[i], t),
                    Column::Cdf(i) => mixture_cdf_on(row, grid[i], t),
                    Column::Component(p) => p.value(row),
                };
            }
        };
        let (values, states) = stored.columns_per_chain(len, window.len(), threads, init, fill)?;
        if let Some(f) = features.as_mut() {
            for (chain_features, _) in states {
                if let Some(cf) = chain_features {
                    f.append(cf);
                }
            }
        }
        for (i, col) in window.iter().enumerate() {
            match *col {
                Column::Density(j) => {
                    if let (Some(a), Some(spec)) = (gate_grid.as_mut(), &plan.gate) {
                        a.push_point(grid[j], values.per_chain(i), &spec.thresholds, within_chain);
                    }
                    if let Some(b) = dens.as_mut() {
                        b.push_point(values.pooled(i));
                    }
                }
                Column::Cdf(_) => {
                    if let Some(b) = cdf.as_mut() {
                        b.push_point(values.pooled(i));
                    }
                }
                Column::Component(p) => {
                    if let Some(spec) = &plan.gate {
                        let s = p.series(values.per_chain(i));
                        components.push(evaluate(&s, false, &spec.thresholds, within_chain).0);
                    }
                }
            }
        }
    }
    let report = match (plan.gate, gate_grid) {
        (Some(spec), Some(g)) => Some(assemble(
            &spec,
            &lens,
            scalar_series(scalars, spec.concentration_sampled, spec.location_kernel),
            g.finish(&spec.thresholds, within_chain),
            components,
        )),
        _ => None,
    };
    Ok(Summaries {
        report,
        bands: dens.map(|b| b.finish(0.0, f64::INFINITY)),
        cdf: cdf.map(|b| b.finish(0.0, 1.0)),
        features,
    })
}

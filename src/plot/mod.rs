//! Figures of a run, as SVG files in RUN/plots/: the density with its credible bands
//! (density.svg), chain traces (trace.svg), rank plots (ranks.svg) and the convergence of
//! the density along the grid (grid-diagnostics.svg). Drawn with plotters' SVG backend;
//! the visual style lives in [`style`].

pub mod bump_marks;
pub mod canvas;
pub mod cdf;
pub mod density;
pub mod grid_diag;
pub mod hist;
pub mod inputs;
pub mod kde;
pub mod loo_pit;
pub mod observations;
pub mod quantities;
pub mod ranks;
pub mod style;
pub mod trace;

use std::path::{Path, PathBuf};

pub use density::{density_svg, DensityOptions};
pub use grid_diag::{grid_diagnostics_svg, GridDiagnostics};
pub use inputs::{RunInputs, StoredBands};
pub use ranks::ranks_svg;
pub use trace::trace_svg;

use crate::error::{Error, Result};
use crate::store::{write_atomic, StoredChains};
use crate::summary::DrawDensity;

/// Every figure of a run, as SVG text.
#[derive(Debug, Clone)]
pub struct Figures {
    pub density: String,
    pub trace: String,
    pub ranks: String,
    /// Absent when the run has no diagnostics of the density along the grid.
    pub grid: Option<String>,
    /// The distribution function's bands (cdf.svg); absent without cdf.csv.
    pub cdf: Option<String>,
}

/// Renders every figure.
pub fn render(
    inp: &RunInputs,
    opts: DensityOptions,
    grid: Option<&GridDiagnostics>,
) -> Result<Figures> {
    Ok(Figures {
        density: density_svg(inp, opts)?,
        trace: trace_svg(inp)?,
        ranks: ranks_svg(inp)?,
        grid: grid.map(|g| grid_diagnostics_svg(inp, g)).transpose()?,
        cdf: cdf::cdf_figure(inp)?,
    })
}

/// Writes the figures into RUN/plots/ and returns the paths written.
pub fn write_figures(run: &Path, figs: &Figures) -> Result<Vec<PathBuf>> {
    let dir = run.join("plots");
    std::fs::create_dir_all(&dir).map_err(|e| Error::io(&dir, e))?;
    let mut files = vec![
        ("density.svg", &figs.density),
        ("trace.svg", &figs.trace),
        ("ranks.svg", &figs.ranks),
    ];
    if let Some(g) = &figs.grid {
        files.push(("grid-diagnostics.svg", g));
    }
    if let Some(c) = &figs.cdf {
        files.push(("cdf.svg", c));
    }
    let mut out = Vec::new();
    for (name, text) in files {
        let p = dir.join(name);
        write_atomic(&p, text.as_bytes())?;
        out.push(p);
    }
    // A stale grid figure from an earlier call must not outlive its diagnostics.
    if figs.grid.is_none() {
        let stale = dir.join("grid-diagnostics.svg");
        if stale.exists() {
            std::fs::remove_file(&stale).map_err(|e| Error::io(&stale, e))?;
        }
    }
    Ok(out)
}

/// R-hat and bulk-ESS of the density at each point of the bands' grid, with the gate's
/// thresholds. Taken from RUN/diagnostics.json when the gate assessed the same grid (so
/// the figure shows the numbers behind the verdict); otherwise computed from the stored
/// draws (chains cut to the shortest) with the config's thresholds. `None` when the draws
/// are too few for the diagnostics.
pub fn grid_diagnostics(inp: &RunInputs) -> Result<Option<GridDiagnostics>> {
    if let Some(g) = gate_grid(inp) {
        return Ok(Some(g));
    }
    // The density that bands.csv reports (on the original scale under a transform) at each
    // grid point, a window of points per reading of the tables (bounded memory, as for the
    // summaries).
    let grid = &inp.bands.grid;
    let t = inp.prep.config.transform;
    let stored = StoredChains::new(&inp.layout.draws_dir(), &inp.manifest.chain_ids());
    let len = inp.draws.min_len();
    let width = crate::run::window_width(inp.draws.chains.len() * len);
    let mut rhat = Vec::with_capacity(grid.len());
    let mut ess_bulk = Vec::with_capacity(grid.len());
    let points: Vec<usize> = (0..grid.len()).collect();
    for window in points.chunks(width) {
        let cols = stored.columns(len, window.len(), |row, out| {
            let density = DrawDensity::new(row);
            for (o, &i) in out.iter_mut().zip(window) {
                *o = density.at_on(grid[i], t);
            }
        })?;
        for i in 0..window.len() {
            let series = cols.per_chain(i);
            let refs: Vec<&[f64]> = series.iter().map(Vec::as_slice).collect();
            match crate::diagnostics::scalar_diagnostics(&refs) {
                Ok(d) => {
                    rhat.push(d.rhat);
                    ess_bulk.push(d.ess_bulk);
                }
                Err(_) => return Ok(None),
            }
        }
    }
    let c = &inp.prep.config;
    Ok(Some(GridDiagnostics {
        x: grid.clone(),
        rhat,
        ess_bulk,
        max_rhat: c.max_rhat,
        min_ess: c.min_ess,
    }))
}

/// Reads a run, renders every figure and writes them into RUN/plots/.
pub fn plot_run(run: &Path, opts: DensityOptions) -> Result<(RunInputs, Figures, Vec<PathBuf>)> {
    let inp = RunInputs::read(run)?;
    let grid = grid_diagnostics(&inp)?;
    let figs = render(&inp, opts, grid.as_ref())?;
    let paths = write_figures(run, &figs)?;
    Ok((inp, figs, paths))
}

/// The gate's per-grid-point numbers, when diagnostics.json exists, covers the bands' grid
/// point for point, and has R-hat and bulk-ESS at every point.
fn gate_grid(inp: &RunInputs) -> Option<GridDiagnostics> {
    let path = inp.layout.diagnostics_json();
    if !path.exists() {
        return None;
    }
    let r = crate::gate::DiagnosticsReport::read(&path).ok()?;
    let grid = &inp.bands.grid;
    let same = r.density_grid.len() == grid.len()
        && r.density_grid
            .iter()
            .zip(grid)
            .all(|(p, &x)| (p.x - x).abs() <= 1e-9 * x.abs().max(1.0));
    if !same {
        return None;
    }
    let rhat: Option<Vec<f64>> = r.density_grid.iter().map(|p| p.rhat).collect();
    let ess: Option<Vec<f64>> = r.density_grid.iter().map(|p| p.ess_bulk).collect();
    Some(GridDiagnostics {
        x: grid.clone(),
        rhat: rhat?,
        ess_bulk: ess?,
        max_rhat: r.thresholds.max_rhat,
        min_ess: r.thresholds.min_ess,
    })
}

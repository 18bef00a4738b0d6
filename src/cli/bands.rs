//! `mixband bands`: recompute density summaries from stored draws, without sampling.

use std::path::Path;

use crate::config::resolve_check_levels;
use crate::data::Transform;
use crate::error::{Error, Result};
use crate::gate::{assess, DiagnosticsReport, GateSpec};
use crate::run::{write_bands, write_summaries, Prepared};
use crate::store::{read_run_draws, Manifest, RunDraws, RunLayout, RunStatus};
use crate::summary::{linspace, Bands, DensityDraws};

/// Reads the draws of a run, assesses them against the convergence gate, and writes
/// diagnostics.json and bands.csv / bands.json (flagged with the verdict) on the configured
/// grid. Returns the assessment.
pub(super) fn summarise(layout: &RunLayout, prep: &Prepared) -> Result<DiagnosticsReport> {
    let c = &prep.config;
    let manifest = Manifest::read(&layout.manifest())?;
    let (draws, dens) = densities(
        layout,
        &manifest,
        c.grid_from,
        c.grid_to,
        c.grid_points,
        c.transform,
    )?;
    let report = assess(
        &draws,
        &dens,
        &GateSpec::from_config(c, manifest.status == RunStatus::Complete),
    );
    report.write(layout)?;
    let bands = Bands::new(&dens, &c.levels);
    write_bands(layout, &bands, Some(report.passed))?;
    write_summaries(
        layout,
        &draws,
        &dens,
        &bands,
        c.transform,
        Some(report.passed),
    )?;
    Ok(report)
}

fn densities(
    layout: &RunLayout,
    manifest: &Manifest,
    from: f64,
    to: f64,
    points: usize,
    t: Transform,
) -> Result<(RunDraws, DensityDraws)> {
    let draws = read_run_draws(&layout.draws_dir(), &manifest.chain_ids())?;
    if draws.min_len() == 0 {
        return Err(Error::input(format!(
            "{}: no draws stored yet",
            layout.root.display()
        )));
    }
    let grid = linspace(from, to, points);
    let dens = DensityDraws::new_on(&draws, &grid, t);
    Ok((draws, dens))
}

/// Bands on another grid; they carry the verdict of the run's diagnostics.json, if any.
fn write_for_grid(
    layout: &RunLayout,
    from: f64,
    to: f64,
    points: usize,
    levels: &[f64],
    t: Transform,
) -> Result<()> {
    let manifest = Manifest::read(&layout.manifest())?;
    let (draws, dens) = densities(layout, &manifest, from, to, points, t)?;
    let converged = DiagnosticsReport::read(&layout.diagnostics_json())
        .ok()
        .map(|r| r.passed);
    let bands = Bands::new(&dens, levels);
    write_bands(layout, &bands, converged)?;
    write_summaries(layout, &draws, &dens, &bands, t, converged)
}

pub(super) fn bands(
    run: &Path,
    points: Option<usize>,
    from: Option<f64>,
    to: Option<f64>,
    levels: Option<Vec<f64>>,
) -> Result<i32> {
    let layout = RunLayout::new(run);
    let prep = Prepared::from_config_file(&layout.config())?;
    let c = &prep.config;
    let points = points.unwrap_or(c.grid_points);
    let from = from.unwrap_or(c.grid_from);
    let to = to.unwrap_or(c.grid_to);
    let levels = levels.unwrap_or_else(|| c.levels.clone());
    if points < 2 {
        return Err(Error::input(format!(
            "--points must be at least 2, got {points}"
        )));
    }
    if !(from.is_finite() && to.is_finite() && from < to) {
        return Err(Error::input(format!(
            "--from must be below --to, got {from} and {to}"
        )));
    }
    resolve_check_levels(&levels).map_err(|m| Error::input(format!("--levels {m}")))?;
    write_for_grid(&layout, from, to, points, &levels, c.transform)?;
    println!(
        "mixband: wrote {}, {}, {} and {}",
        layout.bands_csv().display(),
        layout.bands_json().display(),
        layout.cdf_csv().display(),
        layout.summary_json().display()
    );
    Ok(0)
}

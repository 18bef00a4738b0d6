//! `mixband bands`: recompute density summaries from stored draws, without sampling.

use std::path::Path;

use crate::config::{resolve_check_levels, RunConfig};
use crate::error::{Error, Result};
use crate::gate::{DiagnosticsReport, GateSpec};
use crate::run::{
    summarise_stored, summary_file, write_bands, write_summaries, Prepared, Summaries, SummaryPlan,
};
use crate::store::{Manifest, RunLayout, RunStatus, ScalarDraws, StoredChains};
use crate::summary::{linspace, Bands, DrawFeatures};

/// Reads the draws of a run, assesses them against the convergence gate, and writes
/// diagnostics.json and bands.csv / bands.json (flagged with the verdict) on the configured
/// grid. Returns the assessment.
pub(super) fn summarise(layout: &RunLayout, prep: &Prepared) -> Result<DiagnosticsReport> {
    let c = &prep.config;
    let manifest = Manifest::read(&layout.manifest())?;
    let grid = linspace(c.grid_from, c.grid_to, c.grid_points);
    let spec = GateSpec::from_config(c, manifest.status == RunStatus::Complete);
    let s = summaries(layout, &manifest, &grid, &c.levels, c, Some(spec))?;
    let report = s
        .report
        .ok_or_else(|| Error::internal("the gate was not assessed"))?;
    report.write(layout)?;
    if let Some(r) = crate::check::check_and_write(layout, prep) {
        println!("mixband: model check: {}", r.verdict.summary);
    }
    write_all(layout, s.bands, s.cdf, s.features, Some(report.passed))?;
    Ok(report)
}

/// Streams the stored draws (refused when there are none yet) into the summaries.
fn summaries(
    layout: &RunLayout,
    manifest: &Manifest,
    grid: &[f64],
    levels: &[f64],
    c: &RunConfig,
    gate: Option<GateSpec>,
) -> Result<Summaries> {
    let stored = StoredChains::new(&layout.draws_dir(), &manifest.chain_ids());
    let scalars = ScalarDraws::read(&stored)?;
    if scalars.min_len() == 0 {
        return Err(Error::input(format!(
            "{}: no draws stored yet",
            layout.root.display()
        )));
    }
    let plan = SummaryPlan {
        grid,
        transform: c.transform,
        levels: Some(levels),
        gate,
        columns_per_pass: None,
        shape: Some(&c.shape),
    };
    summarise_stored(&stored, &scalars, &plan)
}

/// Writes bands.csv, bands.json, cdf.csv and summary.json.
fn write_all(
    layout: &RunLayout,
    bands: Option<Bands>,
    cdf: Option<Bands>,
    features: Option<DrawFeatures>,
    converged: Option<bool>,
) -> Result<()> {
    let missing = || Error::internal("the bands were not computed");
    let bands = bands.ok_or_else(missing)?;
    write_bands(layout, &bands, converged)?;
    let mut file = summary_file(&features.ok_or_else(missing)?, &bands, converged);
    file.model_check = crate::check::mark_of(layout);
    write_summaries(layout, &cdf.ok_or_else(missing)?, &file)
}

/// Bands on another grid; they carry the verdict of the run's diagnostics.json, if any.
fn write_for_grid(
    layout: &RunLayout,
    from: f64,
    to: f64,
    points: usize,
    levels: &[f64],
    c: &RunConfig,
) -> Result<()> {
    let manifest = Manifest::read(&layout.manifest())?;
    let grid = linspace(from, to, points);
    let s = summaries(layout, &manifest, &grid, levels, c, None)?;
    let converged = DiagnosticsReport::read(&layout.diagnostics_json())
        .ok()
        .map(|r| r.passed);
    write_all(layout, s.bands, s.cdf, s.features, converged)
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
    write_for_grid(&layout, from, to, points, &levels, c)?;
    println!(
        "mixband: wrote {}, {}, {} and {}",
        layout.bands_csv().display(),
        layout.bands_json().display(),
        layout.cdf_csv().display(),
        layout.summary_json().display()
    );
    Ok(0)
}

//! The whole job as one library call: sample a run (fresh, resumed or extended) into its
//! directory, then assess the convergence gate, check the model against the data, write
//! the bands, CDF, summary and report, and hand back what was found as a [`RunResult`].
//!
//! The command line and the Python package are thin layers over these functions: they
//! parse arguments and print; every run file is written from here.

use std::path::{Path, PathBuf};

use super::execute::{execute, execute_holding, ExecOptions, Mode, RunOutcome};
use super::grow;
use super::outputs::{summary_file, write_bands, write_summaries, SummaryFile};
use super::prepare::Prepared;
use super::summarise::{summarise_stored, Summaries, SummaryPlan};
use crate::check::{check_and_write, mark_of, CheckReport};
use crate::config::{resolve_check_levels, RunConfig};
use crate::error::{Error, Result};
use crate::gate::{DiagnosticsReport, GateSpec};
use crate::store::{Manifest, RunLayout, RunStatus, ScalarDraws, StoredChains};
use crate::summary::{linspace, Bands, DrawFeatures};

/// How a job runs besides its config: threads, progress, the stop flag, and whether the
/// figures and report.html are written at the end.
#[derive(Debug, Clone, Copy)]
pub struct JobOptions<'a> {
    pub exec: ExecOptions<'a>,
    /// Write the figures and report.html after the summaries.
    pub report: bool,
}

/// Everything a finished job wrote, as values: the gate's assessment, the model check,
/// the density and CDF bands, the summary (as in summary.json) and where the files are.
#[derive(Debug, Clone)]
pub struct RunResult {
    pub layout: RunLayout,
    pub manifest: Manifest,
    /// diagnostics.json: the convergence gate's assessment.
    pub diagnostics: DiagnosticsReport,
    /// checks.json, when the model check ran.
    pub check: Option<CheckReport>,
    /// bands.csv: density bands on the grid.
    pub bands: Bands,
    /// cdf.csv: CDF bands on the grid.
    pub cdf: Bands,
    /// summary.json.
    pub summary: SummaryFile,
    /// report.html, when it was written.
    pub report_html: Option<PathBuf>,
}

impl RunResult {
    /// Whether the run passed the convergence gate (nothing may be reported otherwise).
    pub fn converged(&self) -> bool {
        self.diagnostics.passed
    }
}

/// What a request to continue a run found.
#[derive(Debug)]
pub enum Continued {
    /// The run was sampled further and summarised again.
    Done(Box<RunResult>),
    /// The run was complete already and no draws were asked for: nothing was written.
    AlreadyComplete,
}

/// Samples the run `prep` describes into `out` (`mode`: fresh or resumed) and summarises
/// it. `extra_files` (name, bytes) are written into a fresh run directory beside its
/// config (a copy of data given in memory). A stop raised through `opts.exec.stop` ends
/// with [`Error::Interrupted`], the run left resumable.
pub fn run_job(
    prep: &Prepared,
    out: &Path,
    mode: Mode,
    opts: JobOptions<'_>,
    extra_files: &[(&str, &[u8])],
) -> Result<RunResult> {
    run_job_growing(prep, out, mode, opts, extra_files, true)
}

/// [`run_job`]; `grow` allows growing a run that fails the gate ([`super::grow`]): a
/// fresh run and a resume to the configured length may grow, an explicit extension does
/// not (it asked for a number of draws), nor does a run of some of the chains (a part
/// cannot judge the gate alone).
fn run_job_growing(
    prep: &Prepared,
    out: &Path,
    mode: Mode,
    opts: JobOptions<'_>,
    extra_files: &[(&str, &[u8])],
    grow: bool,
) -> Result<RunResult> {
    if opts.exec.threads == 0 {
        return Err(Error::input("--threads must be at least 1"));
    }
    // `outcome.lock` keeps the run directory locked until this function returns, after
    // the summaries and the report are written.
    let mut outcome = execute(prep, out, mode, opts.exec, extra_files)?;
    refuse_interrupted(&outcome, out)?;
    let layout = RunLayout::new(out);
    if outcome.manifest.not_grown.is_some() {
        // Why an earlier call did not grow the run is stale once it has more draws.
        outcome.manifest.not_grown = None;
        outcome.manifest.write(&layout.manifest())?;
    }
    let mut s = assess_and_summarise(&layout, prep)?;
    let c = &prep.config;
    if grow && c.chain_ids.is_none() && c.max_draws > c.draws {
        let mut grown_prep: Option<Prepared> = None;
        for _ in 0..grow::MAX_ROUNDS {
            let report = s.report.as_ref().ok_or_else(not_assessed)?;
            if report.passed {
                break;
            }
            let draws = grown_prep.as_ref().map_or(c.draws, |p| p.config.draws);
            let mut manifest = Manifest::read(&layout.manifest())?;
            let decision = grow::decide(report, draws, c.max_draws);
            manifest.not_grown = match &decision {
                grow::Decision::Stop(why) => Some(why.clone()),
                grow::Decision::Grow(_) => None,
            };
            let grow::Decision::Grow(g) = decision else {
                manifest.write(&layout.manifest())?;
                outcome.manifest = manifest;
                break;
            };
            let to = g.to_draws;
            manifest.grown.push(g);
            manifest.write(&layout.manifest())?;
            let p = grown_prep.get_or_insert_with(|| prep.clone());
            p.config.draws = to;
            outcome = execute_holding(
                p,
                out,
                Mode::Resume,
                opts.exec,
                &[],
                Some(outcome.lock.clone()),
            )?;
            refuse_interrupted(&outcome, out)?;
            s = assess_and_summarise(&layout, p)?;
        }
    }
    let mut result = write_results(&layout, prep, s)?;
    result.manifest = outcome.manifest;
    if opts.report {
        let page = crate::report::write_report(out, crate::plot::DensityOptions::default())?;
        result.report_html = Some(page);
    }
    Ok(result)
}

fn not_assessed() -> Error {
    Error::internal("the gate was not assessed")
}

/// An interrupted sampling call as the error that says how to continue.
fn refuse_interrupted(outcome: &RunOutcome, out: &Path) -> Result<()> {
    if !outcome.interrupted {
        return Ok(());
    }
    let left = outcome
        .manifest
        .chains
        .iter()
        .filter(|ch| ch.sweeps_done < ch.sweeps_planned)
        .count();
    Err(Error::Interrupted(format!(
        "{left} chain(s) stopped early; draws so far are in {}; continue with `mixband resume {}`",
        out.display(),
        out.display()
    )))
}

/// Continues the run in `run`: to its configured length (`extra_draws` None), or by
/// `extra_draws` more draws a chain once it is complete. The run's own config.toml is the
/// description; it must still match the config recorded in the manifest, and the data its
/// SHA-256.
pub fn continue_run(
    run: &Path,
    extra_draws: Option<usize>,
    opts: JobOptions<'_>,
) -> Result<Continued> {
    if extra_draws == Some(0) {
        return Err(Error::input("--draws must be at least 1"));
    }
    let layout = RunLayout::new(run);
    let (manifest, mut prep) = open_run(&layout)?;
    let without_path = |mut v: serde_json::Value| {
        // The data file is compared by its SHA-256 (in `execute`); its path may be written
        // differently (the demo's copy is relative to the run directory).
        if let Some(d) = v.get_mut("data").and_then(|d| d.as_object_mut()) {
            d.remove("file");
        }
        // [check] changes no draw (and runs from before it have none).
        if let Some(o) = v.as_object_mut() {
            o.remove("check");
        }
        // Nor does max_draws change a draw already taken (and runs from before it have
        // none): it only bounds how far a failing run may grow.
        if let Some(s) = v.get_mut("sampler").and_then(|s| s.as_object_mut()) {
            s.remove("max_draws");
        }
        v
    };
    let now = serde_json::to_value(prep.config.to_raw())
        .map_err(|e| Error::internal(format!("cannot encode config: {e}")))?;
    if without_path(now) != without_path(manifest.config.clone()) {
        return Err(Error::input(format!(
            "{} no longer matches the config recorded in {}; a run continues only with the \
             config it started with (start a new run for a changed config)",
            layout.config().display(),
            layout.manifest().display()
        )));
    }
    match extra_draws {
        Some(n) => {
            if manifest.status != RunStatus::Complete {
                return Err(Error::input(format!(
                    "{} is incomplete; run `mixband resume {}` before extending it",
                    run.display(),
                    run.display()
                )));
            }
            prep.config.draws = prep
                .config
                .draws
                .checked_add(n)
                .filter(|&d| d <= 1_000_000_000)
                .ok_or_else(|| Error::input(format!("--draws {n} makes the run too long")))?;
            // An extension past max_draws moves the limit with it, so that the run's
            // config.toml stays valid (max_draws at least draws).
            prep.config.max_draws = prep.config.max_draws.max(prep.config.draws);
        }
        None if manifest.status == RunStatus::Complete => return Ok(Continued::AlreadyComplete),
        None => {}
    }
    let grow = extra_draws.is_none();
    run_job_growing(&prep, run, Mode::Resume, opts, &[], grow).map(|r| Continued::Done(Box::new(r)))
}

/// The manifest and prepared config of an existing run directory.
fn open_run(layout: &RunLayout) -> Result<(Manifest, Prepared)> {
    if !layout.config().exists() || !layout.manifest().exists() {
        return Err(Error::input(format!(
            "{}: no config.toml and manifest.json; is this a mixband run directory?",
            layout.root.display()
        )));
    }
    let manifest = Manifest::read(&layout.manifest())?;
    let prep = Prepared::from_config_file(&layout.config())?;
    Ok((manifest, prep))
}

/// The prepared config of an existing run whose data file must be the one it sampled;
/// `when` says which moment that was ("the run", "the parts were sampled").
fn open_unchanged(layout: &RunLayout, when: &str) -> Result<(Manifest, Prepared)> {
    let (manifest, prep) = open_run(layout)?;
    if prep.record.sha256 != manifest.data.sha256 {
        return Err(Error::input(format!(
            "{}: the data file {} has changed since {when} (SHA-256 {} then, {} now)",
            layout.root.display(),
            prep.record.file,
            manifest.data.sha256,
            prep.record.sha256
        )));
    }
    Ok((manifest, prep))
}

/// Reads the draws of a run, assesses them against the convergence gate, checks the model
/// against the data, and writes diagnostics.json, checks.json, bands.csv / bands.json,
/// cdf.csv and summary.json (flagged with the verdict) on the configured grid.
pub fn summarise_run(layout: &RunLayout, prep: &Prepared) -> Result<RunResult> {
    let s = assess_and_summarise(layout, prep)?;
    write_results(layout, prep, s)
}

/// The gate's assessment and the summaries of the stored draws, nothing written.
fn assess_and_summarise(layout: &RunLayout, prep: &Prepared) -> Result<Summaries> {
    let c = &prep.config;
    let manifest = Manifest::read(&layout.manifest())?;
    let grid = linspace(c.grid_from, c.grid_to, c.grid_points);
    let spec = GateSpec::from_config(c, manifest.status == RunStatus::Complete);
    summaries(layout, &manifest, &grid, &c.levels, c, Some(spec))
}

/// Writes what [`assess_and_summarise`] found, with the model check, and the growths of
/// the run (the manifest's) among the gate's notes.
fn write_results(layout: &RunLayout, prep: &Prepared, s: Summaries) -> Result<RunResult> {
    let manifest = Manifest::read(&layout.manifest())?;
    let mut diagnostics = s.report.ok_or_else(not_assessed)?;
    if let Some(line) = grow::describe(&manifest.grown, manifest.not_grown.as_deref()) {
        diagnostics.notes.push(format!("the run was {line}"));
    }
    diagnostics.write(layout)?;
    let check = check_and_write(layout, prep);
    let (bands, cdf, summary) =
        write_all(layout, s.bands, s.cdf, s.features, Some(diagnostics.passed))?;
    Ok(RunResult {
        layout: layout.clone(),
        manifest,
        diagnostics,
        check,
        bands,
        cdf,
        summary,
        report_html: None,
    })
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

/// Writes bands.csv, bands.json, cdf.csv and summary.json; returns what they hold.
fn write_all(
    layout: &RunLayout,
    bands: Option<Bands>,
    cdf: Option<Bands>,
    features: Option<DrawFeatures>,
    converged: Option<bool>,
) -> Result<(Bands, Bands, SummaryFile)> {
    let missing = || Error::internal("the bands were not computed");
    let bands = bands.ok_or_else(missing)?;
    write_bands(layout, &bands, converged)?;
    let mut file = summary_file(&features.ok_or_else(missing)?, &bands, converged);
    file.model_check = mark_of(layout);
    let cdf = cdf.ok_or_else(missing)?;
    write_summaries(layout, &cdf, &file)?;
    Ok((bands, cdf, file))
}

/// A grid for [`rebuild_bands`]: `points` from `from` to `to`, at credible `levels`; each
/// `None` keeps the run's configured value.
#[derive(Debug, Clone, Default)]
pub struct GridRequest {
    pub points: Option<usize>,
    pub from: Option<f64>,
    pub to: Option<f64>,
    pub levels: Option<Vec<f64>>,
}

/// Rewrites the bands, CDF and summary of the run in `run` on another grid, without
/// sampling; they carry the verdict of the run's diagnostics.json, if any.
pub fn rebuild_bands(run: &Path, req: &GridRequest) -> Result<RunLayout> {
    let layout = RunLayout::new(run);
    let prep = Prepared::from_config_file(&layout.config())?;
    let c = &prep.config;
    let points = req.points.unwrap_or(c.grid_points);
    let from = req.from.unwrap_or(c.grid_from);
    let to = req.to.unwrap_or(c.grid_to);
    let levels = req.levels.clone().unwrap_or_else(|| c.levels.clone());
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
    c.transform
        .check_grid(from, to)
        .map_err(|(end, m)| Error::input(format!("--{end} {m}")))?;
    resolve_check_levels(&levels).map_err(|m| Error::input(format!("--levels {m}")))?;
    let manifest = Manifest::read(&layout.manifest())?;
    let grid = linspace(from, to, points);
    let s = summaries(&layout, &manifest, &grid, &levels, c, None)?;
    let converged = DiagnosticsReport::read(&layout.diagnostics_json())
        .ok()
        .map(|r| r.passed);
    write_all(&layout, s.bands, s.cdf, s.features, converged)?;
    Ok(layout)
}

/// Checks the model of the finished run in `run` against its data and writes checks.json
/// and its figure. The data file must be the one the run sampled.
pub fn check_run_dir(run: &Path, threads: usize) -> Result<CheckReport> {
    let layout = RunLayout::new(run);
    let (_, prep) = open_unchanged(&layout, "the run")?;
    let r = crate::check::check_run(&layout, &prep, threads.max(1))?;
    r.write(&layout)?;
    r.write_figure(&layout)?;
    Ok(r)
}

/// Joins runs that sampled disjoint chains of one config into `out`
/// ([`super::merge_runs`]), then summarises the joined run as a finished job does, and
/// with `report` writes its figures and report.html (never a part's: a part's report
/// shows its own chains and verdict).
pub fn merge_job(runs: &[PathBuf], out: &Path, report: bool) -> Result<RunResult> {
    // The joined run stays locked until its summaries and report are written.
    let (manifest, _, _lock) = super::merge_runs(runs, out)?;
    let layout = RunLayout::new(out);
    // The summaries need the data only for the resolved config's data-dependent settings;
    // its hash must still be the one every part sampled.
    let (_, prep) = open_unchanged(&layout, "the parts were sampled")?;
    let mut result = summarise_run(&layout, &prep)?;
    result.manifest = manifest;
    if report {
        let page = crate::report::write_report(out, crate::plot::DensityOptions::default())?;
        result.report_html = Some(page);
    }
    Ok(result)
}

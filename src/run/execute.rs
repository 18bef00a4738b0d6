//! Sampling every chain of a run into its directory, in parallel threads.
//!
//! Chain i always uses the streams of (seed, i), so the draws do not depend on the number
//! of threads or on which chains run beside it (`[sampler] chain_ids` runs a subset).
//! Threads go to chains first; spare threads split each chain's allocation by blocks. A fresh run refuses to write into a
//! non-empty directory unless forced; resume and extend continue from the checkpoints. One
//! process at a time writes a run directory (its lock, `store::RunLock`).

use std::path::Path;
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};
use std::sync::{Arc, Mutex};
use std::time::Instant;

use indicatif::{MultiProgress, ProgressBar, ProgressDrawTarget, ProgressStyle};

use super::prepare::Prepared;
use crate::error::{Error, Result};
use crate::sampler::rng::StreamKey;
use crate::sampler::{
    initial_state, initial_state_from_cells, run_chain_opts, thread_split, AllocOptions, ChainPlan,
    ChainStop, Checkpoint, SweepOptions,
};
use crate::store::{
    read_checkpoint, write_atomic, ChainRecord, ChainWriter, Manifest, RunLayout, RunLock,
    RunStatus, Units, LOCK_FILE,
};

/// What kind of sampling call this is.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Mode {
    /// A new run; `force` replaces an earlier mixband run in the same directory.
    Fresh { force: bool },
    /// Continue an incomplete run to its configured length.
    Resume,
}

/// How to run.
#[derive(Debug, Clone, Copy)]
pub struct ExecOptions<'a> {
    /// Worker threads (at least 1).
    pub threads: usize,
    pub quiet: bool,
    /// Raised by the SIGINT handler; chains stop at the end of the current sweep.
    pub stop: &'a AtomicBool,
}

/// How sampling ended.
#[derive(Debug, Clone)]
pub struct RunOutcome {
    pub manifest: Manifest,
    pub interrupted: bool,
    /// The run directory's writer lock, still held: whoever writes the summaries after
    /// sampling keeps the outcome (or this field) alive until they are written, and the
    /// lock is released when the last clone is dropped.
    pub lock: Arc<RunLock>,
}

/// How one chain's thread ended: its stop, draws written and seconds spent.
type ChainResult = Result<(ChainStop, u64, f64)>;

/// Whether `dir` holds anything besides its lock file.
fn has_files(dir: &Path) -> Result<bool> {
    for entry in std::fs::read_dir(dir).map_err(|e| Error::io(dir, e))? {
        let entry = entry.map_err(|e| Error::io(dir, e))?;
        if entry.file_name() != LOCK_FILE {
            return Ok(true);
        }
    }
    Ok(false)
}

/// Checks that a fresh run may be written into `dir`: absent, empty, or (with `force`) an
/// earlier mixband run. Returns whether there is an earlier run to clear. `locked`: this
/// process holds the lock already.
fn check_target(dir: &Path, force: bool, locked: bool) -> Result<bool> {
    if dir.exists() && !dir.is_dir() {
        return Err(Error::input(format!(
            "--out {} exists and is not a directory; choose another --out",
            dir.display()
        )));
    }
    if !dir.exists() || !has_files(dir)? {
        return Ok(false);
    }
    // A live writer is named before any other complaint.
    if !locked {
        RunLock::check_free(dir)?;
    }
    if !force {
        return Err(Error::input(format!(
            "{} exists and is not empty; choose another --out or pass --force to replace an earlier run",
            dir.display()
        )));
    }
    if !RunLayout::new(dir).manifest().exists() {
        return Err(Error::input(format!(
            "{} is not a mixband run directory (no manifest.json); refusing to replace it even with --force",
            dir.display()
        )));
    }
    Ok(true)
}

/// Prepares the directory for a fresh run and takes its lock. The checks are made before
/// anything is created and again once the lock is held (another writer may have finished
/// in between); an earlier run is cleared only under the lock, so a refused `--force`
/// deletes nothing.
fn claim_directory(dir: &Path, force: bool) -> Result<RunLock> {
    check_target(dir, force, false)?;
    std::fs::create_dir_all(dir).map_err(|e| Error::io(dir, e))?;
    let lock = RunLock::acquire(dir, if force { "sample --force" } else { "sample" })?;
    if check_target(dir, force, true)? {
        for entry in std::fs::read_dir(dir).map_err(|e| Error::io(dir, e))? {
            let entry = entry.map_err(|e| Error::io(dir, e))?;
            if entry.file_name() == LOCK_FILE {
                continue;
            }
            let p = entry.path();
            let kind = entry.file_type().map_err(|e| Error::io(&p, e))?;
            if kind.is_dir() {
                std::fs::remove_dir_all(&p)
            } else {
                std::fs::remove_file(&p)
            }
            .map_err(|e| Error::io(&p, e))?;
        }
    }
    let layout = RunLayout::new(dir);
    for d in [layout.draws_dir(), layout.state_dir()] {
        std::fs::create_dir_all(&d).map_err(|e| Error::io(&d, e))?;
    }
    Ok(lock)
}

/// Samples the run described by `prep` into `dir`. `extra_files` (name, bytes) are
/// written into a fresh run directory beside the config (the demo's data).
///
/// The directory's writer lock ([`RunLock`]) is taken before anything in it is changed,
/// refusing (naming the holder) when another live process writes it, and is handed back
/// in [`RunOutcome::lock`] so the caller's summaries are written under it too; on an
/// error it is released before returning.
pub fn execute(
    prep: &Prepared,
    dir: &Path,
    mode: Mode,
    opts: ExecOptions<'_>,
    extra_files: &[(&str, &[u8])],
) -> Result<RunOutcome> {
    execute_holding(prep, dir, mode, opts, extra_files, None)
}

/// [`execute`]; a resume given `held`, the run's lock taken by an earlier call of this
/// process, keeps it instead of acquiring it again (growing a run that failed the gate
/// never lets go of the directory between its rounds).
pub(crate) fn execute_holding(
    prep: &Prepared,
    dir: &Path,
    mode: Mode,
    opts: ExecOptions<'_>,
    extra_files: &[(&str, &[u8])],
    held: Option<Arc<RunLock>>,
) -> Result<RunOutcome> {
    let cfg = &prep.config;
    let layout = RunLayout::new(dir);
    if opts.stop.load(Ordering::SeqCst) {
        return Err(Error::Interrupted(
            "before sampling started; nothing was written".into(),
        ));
    }
    let plan = ChainPlan {
        warmup: cfg.warmup as u64,
        draws: cfg.draws as u64,
        thin: cfg.thin as u64,
    };
    let config_json = serde_json::to_value(cfg.to_raw())
        .map_err(|e| Error::internal(format!("cannot encode config: {e}")))?;
    let lock;
    let mut manifest = match mode {
        Mode::Fresh { force } => {
            lock = Arc::new(claim_directory(dir, force)?);
            for (name, bytes) in extra_files {
                write_atomic(&layout.root.join(name), bytes)?;
            }
            Manifest {
                tool: "mixband".into(),
                version: env!("CARGO_PKG_VERSION").into(),
                status: RunStatus::Running,
                seed: cfg.seed,
                data: prep.record.clone(),
                config: config_json,
                chains: cfg
                    .chain_id_list()
                    .into_iter()
                    .map(|id| ChainRecord {
                        id,
                        sweeps_done: 0,
                        sweeps_planned: plan.total_sweeps(),
                        draws_written: 0,
                        seconds: 0.0,
                    })
                    .collect(),
                started_unix: std::time::SystemTime::now()
                    .duration_since(std::time::UNIX_EPOCH)
                    .map(|d| d.as_secs())
                    .unwrap_or(0),
                grown: Vec::new(),
                not_grown: None,
            }
        }
        Mode::Resume => {
            lock = match held {
                Some(l) => l,
                None => Arc::new(RunLock::acquire(dir, "continue")?),
            };
            let mut m = Manifest::read(&layout.manifest())?;
            if m.data.sha256 != prep.record.sha256 {
                return Err(Error::input(format!(
                    "the data file {} has changed since the run started (SHA-256 {} then, {} now); refusing to continue",
                    prep.record.file, m.data.sha256, prep.record.sha256
                )));
            }
            m.config = config_json;
            m.data.recording = prep.record.recording.clone();
            m.status = RunStatus::Running;
            for c in &mut m.chains {
                c.sweeps_planned = plan.total_sweeps();
            }
            m
        }
    };
    // config.toml names the data relative to the run directory where it can (a moved
    // project still resumes); the manifest keeps the absolute path the run was made with.
    let mut for_file = cfg.clone();
    for_file.data_file_text = super::data_path::for_run_dir(&cfg.data_file_text, dir);
    write_atomic(&layout.config(), for_file.to_toml()?.as_bytes())?;
    manifest.write(&layout.manifest())?;

    let units = Units {
        centre: prep.data.centre,
        scale: prep.data.scale,
        // A density in standard units is 1/scale times the density in data units; a cell
        // probability is the same on both, so the censored log-likelihood needs no shift.
        n: if prep.cells.is_some() {
            0
        } else {
            prep.data.summary.n
        },
    };
    let (x, _) = prep.sampler_data();
    let multi = MultiProgress::with_draw_target(if opts.quiet {
        ProgressDrawTarget::hidden()
    } else {
        ProgressDrawTarget::stderr()
    });
    let style = ProgressStyle::with_template(
        "chain {prefix} {bar:40} {pos}/{len} sweeps {elapsed_precise} eta {eta}",
    )
    .unwrap_or_else(|_| ProgressStyle::default_bar());

    let jobs: Vec<usize> = (0..manifest.chains.len()).collect();
    let results: Vec<Mutex<Option<ChainResult>>> = jobs.iter().map(|_| Mutex::new(None)).collect();
    let next = AtomicUsize::new(0);
    // Chains first; threads left over go to each chain's allocation blocks.
    let (workers, per_chain) = thread_split(opts.threads, jobs.len());
    let alloc = AllocOptions::fast(per_chain);
    let chains = manifest.chains.clone();
    std::thread::scope(|s| {
        for _ in 0..workers {
            s.spawn(|| loop {
                let i = next.fetch_add(1, Ordering::SeqCst);
                if i >= jobs.len() {
                    break;
                }
                let rec = &chains[i];
                let bar = multi.add(ProgressBar::new(plan.total_sweeps()));
                bar.set_style(style.clone());
                bar.set_prefix(rec.id.to_string());
                let t0 = Instant::now();
                let r = run_one(
                    prep,
                    &layout,
                    rec.id,
                    plan,
                    units,
                    x,
                    bar.clone(),
                    opts.stop,
                    mode,
                    alloc,
                )
                .map(|(stop, written)| (stop, written, t0.elapsed().as_secs_f64()));
                bar.finish_and_clear();
                if let Ok(mut slot) = results[i].lock() {
                    *slot = Some(r);
                }
            });
        }
    });

    let mut interrupted = false;
    let mut first_error = None;
    for (i, slot) in results.into_iter().enumerate() {
        let r = slot
            .into_inner()
            .map_err(|_| Error::internal("a chain thread panicked"))?
            .unwrap_or_else(|| Err(Error::internal("a chain did not run")));
        match r {
            Ok((stop, written, secs)) => {
                let c = &mut manifest.chains[i];
                c.draws_written = written;
                c.seconds += secs;
                c.sweeps_done = match stop {
                    ChainStop::Finished => plan.total_sweeps(),
                    ChainStop::Interrupted { sweeps_done } => {
                        interrupted = true;
                        sweeps_done
                    }
                };
            }
            Err(e) => {
                if let Ok(cp) = read_checkpoint(&layout.chain_state(manifest.chains[i].id)) {
                    manifest.chains[i].sweeps_done = cp.checkpoint.sweeps_done;
                    manifest.chains[i].draws_written = cp.draws_written;
                }
                first_error.get_or_insert(e);
            }
        }
    }
    let done = manifest
        .chains
        .iter()
        .all(|c| c.sweeps_done == plan.total_sweeps());
    manifest.status = if done {
        RunStatus::Complete
    } else {
        RunStatus::Incomplete
    };
    manifest.write(&layout.manifest())?;
    if let Some(e) = first_error {
        return Err(e);
    }
    Ok(RunOutcome {
        manifest,
        interrupted,
        lock,
    })
}

#[allow(clippy::too_many_arguments)]
fn run_one(
    prep: &Prepared,
    layout: &RunLayout,
    id: u64,
    plan: ChainPlan,
    units: Units,
    x: &[f64],
    bar: ProgressBar,
    stop: &AtomicBool,
    mode: Mode,
    alloc: AllocOptions,
) -> Result<(ChainStop, u64)> {
    let key = StreamKey::new(prep.config.seed, id);
    let draws_path = layout.chain_draws(id);
    let state_path = layout.chain_state(id);
    let fresh = || -> Result<(ChainWriter, Checkpoint)> {
        let w = ChainWriter::create(id, &draws_path, &state_path, prep.prior.components, units)?;
        let start = Checkpoint {
            sweeps_done: 0,
            state: match &prep.cells {
                Some(cells) => initial_state_from_cells(cells, &prep.prior, &key),
                None => initial_state(x, &prep.prior, &key),
            },
            pending_occupied: None,
        };
        Ok((w, start))
    };
    let (mut writer, start) = match mode {
        Mode::Fresh { .. } => fresh()?,
        Mode::Resume if !state_path.exists() => {
            // The process died before this chain's first checkpoint: start it afresh.
            if draws_path.exists() {
                std::fs::remove_file(&draws_path).map_err(|e| Error::io(&draws_path, e))?;
            }
            fresh()?
        }
        Mode::Resume => {
            let stored = read_checkpoint(&state_path)?;
            if stored.chain != id || stored.checkpoint.state.k() != prep.prior.components {
                return Err(Error::input(format!(
                    "{}: checkpoint does not match chain {id} of this run",
                    state_path.display()
                )));
            }
            let w = ChainWriter::reopen(&draws_path, &state_path, &stored, units)?;
            (w, stored.checkpoint)
        }
    };
    bar.set_position(start.sweeps_done);
    writer = writer.with_progress(bar);
    let opts = SweepOptions {
        alloc,
        counts: prep.sampler_data().1,
        cells: prep.cells.as_ref(),
        resplit_pairs: prep.config.resplit_moves,
        relocate_moves: prep.config.relocate_moves,
        ..SweepOptions::default()
    };
    let stop_kind = run_chain_opts(x, &prep.prior, &key, plan, start, &mut writer, stop, &opts)?;
    Ok((stop_kind, writer.draws_written()))
}

//! `mixband._native`: the Python package's bridge to the mixband library. Each function
//! runs one call of `mixband::run` with the GIL released, watches for Ctrl-C (a stop at the
//! end of the current sweep, the run left resumable) and reports progress from the chains'
//! checkpoints. Errors come back as Python exceptions carrying the message the command
//! line prints; no panic crosses into Python.

// PyO3 0.22's #[pyfunction] expansion converts PyErr into itself; newer clippy flags it.
#![allow(clippy::useless_conversion)]

use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::Duration;

use mixband::run::{
    continue_run, prepare_values, run_job, Continued, ExecOptions, JobOptions, Mode, Prepared,
    RunResult,
};
use mixband::store::{read_checkpoint, Manifest, RunLayout};
use mixband::Error;
use pyo3::exceptions::{PyKeyboardInterrupt, PyRuntimeError, PyValueError};
use pyo3::prelude::*;
use pyo3::types::PyDict;

/// The library's error as the Python exception a user can act on: bad input is a
/// ValueError, a stop is a KeyboardInterrupt, the rest a RuntimeError.
fn to_py(e: Error) -> PyErr {
    let msg = e.to_string();
    match e {
        Error::Interrupted(_) => PyKeyboardInterrupt::new_err(format!("interrupted: {msg}")),
        Error::Input(_) => PyValueError::new_err(msg),
        _ => PyRuntimeError::new_err(msg),
    }
}

/// Sweeps done and planned over the chains of the run in `dir`, from their checkpoints.
fn sweeps_progress(dir: &Path) -> Option<(u64, u64)> {
    let layout = RunLayout::new(dir);
    let manifest = Manifest::read(&layout.manifest()).ok()?;
    let planned = manifest.chains.iter().map(|c| c.sweeps_planned).sum();
    let done = manifest
        .chains
        .iter()
        .map(|c| {
            read_checkpoint(&layout.chain_state(c.id))
                .map(|s| s.checkpoint.sweeps_done)
                .unwrap_or(c.sweeps_done)
        })
        .sum();
    Some((done, planned))
}

/// Runs `job` on a worker thread with the GIL released. While it runs, Python's signal
/// handlers are given their turn: a KeyboardInterrupt raises the stop flag, and the job
/// ends at the end of its current sweep. `progress(done, planned)` is called about twice
/// a second with the sweeps done.
fn run_watched<T: Send>(
    py: Python<'_>,
    dir: &Path,
    progress: Option<&Bound<'_, PyAny>>,
    job: impl FnOnce(&AtomicBool) -> mixband::Result<T> + Send,
) -> PyResult<T> {
    let stop = AtomicBool::new(false);
    let progress = progress.map(|p| p.clone().unbind());
    let mut signal: Option<PyErr> = None;
    let result = py.allow_threads(|| {
        std::thread::scope(|s| {
            let worker = s.spawn(|| job(&stop));
            let mut ticks = 0u32;
            while !worker.is_finished() {
                std::thread::sleep(Duration::from_millis(50));
                ticks += 1;
                Python::with_gil(|py| {
                    if signal.is_none() {
                        if let Err(e) = py.check_signals() {
                            stop.store(true, Ordering::SeqCst);
                            signal = Some(e);
                        }
                    }
                    if ticks.is_multiple_of(10) {
                        if let (Some(cb), Some((done, planned))) = (&progress, sweeps_progress(dir))
                        {
                            // A failing progress callback must not stop the run.
                            let _ = cb.call1(py, (done, planned));
                        }
                    }
                });
            }
            worker
                .join()
                .unwrap_or_else(|_| Err(Error::internal("the run's thread panicked")))
        })
    });
    if let Some(cb) = &progress {
        if let Some((done, planned)) = sweeps_progress(dir) {
            let _ = cb.call1(py, (done, planned));
        }
    }
    match (result, signal) {
        (Err(e), _) => Err(to_py(e)),
        // The run finished before the stop reached it: the interrupt still ends the call.
        (Ok(_), Some(e)) => Err(e),
        (Ok(v), None) => Ok(v),
    }
}

fn options(stop: &AtomicBool, threads: Option<usize>, report: bool) -> JobOptions<'_> {
    JobOptions {
        exec: ExecOptions {
            threads: threads.unwrap_or_else(|| {
                std::thread::available_parallelism()
                    .map(|n| n.get())
                    .unwrap_or(1)
            }),
            quiet: true,
            stop,
        },
        report,
    }
}

/// What a finished job tells Python: where the run is and whether it converged.
fn outcome<'py>(py: Python<'py>, r: &RunResult) -> PyResult<Bound<'py, PyDict>> {
    let d = PyDict::new_bound(py);
    d.set_item("run_dir", r.layout.root.display().to_string())?;
    d.set_item("converged", r.converged())?;
    d.set_item(
        "report_html",
        r.report_html.as_ref().map(|p| p.display().to_string()),
    )?;
    Ok(d)
}

/// TOML text from a config given as JSON (the Python dict of sections).
fn toml_of_json(config_json: &str) -> PyResult<String> {
    let v: toml::Value = serde_json::from_str(config_json)
        .map_err(|e| PyValueError::new_err(format!("config: {e}")))?;
    toml::to_string(&v).map_err(|e| PyValueError::new_err(format!("config: {e}")))
}

/// Samples and summarises a fresh run. The config is TOML text (a file as the user wrote
/// it, so messages name its lines) or, with `config_is_json`, JSON of the sections; `values`
/// (with `counts`) are the data, or None for the [data] file of the config, read relative
/// to `base_dir`.
#[pyfunction]
#[pyo3(signature = (config, config_is_json, origin, base_dir, values, counts, out, force, threads=None, report=true, progress=None))]
#[allow(clippy::too_many_arguments)]
fn sample<'py>(
    py: Python<'py>,
    config: &str,
    config_is_json: bool,
    origin: &str,
    base_dir: &str,
    values: Option<Vec<f64>>,
    counts: Option<Vec<u64>>,
    out: &str,
    force: bool,
    threads: Option<usize>,
    report: bool,
    progress: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    if threads == Some(0) {
        return Err(PyValueError::new_err("threads must be at least 1"));
    }
    let text = if config_is_json {
        toml_of_json(config)?
    } else {
        config.to_string()
    };
    let out = PathBuf::from(out);
    let (prep, bytes) = match &values {
        Some(v) => prepare_values(&text, origin, v, counts.as_deref())
            .map(|(p, b)| (p, Some(b)))
            .map_err(to_py)?,
        None => (
            Prepared::from_text(&text, origin, Path::new(base_dir), None).map_err(to_py)?,
            None,
        ),
    };
    let files: Vec<(&str, &[u8])> = bytes
        .as_deref()
        .map(|b| vec![(mixband::run::VALUES_FILE, b)])
        .unwrap_or_default();
    let r = run_watched(py, &out, progress, |stop| {
        run_job(
            &prep,
            &out,
            Mode::Fresh { force },
            options(stop, threads, report),
            &files,
        )
    })?;
    outcome(py, &r)
}

/// Continues the run in `run_dir`: to its configured length, or by `draws` more draws a
/// chain. Returns None when it was complete and no draws were asked for.
#[pyfunction]
#[pyo3(signature = (run_dir, draws=None, threads=None, report=true, progress=None))]
fn resume<'py>(
    py: Python<'py>,
    run_dir: &str,
    draws: Option<usize>,
    threads: Option<usize>,
    report: bool,
    progress: Option<&Bound<'py, PyAny>>,
) -> PyResult<Option<Bound<'py, PyDict>>> {
    if threads == Some(0) {
        return Err(PyValueError::new_err("threads must be at least 1"));
    }
    let dir = PathBuf::from(run_dir);
    let r = run_watched(py, &dir, progress, |stop| {
        continue_run(&dir, draws, options(stop, threads, report))
    })?;
    match r {
        Continued::Done(r) => outcome(py, &r).map(Some),
        Continued::AlreadyComplete => Ok(None),
    }
}

/// The density of every kept draw on the run's grid (the original scale, as bands.csv):
/// (little-endian f64 bytes in chain, draw, grid-point order, chains, draws per chain,
/// grid). Every chain is cut to the shortest, as the diagnostics do.
#[pyfunction]
fn density_draws(py: Python<'_>, run_dir: &str) -> PyResult<(PyObject, usize, usize, usize)> {
    let layout = RunLayout::new(Path::new(run_dir));
    let got = (|| -> mixband::Result<(Vec<f64>, usize, usize, usize)> {
        let prep = Prepared::from_config_file(&layout.config())?;
        let manifest = Manifest::read(&layout.manifest())?;
        let draws = mixband::store::read_run_draws(&layout.draws_dir(), &manifest.chain_ids())?;
        let c = &prep.config;
        let grid = mixband::summary::linspace(c.grid_from, c.grid_to, c.grid_points);
        let dens = mixband::summary::DensityDraws::new_on(&draws, &grid, c.transform);
        Ok((dens.values, draws.chains.len(), draws.min_len(), grid.len()))
    })()
    .map_err(to_py)?;
    let (values, chains, per_chain, points) = got;
    let bytes: Vec<u8> = values.iter().flat_map(|v| v.to_le_bytes()).collect();
    Ok((
        pyo3::types::PyBytes::new_bound(py, &bytes)
            .into_any()
            .unbind(),
        chains,
        per_chain,
        points,
    ))
}

#[pymodule]
fn _native(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(sample, m)?)?;
    m.add_function(wrap_pyfunction!(resume, m)?)?;
    m.add_function(wrap_pyfunction!(density_draws, m)?)?;
    m.add("__version__", env!("CARGO_PKG_VERSION"))?;
    Ok(())
}

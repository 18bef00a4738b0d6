//! `mixband sample`, `resume` and `extend`: sample into a run directory, then summarise.

use std::path::Path;

use super::SampleOpts;
use crate::error::{Error, Result};
use crate::run::{execute, ExecOptions, Mode, Prepared};
use crate::store::{Manifest, RunLayout, RunStatus};

pub(super) fn exec_options(opts: &SampleOpts) -> ExecOptions<'static> {
    let threads = opts.threads.unwrap_or_else(|| {
        std::thread::available_parallelism()
            .map(|n| n.get())
            .unwrap_or(1)
    });
    ExecOptions {
        threads: threads.max(1),
        quiet: opts.quiet || !std::io::IsTerminal::is_terminal(&std::io::stderr()),
        stop: &super::STOP,
    }
}

pub(super) fn sample(
    config: &Path,
    out: &Path,
    force: bool,
    chain_ids: Option<&[i64]>,
    opts: &SampleOpts,
) -> Result<i32> {
    let mut prep = Prepared::from_config_file(config)?;
    if let Some(ids) = chain_ids {
        let ids = crate::config::check_chain_ids(ids, prep.config.chains)
            .map_err(|m| Error::input(format!("--chains {m}")))?;
        prep.config.chain_ids = Some(ids);
    }
    finish(&prep, out, Mode::Fresh { force }, opts, &[])
}

/// Samples and summarises; shared by `sample`, `demo`, `resume` and `extend`.
pub(super) fn finish(
    prep: &Prepared,
    out: &Path,
    mode: Mode,
    opts: &SampleOpts,
    extra: &[(&str, &[u8])],
) -> Result<i32> {
    if opts.threads == Some(0) {
        return Err(Error::input("--threads must be at least 1"));
    }
    let c = &prep.config;
    eprintln!(
        "mixband: {} chains x {} draws (warm-up {}, thin {}) of a {} mixture, K = {}, {} weights, on {} observations of \"{}\"{}",
        c.chain_id_list().len(),
        c.draws,
        c.warmup,
        c.thin,
        c.kernel,
        c.components,
        c.weights,
        prep.record.n,
        c.column,
        if prep.record.dropped > 0 {
            format!(" ({} empty cells dropped)", prep.record.dropped)
        } else {
            String::new()
        }
    );
    let outcome = execute(prep, out, mode, exec_options(opts), extra)?;
    if outcome.interrupted {
        let left = outcome
            .manifest
            .chains
            .iter()
            .filter(|ch| ch.sweeps_done < ch.sweeps_planned)
            .count();
        return Err(Error::Interrupted(format!(
            "{left} chain(s) stopped early; draws so far are in {}; continue with `mixband resume {}`",
            out.display(),
            out.display()
        )));
    }
    let layout = RunLayout::new(out);
    let report = super::bands::summarise(&layout, prep)?;
    if !opts.no_report {
        let page = crate::report::write_report(out, crate::plot::DensityOptions::default())?;
        println!("mixband: report in {}", page.display());
    }
    println!("mixband: wrote {}", out.display());
    Ok(super::diagnose::print_verdict(&report))
}

pub(super) fn resume(run: &Path, extra_draws: Option<usize>, opts: &SampleOpts) -> Result<i32> {
    if extra_draws == Some(0) {
        return Err(Error::input("--draws must be at least 1"));
    }
    let layout = RunLayout::new(run);
    let cfg_path = layout.config();
    if !cfg_path.exists() || !layout.manifest().exists() {
        return Err(Error::input(format!(
            "{}: no config.toml and manifest.json; is this a mixband run directory?",
            run.display()
        )));
    }
    let manifest = Manifest::read(&layout.manifest())?;
    let mut prep = Prepared::from_config_file(&cfg_path)?;
    // The data file is compared by its SHA-256 (in `execute`); its path may be written
    // differently (the demo's copy is relative to the run directory).
    let without_path = |mut v: serde_json::Value| {
        if let Some(d) = v.get_mut("data").and_then(|d| d.as_object_mut()) {
            d.remove("file");
        }
        // [check] changes no draw (and runs from before it have none).
        if let Some(o) = v.as_object_mut() {
            o.remove("check");
        }
        v
    };
    let now = serde_json::to_value(prep.config.to_raw())
        .map_err(|e| Error::internal(format!("cannot encode config: {e}")))?;
    if without_path(now) != without_path(manifest.config.clone()) {
        return Err(Error::input(format!(
            "{} no longer matches the config recorded in {}; a run continues only with the \
             config it started with (start a new run for a changed config)",
            cfg_path.display(),
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
        }
        None if manifest.status == RunStatus::Complete => {
            eprintln!(
                "mixband: {} is already complete; nothing to resume (use `mixband extend` for more draws)",
                run.display()
            );
            return Ok(0);
        }
        None => {}
    }
    finish(&prep, run, Mode::Resume, opts, &[])
}

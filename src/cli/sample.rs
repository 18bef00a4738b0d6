//! `mixband sample`, `resume` and `extend`: sample into a run directory, then summarise.

use std::path::Path;

use super::SampleOpts;
use crate::error::{Error, Result};
use crate::run::{execute, ExecOptions, Mode, Prepared};
use crate::store::RunLayout;

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

pub(super) fn sample(config: &Path, out: &Path, force: bool, opts: &SampleOpts) -> Result<i32> {
    let prep = Prepared::from_config_file(config)?;
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
        "mixband: {} chains x {} draws (warm-up {}, thin {}) of a {:?} mixture, K = {}, {:?} weights, on {} observations of \"{}\"{}",
        c.chains,
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
    let layout = RunLayout::new(run);
    let cfg_path = layout.config();
    if !cfg_path.exists() {
        return Err(Error::input(format!(
            "{}: no config.toml; is this a mixband run directory?",
            run.display()
        )));
    }
    let mut prep = Prepared::from_config_file(&cfg_path)?;
    if let Some(n) = extra_draws {
        if n == 0 {
            return Err(Error::input("--draws must be at least 1"));
        }
        let manifest = crate::store::Manifest::read(&layout.manifest())?;
        if manifest.status != crate::store::RunStatus::Complete {
            return Err(Error::input(format!(
                "{} is incomplete; run `mixband resume {}` before extending it",
                run.display(),
                run.display()
            )));
        }
        prep.config.draws += n;
    }
    finish(&prep, run, Mode::Resume, opts, &[])
}

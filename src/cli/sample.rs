//! `mixband sample`, `resume` and `extend`: arguments in, [`crate::run::run_job`] and
//! [`crate::run::continue_run`] do the job, the outcome printed.

use std::path::Path;

use super::SampleOpts;
use crate::error::{Error, Result};
use crate::run::{
    continue_run, run_job, Continued, ExecOptions, JobOptions, Mode, Prepared, RunResult,
};

pub(super) fn job_options(opts: &SampleOpts) -> JobOptions<'static> {
    let threads = opts.threads.unwrap_or_else(|| {
        std::thread::available_parallelism()
            .map(|n| n.get())
            .unwrap_or(1)
    });
    JobOptions {
        exec: ExecOptions {
            threads,
            quiet: opts.quiet || !std::io::IsTerminal::is_terminal(&std::io::stderr()),
            stop: &super::STOP,
        },
        report: !opts.no_report,
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

/// What a run is about to do, on stderr.
pub(super) fn announce(prep: &Prepared) {
    let c = &prep.config;
    eprintln!(
        "mixband: {} chains x {} draws (warm-up {}, thin {}{}) of a {} mixture, K = {}, {} weights, on {} observations of \"{}\"{}",
        c.chain_id_list().len(),
        c.draws,
        c.warmup,
        c.thin,
        if c.max_draws > c.draws && c.chain_ids.is_none() {
            format!("; up to {} if the gate fails", c.max_draws)
        } else {
            String::new()
        },
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
    if let Some(of) = prep.record.subsample_of {
        eprintln!(
            "mixband: note: fitting a random subsample of {} of the {of} observations ([data] subsample); \
             the bands describe what the subsample shows, wider than the whole sample's would be",
            prep.record.n
        );
    }
    print_notes(prep.record.recording.as_ref());
}

/// How the values were recorded, when there is something to say (lattice, heaping).
fn print_notes(recording: Option<&crate::data::Recording>) {
    for note in recording.iter().flat_map(|r| r.notes()) {
        eprintln!("mixband: note: {note}");
    }
}

/// Samples and summarises; shared by `sample` and `demo`.
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
    announce(prep);
    let result = run_job(prep, out, mode, job_options(opts), extra)?;
    Ok(print_result(&result))
}

/// The end of `sample`, `demo`, `resume`, `extend` and `merge`: the model check's verdict,
/// where the report is, the gate's verdict; returns the exit code.
pub(super) fn print_result(result: &RunResult) -> i32 {
    let m = &result.manifest;
    if let Some(line) = crate::run::grow::describe(&m.grown, m.not_grown.as_deref()) {
        eprintln!("mixband: the run was {line}");
    }
    if let Some(r) = &result.check {
        println!("mixband: model check: {}", r.verdict.summary);
    }
    if let Some(page) = &result.report_html {
        println!("mixband: report in {}", page.display());
    }
    println!("mixband: wrote {}", result.layout.root.display());
    super::diagnose::print_verdict(&result.diagnostics)
}

pub(super) fn resume(run: &Path, extra_draws: Option<usize>, opts: &SampleOpts) -> Result<i32> {
    if opts.threads == Some(0) {
        return Err(Error::input("--threads must be at least 1"));
    }
    match continue_run(run, extra_draws, job_options(opts))? {
        Continued::Done(result) => {
            print_notes(result.manifest.data.recording.as_ref());
            Ok(print_result(&result))
        }
        Continued::AlreadyComplete => {
            eprintln!(
                "mixband: {} is already complete; nothing to resume (use `mixband extend` for more draws)",
                run.display()
            );
            Ok(0)
        }
    }
}

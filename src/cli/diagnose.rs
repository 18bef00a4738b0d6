//! `mixband diagnose RUN`: assess a run's stored draws against the convergence gate and
//! print the table (or the JSON); exit 3 when the gate fails.

use std::io::Write;
use std::path::Path;

use crate::error::{Error, Result};
use crate::gate::{assess_run, render_table, verdict, DiagnosticsReport, ThresholdOverrides};
use crate::store::RunLayout;

/// Exit code when the gate fails.
pub(super) const GATE_FAILED: i32 = 3;

pub(super) fn diagnose(
    run: &Path,
    json: bool,
    components: bool,
    overrides: &ThresholdOverrides,
) -> Result<i32> {
    if !run.is_dir() {
        return Err(Error::input(format!(
            "{}: no such run directory",
            run.display()
        )));
    }
    let layout = RunLayout::new(run);
    let report = assess_run(&layout, overrides)?;
    let text = if json {
        report.to_json()?
    } else {
        let mut t = format!("mixband diagnose {}\n", run.display());
        t.push_str(&render_table(&report, components));
        t.into_bytes()
    };
    let mut out = std::io::stdout().lock();
    out.write_all(&text)
        .and_then(|_| out.flush())
        .map_err(|e| Error::io("<stdout>", e))?;
    Ok(if report.passed { 0 } else { GATE_FAILED })
}

/// Prints the verdict at the end of `sample`, `demo`, `resume` and `extend`; returns the
/// exit code (0 passed, 3 failed).
pub(super) fn print_verdict(report: &DiagnosticsReport) -> i32 {
    print!("mixband: {}", verdict(report));
    if report.passed {
        0
    } else {
        println!(
            "mixband: bands.csv is written; bands.json and diagnostics.json are marked not converged \
             (`mixband diagnose <run>` shows the table)"
        );
        GATE_FAILED
    }
}

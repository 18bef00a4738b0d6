//! RUN/report.html: a single self-contained page with the run's metadata, the density
//! figure, the convergence verdict and diagnostics, the bands (as a table and a
//! downloadable CSV), the trace and rank plots, how the values were recorded, and the
//! caution that goes with the bands.

pub mod bumps;
pub mod diagnostics_view;
pub mod encode;
pub mod html;
pub mod model_check;
pub mod recording;
pub mod shape;

use std::path::{Path, PathBuf};

pub use diagnostics_view::{DiagRow, DiagnosticsView};
pub use html::{page, verdict, PageParts, Verdict};

use crate::error::{Error, Result};
use crate::plot::{plot_run, DensityOptions};
use crate::store::write_atomic;

/// Writes the figures into RUN/plots/ and the page into RUN/report.html; returns its path.
pub fn write_report(run: &Path, opts: DensityOptions) -> Result<PathBuf> {
    let (inp, figs, _) = plot_run(run, opts)?;
    let diag = DiagnosticsView::read(&inp.layout.diagnostics_json())?;
    let read = |p: PathBuf| std::fs::read_to_string(&p).map_err(|e| Error::io(&p, e));
    let bands_csv = read(inp.layout.bands_csv())?;
    let config_text = read(inp.layout.config())?;
    let summary_path = run.join("summary.json");
    let summary: Option<serde_json::Value> = match std::fs::read_to_string(&summary_path) {
        Ok(t) => Some(serde_json::from_str(&t).map_err(|e| {
            Error::input(format!(
                "{}: unreadable summary: {e}",
                summary_path.display()
            ))
        })?),
        Err(_) => None,
    };
    let checks = crate::check::CheckReport::read(run).unwrap_or_else(|e| {
        eprintln!("mixband: warning: the report leaves out the model check: {e}");
        None
    });
    let html = page(&PageParts {
        inputs: &inp,
        figures: &figs,
        diagnostics: diag.as_ref(),
        bands_csv: &bands_csv,
        config_text: &config_text,
        summary: summary.as_ref(),
        checks: checks.as_ref(),
    });
    let out = run.join("report.html");
    write_atomic(&out, html.as_bytes())?;
    Ok(out)
}

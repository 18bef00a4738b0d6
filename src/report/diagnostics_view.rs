//! What the report shows of a run's convergence checks, taken from RUN/diagnostics.json
//! (written by the gate, [`crate::gate::DiagnosticsReport`]). The report never computes a
//! verdict of its own: when the file is absent, it says that convergence was not assessed.

use std::path::Path;

use crate::error::Result;
use crate::gate::DiagnosticsReport;

/// One row of the diagnostics table.
#[derive(Debug, Clone, PartialEq)]
pub struct DiagRow {
    pub name: String,
    pub rhat: Option<f64>,
    pub ess_bulk: Option<f64>,
    pub ess_tail: Option<f64>,
    pub mcse_mean: Option<f64>,
    /// Whether the gate failed this row (shown in the alert colour).
    pub failing: bool,
    pub note: Option<String>,
}

/// The gate's verdict and the numbers behind it.
#[derive(Debug, Clone, PartialEq)]
pub struct DiagnosticsView {
    pub passed: bool,
    /// Threshold name and value.
    pub thresholds: Vec<(String, String)>,
    /// The gate's limits, to mark the failing cells of a failing row.
    pub max_rhat: f64,
    pub min_ess: f64,
    pub rows: Vec<DiagRow>,
    /// Why the gate failed, in the gate's own words.
    pub failures: Vec<String>,
    /// What to try, in the gate's own words.
    pub advice: Vec<String>,
    /// Facts that qualify the numbers.
    pub notes: Vec<String>,
}

impl DiagnosticsView {
    /// Reads diagnostics.json; `Ok(None)` when the run has none.
    pub fn read(path: &Path) -> Result<Option<DiagnosticsView>> {
        if !path.exists() {
            return Ok(None);
        }
        Ok(Some(Self::from_report(&DiagnosticsReport::read(path)?)))
    }

    /// The label-invariant quantities of the gate's report (per-component parameters are
    /// left out: they are not label-invariant and never decide the verdict).
    pub fn from_report(r: &DiagnosticsReport) -> DiagnosticsView {
        let t = &r.thresholds;
        let rows = r
            .quantities
            .iter()
            .filter(|q| q.label_invariant)
            .map(|q| DiagRow {
                name: q.name.clone(),
                rhat: q.rhat,
                ess_bulk: q.ess_bulk,
                ess_tail: q.ess_tail,
                mcse_mean: q.mcse_mean,
                failing: q.gated && !q.passed,
                note: q.note.clone(),
            })
            .collect();
        DiagnosticsView {
            passed: r.passed,
            thresholds: vec![
                ("max R-hat".into(), format!("{}", t.max_rhat)),
                ("min ESS".into(), format!("{}", t.min_ess)),
                ("min chains".into(), format!("{}", t.min_chains)),
            ],
            max_rhat: t.max_rhat,
            min_ess: t.min_ess,
            rows,
            failures: r.failures.clone(),
            advice: r.advice.clone(),
            notes: r.notes.clone(),
        }
    }
}

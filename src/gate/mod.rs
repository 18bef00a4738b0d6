//! The convergence gate: assess a run's stored draws on label-invariant quantities
//! (`loglik`, `occupied`, the sampled concentration, the common σ of the location kernel
//! and the density at every grid point), decide whether the run may be reported, and say
//! why not and what to try. The report is what `diagnose` prints and what `sample` writes
//! to `RUN/diagnostics.json`; its format is documented in docs/diagnostics.md
//! ("Gate and diagnostics.json").

mod advice;
mod assess;
mod density;
mod failure;
mod format;
pub mod projection;
mod quantity;
mod report;
mod series;
mod table;
mod thresholds;

pub(crate) use assess::assemble;
pub use assess::{assess, assess_run, GateSpec};
pub use density::{GridAssessment, GridPoint, WorstAt, DENSITY_SUMMARY_NAME};
pub use failure::{Failure, FailureKind};
pub use format::{fmt_ess, fmt_rhat, fmt_sig};
pub(crate) use quantity::evaluate;
pub use quantity::{QuantityReport, QuantityStatus};
pub use report::{DiagnosticsReport, RhatScope, DIAGNOSTICS_FORMAT};
pub use series::{scalar_series, ComponentParam, QuantityKind, Series};
pub use table::{render_table, verdict};
pub use thresholds::{ThresholdOverrides, Thresholds};

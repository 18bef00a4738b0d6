//! Running the whole job: prepare (config + data), sample every chain into the store,
//! then summarise ([`run_job`] and [`continue_run`] do it all in one call and return a
//! [`RunResult`]). The command line and the Python package are thin layers over these
//! functions; every run file is written from here.

mod data_path;
mod demo;
mod execute;
pub mod grow;
mod in_memory;
mod job;
mod loaded;
mod merge;
mod outputs;
mod prepare;
mod summarise;
mod values;

pub use data_path::{for_run_dir, rebase, relative_path};
pub use demo::{demo_prepared, ExtraFile};
pub use execute::{execute, ExecOptions, Mode, RunOutcome};
pub use in_memory::summarise_in_memory;
pub use job::{
    check_run_dir, continue_run, merge_job, rebuild_bands, run_job, summarise_run, Continued,
    GridRequest, JobOptions, RunResult,
};
pub use loaded::{load_sample, load_sample_in_memory, Loaded};
pub use merge::merge_runs;
pub use outputs::{
    summary_file, write_bands, write_summaries, BandsFile, SummaryFile, QUANTILE_PROBS,
};
pub use prepare::{sha256_hex, Prepared};
pub use summarise::{
    summarise_stored, window_width, Summaries, SummaryPlan, MIN_COLUMNS, WINDOW_BUDGET_BYTES,
};
pub use values::{prepare_values, values_csv, COUNT_COLUMN, VALUES_FILE, VALUE_COLUMN};

//! Running the whole job: prepare (config + data), sample every chain into the store,
//! then summarise. The command line is a thin layer over these functions.

mod data_path;
mod execute;
mod in_memory;
mod merge;
mod outputs;
mod prepare;
mod summarise;

pub use data_path::{for_run_dir, rebase, relative_path};
pub use execute::{execute, ExecOptions, Mode, RunOutcome};
pub use in_memory::summarise_in_memory;
pub use merge::merge_runs;
pub use outputs::{
    summary_file, write_bands, write_summaries, BandsFile, SummaryFile, QUANTILE_PROBS,
};
pub use prepare::{sha256_hex, Prepared};
pub use summarise::{
    summarise_stored, window_width, Summaries, SummaryPlan, MIN_COLUMNS, WINDOW_BUDGET_BYTES,
};

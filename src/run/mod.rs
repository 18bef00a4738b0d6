//! Running the whole job: prepare (config + data), sample every chain into the store,
//! then summarise. The command line is a thin layer over these functions.

mod execute;
mod merge;
mod outputs;
mod prepare;

pub use execute::{execute, ExecOptions, Mode, RunOutcome};
pub use merge::merge_runs;
pub use outputs::{write_bands, write_summaries, BandsFile, SummaryFile, QUANTILE_PROBS};
pub use prepare::{sha256_hex, Prepared};

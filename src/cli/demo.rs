//! `mixband demo`: the shipped demo config and data, built into the binary so it runs from
//! any working directory.

use std::path::Path;

use super::SampleOpts;
use crate::error::Result;
use crate::run::{Mode, Prepared};

const DEMO_CONFIG: &str = include_str!("../../configs/demo.toml");
const DEMO_DATA: &[u8] = include_bytes!("../../demo-data/warbler-wings.csv");
const DEMO_DATA_NAME: &str = "warbler-wings.csv";

pub(super) fn demo(out: &Path, force: bool, opts: &SampleOpts) -> Result<i32> {
    let mut prep = Prepared::from_text(
        DEMO_CONFIG,
        "configs/demo.toml (built in)",
        Path::new("."),
        Some(DEMO_DATA),
    )?;
    // The run directory gets its own copy of the data, next to the resolved config.
    prep.config.data_file_text = DEMO_DATA_NAME.to_string();
    prep.record.file = format!("{DEMO_DATA_NAME} (built-in demo copy)");
    super::sample::finish(
        &prep,
        out,
        Mode::Fresh { force },
        opts,
        &[(DEMO_DATA_NAME, DEMO_DATA)],
    )
}

//! The shipped demo: its config and data are built into the library so it runs from any
//! working directory; the run directory gets its own copy of the data.

use std::path::Path;

use super::prepare::Prepared;
use crate::error::Result;

const DEMO_CONFIG: &str = include_str!("../../configs/demo.toml");
const DEMO_DATA: &[u8] = include_bytes!("../../demo-data/warbler-wings.csv");
const DEMO_DATA_NAME: &str = "warbler-wings.csv";

/// A file to write into a fresh run directory: its name and bytes.
pub type ExtraFile = (&'static str, &'static [u8]);

/// The demo, prepared, and the data file to write into its run directory.
pub fn demo_prepared() -> Result<(Prepared, [ExtraFile; 1])> {
    let mut prep = Prepared::from_text(
        DEMO_CONFIG,
        "configs/demo.toml (built in)",
        Path::new("."),
        Some(DEMO_DATA),
    )?;
    prep.config.data_file_text = DEMO_DATA_NAME.to_string();
    prep.record.file = format!("{DEMO_DATA_NAME} (built-in demo copy)");
    Ok((prep, [(DEMO_DATA_NAME, DEMO_DATA)]))
}

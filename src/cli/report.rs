//! `mixband report RUN`: write the figures and RUN/report.html.

use std::path::Path;

use crate::error::Result;
use crate::plot::DensityOptions;

pub(super) fn report(run: &Path, with_kde: bool) -> Result<i32> {
    let out = crate::report::write_report(run, DensityOptions { with_kde })?;
    println!("mixband: wrote {}", out.display());
    Ok(0)
}

//! `mixband plot RUN`: write the figures of a run into RUN/plots/.

use std::path::Path;

use crate::error::Result;
use crate::plot::{plot_run, DensityOptions};

pub(super) fn plot(run: &Path, with_kde: bool) -> Result<i32> {
    let (_, _, paths) = plot_run(run, DensityOptions { with_kde })?;
    for p in paths {
        println!("mixband: wrote {}", p.display());
    }
    Ok(0)
}

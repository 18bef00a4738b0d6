//! `mixband bands`: recompute density summaries from stored draws, without sampling
//! ([`crate::run::rebuild_bands`]).

use std::path::Path;

use crate::error::Result;
use crate::run::{rebuild_bands, GridRequest};

pub(super) fn bands(
    run: &Path,
    points: Option<usize>,
    from: Option<f64>,
    to: Option<f64>,
    levels: Option<Vec<f64>>,
) -> Result<i32> {
    let layout = rebuild_bands(
        run,
        &GridRequest {
            points,
            from,
            to,
            levels,
        },
    )?;
    println!(
        "mixband: wrote {}, {}, {} and {}",
        layout.bands_csv().display(),
        layout.bands_json().display(),
        layout.cdf_csv().display(),
        layout.summary_json().display()
    );
    Ok(0)
}

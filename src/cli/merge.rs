//! `mixband merge`: joins runs that sampled disjoint chains of one config, then writes the
//! joined run's diagnostics and bands from its draws, as `sample` does at the end of a run.

use std::path::{Path, PathBuf};

use crate::error::{Error, Result};
use crate::run::{merge_runs, Prepared};
use crate::store::RunLayout;

pub(super) fn merge(runs: &[PathBuf], out: &Path) -> Result<i32> {
    let (manifest, _, _lock) = merge_runs(runs, out)?;
    let layout = RunLayout::new(out);
    // The summaries need the data only for the resolved config's data-dependent settings;
    // its hash must still be the one every part sampled.
    let prep = Prepared::from_config_file(&layout.config())?;
    if prep.record.sha256 != manifest.data.sha256 {
        return Err(Error::input(format!(
            "{}: the data file {} has changed since the parts were sampled (SHA-256 {} then, {} now)",
            out.display(),
            prep.record.file,
            manifest.data.sha256,
            prep.record.sha256
        )));
    }
    let report = super::bands::summarise(&layout, &prep)?;
    let ids: Vec<String> = manifest.chains.iter().map(|c| c.id.to_string()).collect();
    println!(
        "mixband: joined chains {} into {}",
        ids.join(", "),
        out.display()
    );
    Ok(super::diagnose::print_verdict(&report))
}

//! `mixband merge`: joins runs that sampled disjoint chains of one config, then writes the
//! joined run's bands from its draws.

use std::path::{Path, PathBuf};

use crate::error::{Error, Result};
use crate::run::merge_runs;
use crate::store::RunLayout;

pub(super) fn merge(runs: &[PathBuf], out: &Path) -> Result<i32> {
    let (manifest, raw) = merge_runs(runs, out)?;
    let missing = |key: &str| Error::input(format!("{}: config.toml lacks {key}", out.display()));
    let grid = raw.grid.as_ref().ok_or_else(|| missing("[grid]"))?;
    let from = grid.from.ok_or_else(|| missing("[grid] from"))?;
    let to = grid.to.ok_or_else(|| missing("[grid] to"))?;
    let points = grid.points.ok_or_else(|| missing("[grid] points"))?.max(2) as usize;
    let levels = raw
        .bands
        .as_ref()
        .and_then(|b| b.levels.clone())
        .ok_or_else(|| missing("[bands] levels"))?;
    let layout = RunLayout::new(out);
    super::bands::write_for_grid(&layout, from, to, points, &levels)?;
    let ids: Vec<String> = manifest.chains.iter().map(|c| c.id.to_string()).collect();
    println!(
        "mixband: joined chains {} into {}",
        ids.join(", "),
        out.display()
    );
    Ok(0)
}

//! Joining runs that sampled disjoint sets of chains of one config (`[sampler] chain_ids`,
//! e.g. one job-array task each) into one run directory. Chain i's streams depend only on
//! (seed, i), so the joined run holds exactly the draws a single run of all its chains
//! would have written.

use std::path::{Path, PathBuf};

use crate::config::{parse_config_file, RawConfig};
use crate::error::{Error, Result};
use crate::store::{write_atomic, Manifest, RunLayout, RunLock, RunStatus, LOCK_FILE};

/// Top-level files of a run directory that the merge writes itself.
const OWN_FILES: [&str; 9] = [
    "manifest.json",
    "config.toml",
    "bands.csv",
    "bands.json",
    "diagnostics.json",
    "cdf.csv",
    "summary.json",
    "checks.json",
    "report.html",
];

/// A config's JSON without `[sampler] chain_ids`, for comparing parts of one run.
fn without_chain_ids(v: &serde_json::Value) -> serde_json::Value {
    let mut v = v.clone();
    if let Some(s) = v.get_mut("sampler").and_then(|s| s.as_object_mut()) {
        s.remove("chain_ids");
    }
    v
}

fn copy(from: &Path, to: &Path) -> Result<()> {
    let bytes = std::fs::read(from).map_err(|e| Error::io(from, e))?;
    write_atomic(to, &bytes)
}

/// The joined run's config: the parts' config with the union of their chain ids (no
/// `chain_ids` key when the union is every chain 1..=chains).
fn merged_config(mut raw: RawConfig, ids: &[u64]) -> RawConfig {
    if let Some(s) = raw.sampler.as_mut() {
        let chains = s.chains.unwrap_or(0).max(0) as u64;
        let all: Vec<u64> = (1..=chains).collect();
        s.chain_ids = if ids == all.as_slice() {
            None
        } else {
            Some(ids.iter().map(|&i| i as i64).collect())
        };
    }
    raw
}

/// Checks that `runs` are complete parts of one run (same tool version, config apart from
/// chain ids, data hash; disjoint chain ids) and writes their union into `out`, which must
/// not exist or be empty. Returns the joined manifest and resolved config (for the
/// summaries, which the caller writes) and `out`'s writer lock, which the caller holds
/// until the summaries are written. Refuses, naming the holder, when another live process
/// holds `out`'s lock.
pub fn merge_runs(runs: &[PathBuf], out: &Path) -> Result<(Manifest, RawConfig, RunLock)> {
    if runs.len() < 2 {
        return Err(Error::input("merge needs at least two run directories"));
    }
    let mut parts = Vec::new();
    for r in runs {
        let layout = RunLayout::new(r);
        let m = Manifest::read(&layout.manifest())?;
        if m.status != RunStatus::Complete {
            return Err(Error::input(format!(
                "{} is not complete (status {:?}); finish it with `mixband resume {}` first",
                r.display(),
                m.status,
                r.display()
            )));
        }
        parts.push((r.clone(), layout, m));
    }
    let (first_dir, first_layout, first) = &parts[0];
    let base_cfg = without_chain_ids(&first.config);
    let mut ids: Vec<u64> = Vec::new();
    for (dir, _, m) in &parts {
        if m.version != first.version {
            return Err(Error::input(format!(
                "{} was made by mixband {} but {} by {}; merge parts of one version only",
                dir.display(),
                m.version,
                first_dir.display(),
                first.version
            )));
        }
        if m.data.sha256 != first.data.sha256 {
            return Err(Error::input(format!(
                "{} and {} sampled different data (SHA-256 {} and {})",
                first_dir.display(),
                dir.display(),
                first.data.sha256,
                m.data.sha256
            )));
        }
        if without_chain_ids(&m.config) != base_cfg {
            return Err(Error::input(format!(
                "{} and {} have different configs (apart from [sampler] chain_ids); compare their config.toml",
                first_dir.display(),
                dir.display()
            )));
        }
        for c in &m.chains {
            if ids.contains(&c.id) {
                return Err(Error::input(format!(
                    "chain {} is in more than one of the runs (again in {}); chain ids must be disjoint",
                    c.id,
                    dir.display()
                )));
            }
            ids.push(c.id);
        }
    }
    ids.sort_unstable();

    // Checked before anything is created, and again under the lock.
    let check_out = |locked: bool| -> Result<()> {
        if out.exists() && !out.is_dir() {
            return Err(Error::input(format!(
                "--out {} exists and is not a directory; choose another --out",
                out.display()
            )));
        }
        if out.exists() {
            let mut entries = std::fs::read_dir(out).map_err(|e| Error::io(out, e))?;
            let non_empty = entries.any(|e| e.map_or(true, |e| e.file_name() != LOCK_FILE));
            if non_empty {
                if !locked {
                    RunLock::check_free(out)?;
                }
                return Err(Error::input(format!(
                    "{} exists and is not empty; choose another --out",
                    out.display()
                )));
            }
        }
        Ok(())
    };
    check_out(false)?;
    std::fs::create_dir_all(out).map_err(|e| Error::io(out, e))?;
    let lock = RunLock::acquire(out, "merge")?;
    check_out(true)?;
    let layout = RunLayout::new(out);
    for d in [layout.draws_dir(), layout.state_dir()] {
        std::fs::create_dir_all(&d).map_err(|e| Error::io(&d, e))?;
    }
    // Files a run carries beside its own (the demo's data copy), from the first part.
    for entry in
        std::fs::read_dir(&first_layout.root).map_err(|e| Error::io(&first_layout.root, e))?
    {
        let entry = entry.map_err(|e| Error::io(&first_layout.root, e))?;
        let name = entry.file_name().to_string_lossy().to_string();
        // Hidden files (a lock, a temporary file left by a killed writer) stay behind.
        if entry.path().is_file() && !OWN_FILES.contains(&name.as_str()) && !name.starts_with('.') {
            copy(&entry.path(), &layout.root.join(&name))?;
        }
    }
    let mut records = Vec::new();
    for (_, part, m) in &parts {
        for c in &m.chains {
            copy(&part.chain_draws(c.id), &layout.chain_draws(c.id))?;
            copy(&part.chain_state(c.id), &layout.chain_state(c.id))?;
            records.push(c.clone());
        }
    }
    records.sort_by_key(|c| c.id);

    let (mut raw, _) = parse_config_file(&first_layout.config())?;
    // A data path relative to the first part's directory is re-expressed from `out`.
    if let Some(file) = raw.data.as_mut().and_then(|d| d.file.as_mut()) {
        *file = super::data_path::rebase(file, &first_layout.root, out);
    }
    let raw = merged_config(raw, &ids);
    let body = toml::to_string(&raw)
        .map_err(|e| Error::internal(format!("cannot write merged config: {e}")))?;
    let text = format!(
        "# Joined by mixband {} from {} runs of one config (chains {}).\n\n{body}",
        env!("CARGO_PKG_VERSION"),
        parts.len(),
        ids.iter()
            .map(|i| i.to_string())
            .collect::<Vec<_>>()
            .join(", ")
    );
    write_atomic(&layout.config(), text.as_bytes())?;
    // The manifest records the data path as the parts' manifests do (absolute).
    let mut manifest_raw = raw.clone();
    let recorded = first.config.get("data").and_then(|d| d.get("file"));
    if let (Some(d), Some(f)) = (
        manifest_raw.data.as_mut(),
        recorded.and_then(|f| f.as_str()),
    ) {
        d.file = Some(f.to_string());
    }
    let manifest = Manifest {
        tool: first.tool.clone(),
        version: first.version.clone(),
        status: RunStatus::Complete,
        seed: first.seed,
        data: first.data.clone(),
        config: serde_json::to_value(&manifest_raw)
            .map_err(|e| Error::internal(format!("cannot encode config: {e}")))?,
        chains: records,
        started_unix: parts.iter().map(|p| p.2.started_unix).min().unwrap_or(0),
        // Parts never grow (a part cannot judge the gate alone).
        grown: Vec::new(),
        not_grown: None,
    };
    manifest.write(&layout.manifest())?;
    Ok((manifest, raw, lock))
}

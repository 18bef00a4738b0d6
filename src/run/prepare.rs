//! Preparing a run: parse and check the config, load and standardise the data, resolve
//! every default, and map the prior to standard units. Nothing is written here, so bad
//! input never leaves a run directory behind.

use std::path::Path;

use sha2::{Digest, Sha256};

use super::loaded::{load_sample, load_sample_in_memory, Loaded};
use crate::config::{
    allocation_for, parse_config_str, resolve, AllocationKind, RawConfig, RunConfig, MAX_SCAN_ROWS,
};
use crate::data::subsample::{choose, SUBSAMPLE_PURPOSE};
use crate::data::{Cells, DataSummary, HashingReader, Standardised, Transform};
use crate::error::{Error, Result};
use crate::model::{Concentration, Prior, VarScale};
use crate::sampler::rng::check_rng;
use crate::store::DataRecord;

/// Everything a run needs before sampling starts.
#[derive(Debug, Clone)]
pub struct Prepared {
    pub config: RunConfig,
    pub data: Standardised,
    pub prior: Prior,
    pub record: DataRecord,
    /// The cells the values stand for when `[data] resolution` is set.
    pub cells: Option<Cells>,
    /// The weighted rows of `data` written out, one value per observation in row order
    /// (standard units), when the collapsed scan runs on a table of exact values
    /// ([`expanded_for_scan`]); `data` keeps the rows and counts for everything else.
    pub scan_rows: Option<Vec<f64>>,
}

impl Prepared {
    /// What the sampler reads: the values (standard units) and their counts.
    pub fn sampler_data(&self) -> (&[f64], Option<&[u64]>) {
        match &self.scan_rows {
            Some(rows) => (rows, None),
            None => (&self.data.z, self.data.counts.as_deref()),
        }
    }
}

/// Lower-case hex SHA-256 of `bytes`.
pub fn sha256_hex(bytes: &[u8]) -> String {
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

impl Prepared {
    /// From a config file on disk; its data file is read relative to the config's folder.
    /// A run directory's config (a `manifest.json` beside it) whose data path leads
    /// nowhere, as when the run directory was copied or moved without its data, falls
    /// back to the absolute path the manifest recorded; whether the file still has the
    /// run's SHA-256 is checked by the callers, as for any other path.
    pub fn from_config_file(path: &Path) -> Result<Prepared> {
        let text = std::fs::read_to_string(path).map_err(|e| {
            Error::input(format!("cannot read config file {}: {e}", path.display()))
        })?;
        let dir = path.parent().map(Path::to_path_buf).unwrap_or_default();
        let dir = if dir.as_os_str().is_empty() {
            std::path::PathBuf::from(".")
        } else {
            dir
        };
        let origin = path.display().to_string();
        let text = recorded_data_fallback(&text, &origin, &dir).unwrap_or(text);
        Self::from_text(&text, &origin, &dir, None)
    }

    /// From config text. `data_bytes`, when given, is used instead of reading the data file
    /// (the embedded demo).
    pub fn from_text(
        text: &str,
        origin: &str,
        dir: &Path,
        data_bytes: Option<&[u8]>,
    ) -> Result<Prepared> {
        Self::from_text_using(text, origin, dir, data_bytes, false)
    }

    /// [`Prepared::from_text`] with every row of the data held in memory before values
    /// recorded at a resolution are tabulated: the straightforward form, kept as the
    /// reference the streamed loader must match bit for bit (tests/streamed_loading.rs).
    pub fn from_text_in_memory(
        text: &str,
        origin: &str,
        dir: &Path,
        data_bytes: Option<&[u8]>,
    ) -> Result<Prepared> {
        Self::from_text_using(text, origin, dir, data_bytes, true)
    }

    fn from_text_using(
        text: &str,
        origin: &str,
        dir: &Path,
        data_bytes: Option<&[u8]>,
        in_memory: bool,
    ) -> Result<Prepared> {
        let load = |reader: &mut dyn std::io::Read, config: &RunConfig, lo: &str, d: &str| {
            if in_memory {
                load_sample_in_memory(reader, config, lo, d)
            } else {
                load_sample(reader, config, lo, d)
            }
        };
        let raw = parse_config_str(text, origin)?;
        // Check everything that does not depend on the data before touching the data.
        let pre = resolve(&raw, text, origin, dir, None)?;
        let data_origin = pre.data_file.display().to_string();
        let (sample, bytes_hash, abs) = match data_bytes {
            Some(b) => (
                load(&mut &b[..], &pre, &pre.data_file_text, &data_origin)?,
                sha256_hex(b),
                pre.data_file_text.clone(),
            ),
            None => {
                let cannot_read = |e: &dyn std::fmt::Display| {
                    Error::input(format!(
                        "{origin}: [data] file: cannot read {}: {e}",
                        pre.data_file.display()
                    ))
                };
                let file = std::fs::File::open(&pre.data_file).map_err(|e| cannot_read(&e))?;
                // The bytes are hashed as the loader reads them: the file is read once and
                // never held whole.
                let mut reader = HashingReader::new(file);
                let s =
                    load(&mut reader, &pre, &data_origin, &data_origin).map_err(
                        |e| match reader.error() {
                            Some(io) => cannot_read(&io),
                            None => e,
                        },
                    )?;
                let hash = reader.finish().map_err(|e| cannot_read(&e))?;
                let abs = std::fs::canonicalize(&pre.data_file)
                    .unwrap_or_else(|_| pre.data_file.clone())
                    .display()
                    .to_string();
                (s, hash, abs)
            }
        };
        let Loaded {
            values,
            counts,
            dropped,
            fitted,
            recording,
        } = sample;
        let (values, counts, fitted, subsample_of) = match pre.subsample {
            None => (values, counts, fitted, None),
            Some(m) => subsampled(values, counts, fitted, m, pre.seed)?,
        };
        let (data, scan_rows) = match expanded_for_scan(&raw, &pre, counts.as_deref(), &fitted) {
            // The centre, scale and summary of the rows written out, so that the run is
            // the one those rows give; `data` keeps the table, standardised alike.
            Some(rows) => {
                let rows = Standardised::with_counts(&rows, None, &data_origin)?;
                let table = Standardised {
                    z: fitted
                        .iter()
                        .map(|&v| (v - rows.centre) / rows.scale)
                        .collect(),
                    counts: counts.clone(),
                    centre: rows.centre,
                    scale: rows.scale,
                    summary: rows.summary,
                };
                (table, Some(rows.z))
            }
            None => (
                Standardised::with_counts(&fitted, counts.clone(), &data_origin)?,
                None,
            ),
        };
        let mut config = resolve(&raw, text, origin, dir, Some(&data.summary))?;
        config.seed = pre.seed;
        if pre.transform != Transform::None {
            // Priors are set on the fitted scale, but the grid is on the original scale:
            // take its defaults from the untransformed sample, inside the support
            // (Transform::default_grid: from 0 under the log, strictly inside the bounds
            // under the logit).
            let on_x = resolve(
                &raw,
                text,
                origin,
                dir,
                Some(&DataSummary::of_counts(
                    &values,
                    counts.as_deref(),
                    &data_origin,
                )?),
            )?;
            let given = raw.grid.clone().unwrap_or_default();
            let (from, to) =
                config
                    .transform
                    .default_grid(on_x.grid_from, on_x.grid_to, config.grid_points);
            config.grid_from = given.from.unwrap_or(from);
            config.grid_to = given.to.unwrap_or(to);
            if config.grid_from >= config.grid_to {
                // One end given, the other defaulted from the data on the other side of it.
                let key = if given.from.is_some() { "from" } else { "to" };
                return Err(Error::input(format!(
                    "{origin}: [grid] {key} leaves an empty grid with the default for the other \
                     end: from = {}, to = {}; set both",
                    config.grid_from, config.grid_to
                )));
            }
        }
        // The absolute path, not the path as written relative to the original config's
        // folder: RUN/config.toml must find the data from inside the run directory, and
        // `execute` writes it there relative to that directory where it can
        // (run/data_path.rs).
        config.data_file_text = abs.clone();
        let prior = Prior::from_config(&config, data.centre, data.scale);
        let cells = config.resolution.map(|r| {
            Cells::from_rows(
                &values,
                counts.as_deref(),
                r,
                config.transform,
                data.centre,
                data.scale,
            )
        });
        check_standard_prior(&prior, origin)?;
        let s = data.summary;
        let record = DataRecord {
            file: abs,
            column: config.column.clone(),
            sha256: bytes_hash,
            n: s.n,
            dropped,
            mean: s.mean,
            sd: s.sd,
            min: s.min,
            max: s.max,
            recording: Some(recording),
            subsample_of,
        };
        Ok(Prepared {
            config,
            data,
            prior,
            record,
            cells,
            scan_rows,
        })
    }
}

/// The columns of the sample cut to a simple random subsample of at most `m`
/// observations from the stream of `seed` (src/data/subsample.rs), with the number of
/// observations before (None when there were no more than `m`).
#[allow(clippy::type_complexity)]
fn subsampled(
    values: Vec<f64>,
    counts: Option<Vec<u64>>,
    fitted: Vec<f64>,
    m: u64,
    seed: u64,
) -> Result<(Vec<f64>, Option<Vec<u64>>, Vec<f64>, Option<u64>)> {
    let mut rng = check_rng(seed, SUBSAMPLE_PURPOSE);
    let Some(kept) = choose(values.len(), counts.as_deref(), m, &mut rng)? else {
        return Ok((values, counts, fitted, None));
    };
    let total = counts
        .as_ref()
        .map_or(values.len() as u64, |c| c.iter().sum());
    let pick = |v: &[f64]| kept.rows.iter().map(|&i| v[i]).collect::<Vec<f64>>();
    Ok((pick(&values), kept.counts, pick(&fitted), Some(total)))
}

/// The fitted values with every weighted row written out as many times as its count, in
/// row order, when the run's allocation step is the collapsed scan and the values are
/// exact (no `[data] resolution`): the scan and its split–merge moves update one
/// observation at a time, so they run on the rows the table stands for, and the draws are
/// those the written-out rows give, bit for bit (tests/frequency_weights.rs). None
/// otherwise: the conditional step and the sweep given cells work per row. Memory and
/// each sweep then grow with the total count, not with the rows; the default picks the
/// collapsed scan only up to 20 000 observations.
fn expanded_for_scan(
    raw: &RawConfig,
    pre: &RunConfig,
    counts: Option<&[u64]>,
    fitted: &[f64],
) -> Option<Vec<f64>> {
    let c = counts?;
    let total = c.iter().sum::<u64>() as usize;
    let given = raw.sampler.as_ref().and_then(|s| s.allocation);
    // Beyond MAX_SCAN_ROWS the table is left as it is, and `resolve` refuses the config
    // by its key: nothing that large is written out first.
    if pre.resolution.is_some()
        || total > MAX_SCAN_ROWS
        || allocation_for(given, Some(total)) != AllocationKind::Collapsed
    {
        return None;
    }
    let mut e = Vec::with_capacity(total);
    for (&x, &k) in fitted.iter().zip(c) {
        e.extend(std::iter::repeat_n(x, k as usize));
    }
    Some(e)
}

/// `text` with its data path replaced by the absolute path in `dir/manifest.json`, when
/// `dir` is a run directory, the path in `text` leads to no file and the recorded one does.
fn recorded_data_fallback(text: &str, origin: &str, dir: &Path) -> Option<String> {
    let manifest = dir.join("manifest.json");
    if !manifest.exists() {
        return None;
    }
    let mut raw = parse_config_str(text, origin).ok()?;
    let file = raw.data.as_ref()?.file.clone()?;
    if dir.join(&file).exists() {
        return None;
    }
    let recorded = crate::store::Manifest::read(&manifest).ok()?.data.file;
    if !(Path::new(&recorded).is_absolute() && Path::new(&recorded).is_file()) {
        return None;
    }
    raw.data.as_mut()?.file = Some(recorded);
    toml::to_string(&raw).ok()
}

/// The prior in standard units must be made of usable numbers: a user's value that is
/// fine in data units can overflow or vanish once divided by a tiny or huge data scale.
fn check_standard_prior(prior: &Prior, origin: &str) -> Result<()> {
    let mut values = vec![
        ("centre", prior.centre, false),
        ("centre_sd", prior.centre_sd, true),
        ("centre_shrink", prior.centre_shrink, true),
        ("var_shape", prior.var_shape, true),
    ];
    match prior.var_scale {
        VarScale::Fixed(b) => values.push(("var_scale", b, true)),
        VarScale::Gamma { shape, rate } => {
            values.push(("var_scale_shape", shape, true));
            values.push(("var_scale_rate", rate, true));
        }
    }
    match prior.concentration {
        Concentration::Fixed(c) => values.push(("dirichlet_delta or alpha", c, true)),
        Concentration::Gamma { shape, rate } => {
            values.push(("alpha_shape", shape, true));
            values.push(("alpha_rate", rate, true));
        }
    }
    for (key, v, positive) in values {
        let ok = v.is_finite() && (!positive || v >= f64::MIN_POSITIVE);
        if !ok {
            return Err(Error::input(format!(
                "{origin}: [prior] {key} cannot be used with this data: in the sampler's standard \
                 units (data centred and divided by its sd) it becomes {v:e}; choose a value on the \
                 scale of the data"
            )));
        }
    }
    Ok(())
}

//! The sample as a run uses it ([`Loaded`]): exact values row by row, values recorded at a
//! resolution as their distinct values with counts. [`load_sample`] streams data recorded
//! at a resolution (memory grows with the distinct values, not the rows);
//! [`load_sample_in_memory`] holds every row first and is kept as the reference it must
//! match bit for bit.

use std::io::Read;

use crate::config::RunConfig;
use crate::data::{
    distinct_counted, load_weighted_from_reader, scan_rows, Recording, SupportCheck, Tally,
};
use crate::error::{Error, Result};

/// The distinct values with their counts, as the run keeps recorded data.
fn tabulate(values: &[f64], counts: Option<&[u64]>) -> (Vec<f64>, Option<Vec<u64>>) {
    let (v, c) = distinct_counted(values, counts);
    (v, Some(c))
}

/// The sample as the run uses it: one entry per row for exact values, one per distinct
/// value (ascending, with its count) for values recorded at a resolution.
#[derive(Debug, Clone, PartialEq)]
pub struct Loaded {
    /// Data units.
    pub values: Vec<f64>,
    pub counts: Option<Vec<u64>>,
    /// Empty cells dropped under `missing = "drop"`.
    pub dropped: usize,
    /// `values` on the fitted scale.
    pub fitted: Vec<f64>,
    /// How the values were recorded (detected on the rows as recorded).
    pub recording: Recording,
}

/// Loads, checks and (at a resolution) tabulates the data of `config` from `reader`;
/// `loader_origin` names the data in the loader's messages, `data_origin` in the others.
///
/// Exact values are held row by row, as the sampler needs them. Values recorded at a
/// resolution are streamed: each row is checked (cells, weights, the transform's support,
/// naming its line) and counted into its distinct value, so memory grows with the distinct
/// values, not the rows; the result equals tabulating the rows held in memory, bit for bit.
pub fn load_sample<R: Read>(
    reader: R,
    config: &RunConfig,
    loader_origin: &str,
    data_origin: &str,
) -> Result<Loaded> {
    let Some(resolution) = config.resolution else {
        // Without a resolution every row is kept: the in-memory path is the path.
        return load_sample_in_memory(reader, config, loader_origin, data_origin);
    };
    let mut support = SupportCheck::new(config.transform, Some(resolution));
    let mut tally = Tally::new();
    let scan = scan_rows(
        reader,
        loader_origin,
        &config.column,
        config.freq_weights.as_deref(),
        config.missing,
        |r| {
            support.push(r.value, r.line, r.row);
            tally.add(r.value, r.count).ok_or_else(|| {
                Error::input(format!(
                    "{loader_origin}: line {} (data row {}): the frequency weights add up to more \
                     than {} observations",
                    r.line,
                    r.row,
                    u64::MAX
                ))
            })
        },
    )?;
    support.finish(data_origin, &config.column)?;
    let (distinct, per_value) = tally.into_table();
    // On the values as recorded (data units); the detector tabulates its input, so the
    // table gives what the rows would.
    let recording = Recording::detect(&distinct, Some(&per_value), Some(resolution));
    // Recorded at a resolution, the sample is its table of distinct values: rows given one
    // by one and as (value, count) then give the same run bit for bit. (The tally keeps
    // −0.0 and 0.0 apart; this merges them as it merges rows.)
    Ok(tabulated(
        &distinct,
        Some(&per_value),
        scan.dropped,
        recording,
        config,
        resolution,
    ))
}

/// [`load_sample`] with every row held in memory first (values, their lines, their
/// weights), then checked, described and tabulated: the reference.
pub fn load_sample_in_memory<R: Read>(
    reader: R,
    config: &RunConfig,
    loader_origin: &str,
    data_origin: &str,
) -> Result<Loaded> {
    let sample = load_weighted_from_reader(
        reader,
        loader_origin,
        &config.column,
        config.freq_weights.as_deref(),
        config.missing,
    )?;
    let fitted = config.transform.apply_recorded(
        &sample.values,
        &sample.origins,
        data_origin,
        &config.column,
        config.resolution,
    )?;
    let recording = Recording::detect(&sample.values, sample.counts.as_deref(), config.resolution);
    let Some(resolution) = config.resolution else {
        return Ok(Loaded {
            values: sample.values,
            counts: sample.counts,
            dropped: sample.dropped,
            fitted,
            recording,
        });
    };
    Ok(tabulated(
        &sample.values,
        sample.counts.as_deref(),
        sample.dropped,
        recording,
        config,
        resolution,
    ))
}

/// The sample recorded at `resolution` as its table of distinct values (rows given one by
/// one and as (value, count) then give the same run bit for bit), each fitted at its cell.
fn tabulated(
    values: &[f64],
    counts: Option<&[u64]>,
    dropped: usize,
    recording: Recording,
    config: &RunConfig,
    resolution: f64,
) -> Loaded {
    let (values, counts) = tabulate(values, counts);
    let fitted = values
        .iter()
        .map(|&v| config.transform.fitted_value(v, Some(resolution)))
        .collect();
    Loaded {
        values,
        counts,
        dropped,
        fitted,
        recording,
    }
}

//! Per-chain draw tables: `draws/chain-<i>.csv`, one row per kept draw, on the data scale.
//!
//! Columns: `iteration, loglik, occupied, concentration`, then `weight_k, mean_k, sd_k`
//! for k = 1..K. Numbers use shortest round-trip formatting. Rows are written whole and
//! flushed before each checkpoint; a reader accepts only newline-terminated rows with the
//! full field count, so a row cut short by a crash is ignored, never read as data.

use std::fs::{File, OpenOptions};
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

use indicatif::ProgressBar;

use super::atomic::write_atomic;
use super::checkpoint::StoredCheckpoint;
use crate::error::{Error, Result};
use crate::numfmt::fmt_f64;
use crate::sampler::{Checkpoint, DrawSink, KeptDraw};

/// The map from standard units back to data units.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Units {
    pub centre: f64,
    pub scale: f64,
    pub n: usize,
}

/// Header of a chain table with `k` components.
pub fn header(k: usize) -> String {
    let mut h = String::from("iteration,loglik,occupied,concentration");
    for j in 1..=k {
        h.push_str(&format!(",weight_{j},mean_{j},sd_{j}"));
    }
    h.push('\n');
    h
}

/// Seconds between checkpoints: 2, or `MIXBAND_CHECKPOINT_SECS` when set to a positive
/// number (tests use short intervals). Checkpoint timing never changes the draws.
fn checkpoint_interval() -> Duration {
    std::env::var("MIXBAND_CHECKPOINT_SECS")
        .ok()
        .and_then(|v| v.trim().parse::<f64>().ok())
        .filter(|v| v.is_finite() && *v > 0.0 && *v < 1e6)
        .map(Duration::from_secs_f64)
        .unwrap_or(Duration::from_secs(2))
}

/// Writes one chain's table and its checkpoints; a [`DrawSink`] for the sampler.
pub struct ChainWriter {
    chain: u64,
    file: BufWriter<File>,
    path: PathBuf,
    state_path: PathBuf,
    bytes: u64,
    draws_written: u64,
    units: Units,
    last_checkpoint: Instant,
    every: Duration,
    progress: Option<ProgressBar>,
    line: String,
}

impl ChainWriter {
    /// Starts a new table at `path` (which must not exist).
    pub fn create(
        chain: u64,
        path: &Path,
        state_path: &Path,
        k: usize,
        units: Units,
    ) -> Result<Self> {
        let f = OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(path)
            .map_err(|e| Error::io(path, e))?;
        let mut w = Self::wrap(chain, f, path, state_path, 0, 0, units);
        let h = header(k);
        w.file
            .write_all(h.as_bytes())
            .map_err(|e| Error::io(path, e))?;
        w.bytes = h.len() as u64;
        Ok(w)
    }

    /// Reopens a table to continue after `stored`: bytes past the checkpoint are cut off.
    pub fn reopen(
        path: &Path,
        state_path: &Path,
        stored: &StoredCheckpoint,
        units: Units,
    ) -> Result<Self> {
        let f = OpenOptions::new()
            .write(true)
            .open(path)
            .map_err(|e| Error::io(path, e))?;
        let len = f.metadata().map_err(|e| Error::io(path, e))?.len();
        if len < stored.bytes {
            return Err(Error::input(format!(
                "{}: shorter ({len} bytes) than its checkpoint records ({} bytes); the store was altered",
                path.display(),
                stored.bytes
            )));
        }
        f.set_len(stored.bytes).map_err(|e| Error::io(path, e))?;
        let mut w = Self::wrap(
            stored.chain,
            f,
            path,
            state_path,
            stored.bytes,
            stored.draws_written,
            units,
        );
        use std::io::Seek;
        w.file
            .get_mut()
            .seek(std::io::SeekFrom::End(0))
            .map_err(|e| Error::io(path, e))?;
        Ok(w)
    }

    fn wrap(
        chain: u64,
        f: File,
        path: &Path,
        state_path: &Path,
        bytes: u64,
        draws: u64,
        units: Units,
    ) -> Self {
        ChainWriter {
            chain,
            file: BufWriter::with_capacity(1 << 16, f),
            path: path.to_path_buf(),
            state_path: state_path.to_path_buf(),
            bytes,
            draws_written: draws,
            units,
            last_checkpoint: Instant::now(),
            every: checkpoint_interval(),
            progress: None,
            line: String::new(),
        }
    }

    /// Shows progress (sweeps done) on `bar`.
    pub fn with_progress(mut self, bar: ProgressBar) -> Self {
        self.progress = Some(bar);
        self
    }

    pub fn draws_written(&self) -> u64 {
        self.draws_written
    }
}

impl DrawSink for ChainWriter {
    fn draw(&mut self, d: KeptDraw<'_>) -> Result<()> {
        let u = self.units;
        let s = d.state;
        let line = &mut self.line;
        line.clear();
        let ll = d.loglik - u.n as f64 * u.scale.ln();
        if !ll.is_finite() {
            return Err(Error::internal(format!(
                "chain {}: non-finite log-likelihood at iteration {}",
                self.chain, d.iteration
            )));
        }
        line.push_str(&format!(
            "{},{},{},{}",
            d.iteration,
            fmt_f64(ll),
            d.occupied,
            fmt_f64(s.concentration)
        ));
        for j in 0..s.k() {
            let w = s.log_w[j].exp();
            let m = u.centre + u.scale * s.mu[j];
            let sd = u.scale * s.var[j].sqrt();
            if !(w.is_finite() && m.is_finite() && sd.is_finite() && sd > 0.0) {
                return Err(Error::internal(format!(
                    "chain {}: component {} has non-finite parameters at iteration {}",
                    self.chain,
                    j + 1,
                    d.iteration
                )));
            }
            line.push(',');
            line.push_str(&fmt_f64(w));
            line.push(',');
            line.push_str(&fmt_f64(m));
            line.push(',');
            line.push_str(&fmt_f64(sd));
        }
        line.push('\n');
        self.file
            .write_all(line.as_bytes())
            .map_err(|e| Error::io(&self.path, e))?;
        self.bytes += line.len() as u64;
        self.draws_written += 1;
        Ok(())
    }

    fn checkpoint(&mut self, cp: &dyn Fn() -> Checkpoint, force: bool) -> Result<()> {
        if !force && self.last_checkpoint.elapsed() < self.every {
            return Ok(());
        }
        self.last_checkpoint = Instant::now();
        self.file.flush().map_err(|e| Error::io(&self.path, e))?;
        // The rows a checkpoint counts must be on disk before the checkpoint is.
        self.file
            .get_ref()
            .sync_data()
            .map_err(|e| Error::io(&self.path, e))?;
        let c = cp();
        if !super::checkpoint::is_finite(&c) {
            return Err(Error::internal(format!(
                "chain {}: non-finite sampler state after sweep {}; no checkpoint written",
                self.chain, c.sweeps_done
            )));
        }
        if let Some(bar) = &self.progress {
            bar.set_position(c.sweeps_done);
        }
        let stored = StoredCheckpoint {
            chain: self.chain,
            bytes: self.bytes,
            draws_written: self.draws_written,
            checkpoint: c,
        };
        let json = serde_json::to_vec_pretty(&stored)
            .map_err(|e| Error::internal(format!("cannot encode checkpoint: {e}")))?;
        write_atomic(&self.state_path, &json)
    }
}

/// One row of a chain table.
#[derive(Debug, Clone, PartialEq)]
pub struct DrawRow {
    pub iteration: u64,
    pub loglik: f64,
    pub occupied: u32,
    pub concentration: f64,
    pub weight: Vec<f64>,
    pub mean: Vec<f64>,
    pub sd: Vec<f64>,
}

impl DrawRow {
    /// A row with no components, to be filled by the parser.
    pub fn empty() -> Self {
        DrawRow {
            iteration: 0,
            loglik: 0.0,
            occupied: 0,
            concentration: 0.0,
            weight: Vec::new(),
            mean: Vec::new(),
            sd: Vec::new(),
        }
    }
}

/// The rows of one chain.
#[derive(Debug, Clone, PartialEq)]
pub struct ChainDraws {
    pub chain: u64,
    pub rows: Vec<DrawRow>,
}

/// Every chain of a run.
#[derive(Debug, Clone, PartialEq)]
pub struct RunDraws {
    pub k: usize,
    pub chains: Vec<ChainDraws>,
}

impl RunDraws {
    /// Length of the shortest chain (diagnostics use that many draws of each).
    pub fn min_len(&self) -> usize {
        self.chains.iter().map(|c| c.rows.len()).min().unwrap_or(0)
    }
}

/// Reads a chain table, ignoring an unterminated last row.
pub fn read_chain(path: &Path, chain: u64) -> Result<ChainDraws> {
    let mut r = super::stream::RowReader::open(path)?;
    let mut rows = Vec::new();
    while let Some(row) = r.next_row()? {
        rows.push(row.clone());
    }
    Ok(ChainDraws { chain, rows })
}

/// Parses the text of a chain table (see [`read_chain`]); `origin` names it in messages.
pub fn parse_chain(text: &str, origin: &str, chain: u64) -> Result<ChainDraws> {
    let complete = match text.rfind('\n') {
        Some(i) => &text[..=i],
        None => "",
    };
    let mut lines = complete.lines();
    let head = lines
        .next()
        .ok_or_else(|| Error::input(format!("{origin}: empty draw table")))?;
    let (fields, k) = parse_header(head, origin)?;
    let mut rows = Vec::new();
    for (i, line) in lines.enumerate() {
        let mut row = DrawRow::empty();
        parse_row(line, fields, k, origin, i + 2, &mut row)?;
        rows.push(row);
    }
    Ok(ChainDraws { chain, rows })
}

/// Checks the header line of a chain table; returns its field count and K.
pub(super) fn parse_header(head: &str, origin: &str) -> Result<(usize, usize)> {
    let fields = head.split(',').count();
    if fields < 7
        || !(fields - 4).is_multiple_of(3)
        || !head.starts_with("iteration,loglik,occupied,concentration")
    {
        return Err(Error::input(format!(
            "{origin}: not a mixband draw table (header \"{head}\")"
        )));
    }
    Ok((fields, (fields - 4) / 3))
}

/// Parses line `line_no` (1 is the header) of a table with `fields` fields and `k`
/// components into `row`, reusing its vectors.
pub(super) fn parse_row(
    line: &str,
    fields: usize,
    k: usize,
    origin: &str,
    line_no: usize,
    row: &mut DrawRow,
) -> Result<()> {
    let bad = |what: &str| Error::input(format!("{origin}: line {line_no}: {what}"));
    let cells: Vec<&str> = line.split(',').collect();
    if cells.len() != fields {
        return Err(bad(&format!("{} fields, expected {fields}", cells.len())));
    }
    let num = |s: &str| -> Result<f64> {
        s.parse::<f64>()
            .ok()
            .filter(|v| v.is_finite())
            .ok_or_else(|| bad(&format!("\"{s}\" is not a finite number")))
    };
    row.iteration = cells[0].parse().map_err(|_| bad("bad iteration"))?;
    row.loglik = num(cells[1])?;
    row.occupied = cells[2].parse().map_err(|_| bad("bad occupied count"))?;
    row.concentration = num(cells[3])?;
    row.weight.clear();
    row.mean.clear();
    row.sd.clear();
    for j in 0..k {
        row.weight.push(num(cells[4 + 3 * j])?);
        row.mean.push(num(cells[5 + 3 * j])?);
        row.sd.push(num(cells[6 + 3 * j])?);
    }
    Ok(())
}

/// Reads `draws/chain-<i>.csv` for the given chain ids.
pub fn read_run_draws(draws_dir: &Path, chain_ids: &[u64]) -> Result<RunDraws> {
    let mut chains = Vec::new();
    let mut k = 0;
    for &id in chain_ids {
        let c = read_chain(&draws_dir.join(format!("chain-{id}.csv")), id)?;
        if let Some(r) = c.rows.first() {
            k = r.weight.len();
        }
        chains.push(c);
    }
    Ok(RunDraws { k, chains })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn half_written_row_is_ignored_and_broken_middle_row_refused() {
        let h = header(1);
        let text = format!("{h}1,-3.5,1,1,1,0.5,2\n2,-3.25,1,1,1,0.25,2\n3,-3.1,1,");
        let c = parse_chain(&text, "t", 1).unwrap();
        assert_eq!(c.rows.len(), 2);
        assert_eq!(c.rows[1].mean, vec![0.25]);
        let text = format!("{h}1,-3.5,1,1,1\n2,-3.25,1,1,1,0.25,2\n");
        assert!(parse_chain(&text, "t", 1).is_err());
    }
}

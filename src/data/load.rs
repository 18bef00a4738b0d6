//! Reads one column of a CSV file by header name. Every cell is checked: non-numeric text,
//! NaN and infinities are rejected with their row number; empty cells follow the
//! configured missing-value policy. An optional second column holds integer frequency
//! weights (`[data] weights`): each cell a non-negative integer, rows of weight 0 dropped.
//! [`scan_rows`] makes these checks one row at a time and hands each accepted row to the
//! caller, holding nothing per row; [`load_weighted_from_reader`] collects the rows.

use std::io::Read;
use std::path::Path;

use crate::config::MissingPolicy;
use crate::error::{Error, Result};

/// The observations of one column, in file order, with what was dropped.
#[derive(Debug, Clone, PartialEq)]
pub struct Sample {
    pub values: Vec<f64>,
    /// Number of empty cells dropped under `missing = "drop"`.
    pub dropped: usize,
    /// (file line, data row) of each value, for messages about individual values.
    pub origins: Vec<(u64, usize)>,
    /// Frequency weight of each value (`[data] weights`, all ≥ 1); `None`: one each.
    pub counts: Option<Vec<u64>>,
    /// Rows dropped because their weight is 0.
    pub zero_weight: usize,
}

/// Loads column `column` of the CSV file at `path`.
pub fn load_column(path: &Path, column: &str, missing: MissingPolicy) -> Result<Sample> {
    let file = std::fs::File::open(path)
        .map_err(|e| Error::input(format!("cannot open data file {}: {e}", path.display())))?;
    load_column_from_reader(file, &path.display().to_string(), column, missing)
}

/// Loads column `column` with frequency weights from column `weights` (when given) of the
/// CSV file at `path`.
pub fn load_weighted(
    path: &Path,
    column: &str,
    weights: Option<&str>,
    missing: MissingPolicy,
) -> Result<Sample> {
    let file = std::fs::File::open(path)
        .map_err(|e| Error::input(format!("cannot open data file {}: {e}", path.display())))?;
    load_weighted_from_reader(file, &path.display().to_string(), column, weights, missing)
}

/// Loads column `column` from CSV bytes; `origin` names the source in messages.
pub fn load_column_from_reader<R: Read>(
    reader: R,
    origin: &str,
    column: &str,
    missing: MissingPolicy,
) -> Result<Sample> {
    load_weighted_from_reader(reader, origin, column, None, missing)
}

/// [`load_column_from_reader`] with frequency weights from column `weights` when given.
pub fn load_weighted_from_reader<R: Read>(
    reader: R,
    origin: &str,
    column: &str,
    weights: Option<&str>,
    missing: MissingPolicy,
) -> Result<Sample> {
    let mut counts = Vec::new();
    let mut values = Vec::new();
    let mut origins = Vec::new();
    let scan = scan_rows(reader, origin, column, weights, missing, |r| {
        if weights.is_some() {
            counts.push(r.count);
        }
        values.push(r.value);
        origins.push((r.line, r.row));
        Ok(())
    })?;
    Ok(Sample {
        values,
        dropped: scan.dropped,
        origins,
        counts: weights.map(|_| counts),
        zero_weight: scan.zero_weight,
    })
}

/// One accepted row: its value, its frequency weight (1 without a weights column; never
/// 0) and where it is in the file.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Row {
    pub value: f64,
    pub count: u64,
    /// Line of the file (1 is the header).
    pub line: u64,
    /// Data row, counting from 1 (empty and zero-weight rows included).
    pub row: usize,
}

/// What a pass over the rows left out.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct Scan {
    /// Empty cells dropped under `missing = "drop"`.
    pub dropped: usize,
    /// Rows dropped because their weight is 0.
    pub zero_weight: usize,
    /// Rows handed to the visitor.
    pub rows: usize,
}

/// Reads the CSV row by row with one reused record, checks every cell (the same checks
/// and messages as [`load_weighted_from_reader`], which is built on it) and hands each
/// accepted row to `visit` in file order, holding nothing per row. An error from `visit`
/// stops the pass. A column with no accepted row is an error.
pub fn scan_rows<R: Read>(
    reader: R,
    origin: &str,
    column: &str,
    weights: Option<&str>,
    missing: MissingPolicy,
    mut visit: impl FnMut(Row) -> Result<()>,
) -> Result<Scan> {
    let mut rdr = csv::ReaderBuilder::new()
        .has_headers(true)
        .flexible(false)
        .comment(Some(b'#'))
        .from_reader(reader);
    let headers = rdr
        .headers()
        .map_err(|e| Error::input(format!("{origin}: cannot read the header row: {e}")))?
        .clone();
    let idx = find_column(&headers, origin, column)?;
    let widx = match weights {
        Some(w) => Some(find_column(&headers, origin, w)?),
        None => None,
    };
    let mut scan = Scan::default();
    let mut record = csv::StringRecord::new();
    let mut row = 0usize;
    loop {
        match rdr.read_record(&mut record) {
            Ok(false) => break,
            Ok(true) => {}
            Err(e) => {
                return Err(Error::input(format!(
                    "{origin}: {}",
                    describe_csv_error(&e)
                )))
            }
        }
        row += 1;
        let line = record.position().map(|p| p.line()).unwrap_or(0);
        let cell = record.get(idx).unwrap_or("").trim();
        let empty = |what: String| -> Result<()> {
            match missing {
                MissingPolicy::Drop => Ok(()),
                MissingPolicy::Error => Err(Error::input(format!(
                    "{origin}: line {line} (data row {row}): {what} is empty; \
                     set [data] missing = \"drop\" to drop rows with empty cells"
                ))),
            }
        };
        if cell.is_empty() {
            empty(format!("column \"{column}\""))?;
            scan.dropped += 1;
            continue;
        }
        let v: f64 = cell.parse().map_err(|_| {
            Error::input(format!(
                "{origin}: line {line} (data row {row}): column \"{column}\" holds \"{}\", not a number",
                truncate(cell)
            ))
        })?;
        if !v.is_finite() {
            return Err(Error::input(format!(
                "{origin}: line {line} (data row {row}): column \"{column}\" holds {cell}; only finite numbers are allowed"
            )));
        }
        let mut count = 1;
        if let (Some(wi), Some(wname)) = (widx, weights) {
            let wcell = record.get(wi).unwrap_or("").trim();
            if wcell.is_empty() {
                empty(format!("weights column \"{wname}\""))?;
                scan.dropped += 1;
                continue;
            }
            count = wcell
                .strip_prefix('+')
                .unwrap_or(wcell)
                .parse()
                .ok()
                .filter(|_| wcell.bytes().all(|b| b.is_ascii_digit() || b == b'+'))
                .ok_or_else(|| {
                    Error::input(format!(
                        "{origin}: line {line} (data row {row}): weights column \"{wname}\" holds \"{}\", \
                         not a non-negative integer (frequency weights count observations)",
                        truncate(wcell)
                    ))
                })?;
            if count == 0 {
                scan.zero_weight += 1;
                continue;
            }
        }
        visit(Row {
            value: v,
            count,
            line,
            row,
        })?;
        scan.rows += 1;
    }
    if scan.rows == 0 {
        let (dropped, zero_weight) = (scan.dropped, scan.zero_weight);
        return Err(Error::input(format!(
            "{origin}: column \"{column}\" holds no observations{}",
            if dropped > 0 || zero_weight > 0 {
                format!(" ({dropped} empty cells dropped, {zero_weight} rows of weight 0)")
            } else {
                String::new()
            }
        )));
    }
    Ok(scan)
}

/// Position of the column named `column` in `headers`; it must occur exactly once.
fn find_column(headers: &csv::StringRecord, origin: &str, column: &str) -> Result<usize> {
    let idx = headers
        .iter()
        .position(|h| h.trim() == column)
        .ok_or_else(|| {
            let names: Vec<String> = headers.iter().map(|h| format!("\"{h}\"")).collect();
            Error::input(format!(
                "{origin}: no column \"{column}\"; the header has {}",
                if names.is_empty() {
                    "no columns".to_string()
                } else {
                    names.join(", ")
                }
            ))
        })?;
    let same: Vec<String> = headers
        .iter()
        .enumerate()
        .filter(|(_, h)| h.trim() == column)
        .map(|(i, _)| (i + 1).to_string())
        .collect();
    if same.len() > 1 {
        return Err(Error::input(format!(
            "{origin}: the header names column \"{column}\" {} times (columns {}); rename all but one",
            same.len(),
            same.join(", ")
        )));
    }
    Ok(idx)
}

fn truncate(s: &str) -> String {
    if s.chars().count() > 40 {
        format!("{}…", s.chars().take(40).collect::<String>())
    } else {
        s.to_string()
    }
}

fn describe_csv_error(e: &csv::Error) -> String {
    match e.kind() {
        csv::ErrorKind::UnequalLengths {
            pos,
            expected_len,
            len,
        } => format!(
            "line {}: {len} fields where the header has {expected_len}",
            pos.as_ref().map(|p| p.line()).unwrap_or(0)
        ),
        csv::ErrorKind::Utf8 { pos, .. } => format!(
            "line {}: not valid UTF-8 text",
            pos.as_ref().map(|p| p.line()).unwrap_or(0)
        ),
        _ => e.to_string(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn load(text: &str, policy: MissingPolicy) -> Result<Sample> {
        load_column_from_reader(text.as_bytes(), "t.csv", "x", policy)
    }

    #[test]
    fn reads_named_column_and_reports_bad_cells() {
        let s = load("id,x\n1,2.5\n2,-1e3\n", MissingPolicy::Error).unwrap();
        assert_eq!(s.values, vec![2.5, -1000.0]);
        let e = load("id,x\n1,2.5\n2,abc\n", MissingPolicy::Error)
            .unwrap_err()
            .to_string();
        assert!(e.contains("line 3") && e.contains("abc"), "{e}");
        let e = load("id,x\n1,NaN\n", MissingPolicy::Error)
            .unwrap_err()
            .to_string();
        assert!(e.contains("data row 1"), "{e}");
        let e = load("id,y\n1,2\n", MissingPolicy::Error)
            .unwrap_err()
            .to_string();
        assert!(e.contains("\"id\", \"y\""), "{e}");
        let s = load("id,x\n1,\n2,3\n", MissingPolicy::Drop).unwrap();
        assert_eq!((s.values.clone(), s.dropped), (vec![3.0], 1));
        assert!(load("id,x\n1,\n2,3\n", MissingPolicy::Error).is_err());
        let e = load("x,y,x\n1,2,3\n", MissingPolicy::Error)
            .unwrap_err()
            .to_string();
        assert!(e.contains("columns 1, 3"), "{e}");
    }
}

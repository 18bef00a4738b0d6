//! A run on values held in memory (a list, an array, a notebook column) rather than a data
//! file: the values, with optional counts, become a CSV that the run directory keeps beside
//! its config, so the run resumes, extends and re-summarises like any other. The same
//! values given to the command line in a file sample the same draws, bit for bit.

use std::path::Path;

use super::prepare::Prepared;
use crate::error::{Error, Result};

/// The run directory's copy of the values.
pub const VALUES_FILE: &str = "values.csv";
/// Its columns.
pub const VALUE_COLUMN: &str = "value";
pub const COUNT_COLUMN: &str = "count";

/// The values (and counts) as CSV text, each number written in its shortest form that
/// reads back to the same f64. Values must be finite and counts, when given, as many.
pub fn values_csv(values: &[f64], counts: Option<&[u64]>) -> Result<Vec<u8>> {
    if let Some(c) = counts {
        if c.len() != values.len() {
            return Err(Error::input(format!(
                "counts: {} counts for {} values; give one count per value",
                c.len(),
                values.len()
            )));
        }
    }
    let mut out = String::with_capacity(values.len() * 12 + 16);
    out.push_str(VALUE_COLUMN);
    if counts.is_some() {
        out.push(',');
        out.push_str(COUNT_COLUMN);
    }
    out.push('\n');
    for (i, &v) in values.iter().enumerate() {
        if !v.is_finite() {
            return Err(Error::input(format!(
                "values[{i}] is {v}; every value must be a finite number (drop missing values first)"
            )));
        }
        out.push_str(&format!("{v:?}"));
        if let Some(c) = counts {
            out.push_str(&format!(",{}", c[i]));
        }
        out.push('\n');
    }
    Ok(out.into_bytes())
}

/// `config_text` (TOML; its [data] must not name a file, column or weights column, which
/// the values take) with the values' file and columns set.
fn config_for_values(config_text: &str, origin: &str, counted: bool) -> Result<String> {
    let mut doc: toml::Table = config_text
        .parse()
        .map_err(|e: toml::de::Error| Error::input(format!("{origin}: {}", e.message())))?;
    let data = doc
        .entry("data")
        .or_insert_with(|| toml::Value::Table(toml::Table::new()));
    let data = data
        .as_table_mut()
        .ok_or_else(|| Error::input(format!("{origin}: [data] must be a table")))?;
    for key in ["file", "column", "weights"] {
        if data.contains_key(key) {
            return Err(Error::input(format!(
                "{origin}: [data] {key} cannot be set when the values are given directly"
            )));
        }
    }
    data.insert("file".into(), VALUES_FILE.into());
    data.insert("column".into(), VALUE_COLUMN.into());
    if counted {
        data.insert("weights".into(), COUNT_COLUMN.into());
    }
    toml::to_string(&doc).map_err(|e| Error::internal(format!("cannot write config: {e}")))
}

/// Prepares a run of `config_text` on `values` (with `counts` per value, if given); returns
/// it with the CSV to write into the run directory as [`VALUES_FILE`].
pub fn prepare_values(
    config_text: &str,
    origin: &str,
    values: &[f64],
    counts: Option<&[u64]>,
) -> Result<(Prepared, Vec<u8>)> {
    let bytes = values_csv(values, counts)?;
    let text = config_for_values(config_text, origin, counts.is_some())?;
    let mut prep = Prepared::from_text(&text, origin, Path::new("."), Some(&bytes))?;
    prep.config.data_file_text = VALUES_FILE.to_string();
    prep.record.file = format!("{VALUES_FILE} (values given in memory)");
    Ok((prep, bytes))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_read_back_exactly() {
        // Shortest round-trip formatting: common practice, no source (Rust's f64 Debug).
        let v = [0.1, 1.0 / 3.0, -2.5e-300, 1e300, 42.0];
        let csv = String::from_utf8(values_csv(&v, Some(&[1, 2, 3, 4, 5])).unwrap()).unwrap();
        let back: Vec<f64> = csv
            .lines()
            .skip(1)
            .map(|l| l.split(',').next().unwrap().parse().unwrap())
            .collect();
        assert_eq!(back, v);
        assert!(csv.starts_with("value,count\n"));
    }

    #[test]
    fn bad_values_and_keys_are_named() {
        let e = values_csv(&[1.0, f64::NAN], None).unwrap_err().to_string();
        assert!(e.contains("values[1]"), "{e}");
        let e = values_csv(&[1.0], Some(&[1, 2])).unwrap_err().to_string();
        assert!(e.contains("2 counts for 1 values"), "{e}");
        let e = config_for_values("[data]\nfile = \"x.csv\"\n", "cfg", false)
            .unwrap_err()
            .to_string();
        assert!(e.contains("[data] file"), "{e}");
    }

    #[test]
    fn keeps_other_data_keys() {
        let t = config_for_values("[data]\nresolution = 0.1\n[sampler]\nseed = 3\n", "c", true)
            .unwrap();
        let doc: toml::Table = t.parse().unwrap();
        assert_eq!(doc["data"]["resolution"].as_float(), Some(0.1));
        assert_eq!(doc["data"]["weights"].as_str(), Some(COUNT_COLUMN));
        assert_eq!(doc["sampler"]["seed"].as_integer(), Some(3));
    }
}

//! What the report shows of a run's convergence checks, read from RUN/diagnostics.json
//! (written by the diagnostics gate). The report never computes a verdict of its own: when
//! the file is absent, it says that convergence was not assessed.

use std::path::Path;

use serde_json::Value;

use crate::error::{Error, Result};

/// One row of the diagnostics table.
#[derive(Debug, Clone, PartialEq)]
pub struct DiagRow {
    pub name: String,
    pub rhat: Option<f64>,
    pub ess_bulk: Option<f64>,
    pub ess_tail: Option<f64>,
    pub mcse_mean: Option<f64>,
    /// Whether this row fails a threshold (shown in the alert colour).
    pub failing: bool,
    pub note: Option<String>,
}

/// The gate's verdict and the numbers behind it.
#[derive(Debug, Clone, PartialEq)]
pub struct DiagnosticsView {
    pub passed: bool,
    /// Threshold name and value, as stated in diagnostics.json.
    pub thresholds: Vec<(String, String)>,
    pub rows: Vec<DiagRow>,
    /// Why the gate failed and what to try, in the gate's own words.
    pub messages: Vec<String>,
}

fn num(v: &Value, key: &str) -> Option<f64> {
    v.get(key).and_then(Value::as_f64)
}

fn text_list(v: Option<&Value>) -> Vec<String> {
    match v {
        Some(Value::Array(a)) => a
            .iter()
            .filter_map(|s| s.as_str().map(str::to_string))
            .collect(),
        Some(Value::String(s)) => vec![s.clone()],
        _ => Vec::new(),
    }
}

impl DiagnosticsView {
    /// Reads diagnostics.json; `Ok(None)` when the run has none.
    pub fn read(path: &Path) -> Result<Option<DiagnosticsView>> {
        if !path.exists() {
            return Ok(None);
        }
        let text = std::fs::read_to_string(path).map_err(|e| Error::io(path, e))?;
        let v: Value = serde_json::from_str(&text).map_err(|e| {
            Error::input(format!("{}: unreadable diagnostics: {e}", path.display()))
        })?;
        Self::from_json(&v)
            .map(Some)
            .map_err(|m| Error::input(format!("{}: {m}", path.display())))
    }

    /// From the parsed diagnostics document: `passed`, `thresholds` (an object) and
    /// `quantities` (objects with `name`, `rhat`, `ess_bulk`, `ess_tail`, `mcse_mean`).
    pub fn from_json(v: &Value) -> std::result::Result<DiagnosticsView, String> {
        let passed = v
            .get("passed")
            .and_then(Value::as_bool)
            .ok_or("no boolean \"passed\"")?;
        let mut thresholds = Vec::new();
        if let Some(Value::Object(t)) = v.get("thresholds") {
            for (k, val) in t {
                let s = match val {
                    Value::Number(n) => n.to_string(),
                    Value::String(s) => s.clone(),
                    other => other.to_string(),
                };
                thresholds.push((k.clone(), s));
            }
        }
        let max_rhat = v.get("thresholds").and_then(|t| num(t, "max_rhat"));
        let min_ess = v.get("thresholds").and_then(|t| num(t, "min_ess"));
        let mut rows = Vec::new();
        if let Some(Value::Array(qs)) = v.get("quantities") {
            for q in qs {
                let name = q
                    .get("name")
                    .and_then(Value::as_str)
                    .ok_or("a quantity without a name")?;
                let rhat = num(q, "rhat");
                let ess_bulk = num(q, "ess_bulk");
                let ess_tail = num(q, "ess_tail");
                let failing = q
                    .get("passed")
                    .and_then(Value::as_bool)
                    .map(|p| !p)
                    .unwrap_or_else(|| {
                        rhat.zip(max_rhat).is_some_and(|(r, m)| r > m)
                            || ess_bulk.zip(min_ess).is_some_and(|(e, m)| e < m)
                            || ess_tail.zip(min_ess).is_some_and(|(e, m)| e < m)
                    });
                rows.push(DiagRow {
                    name: name.to_string(),
                    rhat,
                    ess_bulk,
                    ess_tail,
                    mcse_mean: num(q, "mcse_mean"),
                    failing,
                    note: q.get("note").and_then(Value::as_str).map(str::to_string),
                });
            }
        }
        let mut messages = text_list(v.get("failures"));
        messages.extend(text_list(v.get("advice")));
        Ok(DiagnosticsView {
            passed,
            thresholds,
            rows,
            messages,
        })
    }
}

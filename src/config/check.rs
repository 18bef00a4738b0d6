//! The `[check]` section: thresholds and sizes of the model check against the data
//! (posterior predictive checks and LOO-PIT, `src/check/`). None of these keys changes the
//! draws; they only decide how much of the run the check reads and what it flags.

use serde::{Deserialize, Serialize};

use super::locate::key_line;
use crate::error::{Error, Result};

/// `[check]` as written.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CheckSection {
    /// A posterior predictive p-value below this is in the lower tail.
    pub tail_low: Option<f64>,
    /// A p-value above this (P(T_rep ≤ T_obs) below 1 − tail_high) is in the upper tail.
    pub tail_high: Option<f64>,
    /// Kept draws, evenly spaced over the pooled chains, that each generate one replicate.
    pub replicates: Option<i64>,
    /// Largest replicated data set; larger samples are compared on a random subsample of
    /// this size (the observed statistics too), and LOO-PIT uses at most this many rows.
    pub max_observations: Option<i64>,
    /// Kept draws, evenly spaced, used for LOO-PIT.
    pub loo_draws: Option<i64>,
}

/// `[check]` resolved.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct CheckSettings {
    pub tail_low: f64,
    pub tail_high: f64,
    pub replicates: usize,
    pub max_observations: usize,
    pub loo_draws: usize,
}

impl Default for CheckSettings {
    fn default() -> Self {
        CheckSettings {
            tail_low: 0.01,
            tail_high: 0.99,
            replicates: 500,
            max_observations: 2000,
            loo_draws: 1000,
        }
    }
}

impl CheckSettings {
    /// Checks `[check]` of a config (`text` and `origin` locate errors) and fills defaults.
    pub fn resolve(raw: Option<&CheckSection>, text: &str, origin: &str) -> Result<Self> {
        let d = CheckSettings::default();
        let Some(c) = raw else { return Ok(d) };
        let fail = |key: &str, what: String| {
            let line = key_line(text, "check", key)
                .map(|l| format!(" (line {l})"))
                .unwrap_or_default();
            Error::input(format!("{origin}: [check] {key} {what}{line}"))
        };
        let tail_low = c.tail_low.unwrap_or(d.tail_low);
        if !(tail_low > 0.0 && tail_low < 0.5) {
            return Err(fail(
                "tail_low",
                format!("must be above 0 and below 0.5, got {tail_low}"),
            ));
        }
        let tail_high = c.tail_high.unwrap_or(d.tail_high);
        if !(tail_high > 0.5 && tail_high < 1.0) {
            return Err(fail(
                "tail_high",
                format!("must be above 0.5 and below 1, got {tail_high}"),
            ));
        }
        let int = |key: &str, v: Option<i64>, lo: i64, hi: i64, def: usize| -> Result<usize> {
            match v {
                None => Ok(def),
                Some(x) if (lo..=hi).contains(&x) => Ok(x as usize),
                Some(x) => Err(fail(
                    key,
                    format!("must be an integer from {lo} to {hi}, got {x}"),
                )),
            }
        };
        Ok(CheckSettings {
            tail_low,
            tail_high,
            replicates: int("replicates", c.replicates, 20, 100_000, d.replicates)?,
            max_observations: int(
                "max_observations",
                c.max_observations,
                20,
                10_000_000,
                d.max_observations,
            )?,
            loo_draws: int("loo_draws", c.loo_draws, 20, 1_000_000, d.loo_draws)?,
        })
    }

    /// The section as written into the resolved config.
    pub fn to_section(&self) -> CheckSection {
        CheckSection {
            tail_low: Some(self.tail_low),
            tail_high: Some(self.tail_high),
            replicates: Some(self.replicates as i64),
            max_observations: Some(self.max_observations as i64),
            loo_draws: Some(self.loo_draws as i64),
        }
    }
}

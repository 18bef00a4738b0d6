//! Gate thresholds: the largest R-hat, the smallest ESS and the fewest chains a run may
//! have and still pass, from the config's `[gate]` section or the command line.

use serde::{Deserialize, Serialize};

use crate::config::RunConfig;
use crate::error::{Error, Result};

/// Limits a run must meet to pass the gate.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Thresholds {
    /// R-hat must be at most this (default 1.01, Vehtari et al. 2021).
    pub max_rhat: f64,
    /// Bulk and tail ESS must be at least this (default 400, Vehtari et al. 2021).
    pub min_ess: f64,
    /// At least this many chains (default 2): one chain only allows a within-chain check.
    pub min_chains: usize,
}

/// Command-line replacements for the configured thresholds.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct ThresholdOverrides {
    pub max_rhat: Option<f64>,
    pub min_ess: Option<f64>,
    pub min_chains: Option<usize>,
}

impl Thresholds {
    /// The thresholds of a resolved config.
    pub fn from_config(c: &RunConfig) -> Self {
        Thresholds {
            max_rhat: c.max_rhat,
            min_ess: c.min_ess,
            min_chains: c.min_chains,
        }
    }

    /// These thresholds with the overrides applied; checks the overrides as the config
    /// checks `[gate]` (R-hat limit finite and above 1, ESS positive, chains at least 1).
    pub fn with(self, o: &ThresholdOverrides) -> Result<Self> {
        if let Some(r) = o.max_rhat {
            if !(r.is_finite() && r > 1.0) {
                return Err(Error::input(format!(
                    "--max-rhat must be a finite number above 1, got {r}"
                )));
            }
        }
        if let Some(e) = o.min_ess {
            if !(e.is_finite() && e > 0.0) {
                return Err(Error::input(format!(
                    "--min-ess must be a positive finite number, got {e}"
                )));
            }
        }
        if o.min_chains == Some(0) {
            return Err(Error::input("--min-chains must be at least 1"));
        }
        Ok(Thresholds {
            max_rhat: o.max_rhat.unwrap_or(self.max_rhat),
            min_ess: o.min_ess.unwrap_or(self.min_ess),
            min_chains: o.min_chains.unwrap_or(self.min_chains),
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn overrides_are_checked_and_applied() {
        let t = Thresholds {
            max_rhat: 1.01,
            min_ess: 400.0,
            min_chains: 2,
        };
        let o = ThresholdOverrides {
            min_ess: Some(100.0),
            ..Default::default()
        };
        assert_eq!(t.with(&o).unwrap().min_ess, 100.0);
        assert_eq!(t.with(&o).unwrap().max_rhat, 1.01);
        for bad in [
            ThresholdOverrides {
                max_rhat: Some(1.0),
                ..Default::default()
            },
            ThresholdOverrides {
                max_rhat: Some(f64::NAN),
                ..Default::default()
            },
            ThresholdOverrides {
                min_ess: Some(0.0),
                ..Default::default()
            },
            ThresholdOverrides {
                min_chains: Some(0),
                ..Default::default()
            },
        ] {
            assert!(t.with(&bad).is_err(), "{bad:?}");
        }
    }
}

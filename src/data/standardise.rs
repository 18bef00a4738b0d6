//! Summary of the sample and the affine map to standard units, z = (x − centre) / scale,
//! in which the sampler works so that results do not depend on the data's units.
//!
//! Mean and spread are computed without overflow for any finite input: the mean by a
//! running update and the spread after dividing by the largest deviation. Samples whose
//! squares would leave double precision are refused with a message: a range above
//! [`MAX_RANGE`], a standard deviation below [`MIN_SD`], or a spread that is only rounding
//! error of the values' magnitude. Offsets such as 1e150 with a usable spread are fine.

use serde::Serialize;

use crate::error::{Error, Result};
use crate::numfmt::fmt_f64;

/// Largest accepted range of the sample: its square (used by the default priors) and the
/// squares of standardised deviations stay far from overflow.
pub const MAX_RANGE: f64 = 1e152;
/// Smallest accepted standard deviation: its square stays a normal double (no underflow).
pub const MIN_SD: f64 = 1e-152;
/// The sd must span at least this many units in the last place of the largest value, or
/// the observations are mostly rounding error.
const MIN_ULPS: f64 = 100.0;

/// Centre, spread and range of a sample.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct DataSummary {
    pub n: usize,
    pub mean: f64,
    /// Sample standard deviation (divisor n − 1).
    pub sd: f64,
    pub min: f64,
    pub max: f64,
}

/// The sample in standard units with the map back.
#[derive(Debug, Clone, PartialEq)]
pub struct Standardised {
    pub z: Vec<f64>,
    /// Integer frequency weight of each row of `z` (`[data] weights`); `None`: one each.
    pub counts: Option<Vec<u64>>,
    pub centre: f64,
    pub scale: f64,
    pub summary: DataSummary,
}

impl DataSummary {
    /// Summarises `x`; `origin` names the data in messages.
    pub fn of(x: &[f64], origin: &str) -> Result<Self> {
        Self::of_counts(x, None, origin)
    }

    /// Summarises `x` where row i stands for `counts[i]` equal observations (integer
    /// frequency weights; `None`: one each): the summary of the expanded sample, with n the
    /// total count. Rows with count 0 are ignored.
    pub fn of_counts(x: &[f64], counts: Option<&[u64]>, origin: &str) -> Result<Self> {
        let count = |i: usize| counts.map_or(1, |c| c[i]);
        let n = (0..x.len()).map(|i| count(i) as usize).sum::<usize>();
        if n < 2 {
            return Err(Error::input(format!(
                "{origin}: {n} observation(s); at least 2 are needed to estimate a density"
            )));
        }
        let mut mean = 0.0f64;
        let mut min = f64::INFINITY;
        let mut max = f64::NEG_INFINITY;
        let mut seen = 0u64;
        for (i, &v) in x.iter().enumerate() {
            let c = count(i);
            if c == 0 {
                continue;
            }
            seen += c;
            // Running mean: mean += c(v − mean)/seen, written to avoid overflow of v − mean
            // (for c = 1 exactly the unweighted update).
            let f = c as f64 / seen as f64;
            mean += if c == 1 {
                v / seen as f64 - mean / seen as f64
            } else {
                f * v - f * mean
            };
            min = min.min(v);
            max = max.max(v);
        }
        let mean = mean.clamp(min, max);
        if min == max {
            return Err(Error::input(format!(
                "{origin}: all {n} observations equal {}; a density cannot be estimated from a constant sample",
                fmt_f64(min)
            )));
        }
        let range = max - min;
        if !(range.is_finite() && range <= MAX_RANGE) {
            return Err(Error::input(format!(
                "{origin}: the observations span from {} to {}; ranges above {MAX_RANGE:e} are refused \
                 because squared deviations would overflow double precision; rescale the data",
                fmt_f64(min),
                fmt_f64(max)
            )));
        }
        let big = (max - mean).abs().max((mean - min).abs());
        let ss: f64 = match counts {
            None => x.iter().map(|&v| ((v - mean) / big).powi(2)).sum(),
            Some(c) => x
                .iter()
                .zip(c)
                .map(|(&v, &ci)| ci as f64 * ((v - mean) / big).powi(2))
                .sum(),
        };
        let sd = big * (ss / (n - 1) as f64).sqrt();
        if !(sd.is_finite() && sd >= MIN_SD) {
            return Err(Error::input(format!(
                "{origin}: the standard deviation of the observations is {sd:e}; spreads below {MIN_SD:e} \
                 are refused because squared deviations would underflow double precision; rescale the data"
            )));
        }
        let magnitude = min.abs().max(max.abs());
        if sd < MIN_ULPS * f64::EPSILON * magnitude {
            return Err(Error::input(format!(
                "{origin}: the observations (around {}) differ only in their last few digits \
                 (sd {sd:e}), too little for double precision; subtract a common offset from the data first",
                fmt_f64(magnitude)
            )));
        }
        Ok(DataSummary {
            n,
            mean,
            sd,
            min,
            max,
        })
    }
}

impl Standardised {
    /// Standardises `x` by its mean and sd.
    pub fn new(x: &[f64], origin: &str) -> Result<Self> {
        Self::with_counts(x, None, origin)
    }

    /// Standardises rows `x` with integer frequency weights `counts` (one per row, none
    /// zero; `None`: one each) by the expanded sample's mean and sd.
    pub fn with_counts(x: &[f64], counts: Option<Vec<u64>>, origin: &str) -> Result<Self> {
        if let Some(c) = &counts {
            assert_eq!(c.len(), x.len(), "one count per row");
        }
        let summary = DataSummary::of_counts(x, counts.as_deref(), origin)?;
        let (centre, scale) = (summary.mean, summary.sd);
        let z: Vec<f64> = x.iter().map(|&v| (v - centre) / scale).collect();
        if z.iter().any(|v| !v.is_finite()) {
            return Err(Error::input(format!(
                "{origin}: the data cannot be standardised in double precision"
            )));
        }
        Ok(Standardised {
            z,
            counts,
            centre,
            scale,
            summary,
        })
    }

    /// Map a location from standard units back to data units.
    pub fn to_data(&self, z: f64) -> f64 {
        self.centre + self.scale * z
    }

    /// Map a location from data units to standard units.
    pub fn to_std(&self, x: f64) -> f64 {
        (x - self.centre) / self.scale
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn matches_textbook_mean_and_sd() {
        // Mean 5, sample sd sqrt(32/7) for this classic example (common practice, no source).
        let x = [2.0, 4.0, 4.0, 4.0, 5.0, 5.0, 7.0, 9.0];
        let s = DataSummary::of(&x, "t").unwrap();
        assert!((s.mean - 5.0).abs() < 1e-12);
        assert!((s.sd - (32.0f64 / 7.0).sqrt()).abs() < 1e-12);
    }

    #[test]
    fn survives_huge_offsets_and_tiny_spreads() {
        let x: Vec<f64> = (0..100).map(|i| 1e150 + (i as f64) * 1e136).collect();
        let s = Standardised::new(&x, "t").unwrap();
        assert!(s.z.iter().all(|v| v.is_finite() && v.abs() < 3.0));
        let x: Vec<f64> = (0..100).map(|i| (i as f64) * 1e-150).collect();
        let s = Standardised::new(&x, "t").unwrap();
        assert!((s.summary.sd / 1e-150 - 29.011_491_975_882_016).abs() < 1e-9);
        let x = [f64::MAX, -f64::MAX];
        assert!(DataSummary::of(&x, "t").is_err());
        assert!(DataSummary::of(&[3.0, 3.0, 3.0], "t").is_err());
        assert!(DataSummary::of(&[3.0], "t").is_err());
    }

    #[test]
    fn refuses_spreads_that_leave_double_precision() {
        // Range 1e160: its square overflows.
        let e = DataSummary::of(&[0.0, 1e160, 5e159], "t")
            .unwrap_err()
            .to_string();
        assert!(e.contains("span from 0 to 1e160"), "{e}");
        // sd ~ 1e-160: its square underflows.
        let e = DataSummary::of(&[0.0, 1e-160, 2e-160], "t")
            .unwrap_err()
            .to_string();
        assert!(e.contains("standard deviation"), "{e}");
        // Values that differ in the last bit only.
        let e = DataSummary::of(&[1.0, 1.0 + f64::EPSILON, 1.0], "t")
            .unwrap_err()
            .to_string();
        assert!(e.contains("last few digits"), "{e}");
        // 1e150 offset with a spread of 1e140 is accepted and standardises to O(1).
        let x: Vec<f64> = (0..50).map(|i| 1e150 + (i as f64) * 1e140).collect();
        let s = Standardised::new(&x, "t").unwrap();
        assert!(s.z.iter().all(|v| v.abs() < 2.0));
    }
}

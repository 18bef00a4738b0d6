//! Summary of the sample and the affine map to standard units, z = (x − centre) / scale,
//! in which the sampler works so that results do not depend on the data's units.
//!
//! Mean and spread are computed without overflow for any finite input: the mean by a
//! running update and the spread after dividing by the largest deviation, so offsets near
//! 1e300 or spreads near 1e-300 are handled; a spread that is zero in floating point is
//! refused.

use serde::Serialize;

use crate::error::{Error, Result};

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
    pub centre: f64,
    pub scale: f64,
    pub summary: DataSummary,
}

impl DataSummary {
    /// Summarises `x`; `origin` names the data in messages.
    pub fn of(x: &[f64], origin: &str) -> Result<Self> {
        let n = x.len();
        if n < 2 {
            return Err(Error::input(format!(
                "{origin}: {n} observation(s); at least 2 are needed to estimate a density"
            )));
        }
        let mut mean = 0.0f64;
        let mut min = f64::INFINITY;
        let mut max = f64::NEG_INFINITY;
        for (i, &v) in x.iter().enumerate() {
            // Running mean: mean += (v − mean)/(i+1), written to avoid overflow of v − mean.
            mean += v / (i + 1) as f64 - mean / (i + 1) as f64;
            min = min.min(v);
            max = max.max(v);
        }
        let mean = mean.clamp(min, max);
        if min == max {
            return Err(Error::input(format!(
                "{origin}: all {n} observations equal {min}; a density cannot be estimated from a constant sample"
            )));
        }
        let big = (max - mean).abs().max((mean - min).abs());
        if !big.is_finite() {
            return Err(Error::input(format!(
                "{origin}: the observations span from {min} to {max}, a range too wide for double precision"
            )));
        }
        let ss: f64 = x.iter().map(|&v| ((v - mean) / big).powi(2)).sum();
        let sd = big * (ss / (n - 1) as f64).sqrt();
        if !(sd.is_finite() && sd > 0.0) || (max - min) / sd.max(f64::MIN_POSITIVE) > 1e12 {
            return Err(Error::input(format!(
                "{origin}: the spread of the observations (sd {sd}) cannot be represented reliably"
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
        let summary = DataSummary::of(x, origin)?;
        let (centre, scale) = (summary.mean, summary.sd);
        let z: Vec<f64> = x.iter().map(|&v| (v - centre) / scale).collect();
        if z.iter().any(|v| !v.is_finite()) {
            return Err(Error::input(format!(
                "{origin}: the data cannot be standardised in double precision"
            )));
        }
        Ok(Standardised {
            z,
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
}

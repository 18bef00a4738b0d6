//! Fitting on a transformed scale: `[data] transform = "log"` fits the mixture to ln x for
//! positive data and reports the density on the original scale with the Jacobian,
//! f_X(x) = f_Y(ln x) / x for x > 0 and 0 otherwise (change of variables; common
//! practice, no source). Stored draws stay on the fitted (log) scale; every summary maps
//! through [`Transform`].

use serde::{Deserialize, Serialize};

use crate::error::{Error, Result};

/// The map from the data to the scale the mixture is fitted on.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Transform {
    /// Fit the data as they are.
    #[default]
    None,
    /// Fit ln x; the data must be positive.
    Log,
}

/// Non-positive values listed in an error message before "and N more".
const LIST_AT_MOST: usize = 10;

impl Transform {
    /// y = t(x) on the support; callers check [`Transform::in_support`] first.
    pub fn forward(self, x: f64) -> f64 {
        match self {
            Transform::None => x,
            Transform::Log => x.ln(),
        }
    }

    /// x = t⁻¹(y).
    pub fn inverse(self, y: f64) -> f64 {
        match self {
            Transform::None => y,
            Transform::Log => y.exp(),
        }
    }

    /// Whether x is inside the support of the original-scale distribution.
    pub fn in_support(self, x: f64) -> bool {
        match self {
            Transform::None => true,
            Transform::Log => x > 0.0,
        }
    }

    /// ln |dt/dx| at x (on the support): 0, or −ln x for the log.
    pub fn log_jacobian(self, x: f64) -> f64 {
        match self {
            Transform::None => 0.0,
            Transform::Log => -x.ln(),
        }
    }

    /// Transforms the sample; `origins` gives (file line, data row) per value for messages.
    /// Every non-positive value under the log is reported (up to ten, then a count).
    pub fn apply(
        self,
        values: &[f64],
        origins: &[(u64, usize)],
        origin: &str,
        column: &str,
    ) -> Result<Vec<f64>> {
        if self == Transform::None {
            return Ok(values.to_vec());
        }
        let bad: Vec<String> = values
            .iter()
            .zip(origins)
            .filter(|(&v, _)| !self.in_support(v))
            .map(|(v, (line, row))| format!("line {line} (data row {row}) holds {v}"))
            .collect();
        if !bad.is_empty() {
            let more = if bad.len() > LIST_AT_MOST {
                format!(", and {} more", bad.len() - LIST_AT_MOST)
            } else {
                String::new()
            };
            return Err(Error::input(format!(
                "{origin}: [data] transform = \"log\" needs positive values, but column \"{column}\" has {} \
                 non-positive: {}{more}",
                bad.len(),
                bad[..bad.len().min(LIST_AT_MOST)].join("; ")
            )));
        }
        Ok(values.iter().map(|&v| self.forward(v)).collect())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn log_rejects_non_positive_values_with_their_rows() {
        let v = [1.0, 0.0, 2.0, -3.0];
        let o = [(2, 1), (3, 2), (5, 3), (6, 4)];
        let e = Transform::Log
            .apply(&v, &o, "d.csv", "x")
            .unwrap_err()
            .to_string();
        assert!(e.contains("d.csv") && e.contains("2 non-positive"), "{e}");
        assert!(
            e.contains("line 3 (data row 2) holds 0") && e.contains("line 6 (data row 4) holds -3"),
            "{e}"
        );
        assert!(!e.contains("row 1)"), "{e}");
        let y = Transform::Log
            .apply(&[1.0, std::f64::consts::E], &o[..2], "d", "x")
            .unwrap();
        assert!((y[0]).abs() < 1e-15 && (y[1] - 1.0).abs() < 1e-15);
        assert_eq!(Transform::None.apply(&v, &o, "d", "x").unwrap(), v.to_vec());
    }

    #[test]
    fn long_lists_are_cut() {
        let v = vec![-1.0; 25];
        let o: Vec<(u64, usize)> = (1..=25).map(|r| (r as u64 + 1, r)).collect();
        let e = Transform::Log
            .apply(&v, &o, "d", "x")
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("25 non-positive") && e.contains("and 15 more"),
            "{e}"
        );
    }
}

//! Fitting on a transformed scale. `[data] transform = "log"` fits the mixture to y = ln x
//! for positive data; `transform = "logit"` with `[data] lower = l` and `upper = u` fits
//! y = ln((x − l)/(u − x)) for data strictly between the bounds. The density of x is the
//! fitted density at y(x) times the Jacobian |dy/dx| (change of variables; common practice,
//! no source): f_X(x) = f_Y(ln x) / x for x > 0, and
//! f_X(x) = f_Y(y(x)) (u − l) / ((x − l)(u − x)) for l < x < u; it is 0 outside the
//! support. Stored draws stay on the fitted scale; every summary maps through
//! [`Transform`].

use serde::{Deserialize, Serialize};

use crate::error::{Error, Result};

/// The name of the transform as written in a config (`[data] transform`).
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum TransformKind {
    #[default]
    None,
    Log,
    Logit,
}

/// The map from the data to the scale the mixture is fitted on.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub enum Transform {
    /// Fit the data as they are.
    #[default]
    None,
    /// Fit ln x; the data must be positive.
    Log,
    /// Fit ln((x − l)/(u − x)); the data must lie strictly between the bounds (build with
    /// [`Transform::logit`]).
    Logit(Bounds),
}

/// The bounds of a logit transform: finite, lower < upper.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Bounds {
    lower: f64,
    upper: f64,
}

impl Bounds {
    pub fn lower(&self) -> f64 {
        self.lower
    }

    pub fn upper(&self) -> f64 {
        self.upper
    }

    fn width(&self) -> f64 {
        self.upper - self.lower
    }
}

/// Values outside the support listed in an error message before "and N more".
const LIST_AT_MOST: usize = 10;

/// ln(1 + e^a) without overflow or loss of digits.
fn softplus(a: f64) -> f64 {
    a.max(0.0) + (-a.abs()).exp().ln_1p()
}

/// The logistic function 1/(1 + e^−y), computed from the side where it does not round.
fn logistic(y: f64) -> f64 {
    if y >= 0.0 {
        1.0 / (1.0 + (-y).exp())
    } else {
        let e = y.exp();
        e / (1.0 + e)
    }
}

impl Transform {
    /// The logit transform on (lower, upper); both finite and lower < upper.
    pub fn logit(lower: f64, upper: f64) -> Result<Transform> {
        if !(lower.is_finite() && upper.is_finite() && lower < upper) {
            return Err(Error::input(format!(
                "the logit transform needs finite bounds with lower < upper, got lower = {lower}, \
                 upper = {upper}"
            )));
        }
        Ok(Transform::Logit(Bounds { lower, upper }))
    }

    /// The name written in a config.
    pub fn kind(self) -> TransformKind {
        match self {
            Transform::None => TransformKind::None,
            Transform::Log => TransformKind::Log,
            Transform::Logit(_) => TransformKind::Logit,
        }
    }

    /// The bounds of a logit transform.
    pub fn bounds(self) -> Option<Bounds> {
        match self {
            Transform::Logit(b) => Some(b),
            _ => None,
        }
    }

    /// y = t(x) on the support; callers check [`Transform::in_support`] first.
    pub fn forward(self, x: f64) -> f64 {
        match self {
            Transform::None => x,
            Transform::Log => x.ln(),
            Transform::Logit(b) => (x - b.lower).ln() - (b.upper - x).ln(),
        }
    }

    /// x = t⁻¹(y). Under the logit, y far out in a tail (|y| above about 37) gives a bound
    /// itself: the distance to the bound is below the spacing of doubles there.
    pub fn inverse(self, y: f64) -> f64 {
        match self {
            Transform::None => y,
            Transform::Log => y.exp(),
            Transform::Logit(b) => {
                // From the nearer bound, so values close to either keep their digits.
                if y <= 0.0 {
                    b.lower + b.width() * logistic(y)
                } else {
                    b.upper - b.width() * logistic(-y)
                }
            }
        }
    }

    /// Whether x is inside the support of the original-scale distribution.
    pub fn in_support(self, x: f64) -> bool {
        match self {
            Transform::None => true,
            Transform::Log => x > 0.0,
            Transform::Logit(b) => b.lower < x && x < b.upper,
        }
    }

    /// The CDF of the original-scale variable at an `x` outside the support: 0 below it,
    /// 1 above it; `None` inside the support.
    pub fn cdf_outside(self, x: f64) -> Option<f64> {
        match self {
            Transform::None => None,
            Transform::Log => (x <= 0.0).then_some(0.0),
            Transform::Logit(b) => {
                if x <= b.lower {
                    Some(0.0)
                } else if x >= b.upper {
                    Some(1.0)
                } else {
                    None
                }
            }
        }
    }

    /// ln |dt/dx| at x (on the support): 0; −ln x for the log;
    /// ln(u − l) − ln(x − l) − ln(u − x) for the logit.
    pub fn log_jacobian(self, x: f64) -> f64 {
        match self {
            Transform::None => 0.0,
            Transform::Log => -x.ln(),
            Transform::Logit(b) => b.width().ln() - (x - b.lower).ln() - (b.upper - x).ln(),
        }
    }

    /// ln |dt/dx| at x = t⁻¹(y), from y (so values of y far out keep their digits): −y for
    /// the log; for the logit, x − l = (u − l) σ(y) and u − x = (u − l) σ(−y), so it is
    /// −ln(u − l) + ln(1 + e^y) + ln(1 + e^−y).
    pub fn log_jacobian_fitted(self, y: f64) -> f64 {
        match self {
            Transform::None => 0.0,
            Transform::Log => -y,
            Transform::Logit(b) => -b.width().ln() + softplus(y) + softplus(-y),
        }
    }

    /// Checks a grid [from, to] on the original scale: under the logit both ends must lie
    /// strictly inside (lower, upper), where the density is finite. Returns the message
    /// for the offending end ("from" or "to").
    pub fn check_grid(self, from: f64, to: f64) -> std::result::Result<(), (&'static str, String)> {
        let Transform::Logit(b) = self else {
            return Ok(());
        };
        let why = |end: &str, v: f64| {
            format!(
                "must lie strictly inside the bounds of transform = \"logit\" ({}, {}), got {end} = {v}: \
                 the density is 0 outside and 0 or infinite at a bound",
                b.lower, b.upper
            )
        };
        if !(from > b.lower && from < b.upper) {
            return Err(("from", why("from", from)));
        }
        if !(to > b.lower && to < b.upper) {
            return Err(("to", why("to", to)));
        }
        Ok(())
    }

    /// The default grid ends on the original scale from the padded data range
    /// [from, to] with `points` points: under the logit the range is cut to the bounds, and
    /// an end cut at a bound is moved inside by half the grid step h, so the grid's points
    /// are h apart and none is nearer a bound than h/2 (with both ends cut the grid is the
    /// midpoints of `points` equal cells of (lower, upper)). Under the log the lower end
    /// is cut at 0.
    pub fn default_grid(self, from: f64, to: f64, points: usize) -> (f64, f64) {
        match self {
            Transform::None => (from, to),
            Transform::Log => (from.max(0.0), to),
            Transform::Logit(b) => {
                let (cut_lo, cut_hi) = (from <= b.lower, to >= b.upper);
                let a = if cut_lo { b.lower } else { from };
                let c = if cut_hi { b.upper } else { to };
                let steps = (points - 1) as f64
                    + if cut_lo { 0.5 } else { 0.0 }
                    + if cut_hi { 0.5 } else { 0.0 };
                let h = (c - a) / steps;
                (
                    if cut_lo { a + 0.5 * h } else { a },
                    if cut_hi { c - 0.5 * h } else { c },
                )
            }
        }
    }

    /// The value on the fitted scale standing for a recorded `x` (standardisation, the
    /// check's observed sample): t(x) inside the support; for a value on a bound recorded
    /// at `resolution` (accepted by [`Transform::apply_recorded`] only then), t of the
    /// midpoint of its cell cut to the bounds.
    pub fn fitted_value(self, x: f64, resolution: Option<f64>) -> f64 {
        if self.in_support(x) {
            return self.forward(x);
        }
        match (self, resolution) {
            (Transform::Logit(b), Some(r)) => {
                let lo = (x - 0.5 * r).max(b.lower);
                let hi = (x + 0.5 * r).min(b.upper);
                self.forward(0.5 * (lo + hi))
            }
            _ => self.forward(x),
        }
    }

    /// Transforms the sample; `origins` gives (file line, data row) per value for messages.
    /// Every value outside the support is reported (up to ten, then a count).
    pub fn apply(
        self,
        values: &[f64],
        origins: &[(u64, usize)],
        origin: &str,
        column: &str,
    ) -> Result<Vec<f64>> {
        self.apply_recorded(values, origins, origin, column, None)
    }

    /// [`Transform::apply`] for values recorded at `resolution`: under the logit a value on
    /// a bound is then accepted (its cell is censored at the bound) and stands for the
    /// midpoint of its cell cut to the bounds ([`Transform::fitted_value`]); values beyond a
    /// bound are refused either way.
    pub fn apply_recorded(
        self,
        values: &[f64],
        origins: &[(u64, usize)],
        origin: &str,
        column: &str,
        resolution: Option<f64>,
    ) -> Result<Vec<f64>> {
        if self == Transform::None {
            return Ok(values.to_vec());
        }
        let mut check = SupportCheck::new(self, resolution);
        for (&v, &(line, row)) in values.iter().zip(origins) {
            check.push(v, line, row);
        }
        check.finish(origin, column)?;
        Ok(values
            .iter()
            .map(|&v| self.fitted_value(v, resolution))
            .collect())
    }
}

/// The check of [`Transform::apply_recorded`] made one row at a time, for rows that are
/// not kept: it holds the first [`LIST_AT_MOST`] offending rows (all its message names)
/// and a count of the rest.
#[derive(Debug, Clone, PartialEq)]
pub struct SupportCheck {
    transform: Transform,
    on_bound_ok: bool,
    listed: Vec<String>,
    bad: usize,
}

impl SupportCheck {
    /// For values recorded at `resolution` (None: exact) fitted under `transform`.
    pub fn new(transform: Transform, resolution: Option<f64>) -> SupportCheck {
        SupportCheck {
            transform,
            on_bound_ok: resolution.is_some() && matches!(transform, Transform::Logit(_)),
            listed: Vec::new(),
            bad: 0,
        }
    }

    fn accepted(&self, v: f64) -> bool {
        match self.transform {
            Transform::Logit(b) if self.on_bound_ok => b.lower <= v && v <= b.upper,
            t => t.in_support(v),
        }
    }

    /// Notes the value `v` of file line `line`, data row `row`.
    pub fn push(&mut self, v: f64, line: u64, row: usize) {
        if self.accepted(v) {
            return;
        }
        self.bad += 1;
        if self.listed.len() < LIST_AT_MOST {
            self.listed
                .push(format!("line {line} (data row {row}) holds {v}"));
        }
    }

    /// The error naming the offending rows of column `column` of `origin`, if any.
    pub fn finish(self, origin: &str, column: &str) -> Result<()> {
        if self.bad == 0 {
            return Ok(());
        }
        let more = if self.bad > LIST_AT_MOST {
            format!(", and {} more", self.bad - LIST_AT_MOST)
        } else {
            String::new()
        };
        let (needs, what) = match self.transform {
            Transform::Logit(b) if self.on_bound_ok => (
                format!(
                    "[data] transform = \"logit\" needs values from [data] lower = {} to upper = {}",
                    b.lower, b.upper
                ),
                "beyond a bound",
            ),
            Transform::Logit(b) => (
                format!(
                    "[data] transform = \"logit\" needs values strictly between [data] lower = {} and \
                     upper = {} (values on a bound are accepted only with [data] resolution set)",
                    b.lower, b.upper
                ),
                "on or beyond a bound",
            ),
            _ => (
                "[data] transform = \"log\" needs positive values".to_string(),
                "non-positive",
            ),
        };
        Err(Error::input(format!(
            "{origin}: {needs}, but column \"{column}\" has {} {what}: {}{more}",
            self.bad,
            self.listed.join("; ")
        )))
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

    #[test]
    fn logit_bounds_are_validated() {
        assert!(Transform::logit(0.0, 1.0).is_ok());
        for (l, u) in [
            (1.0, 1.0),
            (2.0, 1.0),
            (f64::NAN, 1.0),
            (0.0, f64::INFINITY),
        ] {
            assert!(Transform::logit(l, u).is_err(), "{l} {u}");
        }
    }

    #[test]
    fn logit_rejects_values_on_or_beyond_a_bound_with_their_rows() {
        let t = Transform::logit(2.0, 7.0).unwrap();
        let v = [3.0, 2.0, 7.0, 7.5, 1.0, 6.9];
        let o: Vec<(u64, usize)> = (1..=6).map(|r| (r as u64 + 1, r)).collect();
        let e = t.apply(&v, &o, "d.csv", "x").unwrap_err().to_string();
        assert!(
            e.contains("d.csv") && e.contains("4 on or beyond a bound") && e.contains("resolution"),
            "{e}"
        );
        for want in [
            "line 3 (data row 2) holds 2",
            "line 4 (data row 3) holds 7",
            "line 5 (data row 4) holds 7.5",
            "line 6 (data row 5) holds 1",
        ] {
            assert!(e.contains(want), "{want}: {e}");
        }
        // With a resolution the values on a bound are accepted, those beyond still are not.
        let e = t
            .apply_recorded(&v, &o, "d.csv", "x", Some(0.2))
            .unwrap_err()
            .to_string();
        assert!(e.contains("2 beyond a bound"), "{e}");
        assert!(e.contains("holds 7.5") && e.contains("holds 1") && !e.contains("holds 7;"));
        let y = t
            .apply_recorded(&[2.0, 4.5, 7.0], &o[..3], "d", "x", Some(0.2))
            .unwrap();
        // On a bound: the midpoint of the cell cut to the bounds, [2, 2.1) and [6.9, 7).
        assert!((y[0] - t.forward(2.05)).abs() < 1e-12);
        assert!(y[1].abs() < 1e-12, "the centre of (2, 7) maps to 0");
        assert!((y[2] - t.forward(6.95)).abs() < 1e-12);
    }

    #[test]
    fn logit_round_trips_and_its_jacobian_matches_the_derivative() {
        // Round trip x → y → x to a few ulps of the bounds' scale, including next to a
        // bound; the Jacobian against a central difference of forward (exact calculus).
        let t = Transform::logit(-3.0, 5.0).unwrap();
        for x in [-2.999_999, -2.5, -1.0, 0.0, 1.0, 4.2, 4.999_999] {
            let back = t.inverse(t.forward(x));
            assert!((back - x).abs() < 1e-13 * 8.0, "{x} → {back}");
            // The difference step is kept well above the rounding of x itself.
            let h = 1e-4 * (x + 3.0).min(5.0 - x);
            let d = (t.forward(x + h) - t.forward(x - h)) / (2.0 * h);
            let j = t.log_jacobian(x).exp();
            assert!((j / d - 1.0).abs() < 1e-6, "{x}: {j} vs {d}");
            let jf = t.log_jacobian_fitted(t.forward(x));
            assert!((jf - t.log_jacobian(x)).abs() < 1e-9, "{x}");
        }
        assert_eq!(t.inverse(0.0), 1.0);
        assert_eq!(t.inverse(-800.0), -3.0);
        assert_eq!(t.inverse(800.0), 5.0);
        assert!(t.log_jacobian_fitted(800.0).is_finite());
        assert!(!t.in_support(-3.0) && !t.in_support(5.0) && t.in_support(-2.9));
        assert_eq!(t.cdf_outside(-3.0), Some(0.0));
        assert_eq!(t.cdf_outside(6.0), Some(1.0));
        assert_eq!(t.cdf_outside(0.0), None);
    }

    #[test]
    fn default_logit_grid_keeps_half_a_step_from_a_cut_bound() {
        let t = Transform::logit(0.0, 1.0).unwrap();
        // Both ends cut: the midpoints of 4 cells of (0, 1).
        let (a, b) = t.default_grid(-0.1, 1.1, 4);
        assert!(
            (a - 0.125).abs() < 1e-15 && (b - 0.875).abs() < 1e-15,
            "{a} {b}"
        );
        // One end cut: points h apart with h/2 left to the bound.
        let (a, b) = t.default_grid(0.3, 1.2, 3);
        let h = (1.0 - 0.3) / 2.5;
        assert!(a == 0.3 && (b - (1.0 - 0.5 * h)).abs() < 1e-15);
        assert_eq!(t.default_grid(0.2, 0.8, 10), (0.2, 0.8));
        assert!(t.check_grid(0.1, 0.9).is_ok());
        assert_eq!(t.check_grid(0.0, 0.9).unwrap_err().0, "from");
        assert_eq!(t.check_grid(0.1, 1.5).unwrap_err().0, "to");
        assert!(Transform::Log.check_grid(-1.0, 2.0).is_ok());
    }
}

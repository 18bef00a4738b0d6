//! Data recorded at a resolution r (`[data] resolution`): each recorded value x stands for
//! the cell [x − r/2, x + r/2) of the exact quantity. This module turns the rows (with
//! their frequency weights, if any) into the distinct cells with their counts, on the scale
//! the mixture is fitted on and in standard units, sorted by value.
//!
//! Rows given one by one and the same rows given as (value, count) become the same cells,
//! so the sampler's draws cannot tell them apart. A cell edge outside the transform's
//! support (the lower edge of a small positive value under the log, an edge reaching a
//! bound under the logit) is censored at the bound: it becomes −∞ (or +∞) on the fitted
//! scale.

use super::transform::Transform;

/// The distinct values of `values`, sorted, with their total counts (`counts[i]` for row
/// i, or 1 each; rows with count 0 left out; values equal under `==`, such as −0 and 0,
/// are one value).
pub fn distinct_counted(values: &[f64], counts: Option<&[u64]>) -> (Vec<f64>, Vec<u64>) {
    let mut rows: Vec<(f64, u64)> = values
        .iter()
        .enumerate()
        .map(|(i, &v)| (v, counts.map_or(1, |c| c[i])))
        .filter(|&(_, c)| c > 0)
        .collect();
    rows.sort_by(|a, b| a.0.total_cmp(&b.0));
    let mut out: (Vec<f64>, Vec<u64>) = (Vec::new(), Vec::new());
    for (v, c) in rows {
        if out.0.last() == Some(&v) {
            *out.1.last_mut().expect("a value was pushed") += c;
        } else {
            out.0.push(v);
            out.1.push(c);
        }
    }
    out
}

/// Distinct cells, sorted by their recorded value; bounds in standard units.
#[derive(Debug, Clone, PartialEq)]
pub struct Cells {
    /// Lower edge of each cell (may be −∞).
    pub lo: Vec<f64>,
    /// Upper edge of each cell (may be +∞).
    pub hi: Vec<f64>,
    /// How many observations each cell holds (at least 1).
    pub count: Vec<u64>,
}

impl Cells {
    /// Cells of width `resolution` (data units) around `values` (data units), each row
    /// counting `counts[i]` times (`None`: once; rows with count 0 are left out), mapped
    /// through `transform` and then to standard units by `(t − centre) / scale`.
    pub fn from_rows(
        values: &[f64],
        counts: Option<&[u64]>,
        resolution: f64,
        transform: Transform,
        centre: f64,
        scale: f64,
    ) -> Cells {
        let (distinct, counts) = distinct_counted(values, counts);
        let half = 0.5 * resolution;
        let edge = |x: f64, outside: f64| {
            if transform.in_support(x) {
                (transform.forward(x) - centre) / scale
            } else {
                outside
            }
        };
        let mut cells = Cells {
            lo: Vec::new(),
            hi: Vec::new(),
            count: Vec::new(),
        };
        for (v, c) in distinct.into_iter().zip(counts) {
            cells.lo.push(edge(v - half, f64::NEG_INFINITY));
            cells.hi.push(edge(v + half, f64::INFINITY));
            cells.count.push(c);
        }
        cells
    }

    /// Number of distinct cells.
    pub fn len(&self) -> usize {
        self.count.len()
    }

    pub fn is_empty(&self) -> bool {
        self.count.is_empty()
    }

    /// Number of observations.
    pub fn total(&self) -> u64 {
        self.count.iter().sum()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rows_and_tabulated_counts_give_the_same_cells() {
        let rows = [1.2, 1.0, 1.2, 1.1, 1.2, 1.0];
        let a = Cells::from_rows(&rows, None, 0.1, Transform::None, 1.0, 2.0);
        let b = Cells::from_rows(
            &[1.1, 1.2, 1.0, 9.9],
            Some(&[1, 3, 2, 0]),
            0.1,
            Transform::None,
            1.0,
            2.0,
        );
        assert_eq!(a, b);
        assert_eq!(a.count, vec![2, 1, 3]);
        assert_eq!(a.total(), 6);
        // [1.15, 1.25) in standard units (x − 1) / 2.
        assert!((a.lo[2] - 0.075).abs() < 1e-12 && (a.hi[2] - 0.125).abs() < 1e-12);
    }

    #[test]
    fn an_edge_outside_the_support_is_censored_at_the_bound() {
        // 0.04 recorded to 0.1 under the log: the cell [−0.01, 0.09) holds every exact
        // value in (0, 0.09), so its lower edge is −∞ on the log scale.
        let c = Cells::from_rows(&[0.04, 2.0], None, 0.1, Transform::Log, 0.0, 1.0);
        assert_eq!(c.lo[0], f64::NEG_INFINITY);
        assert!((c.hi[0] - 0.09f64.ln()).abs() < 1e-12);
        assert!((c.lo[1] - 1.95f64.ln()).abs() < 1e-12);
    }

    #[test]
    fn logit_cells_reaching_a_bound_are_censored_there() {
        // On (0, 1) to 0.1: 0 stands for [−0.05, 0.05) ∩ (0, 1) = (0, 0.05), so its cell is
        // (−∞, logit 0.05); 1 stands for (0.95, 1), so (logit 0.95, +∞); 0.5 is inside.
        let t = Transform::logit(0.0, 1.0).unwrap();
        let c = Cells::from_rows(&[0.0, 0.5, 1.0, 0.5], None, 0.1, t, 0.0, 1.0);
        let logit = |p: f64| (p / (1.0 - p)).ln();
        assert_eq!(c.count, vec![1, 2, 1]);
        assert_eq!(c.lo[0], f64::NEG_INFINITY);
        assert!((c.hi[0] - logit(0.05)).abs() < 1e-12);
        assert!((c.lo[1] - logit(0.45)).abs() < 1e-12 && (c.hi[1] - logit(0.55)).abs() < 1e-12);
        assert!((c.lo[2] - logit(0.95)).abs() < 1e-12);
        assert_eq!(c.hi[2], f64::INFINITY);
    }
}

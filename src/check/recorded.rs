//! The model check for data recorded at a resolution (`[data] resolution`): the data are
//! cells, so the check compares cells with cells.
//! - Replicated data sets are recorded as the data were: each replicated exact value is
//!   replaced by the recorded value of its cell ([`Lattice::record`]), so statistics such as
//!   quantiles and the largest gap see the same rounding in the data and the replicates.
//! - LOO-PIT uses each cell's probability for the importance weights and the randomised
//!   PIT of a discrete observation, u = F(lo) + V (F(hi) − F(lo)) with V uniform on (0, 1)
//!   and F the leave-one-out predictive CDF (Brockwell 2007, "Universal residuals: a
//!   multivariate transformation", Stat. Probab. Lett. 77; Czado, Gneiting & Held 2009,
//!   Biometrics 65, §2 — cited from memory): uniform when the model is right, where the
//!   PIT of the recorded value itself is not (ties pile up at the cell edges).

use std::collections::BTreeMap;

use rand::Rng;

use super::loo_pit::loo_pit;
use super::replicate::distinct_indices;
use super::{parallel_map, LOO_ROWS_STREAM};
use crate::compare::LogLik;
use crate::data::Cells;
use crate::dist::{ln_std_normal_interval, log_sum_exp};
use crate::sampler::rng::check_rng;
use crate::store::DrawRow;
use crate::summary::mixture_cdf;

/// The lattice the data were recorded on: value = offset + m · step for whole m, each
/// standing for [value − step/2, value + step/2).
#[derive(Debug, Clone, PartialEq)]
pub struct Lattice {
    step: f64,
    offset: f64,
    /// The recorded values of the data by lattice index, so that a replicate recorded in
    /// one of the data's cells carries the data's value to the last bit.
    known: BTreeMap<i64, f64>,
}

impl Lattice {
    /// The lattice of step `step` through the recorded values `values` (original scale).
    pub fn new(step: f64, values: &[f64]) -> Lattice {
        let first = values.first().copied().unwrap_or(0.0);
        let offset = first - step * (first / step).round();
        let mut l = Lattice {
            step,
            offset,
            known: BTreeMap::new(),
        };
        for &v in values {
            l.known.insert(l.index(v), v);
        }
        l
    }

    /// The index m of the cell [offset + (m − ½) step, offset + (m + ½) step) holding y.
    fn index(&self, y: f64) -> i64 {
        ((y - self.offset) / self.step + 0.5).floor() as i64
    }

    /// The recorded value of the cell holding the exact value `y`.
    pub fn record(&self, y: f64) -> f64 {
        if !y.is_finite() {
            return y;
        }
        let m = self.index(y);
        self.known
            .get(&m)
            .copied()
            .unwrap_or(self.offset + m as f64 * self.step)
    }
}

/// ln Σ_k w_k [Φ((hi − μ_k)/σ_k) − Φ((lo − μ_k)/σ_k)] under one draw, with `lw` its ln w_k
/// and `terms` scratch of the same length (fitted scale, data units).
pub fn ln_cell_probability(row: &DrawRow, lw: &[f64], lo: f64, hi: f64, terms: &mut [f64]) -> f64 {
    for (k, t) in terms.iter_mut().enumerate() {
        let (m, sd) = (row.mean[k], row.sd[k]);
        *t = lw[k] + ln_std_normal_interval((lo - m) / sd, (hi - m) / sd);
    }
    log_sum_exp(terms)
}

/// The log cell probability and the predictive CDF at both cell edges (fitted scale, data
/// units) of each cell `rows` picks from `lo`/`hi`, under every draw: three matrices in
/// the draw-major layout of [`LogLik`].
pub fn interval_matrices(
    draws: &[DrawRow],
    lo: &[f64],
    hi: &[f64],
    rows: &[usize],
    threads: usize,
) -> (LogLik, LogLik, LogLik) {
    let n = rows.len();
    let per_draw = parallel_map(draws.len(), threads, |s| {
        let row = &draws[s];
        let lw: Vec<f64> = row.weight.iter().map(|w| w.ln()).collect();
        let mut terms = vec![0.0; lw.len()];
        let mut out = (
            Vec::with_capacity(n),
            Vec::with_capacity(n),
            Vec::with_capacity(n),
        );
        for &i in rows {
            out.0
                .push(ln_cell_probability(row, &lw, lo[i], hi[i], &mut terms));
            out.1.push(mixture_cdf(row, lo[i]));
            out.2.push(mixture_cdf(row, hi[i]));
        }
        out
    });
    let s = draws.len();
    let (mut ll, mut f_lo, mut f_hi) = (
        Vec::with_capacity(s * n),
        Vec::with_capacity(s * n),
        Vec::with_capacity(s * n),
    );
    for (a, b, c) in per_draw {
        ll.extend(a);
        f_lo.extend(b);
        f_hi.extend(c);
    }
    let matrix = |values| LogLik {
        draws: s,
        obs: n,
        values,
    };
    (matrix(ll), matrix(f_lo), matrix(f_hi))
}

/// The cells on the fitted scale in data units: (lower edges, upper edges), from the
/// sampler's standard units by `centre + scale · z` (infinite edges stay infinite).
pub fn fitted_edges(cells: &Cells, centre: f64, scale: f64) -> (Vec<f64>, Vec<f64>) {
    let map = |v: &Vec<f64>| v.iter().map(|&z| centre + scale * z).collect();
    (map(&cells.lo), map(&cells.hi))
}

/// Randomised PIT values, one per observation: observation j of cell i gets
/// `lo[i] + V (hi[i] − lo[i])`, V uniform from `rng`, clamped to [0, 1].
pub fn randomised_pit<R: Rng>(lo: &[f64], hi: &[f64], cell_of: &[usize], rng: &mut R) -> Vec<f64> {
    cell_of
        .iter()
        .map(|&i| {
            let v: f64 = rng.random();
            let (a, b) = (lo[i].min(hi[i]), hi[i].max(lo[i]));
            (a + v * (b - a)).clamp(0.0, 1.0)
        })
        .collect()
}

/// Stream purpose of the randomised PIT's uniforms.
const PIT_STREAM: u64 = u64::MAX - 3;

/// LOO-PIT of data recorded in cells: one randomised PIT value and Pareto k̂ per
/// observation used.
#[derive(Debug, Clone, PartialEq)]
pub struct CellPit {
    pub pit: Vec<f64>,
    pub pareto_k: Vec<f64>,
    /// Distinct cells the observations used fall in, and all cells.
    pub cells_used: usize,
    pub cells_total: usize,
    /// Whether the observations used are a subsample of all of them.
    pub subsampled: bool,
}

/// LOO-PIT over the observations of `cells` (standard units, as the sampler holds them;
/// `centre` and `scale` map them to the fitted scale), at most `cap` of them (a random
/// subsample of the observations, stream [`LOO_ROWS_STREAM`] of `seed`, beyond it).
pub fn cell_loo_pit(
    cells: &Cells,
    (centre, scale): (f64, f64),
    draws: &[DrawRow],
    cap: usize,
    seed: u64,
    threads: usize,
) -> CellPit {
    let total = cells.total() as usize;
    let picked: Vec<usize> = if total > cap {
        distinct_indices(total, cap, &mut check_rng(seed, LOO_ROWS_STREAM))
    } else {
        (0..total).collect()
    };
    // Observation j (cells expanded by their counts, in order) lies in the first cell
    // whose running count exceeds j.
    let mut ends = Vec::with_capacity(cells.len());
    let mut acc = 0usize;
    for &c in &cells.count {
        acc += c as usize;
        ends.push(acc);
    }
    let cell_of: Vec<usize> = picked
        .iter()
        .map(|&j| ends.partition_point(|&e| e <= j))
        .collect();
    let mut used = cell_of.clone();
    used.dedup();
    let local: Vec<usize> = cell_of
        .iter()
        .map(|c| used.partition_point(|u| u < c))
        .collect();
    let (lo, hi) = fitted_edges(cells, centre, scale);
    let (ll, f_lo, f_hi) = interval_matrices(draws, &lo, &hi, &used, threads);
    let below = loo_pit(&ll, &f_lo);
    let above = loo_pit(&ll, &f_hi);
    let pit = randomised_pit(
        &below.pit,
        &above.pit,
        &local,
        &mut check_rng(seed, PIT_STREAM),
    );
    CellPit {
        pit,
        pareto_k: local.iter().map(|&i| below.pareto_k[i]).collect(),
        cells_used: used.len(),
        cells_total: cells.len(),
        subsampled: picked.len() < total,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn values_are_recorded_in_their_cells() {
        // Data to one decimal: 0.3 stands for [0.25, 0.35). Common practice, no source.
        let l = Lattice::new(0.1, &[0.3, 1.2, -0.7]);
        assert_eq!(l.record(0.2999), 0.3);
        assert_eq!(l.record(0.26), 0.3);
        assert_eq!(l.record(0.3499), 0.3);
        assert_eq!(l.record(-0.66), -0.7);
        // A cell the data do not hold: its centre on the lattice.
        assert!((l.record(5.04) - 5.0).abs() < 1e-12);
        // An offset lattice (values at .25 and .75 of a half-unit step).
        let l = Lattice::new(0.5, &[0.25, 0.75]);
        assert_eq!(l.record(0.1), 0.25);
        assert_eq!(l.record(0.51), 0.75);
        assert!((l.record(1.4) - 1.25).abs() < 1e-12);
    }

    #[test]
    fn randomised_pit_fills_each_cell_uniformly() {
        // One cell from F(lo) = 0.2 to F(hi) = 0.6: the values are uniform on [0.2, 0.6]
        // (mean 0.4, variance 0.4²/12), by construction of the randomised PIT.
        let cell_of = vec![0usize; 20_000];
        let u = randomised_pit(&[0.2], &[0.6], &cell_of, &mut check_rng(1, 2));
        let n = u.len() as f64;
        let m = u.iter().sum::<f64>() / n;
        let v = u.iter().map(|x| (x - m) * (x - m)).sum::<f64>() / n;
        assert!(u.iter().all(|&x| (0.2..=0.6).contains(&x)));
        assert!(
            (m - 0.4).abs() < 0.005 && (v - 0.16 / 12.0).abs() < 0.001,
            "{m} {v}"
        );
    }

    #[test]
    fn cell_probability_is_the_cdf_difference() {
        // ln P(cell) from the interval formula equals ln(F(hi) − F(lo)) of the mixture CDF.
        let row = DrawRow {
            weight: vec![0.4, 0.6],
            mean: vec![-1.0, 2.0],
            sd: vec![0.7, 1.3],
            ..DrawRow::empty()
        };
        let (lo, hi) = (vec![0.25, f64::NEG_INFINITY], vec![0.75, -3.0]);
        let (ll, flo, fhi) = interval_matrices(&[row], &lo, &hi, &[0, 1], 1);
        for i in 0..2 {
            let direct = (fhi.values[i] - flo.values[i]).ln();
            assert!(
                (ll.values[i] - direct).abs() < 1e-9,
                "{i}: {} {direct}",
                ll.values[i]
            );
        }
        assert_eq!(flo.values[1], 0.0);
    }
}

//! How the values were recorded: whether they lie on a lattice (recorded to a step such as
//! 0.1 mm or whole years) and whether some of them are heaped on a coarser step (whole
//! units among values recorded to 0.1). Pure functions on the values and their frequency
//! weights; the run reports what they find and the resolution in force (`[data]
//! resolution`), and changes nothing.
//!
//! The lattice. The base is the coarsest power of ten 10^−D on which most values lie (read
//! from their decimal form: a value parsed from "12.3" is 12.3 to within its last bit, so it
//! is tested as |x·10^D − round(x·10^D)| ≤ 10⁻⁶, and D is kept where that noise stays far
//! below the tolerance). The step is then the largest multiple g·10^−D (g from 1, 2, 4, 5,
//! 10, 20, 25, 50, 100, and the greatest common divisor of the values' differences in
//! units of the base) that, with the best offset, still holds most values. "Most" is
//! [`LATTICE_SHARE`] of the observations and [`LATTICE_DISTINCT_SHARE`] of the distinct
//! values, so that a few mistyped values do not hide a lattice and a heap on round numbers
//! (or a 0/1 variable that is mostly 0) does not pass for a coarser one. Lattice and heaping
//! are reported only when values tie substantially (at least [`MIN_TIE_SHARE`] of the
//! observations repeat an earlier value): continuous data printed to six significant digits
//! lie on a fine decimal lattice too (and values above 1 on a ten times coarser one), but
//! hardly tie, and only ties let components collapse onto single values. Nor is a lattice
//! finer than [`MIN_STEP_SD`] sample sds reported.
//!
//! Heaping. On a lattice of step r through 0, the coarser lattice of step m·r (m = 2, 4, 5,
//! 10, 20, 50, 100, with m·r at most the sample's sd) is compared with its neighbours: the
//! count on each coarse point is expected to be the mean count of the two nearest fine
//! points on either side (one for m = 2), as a smooth density would give. This is the
//! comparison made by Whipple's index of age heaping (count on ages ending in 0 or 5
//! against a fifth of all ages in the range; from memory), made local so that the shape of
//! the density does not count as heaping. Heaping is reported when the observed count is at
//! least [`HEAP_RATIO`] times the expected one and the excess is at least [`HEAP_Z`]
//! standard errors. Heaping on a step shows on all its multiples too, so each step is
//! judged on its own points (multiples of 1 that are not multiples of 2, 5, 10; the halves
//! of 0.5 that are not whole) and the finest heaped step is named.

use std::collections::HashMap;

use serde::{Deserialize, Serialize};

/// Share of the observations a lattice must hold.
pub const LATTICE_SHARE: f64 = 0.9;
/// Share of the distinct values a lattice must hold.
pub const LATTICE_DISTINCT_SHARE: f64 = 0.8;
/// Share of the observations that must repeat an earlier value (1 − distinct / n) for a
/// lattice to be reported.
pub const MIN_TIE_SHARE: f64 = 0.2;
/// A lattice finer than this many sample sds is not reported: rounding to it moves the
/// variance by (step/sd)²/12 (Sheppard's correction; from memory), under 1e-7 of it, and
/// cannot shape a density estimate. Continuous values printed to six significant digits
/// tie in very large samples, on such a lattice.
pub const MIN_STEP_SD: f64 = 1e-3;
/// Observed over expected count on a coarse lattice for heaping to be reported (a Whipple
/// index of 125, the bound between "approximate" and "rough" age data in the United
/// Nations' classification; from memory).
pub const HEAP_RATIO: f64 = 1.25;
/// Excess over the expected count, in standard errors, for heaping to be reported.
pub const HEAP_Z: f64 = 4.0;

/// How far x/r may be from an integer for x to lie on the lattice of step r.
const TOL: f64 = 1e-6;
/// A step must be at least this times the largest |x|, so that the rounding noise of the
/// values (about 1e-16 relative) stays far below [`TOL`] steps.
const MIN_STEP_REL: f64 = 1e-8;
/// Multiples of the decimal base tried as the step, and of the step tried for heaping.
const STEP_MULTIPLES: [i64; 9] = [1, 2, 4, 5, 10, 20, 25, 50, 100];
const HEAP_MULTIPLES: [i64; 7] = [2, 4, 5, 10, 20, 50, 100];

/// The lattice the values lie on: offset + k·step.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Lattice {
    pub step: f64,
    /// In [0, step); 0 for values on multiples of the step.
    pub offset: f64,
    /// Share of the observations on the lattice.
    pub share: f64,
}

/// Values heaped on a lattice coarser than the one they were recorded on.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Heaping {
    /// The coarse step: values on its multiples are in excess.
    pub step: f64,
    /// The fine step the other values were recorded to.
    pub within: f64,
    /// Share of the observations on multiples of `step`.
    pub share: f64,
    /// The share expected there from the neighbouring values on the fine lattice.
    pub expected_share: f64,
}

/// What the detector found about how the values were recorded.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Recording {
    /// `[data] resolution` in force (None: the values are treated as exact).
    pub resolution: Option<f64>,
    /// Number of observations (frequency weights counted).
    pub n: u64,
    /// Number of distinct values.
    pub distinct: usize,
    /// The lattice, when the values lie on one and tie substantially.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub lattice: Option<Lattice>,
    /// Heaping on a coarser step, when found.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub heaping: Option<Heaping>,
}

/// A lattice found before the tie rule: the step g·10^−d with its phase, and the index of
/// every distinct value on it.
struct Found {
    lattice: Lattice,
    /// (index on the lattice, count) of the distinct values on it.
    points: Vec<(i64, u64)>,
}

/// The distinct values of `values` with their counts (`counts[i]` for row i, or 1; rows
/// with count 0 and non-finite values left out), sorted.
fn tabulate(values: &[f64], counts: Option<&[u64]>) -> Vec<(f64, u64)> {
    let mut rows: Vec<(f64, u64)> = values
        .iter()
        .enumerate()
        .map(|(i, &v)| (v, counts.and_then(|c| c.get(i).copied()).unwrap_or(1)))
        .filter(|&(v, c)| c > 0 && v.is_finite())
        .collect();
    rows.sort_by(|a, b| a.0.total_cmp(&b.0));
    let mut out: Vec<(f64, u64)> = Vec::with_capacity(rows.len());
    for (v, c) in rows {
        match out.last_mut() {
            Some(last) if last.0 == v => last.1 += c,
            _ => out.push((v, c)),
        }
    }
    out
}

/// x in units of 10^−d (x·10^d), computed with an exact power of ten.
fn in_base(x: f64, d: i32) -> f64 {
    if d >= 0 {
        x * 10f64.powi(d)
    } else {
        x / 10f64.powi(-d)
    }
}

/// The nearest integer to `s` when `s` is within [`TOL`] of it.
fn near_integer(s: f64) -> Option<i64> {
    let r = s.round();
    ((s - r).abs() <= TOL && r.abs() < 9.0e15).then_some(r as i64)
}

fn gcd(a: i64, b: i64) -> i64 {
    let (mut a, mut b) = (a.unsigned_abs(), b.unsigned_abs());
    while b != 0 {
        (a, b) = (b, a % b);
    }
    a as i64
}

/// Shares of the `n` observations and of the `distinct` values that `on` holds.
fn shares(on: &[(i64, u64)], n: u64, distinct: usize) -> (f64, f64) {
    let w: u64 = on.iter().map(|p| p.1).sum();
    (w as f64 / n as f64, on.len() as f64 / distinct as f64)
}

fn holds_most(on: &[(i64, u64)], n: u64, distinct: usize) -> bool {
    let (w, d) = shares(on, n, distinct);
    w >= LATTICE_SHARE && d >= LATTICE_DISTINCT_SHARE
}

/// A multiple g of the base, its phase, and the (index, count) of the values on it.
type Phased = (i64, i64, Vec<(i64, u64)>);

/// The lattice most values lie on, before the tie rule.
fn find_lattice(table: &[(f64, u64)], n: u64) -> Option<Found> {
    let distinct = table.len();
    if distinct < 2 {
        return None;
    }
    let biggest = table
        .iter()
        .map(|t| t.0.abs())
        .fold(0.0f64, f64::max)
        .max(table[distinct - 1].0 - table[0].0);
    if !(biggest.is_finite() && biggest >= 1e-290) {
        return None; // a spread beyond f64, or values too close to 0 to have digits
    }
    // Powers of ten from above the largest value down to the noise floor (ten decades).
    let top = biggest.log10().floor() as i32 + 1;
    let bottom = (biggest * MIN_STEP_REL).log10().ceil() as i32;
    for e in (bottom..=top).rev() {
        let d = -e;
        let on: Vec<(i64, u64)> = table
            .iter()
            .filter_map(|&(x, c)| near_integer(in_base(x, d)).map(|k| (k, c)))
            .collect();
        if !holds_most(&on, n, distinct) {
            continue;
        }
        // Coarser steps g·10^−d: the listed multiples and the gcd of the differences.
        let g0 = on.iter().fold(0, |g, p| gcd(g, p.0 - on[0].0));
        let mut multiples: Vec<i64> = STEP_MULTIPLES.to_vec();
        if g0 > 1 && g0 <= 1_000_000 {
            multiples.push(g0);
        }
        multiples.sort_unstable();
        multiples.dedup();
        // (multiple, phase, points) of the coarsest step that holds most values.
        let mut best: Option<Phased> = None;
        for &g in &multiples {
            // The phase holding most observations.
            let mut by_phase: HashMap<i64, u64> = HashMap::new();
            for &(k, c) in &on {
                *by_phase.entry(k.rem_euclid(g)).or_default() += c;
            }
            let Some((&phase, _)) = by_phase.iter().max_by_key(|&(&p, &c)| (c, -p)) else {
                continue;
            };
            let points: Vec<(i64, u64)> = on
                .iter()
                .filter(|p| p.0.rem_euclid(g) == phase)
                .map(|&(k, c)| ((k - phase) / g, c))
                .collect();
            if holds_most(&points, n, distinct) {
                best = Some((g, phase, points));
            }
        }
        let (g, phase, points) = best?;
        let unit = |m: i64| {
            if d >= 0 {
                m as f64 / 10f64.powi(d)
            } else {
                m as f64 * 10f64.powi(-d)
            }
        };
        let (share, _) = shares(&points, n, distinct);
        if !(unit(g).is_finite() && unit(phase).is_finite()) {
            return None;
        }
        return Some(Found {
            lattice: Lattice {
                step: unit(g),
                offset: unit(phase),
                share,
            },
            points,
        });
    }
    None
}

/// Count on the multiples of m (fine-lattice indices) that are not multiples of any of
/// `coarser`, and the count expected there from the fine points within `hh` of each:
/// (observed, expected, variance of expected).
fn excess(points: &[(i64, u64)], m: i64, coarser: &[i64], hh: i64) -> (f64, f64, f64) {
    let counted = |j0: i64| j0.rem_euclid(m) == 0 && coarser.iter().all(|&c| j0.rem_euclid(c) != 0);
    let (mut observed, mut expected, mut var) = (0.0, 0.0, 0.0);
    for &(j, c) in points {
        let rho = j.rem_euclid(m);
        let c = c as f64;
        if rho == 0 {
            if counted(j) {
                observed += c;
            }
            continue;
        }
        // The counted coarse points that have this fine point among their 2·hh neighbours.
        let uses =
            (rho <= hh && counted(j - rho)) as i64 + (m - rho <= hh && counted(j + m - rho)) as i64;
        let w = uses as f64 / (2 * hh) as f64;
        expected += w * c;
        var += w * w * c;
    }
    (observed, expected, var)
}

/// Heaping among values on the lattice `found` (through 0): the finest multiple m·step
/// whose own points (those not on a coarser multiple tried) hold an excess that passes
/// [`HEAP_RATIO`] and [`HEAP_Z`]. Heaping on whole units shows on every multiple of 1 but
/// not on the halves, so it is named as heaping on 1, not on 0.5 or 10.
fn find_heaping(found: &Found, n: u64, sd: f64) -> Option<Heaping> {
    let l = &found.lattice;
    if l.offset != 0.0 {
        return None;
    }
    for m in HEAP_MULTIPLES {
        let coarse = l.step * m as f64;
        if coarse > sd {
            break;
        }
        // Neighbours: the nearest two fine points on each side (one when m = 2), close
        // enough that a smooth density is nearly level across them.
        let hh = (m / 2).min(2);
        let coarser: Vec<i64> = HEAP_MULTIPLES
            .iter()
            .copied()
            .filter(|&c| c > m && c % m == 0)
            .collect();
        let (observed, expected, var) = excess(&found.points, m, &coarser, hh);
        let z = (observed - expected) / (expected + var).max(1.0).sqrt();
        if expected > 0.0 && observed >= HEAP_RATIO * expected && z >= HEAP_Z {
            let (all, all_expected, _) = excess(&found.points, m, &[], hh);
            return Some(Heaping {
                step: tidy(coarse),
                within: l.step,
                share: tidy(all / n as f64),
                expected_share: tidy(all_expected / n as f64),
            });
        }
    }
    None
}

/// `x` with the digits of a product of decimal numbers cleaned (0.1 · 5 is 0.5).
fn tidy(x: f64) -> f64 {
    format!("{x:.12e}").parse().unwrap_or(x)
}

/// Standard deviation of the table (divisor n − 1).
fn table_sd(table: &[(f64, u64)], n: u64) -> f64 {
    if n < 2 {
        return 0.0;
    }
    let nf = n as f64;
    let mean = table.iter().map(|&(x, c)| x * c as f64).sum::<f64>() / nf;
    let ss: f64 = table
        .iter()
        .map(|&(x, c)| c as f64 * (x - mean) * (x - mean))
        .sum();
    (ss / (nf - 1.0)).sqrt()
}

impl Recording {
    /// Looks at `values` (data units; `counts[i]` observations of row i when given) and
    /// notes the `resolution` in force.
    pub fn detect(values: &[f64], counts: Option<&[u64]>, resolution: Option<f64>) -> Recording {
        let table = tabulate(values, counts);
        let n: u64 = table.iter().map(|t| t.1).sum();
        let distinct = table.len();
        let found = find_lattice(&table, n);
        let ties = n > 0 && (distinct as f64) <= (1.0 - MIN_TIE_SHARE) * n as f64;
        let sd = table_sd(&table, n);
        let found = found.filter(|f| ties && f.lattice.step >= MIN_STEP_SD * sd);
        let heaping = found.as_ref().and_then(|f| find_heaping(f, n, sd));
        Recording {
            resolution,
            n,
            distinct,
            lattice: found.map(|f| f.lattice),
            heaping,
        }
    }

    /// The statement of how the values are treated: the resolution in force, or exact.
    pub fn treatment(&self) -> String {
        match self.resolution {
            Some(r) => format!(
                "values treated as recorded to {r}: each stands for [x − {h}, x + {h})",
                h = tidy(r / 2.0)
            ),
            None => "values treated as exact".into(),
        }
    }

    /// The lattice found, when it calls for a change of `[data] resolution`: the values lie
    /// on one and are treated as exact, or on one of another step than the resolution.
    pub fn lattice_note(&self) -> Option<String> {
        let l = self.lattice.as_ref()?;
        let found = format!(
            "the values lie on a lattice of step {}{} ({} of {} values; {} distinct)",
            l.step,
            if l.offset != 0.0 {
                format!(" offset by {}", l.offset)
            } else {
                String::new()
            },
            percent(l.share),
            self.n,
            self.distinct
        );
        match self.resolution {
            None => Some(format!(
                "{found} but are treated as exact, so tied values can draw components onto single \
                 points; to treat each value as the cell it was rounded to, set `[data] resolution = {}`",
                l.step
            )),
            Some(r) if r < l.step * (1.0 - 1e-6) => Some(format!(
                "{found}, coarser than the resolution {r} in force: the cells are narrower than the \
                 rounding; set `[data] resolution = {}`",
                l.step
            )),
            Some(r) if r > l.step * (1.0 + 1e-6) => Some(format!(
                "{found}, finer than the resolution {r} in force: each cell holds its exact value, \
                 at some loss of precision; `[data] resolution = {}` fits the values",
                l.step
            )),
            Some(_) => None,
        }
    }

    /// The heaping found, with the coarser resolution that would contain every value.
    pub fn heaping_note(&self) -> Option<String> {
        let h = self.heaping.as_ref()?;
        Some(format!(
            "heaping: {} of the values lie on multiples of {}, where their neighbours on the {} \
             lattice lead one to expect about {}; those values were probably rounded to {} rather \
             than to {}. A single resolution cannot describe both steps; `[data] resolution = {}` \
             gives every value a cell that contains its exact value, at some loss of precision",
            percent(h.share),
            h.step,
            h.within,
            percent(h.expected_share),
            h.step,
            h.within,
            h.step
        ))
    }

    /// Every note, one a line.
    pub fn notes(&self) -> Vec<String> {
        self.lattice_note()
            .into_iter()
            .chain(self.heaping_note())
            .collect()
    }
}

/// A share as a percentage: whole percents (99% at most short of all), one decimal below
/// 10%, and "under 0.1%" rather than 0.0%.
fn percent(p: f64) -> String {
    let v = 100.0 * p;
    if v >= 9.95 {
        format!("{:.0}%", v.round().min(if p < 1.0 { 99.0 } else { 100.0 }))
    } else if v >= 0.05 || v == 0.0 {
        format!("{v:.1}%")
    } else {
        "under 0.1%".into()
    }
}

#[cfg(test)]
#[path = "lattice_tests.rs"]
mod tests;

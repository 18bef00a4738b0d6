//! Counting the modes of each draw's density on the grid, and the posterior distribution
//! of that count; also the posterior distribution of the number of occupied components.
//!
//! A mode is an interior local maximum of the draw's density on the grid (a plateau counts
//! once) whose prominence is at least [`MIN_RELATIVE_PROMINENCE`] of the draw's highest
//! value on the grid. The prominence of a peak is its height above the higher of the two
//! lowest points met when walking away from it, left and right, until reaching higher
//! ground or the grid's end (the usual topographic definition; common practice, no
//! source). The rule ignores bumps shallower than 1% of the highest peak: ripples that are
//! invisible on a plot and below what the grid can resolve. Maxima at the grid's ends are
//! not counted: a density still rising there has its mode outside the grid.
//!
//! The number of occupied components (components with at least one observation allocated
//! in that sweep) is a different quantity: overlapping components make one mode, and one
//! skewed or heavy-tailed bump typically takes several components.

use std::collections::BTreeMap;

use serde::Serialize;

/// Bumps shallower than this fraction of the draw's highest value are not modes.
pub const MIN_RELATIVE_PROMINENCE: f64 = 0.01;

/// The number of modes of the curve `f` on an evenly spaced grid.
pub fn count_modes(f: &[f64]) -> usize {
    peaks(f).len()
}

/// One mode of a curve on the grid: the plateau `f[first..=last]` and its prominence.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct GridPeak {
    pub first: usize,
    pub last: usize,
    pub prominence: f64,
}

/// The modes of the curve `f` on an evenly spaced grid, left to right (the rule of the
/// module comment; [`count_modes`] is their number).
pub fn peaks(f: &[f64]) -> Vec<GridPeak> {
    let g = f.len();
    let top = f.iter().copied().fold(0.0, f64::max);
    let mut out = Vec::new();
    if g < 3 || top <= 0.0 {
        return out;
    }
    let min_prom = MIN_RELATIVE_PROMINENCE * top;
    let mut i = 1;
    while i + 1 < g {
        if f[i] > f[i - 1] {
            // Walk over a plateau.
            let mut j = i;
            while j + 1 < g && f[j + 1] == f[i] {
                j += 1;
            }
            if j + 1 < g && f[j + 1] < f[i] {
                let p = prominence(f, i, j);
                if p >= min_prom {
                    out.push(GridPeak {
                        first: i,
                        last: j,
                        prominence: p,
                    });
                }
            }
            i = j + 1;
        } else {
            i += 1;
        }
    }
    out
}

/// Prominence of the peak occupying f[a..=b] (a plateau at one height).
fn prominence(f: &[f64], a: usize, b: usize) -> f64 {
    let h = f[a];
    let mut left_min = h;
    let mut k = a;
    while k > 0 {
        k -= 1;
        if f[k] > h {
            break;
        }
        left_min = left_min.min(f[k]);
    }
    let mut right_min = h;
    let mut k = b;
    while k + 1 < f.len() {
        k += 1;
        if f[k] > h {
            break;
        }
        right_min = right_min.min(f[k]);
    }
    h - left_min.max(right_min)
}

/// One value of a count with its posterior probability.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CountProbability {
    pub count: usize,
    pub probability: f64,
}

/// The empirical distribution of `counts` (non-empty), ascending by count.
pub fn distribution(counts: impl IntoIterator<Item = usize>) -> Vec<CountProbability> {
    let mut m = BTreeMap::new();
    let mut n = 0usize;
    for c in counts {
        *m.entry(c).or_insert(0usize) += 1;
        n += 1;
    }
    m.into_iter()
        .map(|(count, k)| CountProbability {
            count,
            probability: k as f64 / n as f64,
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use statrs::distribution::{Continuous, Normal};

    fn mixture(grid: &[f64], parts: &[(f64, f64, f64)]) -> Vec<f64> {
        grid.iter()
            .map(|&x| {
                parts
                    .iter()
                    .map(|&(w, m, s)| w * Normal::new(m, s).unwrap().pdf(x))
                    .sum()
            })
            .collect()
    }

    fn grid() -> Vec<f64> {
        crate::summary::linspace(-6.0, 10.0, 801)
    }

    #[test]
    fn equal_two_component_mixture_is_bimodal_iff_separation_exceeds_two_sd() {
        // ½N(0,1) + ½N(d,1) is unimodal for d ≤ 2 and bimodal for d > 2 (Schilling, Watkins
        // & Watkins 2002, The American Statistician 56, 223–229; from memory). At d = 3 the
        // dip is 0.130 against peaks near 0.202 (scipy.stats.norm.pdf), far above the 1% rule.
        let g = grid();
        assert_eq!(
            count_modes(&mixture(&g, &[(0.5, 0.0, 1.0), (0.5, 1.8, 1.0)])),
            1
        );
        assert_eq!(
            count_modes(&mixture(&g, &[(0.5, 0.0, 1.0), (0.5, 3.0, 1.0)])),
            2
        );
        assert_eq!(
            count_modes(&mixture(&g, &[(0.5, 0.0, 1.0), (0.5, 6.0, 1.0)])),
            2
        );
        assert_eq!(
            count_modes(&mixture(
                &g,
                &[(0.3, -3.0, 0.5), (0.4, 2.0, 0.5), (0.3, 7.0, 0.5)]
            )),
            3
        );
        assert_eq!(count_modes(&mixture(&g, &[(1.0, 2.0, 1.5)])), 1);
    }

    #[test]
    fn bumps_below_the_threshold_are_ignored() {
        // A separate component of weight 0.2% with the same sd peaks at 0.2% of the main
        // peak: below 1%, so not a mode; at 5% weight it is one.
        let g = grid();
        assert_eq!(
            count_modes(&mixture(&g, &[(0.998, 0.0, 1.0), (0.002, 7.0, 1.0)])),
            1
        );
        assert_eq!(
            count_modes(&mixture(&g, &[(0.95, 0.0, 1.0), (0.05, 7.0, 1.0)])),
            2
        );
        // A density still rising at the grid's end has no mode on the grid; flat has none.
        assert_eq!(count_modes(&mixture(&g, &[(1.0, 20.0, 3.0)])), 0);
        assert_eq!(count_modes(&[0.0; 10]), 0);
        // A plateau counts once.
        assert_eq!(count_modes(&[0.0, 1.0, 2.0, 2.0, 2.0, 1.0, 0.0]), 1);
    }

    #[test]
    fn distribution_gives_frequencies() {
        let d = distribution([1, 2, 1, 1]);
        assert_eq!(
            d,
            vec![
                CountProbability {
                    count: 1,
                    probability: 0.75
                },
                CountProbability {
                    count: 2,
                    probability: 0.25
                }
            ]
        );
    }
}

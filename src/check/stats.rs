//! The test statistics of a posterior predictive check, computed alike on the observed
//! and on each replicated data set: quantiles (1, 5, 25, 50, 75, 95, 99 %), standard
//! deviation, skewness, kurtosis, the largest gap between sorted values, and the number of
//! modes of a Gaussian kernel estimate at a fixed bandwidth (the observed data's Silverman
//! bandwidth, so that the count measures the data, not a bandwidth that adapts to them).

use crate::dist::LN_SQRT_2PI;
use crate::sampler::allocate::dispatch::exp_fast_in_place;
use crate::sampler::allocate::Simd;
use crate::summary::{count_modes, quantile_sorted};

/// Probabilities of the quantile statistics.
pub const QUANTILE_PROBS: [f64; 7] = [0.01, 0.05, 0.25, 0.5, 0.75, 0.95, 0.99];

/// Points of the grid the kernel estimate's modes are counted on.
pub const KDE_POINTS: usize = 200;

/// The kernel estimate's grid reaches this many bandwidths beyond the data, so that its
/// ends are in the tails and every mode is interior.
const KDE_PAD: f64 = 3.0;

/// Names of the statistics, in the order [`statistics`] returns them.
pub fn names() -> Vec<String> {
    let mut v: Vec<String> = QUANTILE_PROBS
        .iter()
        .map(|p| format!("q{:02}", (p * 100.0).round() as u32))
        .collect();
    v.extend(
        ["sd", "skewness", "kurtosis", "max_gap", "kde_modes"]
            .iter()
            .map(|s| s.to_string()),
    );
    v
}

/// What each statistic is, for the report and `mixband check`.
pub fn describe(name: &str) -> String {
    match name {
        "sd" => "standard deviation".into(),
        "skewness" => "skewness".into(),
        "kurtosis" => "kurtosis (normal: 3)".into(),
        "max_gap" => "largest gap between sorted values".into(),
        "kde_modes" => "modes of the kernel estimate".into(),
        q if q.starts_with('q') => format!("{}% quantile", q[1..].trim_start_matches('0')),
        other => other.into(),
    }
}

/// Every statistic of the ascending sample `sorted` (n ≥ 2), with the kernel estimate at
/// bandwidth `h` (> 0).
pub fn statistics(sorted: &[f64], h: f64) -> Vec<f64> {
    let n = sorted.len() as f64;
    let mut out: Vec<f64> = QUANTILE_PROBS
        .iter()
        .map(|&p| quantile_sorted(sorted, p))
        .collect();
    let mean = sorted.iter().sum::<f64>() / n;
    // Moments of the deviations divided by the largest one, so that data near 1e±150 (which
    // the loader accepts) neither overflow nor underflow; skewness and kurtosis are
    // scale-free and the sd is scaled back.
    let big = sorted.iter().map(|v| (v - mean).abs()).fold(0.0, f64::max);
    let unit = if big > 0.0 { big } else { 1.0 };
    let (mut m2, mut m3, mut m4) = (0.0, 0.0, 0.0);
    for &v in sorted {
        let d = (v - mean) / unit;
        let d2 = d * d;
        m2 += d2;
        m3 += d2 * d;
        m4 += d2 * d2;
    }
    let sd = unit * (m2 / (n - 1.0)).sqrt();
    let (m2, m3, m4) = (m2 / n, m3 / n, m4 / n);
    // A constant replicate (possible only for degenerate draws) has no shape: 0 and 3, the
    // values of a symmetric, normal-tailed sample, so it never counts as extreme.
    let (skew, kurt) = if m2 > 0.0 {
        (m3 / m2.powf(1.5), m4 / (m2 * m2))
    } else {
        (0.0, 3.0)
    };
    let gap = sorted.windows(2).map(|w| w[1] - w[0]).fold(0.0, f64::max);
    out.extend([sd, skew, kurt, gap, kde_modes(sorted, h) as f64]);
    out
}

/// The number of modes of the Gaussian kernel estimate of `sorted` with bandwidth `h`, on
/// [`KDE_POINTS`] points from KDE_PAD bandwidths below the smallest value to as far above
/// the largest, by the prominence rule of the posterior mode count
/// ([`crate::summary::count_modes`]).
pub fn kde_modes(sorted: &[f64], h: f64) -> usize {
    let (lo, hi) = (
        sorted[0] - KDE_PAD * h,
        sorted[sorted.len() - 1] + KDE_PAD * h,
    );
    let grid: Vec<f64> = (0..KDE_POINTS)
        .map(|i| lo + (hi - lo) * i as f64 / (KDE_POINTS - 1) as f64)
        .collect();
    count_modes(&kde_on(sorted, h, &grid))
}

/// The Gaussian kernel estimate of `x` with bandwidth `h` at each point of `grid`: the
/// terms of `plot::kde::gaussian_kde`, each exponential by the allocation step's fast exp
/// (relative error at most 7e-15 + 2.5e-16 |a| for e^a, the same bits on every
/// instruction set) a grid point at a time, summed in the same order. The check computes
/// it for every replicate (500 by default, each up to 2000 observations on 200 points),
/// where std's exp took about a tenth of the time of a one-chain, 1000-observation run;
/// only the mode count is kept.
fn kde_on(x: &[f64], h: f64, grid: &[f64]) -> Vec<f64> {
    let n = x.len() as f64;
    let norm = -(n.ln() + h.ln() + LN_SQRT_2PI);
    let simd = Simd::detect();
    let mut terms = vec![0.0; x.len()];
    grid.iter()
        .map(|&g| {
            for (t, &xi) in terms.iter_mut().zip(x) {
                let z = (g - xi) / h;
                *t = norm - 0.5 * z * z;
            }
            exp_fast_in_place(simd, &mut terms);
            terms.iter().sum()
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn moments_of_a_small_sample() {
        // x = 1, 2, 3, 10: mean 4, deviations −3, −2, −1, 6; m2 = 50/4, m3 = 180/4,
        // m4 = 1394/4 (hand computation); sd = √(50/3).
        let s = statistics(&[1.0, 2.0, 3.0, 10.0], 1.0);
        let (m2, m3, m4) = (12.5, 45.0, 348.5);
        assert!((s[7] - (50.0f64 / 3.0).sqrt()).abs() < 1e-12);
        assert!((s[8] - m3 / f64::powf(m2, 1.5)).abs() < 1e-12);
        assert!((s[9] - m4 / (m2 * m2)).abs() < 1e-12);
        assert_eq!(s[10], 7.0);
        // Median by Hyndman & Fan definition 7: 2.5.
        assert_eq!(s[3], 2.5);
    }

    #[test]
    fn kde_counts_two_separated_clusters() {
        // Two tight clusters 10 bandwidths apart give two modes, one cluster gives one.
        let two: Vec<f64> = (0..20)
            .map(|i| {
                if i < 10 {
                    i as f64 * 0.01
                } else {
                    10.0 + i as f64 * 0.01
                }
            })
            .collect();
        assert_eq!(kde_modes(&two, 1.0), 2);
        let one: Vec<f64> = (0..20).map(|i| i as f64 * 0.01).collect();
        assert_eq!(kde_modes(&one, 1.0), 1);
        assert_eq!(names().len(), statistics(&one, 1.0).len());
    }

    #[test]
    fn shape_is_scale_free_and_finite_at_extreme_scales() {
        // Skewness and kurtosis do not change under x ↦ a + b·x (b > 0), and the sd scales
        // by b (definitions); 1e150 would overflow m2^1.5 without the rescaling. Tolerance
        // 1e-4: at 1e150 one unit in the last place is about 2e-6 of the 1e140 spread.
        let x = [1.0, 2.0, 3.0, 10.0];
        let base = statistics(&x, 1.0);
        for (a, b) in [(1e150, 1e140), (0.0, 1e-150)] {
            let y: Vec<f64> = x.iter().map(|v| a + b * v).collect();
            let s = statistics(&y, b);
            assert!(s.iter().all(|v| v.is_finite()), "{s:?}");
            assert!((s[8] - base[8]).abs() < 1e-4 && (s[9] - base[9]).abs() < 1e-4);
            assert!((s[7] / b - base[7]).abs() < 1e-4 * base[7]);
        }
    }
}

#[cfg(test)]
mod kde_tests {
    use super::*;
    use crate::plot::kde::gaussian_kde;

    /// The fast-exp estimate against the plotted one (std's exp), which tests/plots.rs
    /// checks against scipy.stats.gaussian_kde: relative 1e-13 where the density is a
    /// normal double.
    #[test]
    fn fast_estimate_matches_the_plotted_estimate() {
        let x: Vec<f64> = (0..300)
            .map(|i| ((i * 7919) % 1000) as f64 / 137.0 + if i % 3 == 0 { 9.0 } else { 0.0 })
            .collect();
        let grid: Vec<f64> = (0..157).map(|i| -4.0 + 0.13 * i as f64).collect();
        for h in [0.05, 0.4, 2.0] {
            let (got, want) = (kde_on(&x, h, &grid), gaussian_kde(&x, h, &grid));
            for (g, w) in got.iter().zip(&want) {
                if *w > 1e-300 {
                    assert!(((g - w) / w).abs() < 1e-13, "h = {h}: {g} vs {w}");
                }
            }
        }
    }
}

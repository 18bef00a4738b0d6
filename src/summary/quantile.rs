//! Sample quantiles by linear interpolation between order statistics (Hyndman & Fan 1996,
//! definition 7; the default of R's `quantile` and of numpy).

/// The `p`-quantile of ascending `sorted` (non-empty), 0 ≤ p ≤ 1.
pub fn quantile_sorted(sorted: &[f64], p: f64) -> f64 {
    let n = sorted.len();
    let h = (n - 1) as f64 * p;
    let lo = h.floor() as usize;
    let hi = (lo + 1).min(n - 1);
    let frac = h - lo as f64;
    // On an order statistic no interpolation is needed (and none is made, so an infinite
    // neighbour cannot turn the value into NaN by 0 · ∞); the same result for finite data.
    if frac == 0.0 || sorted[hi] == sorted[lo] {
        return sorted[lo];
    }
    sorted[lo] + frac * (sorted[hi] - sorted[lo])
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn matches_numpy_default() {
        // numpy.quantile([1, 2, 3, 4], [0.1, 0.5, 0.9]) = [1.3, 2.5, 3.7] (numpy docs, method "linear").
        let x = [1.0, 2.0, 3.0, 4.0];
        assert!((quantile_sorted(&x, 0.1) - 1.3).abs() < 1e-12);
        assert!((quantile_sorted(&x, 0.5) - 2.5).abs() < 1e-12);
        assert!((quantile_sorted(&x, 0.9) - 3.7).abs() < 1e-12);
        assert_eq!(quantile_sorted(&x, 1.0), 4.0);
        // An infinite largest value: the median of [1, 2, ∞] is 2 and the maximum ∞
        // (exact; definition 7 at h = 1 and h = 2).
        let y = [1.0, 2.0, f64::INFINITY];
        assert_eq!(quantile_sorted(&y, 0.5), 2.0);
        assert_eq!(quantile_sorted(&y, 1.0), f64::INFINITY);
    }
}

//! Order statistics of pooled draws: the median and the sample quantile used
//! by the tail ESS and quantile MCSE.
//!
//! The quantile is Hyndman & Fan (1996) definition 7 (R's default, linear
//! interpolation between order statistics), written with the same arithmetic
//! as ArviZ's `quantile` (scipy `mquantiles` with `alphap = betap = 1`) so that
//! indicator draws `x <= q` agree with ArviZ even on tied values.

/// Median of an ascending-sorted, non-empty slice: the middle value, or the
/// mean of the two middle values for an even count.
pub(crate) fn median_sorted(sorted: &[f64]) -> f64 {
    let n = sorted.len();
    if n % 2 == 1 {
        sorted[n / 2]
    } else {
        (sorted[n / 2 - 1] + sorted[n / 2]) / 2.0
    }
}

/// Median of unsorted values (copies and sorts them).
pub(crate) fn median(values: &[f64]) -> f64 {
    let mut v = values.to_vec();
    v.sort_by(f64::total_cmp);
    median_sorted(&v)
}

/// Definition-7 sample quantile at probability `p` of an ascending-sorted,
/// non-empty slice.
///
/// With `n` values, `aleph = n p + (1 - p)`, `k = floor(clamp(aleph, 1, n - 1))`,
/// `gamma = clamp(aleph - k, 0, 1)` and the result is
/// `(1 - gamma) x[k-1] + gamma x[k]` (1-based `x[k]` is the k-th smallest).
pub(crate) fn quantile_type7_sorted(sorted: &[f64], p: f64) -> f64 {
    let n = sorted.len();
    if n == 1 {
        return sorted[0];
    }
    let nf = n as f64;
    // scipy: m = alphap + p * (1 - alphap - betap) with alphap = betap = 1.
    const ALPHAP: f64 = 1.0;
    const BETAP: f64 = 1.0;
    let m = ALPHAP + p * (1.0 - ALPHAP - BETAP);
    let aleph = nf * p + m;
    let k = aleph.clamp(1.0, nf - 1.0).floor();
    let gamma = (aleph - k).clamp(0.0, 1.0);
    let k = k as usize;
    (1.0 - gamma) * sorted[k - 1] + gamma * sorted[k]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn median_odd_and_even() {
        assert_eq!(median(&[3.0, 1.0, 2.0]), 2.0);
        assert_eq!(median(&[4.0, 1.0, 3.0, 2.0]), 2.5);
    }

    #[test]
    fn type7_matches_worked_values() {
        // R: quantile(1:10, c(0.05, 0.5, 0.95)) gives 1.45, 5.5, 9.55
        // (Hyndman & Fan type 7: 1 + (n - 1) p); values from memory of R's output,
        // and they follow from the formula by hand.
        let x: Vec<f64> = (1..=10).map(f64::from).collect();
        assert!((quantile_type7_sorted(&x, 0.05) - 1.45).abs() < 1e-12);
        assert!((quantile_type7_sorted(&x, 0.5) - 5.5).abs() < 1e-12);
        assert!((quantile_type7_sorted(&x, 0.95) - 9.55).abs() < 1e-12);
        assert_eq!(quantile_type7_sorted(&x, 0.0), 1.0);
        assert_eq!(quantile_type7_sorted(&x, 1.0), 10.0);
    }
}

//! Log-sum-exp, the stable way to add probabilities held as logarithms.

/// ln(e^a + e^b) without overflow or underflow; −∞ inputs are allowed.
pub fn log_add_exp(a: f64, b: f64) -> f64 {
    let m = a.max(b);
    if m == f64::NEG_INFINITY {
        return m;
    }
    m + ((a - m).exp() + (b - m).exp()).ln()
}

/// ln Σ e^{x_i}; −∞ for an empty slice or all −∞.
pub fn log_sum_exp(xs: &[f64]) -> f64 {
    let m = xs.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    if m == f64::NEG_INFINITY {
        return m;
    }
    m + xs.iter().map(|&x| (x - m).exp()).sum::<f64>().ln()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn stable_at_extremes() {
        // ln(e^1000 + e^1000) = 1000 + ln 2 (direct evaluation overflows).
        assert!((log_add_exp(1000.0, 1000.0) - (1000.0 + 2f64.ln())).abs() < 1e-12);
        assert!((log_sum_exp(&[-1000.0, -1000.0, -1000.0]) - (-1000.0 + 3f64.ln())).abs() < 1e-12);
        assert_eq!(log_sum_exp(&[]), f64::NEG_INFINITY);
        assert_eq!(log_add_exp(f64::NEG_INFINITY, 0.0), 0.0);
    }
}

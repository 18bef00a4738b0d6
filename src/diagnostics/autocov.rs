//! Autocovariance of one chain at every lag, by zero-padded FFT.
//!
//! `acov[k] = (1/n) * sum_{t=0}^{n-1-k} (x_t - mean)(x_{t+k} - mean)` for
//! `k = 0..n` (the biased estimator of BDA3 section 11.5 and ArviZ's
//! `autocov`).  Padding to at least `2n` makes the circular correlation of the
//! FFT equal the linear one, so the cost is O(n log n).

use rustfft::num_complex::Complex;
use rustfft::FftPlanner;

/// Smallest `m >= n` whose only prime factors are 2, 3 and 5 (fast FFT sizes).
fn next_smooth_len(n: usize) -> usize {
    let mut m = n.max(1);
    loop {
        let mut r = m;
        for p in [2, 3, 5] {
            while r % p == 0 {
                r /= p;
            }
        }
        if r == 1 {
            return m;
        }
        m += 1;
    }
}

/// Reusable FFT plans for autocovariances of many chains of one length.
pub(crate) struct Autocovariance {
    planner: FftPlanner<f64>,
}

impl Autocovariance {
    pub fn new() -> Self {
        Autocovariance {
            planner: FftPlanner::new(),
        }
    }

    /// Autocovariance of `x` at lags `0..x.len()`.
    pub fn compute(&mut self, x: &[f64]) -> Vec<f64> {
        let n = x.len();
        if n == 0 {
            return Vec::new();
        }
        let m = next_smooth_len(2 * n);
        let mean = x.iter().sum::<f64>() / n as f64;
        let mut buf: Vec<Complex<f64>> = x
            .iter()
            .map(|&v| Complex::new(v - mean, 0.0))
            .chain(std::iter::repeat(Complex::new(0.0, 0.0)))
            .take(m)
            .collect();
        self.planner.plan_fft_forward(m).process(&mut buf);
        for c in buf.iter_mut() {
            *c = Complex::new(c.norm_sqr(), 0.0);
        }
        self.planner.plan_fft_inverse(m).process(&mut buf);
        // rustfft's transforms are unnormalised: the round trip scales by m.
        let scale = 1.0 / (m as f64 * n as f64);
        buf[..n].iter().map(|c| c.re * scale).collect()
    }
}

/// Autocovariance of `x` at every lag `0..x.len()` (see the module comment).
pub fn autocovariance(x: &[f64]) -> Vec<f64> {
    Autocovariance::new().compute(x)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn direct(x: &[f64]) -> Vec<f64> {
        let n = x.len();
        let mean = x.iter().sum::<f64>() / n as f64;
        (0..n)
            .map(|k| {
                (0..n - k)
                    .map(|t| (x[t] - mean) * (x[t + k] - mean))
                    .sum::<f64>()
                    / n as f64
            })
            .collect()
    }

    #[test]
    fn fft_matches_direct_sum() {
        // Direct O(n^2) definition as the reference, for several lengths incl. primes.
        for n in [1usize, 2, 3, 7, 64, 97, 250] {
            let x: Vec<f64> = (0..n)
                .map(|i| ((i * 7919 % 113) as f64).sin() * 3.0 + i as f64 * 0.01)
                .collect();
            let fast = autocovariance(&x);
            let slow = direct(&x);
            for (a, b) in fast.iter().zip(&slow) {
                assert!(
                    (a - b).abs() < 1e-10 * (1.0 + slow[0].abs()),
                    "n={n}: {a} vs {b}"
                );
            }
        }
    }

    #[test]
    fn smooth_lengths() {
        assert_eq!(next_smooth_len(7), 8);
        assert_eq!(next_smooth_len(14), 15);
        assert_eq!(next_smooth_len(2 * 97), 200);
        assert_eq!(next_smooth_len(1), 1);
    }
}

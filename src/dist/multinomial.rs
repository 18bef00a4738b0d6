//! Multinomial draws as a chain of binomials: m_k ~ Binomial(n − Σ_{j<k} m_j,
//! p_k / Σ_{j≥k} p_j) (common practice, no source), each from rand_distr's exact binomial
//! sampler (inversion for small means, BTPE otherwise), so a draw costs O(K) whatever n is.

use rand::Rng;
use rand_distr::{Binomial, Distribution};

/// One draw of Multinomial(n, p / Σp) into `out` (p ≥ 0, not necessarily normalised,
/// Σp > 0), by conditional binomials; `tail` is scratch of p's length.
pub fn multinomial<R: Rng + ?Sized>(
    n: u64,
    p: &[f64],
    tail: &mut [f64],
    out: &mut [u64],
    rng: &mut R,
) {
    // Σ_{j≥k} p_j from the right, so no probability comes from a cancelling subtraction.
    let k = p.len();
    let mut acc = 0.0;
    for j in (0..k).rev() {
        acc += p[j];
        tail[j] = acc;
    }
    let mut left = n;
    for j in 0..k {
        if left == 0 {
            out[j] = 0;
            continue;
        }
        if j == k - 1 {
            out[j] = left;
            break;
        }
        let q = if tail[j] > 0.0 {
            (p[j] / tail[j]).clamp(0.0, 1.0)
        } else {
            0.0
        };
        let m = match Binomial::new(left, q) {
            Ok(b) => b.sample(rng),
            // Only a NaN q fails, and the terms are finite; keep every count with the
            // last component rather than lose it.
            Err(_) => 0,
        };
        out[j] = m;
        left -= m;
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::SeedableRng;
    use rand_chacha::ChaCha8Rng;

    #[test]
    fn multinomial_counts_have_their_expected_means_and_variances() {
        // E[m_k] = n p_k, Var[m_k] = n p_k (1 − p_k) (common practice, no source); 20 000
        // draws of n = 50 put each sample mean within 5 standard errors.
        let p = [0.05, 0.0, 0.6, 0.35];
        let (n, reps) = (50u64, 20_000);
        let mut rng = ChaCha8Rng::seed_from_u64(11);
        let (mut tail, mut out) = ([0.0; 4], [0u64; 4]);
        let mut sum = [0.0; 4];
        let mut sumsq = [0.0; 4];
        for _ in 0..reps {
            multinomial(n, &p, &mut tail, &mut out, &mut rng);
            assert_eq!(out.iter().sum::<u64>(), n);
            for j in 0..4 {
                sum[j] += out[j] as f64;
                sumsq[j] += (out[j] * out[j]) as f64;
            }
        }
        for j in 0..4 {
            let mean = sum[j] / reps as f64;
            let var = sumsq[j] / reps as f64 - mean * mean;
            let (em, ev) = (n as f64 * p[j], n as f64 * p[j] * (1.0 - p[j]));
            let se = (ev / reps as f64).sqrt().max(1e-12);
            assert!(
                (mean - em).abs() < 5.0 * se + 1e-12,
                "mean of m_{j}: {mean} vs {em}"
            );
            if ev > 0.0 {
                assert!(
                    (var / ev - 1.0).abs() < 0.05,
                    "variance of m_{j}: {var} vs {ev}"
                );
            }
        }
    }
}

//! A simple random subsample of the observations (`[data] subsample = m`): at most m of
//! the n observations, drawn without replacement and without looking at the values, from
//! a stream of the run's seed. For a sample so large that the chains cannot mix on it
//! (docs/model.md, "Large samples mix badly"), a subsample of about 10^4 observations is a
//! sample from the same distribution; its posterior is correct for the data it holds and
//! wider than the whole sample's would be.
//!
//! Rows given one by one: m distinct row indices by a partial Fisher–Yates shuffle, kept in
//! the order of the file. Rows with counts (frequency weights, or values tabulated at a
//! resolution): how many of each row's copies are kept is multivariate hypergeometric,
//! drawn row after row as one hypergeometric draw each (the copies not yet considered, the
//! row's copies, the draws still to make); rows left with none are dropped. Both give
//! every set of m observations the same probability.

use rand::Rng;
use rand_distr::{Distribution, Hypergeometric};

use crate::error::{Error, Result};

/// Stream purpose of the subsample under [`crate::sampler::rng::check_rng`] (the model
/// check's streams there are its replicate indices and u64::MAX − 3 to u64::MAX).
pub const SUBSAMPLE_PURPOSE: u64 = u64::MAX - 16;

/// Which rows to keep, and with what counts.
#[derive(Debug, Clone, PartialEq)]
pub struct Kept {
    /// Indices into the rows, increasing.
    pub rows: Vec<usize>,
    /// The count kept of each of those rows, when the rows have counts.
    pub counts: Option<Vec<u64>>,
}

/// At most `m` of the observations of `n_rows` rows, each row one observation (`counts`
/// None) or `counts[i]` of them. `None` when there are no more than `m` observations.
pub fn choose<R: Rng + ?Sized>(
    n_rows: usize,
    counts: Option<&[u64]>,
    m: u64,
    rng: &mut R,
) -> Result<Option<Kept>> {
    match counts {
        None => {
            if n_rows as u64 <= m {
                return Ok(None);
            }
            let m = m as usize;
            let mut idx: Vec<usize> = (0..n_rows).collect();
            for i in 0..m {
                let j = rng.random_range(i..n_rows);
                idx.swap(i, j);
            }
            let mut rows = idx[..m].to_vec();
            rows.sort_unstable();
            Ok(Some(Kept { rows, counts: None }))
        }
        Some(c) => {
            let total: u64 = c.iter().sum();
            if total <= m {
                return Ok(None);
            }
            let (mut left, mut to_draw) = (total, m);
            let (mut rows, mut kept) = (Vec::new(), Vec::new());
            for (i, &ci) in c.iter().enumerate() {
                if to_draw == 0 {
                    break;
                }
                let k = if ci == left {
                    to_draw
                } else {
                    Hypergeometric::new(left, ci, to_draw)
                        .map_err(|e| Error::internal(format!("subsample: {e}")))?
                        .sample(rng)
                };
                if k > 0 {
                    rows.push(i);
                    kept.push(k);
                }
                left -= ci;
                to_draw -= k;
            }
            Ok(Some(Kept {
                rows,
                counts: Some(kept),
            }))
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sampler::rng::check_rng;

    #[test]
    fn rows_are_distinct_in_order_and_each_kept_with_probability_m_over_n() {
        // Simple random sampling without replacement includes each unit with
        // probability m/n (common practice, no source); over R replicates the count of
        // inclusions is Binomial(R, m/n), checked within 5 sd at every row.
        let (n, m, reps) = (40usize, 10u64, 4000);
        let mut hits = vec![0u32; n];
        for r in 0..reps {
            let k = choose(n, None, m, &mut check_rng(r, SUBSAMPLE_PURPOSE))
                .unwrap()
                .unwrap();
            assert_eq!(k.rows.len(), m as usize);
            assert!(k.rows.windows(2).all(|w| w[0] < w[1]), "{:?}", k.rows);
            for i in k.rows {
                hits[i] += 1;
            }
        }
        let p = m as f64 / n as f64;
        let (mean, sd) = (reps as f64 * p, (reps as f64 * p * (1.0 - p)).sqrt());
        for (i, &h) in hits.iter().enumerate() {
            assert!((h as f64 - mean).abs() < 5.0 * sd, "row {i}: {h} vs {mean}");
        }
        // No more than m observations: nothing to do.
        assert_eq!(choose(10, None, 10, &mut check_rng(1, 1)).unwrap(), None);
    }

    #[test]
    fn counts_follow_the_multivariate_hypergeometric() {
        // E[k_j] = m c_j / N and Var[k_j] = m (c_j/N)(1 − c_j/N)(N − m)/(N − 1) (the
        // multivariate hypergeometric; Johnson, Kotz & Balakrishnan 1997, ch. 39, from
        // memory); means checked within 5 standard errors over R replicates.
        let c = [5u64, 0, 17, 1, 40, 9, 28];
        let (total, m, reps) = (100u64, 30u64, 4000u64);
        let mut sums = [0.0f64; 7];
        for r in 0..reps {
            let k = choose(c.len(), Some(&c), m, &mut check_rng(r, SUBSAMPLE_PURPOSE))
                .unwrap()
                .unwrap();
            let counts = k.counts.unwrap();
            assert_eq!(counts.iter().sum::<u64>(), m);
            for (&i, &ki) in k.rows.iter().zip(&counts) {
                assert!(ki >= 1 && ki <= c[i], "row {i}: {ki} of {}", c[i]);
                sums[i] += ki as f64;
            }
        }
        for (j, &cj) in c.iter().enumerate() {
            let q = cj as f64 / total as f64;
            let mean = m as f64 * q;
            let var = m as f64 * q * (1.0 - q) * (total - m) as f64 / (total - 1) as f64;
            let got = sums[j] / reps as f64;
            assert!(
                (got - mean).abs() <= 5.0 * (var / reps as f64).sqrt() + 1e-12,
                "row {j}: mean {got} vs {mean}"
            );
        }
        assert_eq!(
            choose(2, Some(&[3, 4]), 7, &mut check_rng(1, 1)).unwrap(),
            None
        );
    }
}

//! The data the posterior predictive check compares: the observed sample on its own scale
//! (frequency weights expanded, a random subsample when it is larger than the cap), the
//! kept draws the check uses (evenly spaced over the pooled chains) and one replicated data
//! set per draw, drawn from that draw's mixture and mapped back through the run's transform.
//!
//! Every random number comes from [`crate::sampler::rng::check_rng`], keyed by the run's
//! seed and the replicate's index, so the replicates do not depend on the thread count.

use std::collections::BTreeSet;

use rand::Rng;

use crate::data::{Standardised, Transform};
use crate::dist::normal;
use crate::error::Result;
use crate::sampler::rng::check_rng;
use crate::store::{DrawRow, StoredChains};

/// Stream purpose of the observed subsample (replicates use their index, from 0).
pub const SUBSAMPLE_STREAM: u64 = u64::MAX;

/// The observed sample the statistics are computed on.
#[derive(Debug, Clone, PartialEq)]
pub struct Observed {
    /// Ascending values on the data's own scale.
    pub sorted: Vec<f64>,
    /// Observations in the sample (frequency weights counted).
    pub total: usize,
    /// Whether `sorted` is a random subsample of the `total`.
    pub subsampled: bool,
}

/// The observations of `data` on the original scale, one value per row with its count.
pub fn rows_on_scale(data: &Standardised, t: Transform) -> Vec<(f64, u64)> {
    data.z
        .iter()
        .enumerate()
        .map(|(i, &z)| {
            let c = data.counts.as_ref().map_or(1, |c| c[i]);
            (t.inverse(data.to_data(z)), c)
        })
        .filter(|&(_, c)| c > 0)
        .collect()
}

/// `m` distinct indices from 0..n, ascending (Floyd's algorithm; needs m ≤ n).
pub fn distinct_indices<R: Rng>(n: usize, m: usize, rng: &mut R) -> Vec<usize> {
    let mut set = BTreeSet::new();
    for j in n - m..n {
        let t = rng.random_range(0..=j);
        if !set.insert(t) {
            set.insert(j);
        }
    }
    set.into_iter().collect()
}

/// The observed sample, expanded by counts, or a subsample of `cap` observations drawn
/// without replacement (stream [`SUBSAMPLE_STREAM`] of `seed`) when there are more.
pub fn observed(rows: &[(f64, u64)], cap: usize, seed: u64) -> Observed {
    let total: usize = rows.iter().map(|&(_, c)| c as usize).sum();
    let picks: Option<Vec<usize>> =
        (total > cap).then(|| distinct_indices(total, cap, &mut check_rng(seed, SUBSAMPLE_STREAM)));
    let mut sorted = Vec::with_capacity(total.min(cap));
    match &picks {
        None => {
            for &(v, c) in rows {
                sorted.extend(std::iter::repeat_n(v, c as usize));
            }
        }
        Some(p) => {
            // Walk the rows' cumulative counts alongside the ascending picks.
            let (mut row, mut end) = (0, rows[0].1 as usize);
            for &i in p {
                while i >= end {
                    row += 1;
                    end += rows[row].1 as usize;
                }
                sorted.push(rows[row].0);
            }
        }
    }
    sorted.sort_by(f64::total_cmp);
    Observed {
        sorted,
        total,
        subsampled: picks.is_some(),
    }
}

/// Indices of `m` draws evenly spaced over `total` pooled draws: ⌊j·total/m⌋, j < m
/// (all of them when m ≥ total).
pub fn evenly_spaced(total: usize, m: usize) -> Vec<usize> {
    if m >= total {
        return (0..total).collect();
    }
    (0..m).map(|j| j * total / m).collect()
}

/// Reads the draws at pooled positions `picks` (ascending; chain after chain, each chain
/// cut to `len` rows), holding only those rows.
pub fn read_draws(stored: &StoredChains, len: usize, picks: &[usize]) -> Result<Vec<DrawRow>> {
    let mut out = Vec::with_capacity(picks.len());
    let mut next = 0;
    let mut pos_in_chain = vec![0usize; stored.paths.len()];
    stored.scan(|c, row| {
        let r = pos_in_chain[c];
        pos_in_chain[c] += 1;
        if r < len && next < picks.len() && picks[next] == c * len + r {
            out.push(row.clone());
            next += 1;
        }
    })?;
    Ok(out)
}

/// A replicated data set of `n` observations from the mixture of `row` (fitted scale),
/// mapped to the original scale by `t`, ascending.
pub fn replicate<R: Rng>(row: &DrawRow, n: usize, t: Transform, rng: &mut R) -> Vec<f64> {
    let total: f64 = row.weight.iter().sum();
    let mut cum = Vec::with_capacity(row.weight.len());
    let mut acc = 0.0;
    for w in &row.weight {
        acc += w / total;
        cum.push(acc);
    }
    let last = cum.len() - 1;
    let mut out: Vec<f64> = (0..n)
        .map(|_| {
            let u: f64 = rng.random();
            let k = cum.partition_point(|&c| c <= u).min(last);
            t.inverse(normal(row.mean[k], row.sd[k], rng))
        })
        .collect();
    out.sort_by(f64::total_cmp);
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn floyd_gives_distinct_sorted_indices_in_range() {
        let mut rng = check_rng(1, 0);
        let v = distinct_indices(50, 20, &mut rng);
        assert_eq!(v.len(), 20);
        assert!(v.windows(2).all(|w| w[0] < w[1]) && v[19] < 50);
        assert_eq!(distinct_indices(7, 7, &mut rng), (0..7).collect::<Vec<_>>());
    }

    #[test]
    fn counts_are_expanded_and_subsampled_from_the_expansion() {
        let rows = [(1.0, 3), (2.0, 0), (5.0, 2)];
        let o = observed(&rows, 100, 9);
        assert_eq!(o.sorted, vec![1.0, 1.0, 1.0, 5.0, 5.0]);
        assert_eq!((o.total, o.subsampled), (5, false));
        // 1000 copies of 0 and 3000 of 1 subsampled to 2000: about a quarter zeros
        // (hypergeometric sd ≈ 14; 6 sd allowed).
        let o = observed(&[(0.0, 1000), (1.0, 3000)], 2000, 9);
        let zeros = o.sorted.iter().filter(|&&v| v == 0.0).count() as f64;
        assert!(
            o.subsampled && (zeros - 500.0).abs() < 6.0 * 14.0,
            "{zeros}"
        );
    }

    #[test]
    fn replicate_matches_the_mixture_moments() {
        // Mixture 0.3 N(−2, 1) + 0.7 N(3, 0.5²): mean 1.5, variance
        // E X² − (E X)² = 0.3·(1 + 4) + 0.7·(0.25 + 9) − 1.5² = 5.725 (hand computation).
        let row = DrawRow {
            weight: vec![0.3, 0.7],
            mean: vec![-2.0, 3.0],
            sd: vec![1.0, 0.5],
            ..DrawRow::empty()
        };
        let x = replicate(&row, 200_000, Transform::None, &mut check_rng(3, 0));
        let n = x.len() as f64;
        let m = x.iter().sum::<f64>() / n;
        let v = x.iter().map(|a| (a - m) * (a - m)).sum::<f64>() / n;
        assert!(
            (m - 1.5).abs() < 0.03 && (v - 5.725).abs() < 0.06,
            "{m} {v}"
        );
    }
}

//! Rank normalisation and folding (Vehtari et al. 2021, section 3).
//!
//! Draws of all (split) chains are pooled and ranked, ties getting the average
//! of the ranks they span; rank `r` of `S` becomes the normal score
//! `Phi^{-1}((r - 3/8) / (S + 1/4))` (Blom's fractional offset).  Folding
//! replaces each draw by its absolute distance from the pooled median, so that
//! R-hat of the folded draws reacts to chains that differ in spread.

use statrs::function::erf::erfc_inv;

use super::quantile::median;

/// Blom's fractional offset `c` in `(r - c) / (S - 2c + 1)`.
const BLOM_OFFSET: f64 = 3.0 / 8.0;

/// 1-based ranks of `values`, ties given the average of the ranks they occupy.
pub(crate) fn average_ranks(values: &[f64]) -> Vec<f64> {
    let mut order: Vec<usize> = (0..values.len()).collect();
    order.sort_by(|&a, &b| values[a].total_cmp(&values[b]));
    let mut ranks = vec![0.0; values.len()];
    let mut start = 0;
    while start < order.len() {
        let mut end = start + 1;
        while end < order.len() && values[order[end]] == values[order[start]] {
            end += 1;
        }
        // Positions start..end hold ranks start+1 ..= end; their mean is exact in f64.
        let avg = (start + 1 + end) as f64 / 2.0;
        for &i in &order[start..end] {
            ranks[i] = avg;
        }
        start = end;
    }
    ranks
}

/// Standard normal quantile function.
pub(crate) fn normal_quantile(p: f64) -> f64 {
    -std::f64::consts::SQRT_2 * erfc_inv(2.0 * p)
}

/// Rank-normalises all rows jointly: pooled average ranks mapped to normal
/// scores, returned in the same row layout.
pub(crate) fn rank_normalize(rows: &[Vec<f64>]) -> Vec<Vec<f64>> {
    let pooled: Vec<f64> = rows.iter().flatten().copied().collect();
    let ranks = average_ranks(&pooled);
    let denom = pooled.len() as f64 - 2.0 * BLOM_OFFSET + 1.0;
    let mut scores = ranks
        .into_iter()
        .map(|r| normal_quantile((r - BLOM_OFFSET) / denom));
    rows.iter()
        .map(|row| scores.by_ref().take(row.len()).collect())
        .collect()
}

/// Folds all rows about their pooled median: `|x - median|`.
pub(crate) fn fold(rows: &[Vec<f64>]) -> Vec<Vec<f64>> {
    let pooled: Vec<f64> = rows.iter().flatten().copied().collect();
    let med = median(&pooled);
    rows.iter()
        .map(|row| row.iter().map(|x| (x - med).abs()).collect())
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ties_get_average_ranks() {
        // Worked by hand: sorted 1, 2, 2, 3, 2 ties at positions 2-4 -> rank 3.
        assert_eq!(
            average_ranks(&[2.0, 1.0, 2.0, 3.0, 2.0]),
            vec![3.0, 1.0, 3.0, 5.0, 3.0]
        );
    }

    #[test]
    fn normal_quantile_known_values() {
        // Standard normal quantiles, common practice, no source: Phi^{-1}(0.975) = 1.959963984540054.
        assert!((normal_quantile(0.975) - 1.959963984540054).abs() < 1e-12);
        assert!(normal_quantile(0.5).abs() < 1e-15);
        assert!((normal_quantile(0.1586553) + 0.99999997).abs() < 1e-6);
    }

    #[test]
    fn rank_normalize_is_symmetric_and_keeps_layout() {
        let rows = vec![vec![10.0, 30.0], vec![20.0, 40.0]];
        let z = rank_normalize(&rows);
        assert_eq!(z.len(), 2);
        // ranks 1,3 / 2,4 of S = 4: scores of 1 and 4 are opposite.
        assert!((z[0][0] + z[1][1]).abs() < 1e-12);
        assert!((z[1][0] + z[0][1]).abs() < 1e-12);
        assert!(z[0][0] < z[1][0] && z[1][0] < z[0][1]);
    }
}

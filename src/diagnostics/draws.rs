//! Checked, reshaped views of multi-chain draws shared by every diagnostic:
//! shape and finiteness checks, chain splitting, pooled sorting, and the
//! exact-constancy tests that the edge-case conventions rely on.

use super::error::DiagnosticsError;

/// Fewest draws per chain accepted (each half of a split chain then has two).
/// ArviZ uses the same minimum (`min_draws=4`).
pub const MIN_DRAWS: usize = 4;

/// Draws that passed validation, with the pieces the diagnostics reuse.
#[derive(Debug, Clone)]
pub(crate) struct Prepared {
    /// The original chains, copied.
    pub chains: Vec<Vec<f64>>,
    /// Each chain split into its first and last `n / 2` draws (the middle draw
    /// of an odd-length chain is dropped), giving `2 * chains` rows.
    pub split: Vec<Vec<f64>>,
    /// All original draws pooled and sorted ascending.
    pub sorted: Vec<f64>,
}

impl Prepared {
    /// Validates `chains` and builds the shared views.
    pub fn new(chains: &[&[f64]]) -> Result<Self, DiagnosticsError> {
        validate(chains)?;
        let owned: Vec<Vec<f64>> = chains.iter().map(|c| c.to_vec()).collect();
        let split = split_rows(&owned);
        let mut sorted: Vec<f64> = owned.iter().flatten().copied().collect();
        sorted.sort_by(f64::total_cmp);
        Ok(Prepared {
            chains: owned,
            split,
            sorted,
        })
    }

    /// Total number of original draws.
    pub fn total_draws(&self) -> usize {
        self.sorted.len()
    }

    /// True when every original draw equals every other.
    pub fn is_constant(&self) -> bool {
        self.sorted.first() == self.sorted.last()
    }
}

/// Checks there is at least one chain, all chains have the same length of at
/// least [`MIN_DRAWS`], and every draw is finite.
pub(crate) fn validate(chains: &[&[f64]]) -> Result<(), DiagnosticsError> {
    let first = chains.first().ok_or(DiagnosticsError::NoChains)?;
    let expected = first.len();
    for (chain, c) in chains.iter().enumerate() {
        if c.len() != expected {
            return Err(DiagnosticsError::UnequalChainLengths {
                chain,
                len: c.len(),
                expected,
            });
        }
    }
    if expected < MIN_DRAWS {
        return Err(DiagnosticsError::TooFewDraws {
            draws: expected,
            min: MIN_DRAWS,
        });
    }
    for (chain, c) in chains.iter().enumerate() {
        if let Some((draw, &value)) = c.iter().enumerate().find(|(_, v)| !v.is_finite()) {
            return Err(DiagnosticsError::NonFinite { chain, draw, value });
        }
    }
    Ok(())
}

/// Splits every row into its first `n / 2` and last `n / 2` values, first
/// halves of all rows before second halves (ArviZ's `_split_chains` order).
pub(crate) fn split_rows(rows: &[Vec<f64>]) -> Vec<Vec<f64>> {
    let mut out = Vec::with_capacity(2 * rows.len());
    for r in rows {
        out.push(r[..r.len() / 2].to_vec());
    }
    for r in rows {
        out.push(r[r.len() - r.len() / 2..].to_vec());
    }
    out
}

/// True when every value in `row` is equal (an empty row counts as constant).
pub(crate) fn row_is_constant(row: &[f64]) -> bool {
    row.iter().all(|&v| v == row[0])
}

/// Arithmetic mean; exactly the common value when all values are equal, so
/// constancy is never blurred by rounding of the sum.
pub(crate) fn mean(row: &[f64]) -> f64 {
    if row_is_constant(row) {
        return row[0];
    }
    row.iter().sum::<f64>() / row.len() as f64
}

/// Sample variance with divisor `n - 1`; exactly 0 for equal values.
pub(crate) fn variance(row: &[f64]) -> f64 {
    if row_is_constant(row) {
        return 0.0;
    }
    let m = mean(row);
    row.iter().map(|v| (v - m) * (v - m)).sum::<f64>() / (row.len() as f64 - 1.0)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn split_drops_middle_of_odd_chain() {
        let rows = vec![
            vec![1.0, 2.0, 3.0, 4.0, 5.0],
            vec![6.0, 7.0, 8.0, 9.0, 10.0],
        ];
        let s = split_rows(&rows);
        assert_eq!(
            s,
            vec![
                vec![1.0, 2.0],
                vec![6.0, 7.0],
                vec![4.0, 5.0],
                vec![9.0, 10.0]
            ]
        );
    }

    #[test]
    fn validation_errors_name_the_problem() {
        let a = [1.0, 2.0, 3.0, 4.0];
        let b = [1.0, 2.0, 3.0];
        assert_eq!(validate(&[]), Err(DiagnosticsError::NoChains));
        assert_eq!(
            validate(&[&a, &b]),
            Err(DiagnosticsError::UnequalChainLengths {
                chain: 1,
                len: 3,
                expected: 4
            })
        );
        assert_eq!(
            validate(&[&b]),
            Err(DiagnosticsError::TooFewDraws { draws: 3, min: 4 })
        );
        let c = [1.0, f64::INFINITY, 3.0, 4.0];
        assert_eq!(
            validate(&[&a, &c]),
            Err(DiagnosticsError::NonFinite {
                chain: 1,
                draw: 1,
                value: f64::INFINITY
            })
        );
    }

    #[test]
    fn variance_of_equal_values_is_exactly_zero() {
        // 0.1 summed ten times is not exactly 1.0; the constancy check avoids that residue.
        let row = [0.1; 10];
        assert_eq!(mean(&row), 0.1);
        assert_eq!(variance(&row), 0.0);
        assert_eq!(variance(&[1.0, 2.0, 3.0, 4.0]), 5.0 / 3.0);
    }
}

//! The distinct values of a sample with their counts, gathered one row at a time: what a
//! sample recorded at a resolution is, whatever its number of rows. Memory grows with the
//! distinct values only (one map entry each), never with the rows.
//!
//! Values are keyed by their bits in the total order of f64 (`f64::total_cmp`), so the
//! table comes out sorted exactly as sorting the rows by `total_cmp` would sort them:
//! −0.0 and 0.0 stay two entries here, in that order, as they are two rows there, and the
//! tabulating steps after the loader merge them the same way in both cases.

use std::collections::BTreeMap;

/// Counts per distinct value.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct Tally {
    by_key: BTreeMap<u64, u64>,
    total: u64,
}

/// A key whose unsigned order is the total order of f64 (IEEE 754 totalOrder: flip every
/// bit of negatives, the sign bit of the rest).
fn key(x: f64) -> u64 {
    let b = x.to_bits();
    if b >> 63 == 1 {
        !b
    } else {
        b | (1 << 63)
    }
}

fn value(k: u64) -> f64 {
    f64::from_bits(if k >> 63 == 1 { k & !(1 << 63) } else { !k })
}

impl Tally {
    pub fn new() -> Tally {
        Tally::default()
    }

    /// Adds `count` observations of `x`. `None` when the total would pass u64 (nothing is
    /// added then).
    pub fn add(&mut self, x: f64, count: u64) -> Option<()> {
        self.total = self.total.checked_add(count)?;
        // The entry cannot overflow: it is at most the total.
        *self.by_key.entry(key(x)).or_default() += count;
        Some(())
    }

    /// Number of distinct values (bit patterns).
    pub fn len(&self) -> usize {
        self.by_key.len()
    }

    pub fn is_empty(&self) -> bool {
        self.by_key.is_empty()
    }

    /// Number of observations.
    pub fn total(&self) -> u64 {
        self.total
    }

    /// The distinct values in `total_cmp` order with their counts.
    pub fn into_table(self) -> (Vec<f64>, Vec<u64>) {
        self.by_key.into_iter().map(|(k, c)| (value(k), c)).unzip()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn keys_follow_the_total_order_and_round_trip() {
        // The order of IEEE 754 totalOrder, as f64::total_cmp documents it.
        let xs = [
            f64::NEG_INFINITY,
            -f64::MAX,
            -1.5,
            -f64::MIN_POSITIVE,
            -0.0,
            0.0,
            5e-324,
            0.01,
            2.0,
            f64::MAX,
            f64::INFINITY,
        ];
        for w in xs.windows(2) {
            assert!(key(w[0]) < key(w[1]), "{} {}", w[0], w[1]);
            assert_eq!(w[0].total_cmp(&w[1]), std::cmp::Ordering::Less);
        }
        for x in xs {
            assert_eq!(value(key(x)).to_bits(), x.to_bits());
        }
    }

    #[test]
    fn counts_add_up_per_value() {
        let mut t = Tally::new();
        for (x, c) in [(0.2, 1), (-0.1, 2), (0.2, 3), (0.0, 1), (-0.0, 1)] {
            t.add(x, c).unwrap();
        }
        assert_eq!((t.len(), t.total()), (4, 8));
        let (v, c) = t.into_table();
        assert_eq!(c, vec![2, 1, 1, 4]);
        assert_eq!(v[0], -0.1);
        assert!(v[1].is_sign_negative() && v[1] == 0.0 && v[2].is_sign_positive());
        assert_eq!(v[3], 0.2);
        let mut t = Tally::new();
        t.add(1.0, u64::MAX).unwrap();
        assert!(t.add(2.0, 1).is_none());
        assert_eq!((t.len(), t.total()), (1, u64::MAX));
    }
}

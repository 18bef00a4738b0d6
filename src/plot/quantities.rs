//! The label-invariant scalar quantities of each draw that the trace and rank plots show:
//! log-likelihood, occupied components, concentration, and the common σ of a location
//! kernel (component labels switch, so per-component parameters are not shown).

use crate::store::{ChainScalars, ScalarDraws};

/// One scalar quantity, one series per chain.
#[derive(Debug, Clone, PartialEq)]
pub struct Quantity {
    /// Column-style name (`loglik`, `occupied`, `concentration`, `sigma`).
    pub name: &'static str,
    /// Axis label.
    pub label: &'static str,
    pub chains: Vec<Vec<f64>>,
}

impl Quantity {
    /// Whether every draw of every chain is the same value (e.g. a fixed concentration).
    pub fn is_constant(&self) -> bool {
        let mut it = self.chains.iter().flatten();
        match it.next() {
            Some(&first) => it.all(|&v| v == first),
            None => true,
        }
    }
}

/// The quantities of a run; `sigma` only when `location_kernel` (then every component
/// shares it and `sd_1` is that common value).
pub fn scalar_quantities(draws: &ScalarDraws, location_kernel: bool) -> Vec<Quantity> {
    let series = |f: &dyn Fn(&ChainScalars) -> Vec<f64>| -> Vec<Vec<f64>> {
        draws.chains.iter().map(f).collect()
    };
    let mut q = vec![
        Quantity {
            name: "loglik",
            label: "log-likelihood",
            chains: series(&|c| c.loglik.clone()),
        },
        Quantity {
            name: "occupied",
            label: "occupied components",
            chains: series(&|c| c.occupied.iter().map(|&o| f64::from(o)).collect()),
        },
        Quantity {
            name: "concentration",
            label: "concentration",
            chains: series(&|c| c.concentration.clone()),
        },
    ];
    if location_kernel {
        q.push(Quantity {
            name: "sigma",
            label: "common σ",
            chains: series(&|c| c.sd1.clone()),
        });
    }
    q
}

/// Ranks of `values` among themselves, 1-based, ties given their average rank (as
/// `scipy.stats.rankdata(method="average")` does).
pub fn average_ranks(values: &[f64]) -> Vec<f64> {
    let mut idx: Vec<usize> = (0..values.len()).collect();
    idx.sort_by(|&a, &b| values[a].total_cmp(&values[b]));
    let mut ranks = vec![0.0; values.len()];
    let mut i = 0;
    while i < idx.len() {
        let mut j = i;
        while j + 1 < idx.len() && values[idx[j + 1]] == values[idx[i]] {
            j += 1;
        }
        let r = (i + j) as f64 / 2.0 + 1.0;
        for &k in &idx[i..=j] {
            ranks[k] = r;
        }
        i = j + 1;
    }
    ranks
}

/// Ranks 1..=n of `values` with ties broken in a fixed pseudo-random order (a hash of the
/// position), so tied values share their block of ranks evenly and the result is the same
/// on every call.
pub fn tie_broken_ranks(values: &[f64]) -> Vec<f64> {
    let key = |i: usize| -> u64 {
        // SplitMix64 finaliser (Steele, Lea & Flood 2014) of the position.
        let mut z = (i as u64).wrapping_add(0x9E37_79B9_7F4A_7C15);
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    };
    let mut idx: Vec<usize> = (0..values.len()).collect();
    idx.sort_by(|&a, &b| values[a].total_cmp(&values[b]).then(key(a).cmp(&key(b))));
    let mut ranks = vec![0.0; values.len()];
    for (r, &i) in idx.iter().enumerate() {
        ranks[i] = (r + 1) as f64;
    }
    ranks
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn average_ranks_match_scipy_docs_example() {
        // scipy.stats.rankdata([0, 2, 3, 2]) = [1, 2.5, 4, 2.5] (scipy documentation example).
        assert_eq!(
            average_ranks(&[0.0, 2.0, 3.0, 2.0]),
            vec![1.0, 2.5, 4.0, 2.5]
        );
    }

    #[test]
    fn tie_broken_ranks_are_a_permutation_that_respects_order() {
        let v = [3.0, 1.0, 1.0, 2.0, 1.0];
        let r = tie_broken_ranks(&v);
        let mut s = r.clone();
        s.sort_by(f64::total_cmp);
        assert_eq!(s, vec![1.0, 2.0, 3.0, 4.0, 5.0]);
        assert_eq!(r[0], 5.0);
        assert_eq!(r[3], 4.0);
        assert_eq!(r, tie_broken_ranks(&v));
    }
}

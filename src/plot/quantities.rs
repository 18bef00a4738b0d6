//! The label-invariant scalar quantities of each draw that the trace and rank plots show:
//! log-likelihood, occupied components, concentration, and the common σ of a location
//! kernel (component labels switch, so per-component parameters are not shown).

use crate::store::RunDraws;

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
pub fn scalar_quantities(draws: &RunDraws, location_kernel: bool) -> Vec<Quantity> {
    let series = |f: &dyn Fn(&crate::store::DrawRow) -> f64| -> Vec<Vec<f64>> {
        draws.chains.iter().map(|c| c.rows.iter().map(f).collect()).collect()
    };
    let mut q = vec![
        Quantity {
            name: "loglik",
            label: "log-likelihood",
            chains: series(&|r| r.loglik),
        },
        Quantity {
            name: "occupied",
            label: "occupied components",
            chains: series(&|r| r.occupied as f64),
        },
        Quantity {
            name: "concentration",
            label: "concentration",
            chains: series(&|r| r.concentration),
        },
    ];
    if location_kernel {
        q.push(Quantity {
            name: "sigma",
            label: "common σ",
            chains: series(&|r| r.sd.first().copied().unwrap_or(f64::NAN)),
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn average_ranks_match_scipy_docs_example() {
        // scipy.stats.rankdata([0, 2, 3, 2]) = [1, 2.5, 4, 2.5] (scipy documentation example).
        assert_eq!(average_ranks(&[0.0, 2.0, 3.0, 2.0]), vec![1.0, 2.5, 4.0, 2.5]);
    }
}

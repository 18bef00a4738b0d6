//! The label-invariant scalars of every stored draw (log-likelihood, occupied components,
//! concentration, and the first component's sd, which is the common σ of a location
//! kernel), one vector per chain, every row of every chain: four numbers a draw, what the
//! gate's scalar quantities and the trace and rank plots need, read without holding the
//! component parameters.

use super::draws::{DrawRow, RunDraws};
use super::stream::StoredChains;
use crate::error::Result;

/// The scalars of one chain, one value per stored draw.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct ChainScalars {
    pub chain: u64,
    pub loglik: Vec<f64>,
    pub occupied: Vec<u32>,
    pub concentration: Vec<f64>,
    /// `sd_1` of each draw (NaN for a table without components, which cannot occur in a
    /// mixband run).
    pub sd1: Vec<f64>,
}

impl ChainScalars {
    fn push(&mut self, row: &DrawRow) {
        self.loglik.push(row.loglik);
        self.occupied.push(row.occupied);
        self.concentration.push(row.concentration);
        self.sd1.push(row.sd.first().copied().unwrap_or(f64::NAN));
    }

    /// Number of stored draws.
    pub fn len(&self) -> usize {
        self.loglik.len()
    }

    pub fn is_empty(&self) -> bool {
        self.loglik.is_empty()
    }
}

/// The scalars of every chain of a run, and K.
#[derive(Debug, Clone, PartialEq)]
pub struct ScalarDraws {
    pub k: usize,
    pub chains: Vec<ChainScalars>,
}

impl ScalarDraws {
    /// Reads the scalars of `stored` row by row (one pass; every row is checked).
    pub fn read(stored: &StoredChains) -> Result<Self> {
        let mut chains: Vec<ChainScalars> = stored
            .ids
            .iter()
            .map(|&chain| ChainScalars {
                chain,
                ..Default::default()
            })
            .collect();
        let mut k = 0;
        stored.scan(|c, row| {
            // As in `read_run_draws`: K from the first row of the last chain that has one.
            if chains[c].is_empty() {
                k = row.weight.len();
            }
            chains[c].push(row);
        })?;
        Ok(ScalarDraws { k, chains })
    }

    /// The scalars of draws already in memory.
    pub fn from_run(run: &RunDraws) -> Self {
        ScalarDraws {
            k: run.k,
            chains: run
                .chains
                .iter()
                .map(|c| {
                    let mut s = ChainScalars {
                        chain: c.chain,
                        ..Default::default()
                    };
                    c.rows.iter().for_each(|r| s.push(r));
                    s
                })
                .collect(),
        }
    }

    /// Number of draws of each chain.
    pub fn lens(&self) -> Vec<usize> {
        self.chains.iter().map(ChainScalars::len).collect()
    }

    /// Length of the shortest chain (diagnostics use that many draws of each).
    pub fn min_len(&self) -> usize {
        self.chains.iter().map(ChainScalars::len).min().unwrap_or(0)
    }
}

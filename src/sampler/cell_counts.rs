//! Data recorded at a resolution, conditional sweep: the allocation as counts per cell.
//!
//! Given the parameters, the observations of a cell are exchangeable and each falls in
//! component k with probability p_k ∝ w_k P_k(cell), P_k(cell) = Φ((hi − μ_k)/σ_k) −
//! Φ((lo − μ_k)/σ_k), independently. So the counts (m_c1, …, m_cK) of cell c are one
//! Multinomial(n_c, p) draw: the exact conditional of the allocation with the exact values
//! integrated out, at a cost of O(K) per cell whatever n_c is ([`crate::dist::multinomial`]);
//! a cell holding one observation takes the categorical draw directly.
//!
//! The component parameters are then updated given these counts
//! ([`super::cell_params`]), so no exact value is drawn and a sweep costs O(cells × K)
//! instead of O(n). Cells are visited in blocks of [`BLOCK`] with one random stream each,
//! as in [`super::censored`].

use rand::Rng;

use super::allocate::reference::pick;
use super::allocate::BLOCK;
use super::censored::Params;
use super::rng::StreamKey;
use crate::data::Cells;
use crate::dist::multinomial;
use crate::model::State;

/// The allocation of a sweep as counts: for each component, the cells it holds
/// observations of and how many, in cell order.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct CellCounts {
    /// `held[k]`: (cell index, m_ck, ln P_k(cell) at the parameters the counts were drawn
    /// from) for every cell with m_ck > 0.
    pub held: Vec<Vec<(u32, u64, f64)>>,
}

impl CellCounts {
    /// n_k = Σ_c m_ck for every component.
    pub fn totals(&self) -> Vec<u64> {
        self.held
            .iter()
            .map(|h| h.iter().map(|&(_, m, _)| m).sum())
            .collect()
    }
}

/// Draws the counts of every cell given the state and returns them with the censored
/// log-likelihood of the state, Σ_c n_c ln Σ_k w_k P_k(c).
pub fn allocate_cell_counts(
    cells: &Cells,
    state: &State,
    key: &StreamKey,
    sweep: u64,
) -> (CellCounts, f64) {
    let k = state.k();
    let par = Params::of(state);
    let mut counts = CellCounts {
        held: vec![Vec::new(); k],
    };
    let (mut p, mut tail, mut m) = (vec![0.0; k], vec![0.0; k], vec![0u64; k]);
    let mut ln_p = vec![0.0; k];
    let mut loglik = 0.0;
    for b in 0..cells.len().div_ceil(BLOCK) {
        let range = b * BLOCK..((b + 1) * BLOCK).min(cells.len());
        let mut rng = key.block_rng(sweep, b as u64);
        let mut block_ll = 0.0;
        for c in range {
            let (lo, hi, n) = (cells.lo[c], cells.hi[c], cells.count[c]);
            let (mx, s) = par.cell_terms_keep(lo, hi, &mut p, &mut ln_p);
            block_ll += n as f64 * (mx + s.ln());
            if n == 1 {
                let j = pick(&p, rng.random::<f64>() * s);
                counts.held[j].push((c as u32, 1, ln_p[j]));
                continue;
            }
            multinomial(n, &p, &mut tail, &mut m, &mut rng);
            for (j, &mj) in m.iter().enumerate() {
                if mj > 0 {
                    counts.held[j].push((c as u32, mj, ln_p[j]));
                }
            }
        }
        loglik += block_ll;
    }
    (counts, loglik)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::data::Transform;
    use crate::sampler::censored::loglik_censored;

    fn state() -> State {
        State {
            log_w: vec![0.2f64.ln(), 0.5f64.ln(), 0.3f64.ln()],
            log_v: vec![],
            log_1mv: vec![],
            mu: vec![-1.0, 0.0, 1.2],
            var: vec![0.25, 1.0, 0.36],
            concentration: 1.0,
            var_scale: 1.0,
        }
    }

    #[test]
    fn loglik_is_the_censored_likelihood() {
        let x = [-1.5, -1.0, -1.0, 0.0, 0.5, 0.5, 0.5, 2.0];
        let cells = Cells::from_rows(&x, None, 0.5, Transform::None, 0.0, 1.0);
        let s = state();
        let (_, ll) = allocate_cell_counts(&cells, &s, &StreamKey::new(3, 1), 1);
        let want = loglik_censored(&cells, &s);
        assert!((ll - want).abs() < 1e-12 * want.abs(), "{ll} vs {want}");
    }

    #[test]
    fn every_observation_is_counted_once() {
        let x: Vec<f64> = (0..500)
            .map(|i| ((i * 37) % 23) as f64 * 0.2 - 2.0)
            .collect();
        let cells = Cells::from_rows(&x, None, 0.2, Transform::None, 0.0, 1.0);
        let (counts, _) = allocate_cell_counts(&cells, &state(), &StreamKey::new(5, 2), 4);
        let mut per_cell = vec![0u64; cells.len()];
        for h in &counts.held {
            for &(c, m, _) in h {
                per_cell[c as usize] += m;
            }
        }
        assert_eq!(per_cell, cells.count);
        assert_eq!(counts.totals().iter().sum::<u64>(), 500);
    }
}

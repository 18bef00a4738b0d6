//! Full conditionals of the mixture weights given the allocation counts n_k.
//!
//! Dirichlet(δ): w | z ~ Dirichlet(δ + n_1, …, δ + n_K).
//! Truncated stick-breaking (Ishwaran & James 2001, blocked Gibbs):
//! v_k | z ~ Beta(1 + n_k, α + Σ_{j>k} n_j) for k < K, v_K = 1,
//! w_k = v_k Π_{j<k} (1 − v_j). All draws are made in log space.

use rand::Rng;

use crate::config::WeightsKind;
use crate::dist::{log_beta, log_dirichlet};
use crate::model::State;

pub fn update_weights<R: Rng + ?Sized>(
    weights: WeightsKind,
    n: &[u64],
    state: &mut State,
    rng: &mut R,
) {
    let k = n.len();
    match weights {
        WeightsKind::Dirichlet => {
            let alpha: Vec<f64> = n.iter().map(|&c| state.concentration + c as f64).collect();
            log_dirichlet(&alpha, rng, &mut state.log_w);
        }
        WeightsKind::StickBreaking => {
            let mut tail: u64 = n.iter().sum();
            for j in 0..k {
                tail -= n[j];
                if j + 1 == k {
                    state.log_v[j] = 0.0;
                    state.log_1mv[j] = 0.0;
                } else {
                    let (lv, l1mv) =
                        log_beta(1.0 + n[j] as f64, state.concentration + tail as f64, rng);
                    state.log_v[j] = lv;
                    state.log_1mv[j] = l1mv;
                }
            }
            state.weights_from_sticks();
        }
    }
}

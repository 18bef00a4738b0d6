//! Draws of the whole state from the prior and data from the model given a state.

use rand::Rng;

use super::{Concentration, Prior, State, VarScale};
use crate::config::{Kernel, WeightsKind};
use crate::dist::{gamma_rate, inv_gamma, log_beta, log_dirichlet, normal};

/// A draw of every parameter from the prior.
pub fn draw_from_prior<R: Rng + ?Sized>(prior: &Prior, rng: &mut R) -> State {
    let k = prior.components;
    let var_scale = match prior.var_scale {
        VarScale::Fixed(b) => b,
        VarScale::Gamma { shape, rate } => gamma_rate(shape, rate, rng),
    };
    let concentration = match prior.concentration {
        Concentration::Fixed(c) => c,
        Concentration::Gamma { shape, rate } => gamma_rate(shape, rate, rng),
    };
    let mut state = State {
        log_w: vec![0.0; k],
        log_v: Vec::new(),
        log_1mv: Vec::new(),
        mu: vec![0.0; k],
        var: vec![0.0; k],
        concentration,
        var_scale,
    };
    match prior.weights {
        WeightsKind::Dirichlet => {
            log_dirichlet(&vec![concentration; k], rng, &mut state.log_w);
        }
        WeightsKind::StickBreaking => {
            state.log_v = vec![0.0; k];
            state.log_1mv = vec![0.0; k];
            for j in 0..k.saturating_sub(1) {
                let (lv, l1mv) = log_beta(1.0, concentration, rng);
                state.log_v[j] = lv;
                state.log_1mv[j] = l1mv;
            }
            state.weights_from_sticks();
        }
    }
    match prior.kernel {
        Kernel::Location => {
            let v = inv_gamma(prior.var_shape, var_scale, rng);
            for j in 0..k {
                state.var[j] = v;
                state.mu[j] = normal(prior.centre, prior.centre_sd, rng);
            }
        }
        Kernel::LocationScale => {
            for j in 0..k {
                let v = inv_gamma(prior.var_shape, var_scale, rng);
                state.var[j] = v;
                state.mu[j] = normal(prior.centre, (v / prior.centre_shrink).sqrt(), rng);
            }
        }
    }
    state
}

/// `n` observations from the mixture in `state`.
pub fn simulate_data<R: Rng + ?Sized>(state: &State, n: usize, rng: &mut R) -> Vec<f64> {
    let w = state.weights();
    (0..n)
        .map(|_| {
            let u: f64 = rng.random::<f64>() * w.iter().sum::<f64>();
            let mut acc = 0.0;
            let mut pick = w.len() - 1;
            for (j, &wj) in w.iter().enumerate() {
                acc += wj;
                if u < acc {
                    pick = j;
                    break;
                }
            }
            normal(state.mu[pick], state.var[pick].sqrt(), rng)
        })
        .collect()
}

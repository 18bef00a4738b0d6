//! A chain's starting point: equal weights, means at observations picked at random by the
//! chain's own stream (so chains start apart), variances at a data-scale value. For data
//! recorded at a resolution the observations are picked from the cells by their counts, so
//! rows and (value, count) tables start alike.

use rand::Rng;

use super::rng::StreamKey;
use crate::config::WeightsKind;
use crate::data::Cells;
use crate::model::{Concentration, Prior, State, VarScale};

pub fn initial_state(x: &[f64], prior: &Prior, key: &StreamKey) -> State {
    start_with(prior, key, |rng| x[rng.random_range(0..x.len())])
}

/// [`initial_state`] for data recorded at a resolution: each mean starts at the centre of
/// the cell of an observation picked at random (at the finite edge of a cell censored at a
/// bound).
pub fn initial_state_from_cells(cells: &Cells, prior: &Prior, key: &StreamKey) -> State {
    let mut upto = Vec::with_capacity(cells.len());
    let mut acc = 0u64;
    for &c in &cells.count {
        acc += c;
        upto.push(acc);
    }
    start_with(prior, key, |rng| {
        let i = rng.random_range(0..acc);
        let c = upto.partition_point(|&u| u <= i);
        let (lo, hi) = (cells.lo[c], cells.hi[c]);
        match (lo.is_finite(), hi.is_finite()) {
            (true, true) => 0.5 * (lo + hi),
            (true, false) => lo,
            (false, true) => hi,
            (false, false) => 0.0,
        }
    })
}

fn start_with<F: FnMut(&mut rand_chacha::ChaCha8Rng) -> f64>(
    prior: &Prior,
    key: &StreamKey,
    mut pick: F,
) -> State {
    let mut rng = key.init_rng();
    let k = prior.components;
    let var_scale = match prior.var_scale {
        VarScale::Fixed(b) => b,
        VarScale::Gamma { shape, rate } => shape / rate,
    };
    let concentration = match prior.concentration {
        Concentration::Fixed(c) => c,
        Concentration::Gamma { shape, rate } => shape / rate,
    };
    // Data are standardised to unit variance; start each component at a quarter of it,
    // narrow enough for components to claim separate parts of the sample.
    let var = 0.25;
    let mu = (0..k).map(|_| pick(&mut rng)).collect();
    let mut state = State {
        log_w: vec![-(k as f64).ln(); k],
        log_v: Vec::new(),
        log_1mv: Vec::new(),
        mu,
        var: vec![var; k],
        concentration,
        var_scale,
    };
    if prior.weights == WeightsKind::StickBreaking {
        // v_j = 1/(K − j) gives equal weights.
        state.log_v = (0..k).map(|j| -((k - j) as f64).ln()).collect();
        state.log_1mv = (0..k)
            .map(|j| {
                if j + 1 == k {
                    0.0
                } else {
                    (((k - j - 1) as f64) / ((k - j) as f64)).ln()
                }
            })
            .collect();
        state.weights_from_sticks();
    }
    state
}

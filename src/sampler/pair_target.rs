//! The posterior of a pair of components with every allocation summed out, the piece
//! the pair moves share (`resplit`, `relocate`):
//! p(w, θ | rest, data) ∝ p(w) p(θ_1) p(θ_2) Π_i (A_i + w_1 f_1(i) + w_2 f_2(i))^{m_i},
//! A_i = Σ_{l ∉ pair} w_l f_l(i), with f the normal density at an exact value or the
//! probability of a cell (data recorded at a resolution), and m_i a row's count; the
//! weight prior (Dirichlet, or truncated stick-breaking through its sticks' change of
//! variables) and the location-scale prior.

use super::pair_coords::Component;
use crate::config::{Kernel, WeightsKind};
use crate::data::Cells;
use crate::dist::{ln_std_normal_interval, LN_SQRT_2PI};
use crate::model::{Prior, State};

/// What the move reads of the data.
#[derive(Debug, Clone, Copy)]
pub enum PairData<'a> {
    /// Exact values, each counting `counts[i]` times (`None`: once).
    Values {
        x: &'a [f64],
        counts: Option<&'a [u64]>,
    },
    /// Cells of data recorded at a resolution.
    Cells(&'a Cells),
}

impl PairData<'_> {
    pub(crate) fn len(&self) -> usize {
        match self {
            PairData::Values { x, .. } => x.len(),
            PairData::Cells(c) => c.len(),
        }
    }

    pub(crate) fn count(&self, i: usize) -> f64 {
        match self {
            PairData::Values { counts, .. } => counts.map_or(1.0, |c| c[i] as f64),
            PairData::Cells(c) => c.count[i] as f64,
        }
    }

    /// ln f(i) for a component N(μ, sd²): the log density at a value, or the log
    /// probability of a cell.
    #[inline]
    pub(crate) fn ln_comp(&self, i: usize, c: &Kern) -> f64 {
        match self {
            PairData::Values { x, .. } => {
                let z = (x[i] - c.mu) / c.sd;
                -0.5 * z * z - c.ln_sd - LN_SQRT_2PI
            }
            PairData::Cells(cells) => {
                ln_std_normal_interval((cells.lo[i] - c.mu) / c.sd, (cells.hi[i] - c.mu) / c.sd)
            }
        }
    }
}

/// A component's normal with its ln sd worked out once.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Kern {
    pub mu: f64,
    pub sd: f64,
    pub ln_sd: f64,
}

impl Kern {
    pub(crate) fn new(mu: f64, var: f64) -> Kern {
        let sd = var.sqrt();
        Kern {
            mu,
            sd,
            ln_sd: sd.ln(),
        }
    }
}

/// ln f_l(i) for every datum i and component l (without the weights), kept up to date
/// as the pair moves change components, so a move reads the other components' terms
/// instead of computing them again.
#[derive(Debug, Clone)]
pub(crate) struct Terms {
    k: usize,
    lnf: Vec<f64>,
}

impl Terms {
    /// The terms of every component of `state`: O(data × K).
    pub(crate) fn new(data: &PairData<'_>, state: &State) -> Terms {
        let k = state.k();
        let mut t = Terms {
            k,
            lnf: vec![0.0; data.len() * k],
        };
        for l in 0..k {
            t.update(data, state, l);
        }
        t
    }

    /// Recomputes component `l`'s terms from the state.
    pub(crate) fn update(&mut self, data: &PairData<'_>, state: &State, l: usize) {
        let c = Kern::new(state.mu[l], state.var[l]);
        for i in 0..data.len() {
            self.lnf[i * self.k + l] = data.ln_comp(i, &c);
        }
    }

    /// ln f_l(i).
    #[inline]
    pub(crate) fn get(&self, i: usize, l: usize) -> f64 {
        self.lnf[i * self.k + l]
    }

    /// ln A_i = ln Σ_{l ∉ {j, k}} w_l f_l(i) for every datum (−∞ when there is no other
    /// component).
    pub(crate) fn rest(&self, state: &State, j: usize, k: usize, rest: &mut [f64]) {
        let others: Vec<usize> = (0..self.k).filter(|&l| l != j && l != k).collect();
        let mut terms = vec![0.0; others.len()];
        for (i, r) in rest.iter_mut().enumerate() {
            for (t, &l) in terms.iter_mut().zip(&others) {
                *t = state.log_w[l] + self.get(i, l);
            }
            *r = crate::dist::log_sum_exp(&terms);
        }
    }
}

/// Σ_i m_i ln(A_i + e^{a(i)} + e^{b(i)}), a(i) and b(i) the pair's weighted log terms.
pub(crate) fn ln_lik_with(
    data: &PairData<'_>,
    rest: &[f64],
    a: impl Fn(usize) -> f64,
    b: impl Fn(usize) -> f64,
) -> f64 {
    let mut total = 0.0;
    for (i, &r) in rest.iter().enumerate() {
        let (ta, tb) = (a(i), b(i));
        let m = r.max(ta).max(tb);
        if m == f64::NEG_INFINITY {
            return f64::NEG_INFINITY;
        }
        let s = (r - m).exp() + (ta - m).exp() + (tb - m).exp();
        total += data.count(i) * (m + s.ln());
    }
    total
}

/// Σ_i m_i ln(A_i + w_1 f_1(i) + w_2 f_2(i)) for a pair at new parameters.
pub(crate) fn ln_lik(data: &PairData<'_>, rest: &[f64], a: Component, b: Component) -> f64 {
    let (ka, kb) = (Kern::new(a.mu, a.var), Kern::new(b.mu, b.var));
    ln_lik_with(
        data,
        rest,
        |i| a.log_w + data.ln_comp(i, &ka),
        |i| b.log_w + data.ln_comp(i, &kb),
    )
}

/// ln p(w) up to a constant, with components `j` and `k` given the weights of `a` and `b`.
pub(crate) fn ln_weight_prior(
    prior: &Prior,
    state: &State,
    j: usize,
    k: usize,
    a: f64,
    b: f64,
) -> f64 {
    match prior.weights {
        // Dirichlet(δ): (δ − 1) Σ ln w; only the pair's terms change.
        WeightsKind::Dirichlet => (state.concentration - 1.0) * (a + b),
        WeightsKind::StickBreaking => {
            let mut log_w = state.log_w.clone();
            log_w[j] = a;
            log_w[k] = b;
            ln_stick_prior(state.concentration, &log_w)
        }
    }
}

/// ln p(w) of truncated stick-breaking weights, v_i ~ Beta(1, α) for i < K, up to a
/// constant: with r_i = Σ_{l ≥ i} w_l, v_i = w_i/r_i, and the map from v to w has
/// Jacobian Π_{i<K} r_i, so ln p(w) = Σ_{i<K} [(α − 1) ln(1 − v_i) − ln r_i],
/// ln(1 − v_i) = ln r_{i+1} − ln r_i.
pub fn ln_stick_prior(alpha: f64, log_w: &[f64]) -> f64 {
    let rem = log_remainders(log_w);
    let k = log_w.len();
    (0..k.saturating_sub(1))
        .map(|i| (alpha - 1.0) * (rem[i + 1] - rem[i]) - rem[i])
        .sum()
}

/// ln r_i = ln Σ_{l ≥ i} w_l, i = 0..K, with r_K = 0 (ln = −∞).
fn log_remainders(log_w: &[f64]) -> Vec<f64> {
    let k = log_w.len();
    let mut rem = vec![f64::NEG_INFINITY; k + 1];
    for i in (0..k).rev() {
        rem[i] = crate::dist::log_add_exp(rem[i + 1], log_w[i]);
    }
    rem
}

/// The sticks of stick-breaking weights from the weights: ln v_i = ln w_i − ln r_i,
/// ln(1 − v_i) = ln r_{i+1} − ln r_i, the last stick 1 (both set to 0 by convention).
fn sticks_from_weights(state: &mut State) {
    let rem = log_remainders(&state.log_w);
    let k = state.k();
    for i in 0..k {
        if i + 1 == k {
            state.log_v[i] = 0.0;
            state.log_1mv[i] = 0.0;
        } else {
            state.log_v[i] = state.log_w[i] - rem[i];
            state.log_1mv[i] = rem[i + 1] - rem[i];
        }
    }
}

/// ln p(μ, σ²) of one location-scale component, up to a constant:
/// σ² ~ IG(a, b), μ | σ² ~ N(m, σ²/κ).
pub(crate) fn ln_nig_prior(prior: &Prior, b: f64, c: Component) -> f64 {
    let d = c.mu - prior.centre;
    -(prior.var_shape + 1.5) * c.var.ln() - (b + 0.5 * prior.centre_shrink * d * d) / c.var
}

/// Writes a pair back into the state (and the sticks, for stick-breaking weights).
pub(crate) fn store(
    prior: &Prior,
    state: &mut State,
    j: usize,
    k: usize,
    a: Component,
    b: Component,
) {
    for (i, c) in [(j, a), (k, b)] {
        state.log_w[i] = c.log_w;
        state.mu[i] = c.mu;
        if prior.kernel == Kernel::LocationScale {
            state.var[i] = c.var;
        }
    }
    if prior.weights == WeightsKind::StickBreaking {
        sticks_from_weights(state);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// ln p(w) of stick-breaking weights against the sticks' densities: statrs'
    /// Beta(1, α) density of each v_i = w_i / r_i, divided by the Jacobian Π r_i of the
    /// map from v to w (change of variables; common practice, no source). Compared as a
    /// difference between two weight vectors, which cancels the constants.
    #[test]
    fn stick_prior_is_the_change_of_variables() {
        use statrs::distribution::{Beta, Continuous};
        let alpha = 1.7;
        let beta = Beta::new(1.0, alpha).unwrap();
        let direct = |w: &[f64]| -> f64 {
            let mut r = 1.0;
            let mut total = 0.0;
            for &wi in &w[..w.len() - 1] {
                total += beta.ln_pdf(wi / r) - f64::ln(r);
                r -= wi;
            }
            total
        };
        let w1 = [0.5, 0.2, 0.2, 0.1];
        let w2 = [0.1, 0.6, 0.05, 0.25];
        let l1: Vec<f64> = w1.iter().map(|w: &f64| w.ln()).collect();
        let l2: Vec<f64> = w2.iter().map(|w: &f64| w.ln()).collect();
        let ours = ln_stick_prior(alpha, &l1) - ln_stick_prior(alpha, &l2);
        let theirs = direct(&w1) - direct(&w2);
        assert!((ours - theirs).abs() < 1e-12, "{ours} against {theirs}");
    }
}

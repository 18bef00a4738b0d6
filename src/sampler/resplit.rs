//! Re-split moves: a pair of components re-divides its total weight, mean and variance
//! between its two members, with every allocation integrated out.
//!
//! At large n the Gibbs sweep moves each component's parameters by about their
//! conditional spread given the allocations, O(1/√n), while the posterior lets a pair of
//! overlapping components trade weight, position and width over a range that does not
//! shrink as fast (two components that share one bump can split it in many ways that fit
//! the data almost equally well). Crossing that range one O(1/√n) step at a time is why
//! the effective draws per sweep fell as 1/n (docs/performance.md). This move holds what
//! the data fix tightly, the pair's total weight w, mean μ and variance σ², and
//! slice-samples the three shares that say how the pair divides them
//! (`pair_coords`, the map of Richardson & Green 1997), so a step's size is set by how
//! much the data constrain the division, not by n.
//!
//! The target is the posterior of the parameters with the allocations summed out:
//! p(w, θ | rest, data) ∝ p(w) p(θ_1) p(θ_2) Π_i (A_i + w_1 f_1(i) + w_2 f_2(i))^{m_i},
//! A_i = Σ_{l ∉ pair} w_l f_l(i), with f the normal density at an exact value or the
//! probability of a cell (data recorded at a resolution), and m_i a row's count. Each
//! share is updated by one slice-sampling step (`slice`) on its logit, with the map's
//! Jacobian in the density, so each step leaves that posterior invariant; the other
//! components, the hyperparameters and (after the move) nothing else change. The next
//! sweep draws the allocations afresh given the parameters, so the sweep with the move is
//! still a sampler of the same posterior (docs/model.md, "Re-split moves").
//!
//! Pairs are chosen uniformly at random, whatever the state. The location kernel's
//! components share σ², so there the pair's free coordinates are the weight share and the
//! distance between the means (Jacobian constant).

use rand::Rng;

use super::pair_coords::{from_coords, to_coords, Component};
use super::slice::slice_step;
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
    fn len(&self) -> usize {
        match self {
            PairData::Values { x, .. } => x.len(),
            PairData::Cells(c) => c.len(),
        }
    }

    fn count(&self, i: usize) -> f64 {
        match self {
            PairData::Values { counts, .. } => counts.map_or(1.0, |c| c[i] as f64),
            PairData::Cells(c) => c.count[i] as f64,
        }
    }

    /// ln f(i) for a component N(μ, sd²): the log density at a value, or the log
    /// probability of a cell.
    #[inline]
    fn ln_comp(&self, i: usize, mu: f64, sd: f64) -> f64 {
        match self {
            PairData::Values { x, .. } => {
                let z = (x[i] - mu) / sd;
                -0.5 * z * z - sd.ln() - LN_SQRT_2PI
            }
            PairData::Cells(c) => ln_std_normal_interval((c.lo[i] - mu) / sd, (c.hi[i] - mu) / sd),
        }
    }
}

/// Which density the moves sample. The sampler uses [`ResplitTarget::Exact`]; the
/// joint-distribution test swaps in the density without the map's Jacobian to show that
/// it would notice.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum ResplitTarget {
    #[default]
    Exact,
    /// Leaves out the Jacobian of the coordinates: wrong, for tests only.
    WithoutJacobian,
}

/// Pairs tried and pairs whose parameters changed in one call.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct ResplitTally {
    pub tried: u32,
    pub moved: u32,
}

/// Runs `pairs` re-split moves on `state`, each on a pair drawn uniformly at random.
pub fn resplit<R: Rng + ?Sized>(
    data: &PairData<'_>,
    prior: &Prior,
    state: &mut State,
    pairs: usize,
    target: ResplitTarget,
    rng: &mut R,
) -> ResplitTally {
    let jac = match target {
        ResplitTarget::Exact => 1.0,
        ResplitTarget::WithoutJacobian => 0.0,
    };
    let k = state.k();
    let mut tally = ResplitTally::default();
    if k < 2 || data.len() == 0 {
        return tally;
    }
    let mut rest = vec![0.0; data.len()];
    for _ in 0..pairs {
        let j = rng.random_range(0..k);
        let mut l = rng.random_range(0..k - 1);
        if l >= j {
            l += 1;
        }
        tally.tried += 1;
        rest_terms(data, state, j, l, &mut rest);
        let moved = match prior.kernel {
            Kernel::LocationScale => {
                move_location_scale(data, prior, state, (j, l), &rest, jac, rng)
            }
            Kernel::Location => move_location(data, prior, state, (j, l), &rest, jac, rng),
        };
        if moved {
            tally.moved += 1;
        }
    }
    tally
}

/// ln A_i = ln Σ_{l ∉ {j, k}} w_l f_l(i) for every datum (−∞ when there is no other
/// component).
fn rest_terms(data: &PairData<'_>, state: &State, j: usize, k: usize, rest: &mut [f64]) {
    let others: Vec<(f64, f64, f64)> = (0..state.k())
        .filter(|&l| l != j && l != k)
        .map(|l| (state.log_w[l], state.mu[l], state.var[l].sqrt()))
        .collect();
    let mut terms = vec![0.0; others.len()];
    for (i, r) in rest.iter_mut().enumerate() {
        for (t, &(lw, mu, sd)) in terms.iter_mut().zip(&others) {
            *t = lw + data.ln_comp(i, mu, sd);
        }
        *r = crate::dist::log_sum_exp(&terms);
    }
}

/// Σ_i m_i ln(A_i + w_1 f_1(i) + w_2 f_2(i)).
fn ln_lik(data: &PairData<'_>, rest: &[f64], a: Component, b: Component) -> f64 {
    let (sa, sb) = (a.var.sqrt(), b.var.sqrt());
    let mut total = 0.0;
    for (i, &r) in rest.iter().enumerate() {
        let ta = a.log_w + data.ln_comp(i, a.mu, sa);
        let tb = b.log_w + data.ln_comp(i, b.mu, sb);
        let m = r.max(ta).max(tb);
        if m == f64::NEG_INFINITY {
            return f64::NEG_INFINITY;
        }
        let s = (r - m).exp() + (ta - m).exp() + (tb - m).exp();
        total += data.count(i) * (m + s.ln());
    }
    total
}

/// ln p(w) up to a constant, with components `j` and `k` given the weights of `a` and `b`.
fn ln_weight_prior(prior: &Prior, state: &State, j: usize, k: usize, a: f64, b: f64) -> f64 {
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
fn ln_nig_prior(prior: &Prior, b: f64, c: Component) -> f64 {
    let d = c.mu - prior.centre;
    -(prior.var_shape + 1.5) * c.var.ln() - (b + 0.5 * prior.centre_shrink * d * d) / c.var
}

/// Writes a pair back into the state (and the sticks, for stick-breaking weights).
fn store(prior: &Prior, state: &mut State, j: usize, k: usize, a: Component, b: Component) {
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

/// One slice-sampling step on each coordinate of `start` in turn, the others held.
fn slice_each<const N: usize, R: Rng + ?Sized>(
    start: [f64; N],
    widths: [f64; N],
    target: impl Fn([f64; N]) -> f64,
    rng: &mut R,
) -> [f64; N] {
    let mut t = start;
    for coord in 0..N {
        t[coord] = slice_step(
            t[coord],
            widths[coord],
            |v| {
                let mut u = t;
                u[coord] = v;
                target(u)
            },
            rng,
        );
    }
    t
}

/// Slice width on the logit of a share.
const LOGIT_WIDTH: f64 = 1.0;

fn move_location_scale<R: Rng + ?Sized>(
    data: &PairData<'_>,
    prior: &Prior,
    state: &mut State,
    (j, k): (usize, usize),
    rest: &[f64],
    jac: f64,
    rng: &mut R,
) -> bool {
    let comp = |i: usize| Component {
        log_w: state.log_w[i],
        mu: state.mu[i],
        var: state.var[i],
    };
    // Component 1 of the coordinates is the one with the lower mean.
    let (lo, hi) = if state.mu[j] <= state.mu[k] {
        (j, k)
    } else {
        (k, j)
    };
    let Some((tot, t)) = to_coords(comp(lo), comp(hi)) else {
        return false;
    };
    let b = state.var_scale;
    let target = |t: [f64; 3], state: &State| -> f64 {
        let (a, c, ln_j) = from_coords(tot, t);
        if !(a.var > 0.0 && c.var > 0.0 && a.var.is_finite() && c.var.is_finite()) {
            return f64::NEG_INFINITY;
        }
        ln_weight_prior(prior, state, lo, hi, a.log_w, c.log_w)
            + ln_nig_prior(prior, b, a)
            + ln_nig_prior(prior, b, c)
            + ln_lik(data, rest, a, c)
            + jac * ln_j
    };
    let start = t;
    let t = slice_each(start, [LOGIT_WIDTH; 3], |u| target(u, state), rng);
    if t == start {
        return false;
    }
    let (a, c, _) = from_coords(tot, t);
    store(prior, state, lo, hi, a, c);
    true
}

fn move_location<R: Rng + ?Sized>(
    data: &PairData<'_>,
    prior: &Prior,
    state: &mut State,
    (j, k): (usize, usize),
    rest: &[f64],
    jac: f64,
    rng: &mut R,
) -> bool {
    // Coordinates (t = logit u, d) with totals (w, μ): w_j = u w, w_k = (1 − u) w,
    // μ_j = μ − (1 − u) d, μ_k = μ + u d; Jacobian w (constant), times u(1 − u) for t.
    let var = state.var[0];
    let log_w = crate::dist::log_add_exp(state.log_w[j], state.log_w[k]);
    let (lu, l1mu) = (state.log_w[j] - log_w, state.log_w[k] - log_w);
    let (u, v) = (lu.exp(), l1mu.exp());
    let mu = u * state.mu[j] + v * state.mu[k];
    let start = [lu - l1mu, state.mu[k] - state.mu[j]];
    if !start.iter().all(|s| s.is_finite()) {
        return false;
    }
    let pair = |c: [f64; 2]| -> (Component, Component, f64) {
        let (lu, l1mu) = super::pair_coords::ln_shares(c[0]);
        let (u, v) = (lu.exp(), l1mu.exp());
        let a = Component {
            log_w: log_w + lu,
            mu: mu - v * c[1],
            var,
        };
        let b = Component {
            log_w: log_w + l1mu,
            mu: mu + u * c[1],
            var,
        };
        (a, b, lu + l1mu)
    };
    let prec = 1.0 / (prior.centre_sd * prior.centre_sd);
    let target = |c: [f64; 2], state: &State| -> f64 {
        let (a, b, ln_j) = pair(c);
        let (da, db) = (a.mu - prior.centre, b.mu - prior.centre);
        ln_weight_prior(prior, state, j, k, a.log_w, b.log_w) - 0.5 * prec * (da * da + db * db)
            + ln_lik(data, rest, a, b)
            + jac * ln_j
    };
    let widths = [LOGIT_WIDTH, var.sqrt()];
    let c = slice_each(start, widths, |e| target(e, state), rng);
    if c == start {
        return false;
    }
    let (a, b, _) = pair(c);
    store(prior, state, j, k, a, b);
    true
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

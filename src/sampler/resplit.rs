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

use super::label_moves::distinct_pair;
use super::pair_coords::{from_coords, to_coords, Component};
pub use super::pair_target::PairData;
use super::pair_target::{ln_lik, ln_nig_prior, ln_weight_prior, store, Terms};
use super::slice::slice_step;
use crate::config::Kernel;
use crate::model::{Prior, State};

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

/// Runs `pairs` re-split moves on `state`, each on a pair drawn uniformly at random;
/// `terms` holds every component's terms on entry and on return.
pub(crate) fn resplit<R: Rng + ?Sized>(
    data: &PairData<'_>,
    terms: &mut Terms,
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
        let (j, l) = distinct_pair(k, rng);
        tally.tried += 1;
        terms.rest(state, j, l, &mut rest);
        let moved = match prior.kernel {
            Kernel::LocationScale => {
                move_location_scale(data, prior, state, (j, l), &rest, jac, rng)
            }
            Kernel::Location => move_location(data, prior, state, (j, l), &rest, jac, rng),
        };
        if moved {
            tally.moved += 1;
            terms.update(data, state, j);
            terms.update(data, state, l);
        }
    }
    tally
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
    let target = |t: [f64; 3]| -> f64 {
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
    let t = slice_each(start, [LOGIT_WIDTH; 3], target, rng);
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
    let target = |c: [f64; 2]| -> f64 {
        let (a, b, ln_j) = pair(c);
        let (da, db) = (a.mu - prior.centre, b.mu - prior.centre);
        ln_weight_prior(prior, state, j, k, a.log_w, b.log_w) - 0.5 * prec * (da * da + db * db)
            + ln_lik(data, rest, a, b)
            + jac * ln_j
    };
    let widths = [LOGIT_WIDTH, var.sqrt()];
    let c = slice_each(start, widths, target, rng);
    if c == start {
        return false;
    }
    let (a, b, _) = pair(c);
    store(prior, state, j, k, a, b);
    true
}

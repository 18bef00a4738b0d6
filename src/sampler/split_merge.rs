//! Split–merge moves on the allocations, for the collapsed sweep: Metropolis–Hastings
//! proposals that split one occupied component in two or merge two into one in a single
//! step, which single-observation updates can only do by emptying a component one member
//! at a time through states of low posterior probability. The proposal is the
//! sequentially allocated split of Dahl (2003, "An improved merge-split sampler for
//! conjugate Dirichlet process mixture models", Tech. Rep. 1086, Univ. Wisconsin), in the
//! Metropolis–Hastings framework of Jain & Neal (2004, JCGS 13:158–182), here for labelled
//! components of a finite or truncated prior.
//!
//! One proposal: pick an ordered pair of observations (i, j), i ≠ j, uniformly.
//! - Same component c: split. Start A = {i}, B = {j}; the other members of c, in index
//!   order, join A or B with probability ∝ |side| · p(x_k | side so far) (the predictive
//!   with parameters integrated out). A keeps label c; B takes an empty label, drawn
//!   uniformly from the E empty labels for Dirichlet weights and with probability
//!   ∝ 2^−r for the r-th smallest for stick-breaking weights (no split when E = 0).
//! - Different components: merge. Everything in z_j's component joins z_i's, whose label
//!   it keeps; z_j's label becomes empty.
//!
//! With π(z) = p(z | weights prior) Π_c m(x_c) (m the marginal likelihood of a
//! component's points), q_seq the probability of the sequential allocation producing
//! (A, B) and P(l) the probability of the label choice, the acceptance probabilities are
//!   split: min{1, π(z′)/π(z) / (P(l) q_seq)},    merge: min{1, π(z′)/π(z) · P′(c_j) q_seq},
//! where for the merge q_seq is that of the split undoing it and P′(c_j) the probability
//! that this split gives B label c_j back, among the empty labels after the merge (for the
//! uniform choice P = 1/E and P′ = 1/(E + 1)). Only the weights prior and the two
//! components' marginal likelihoods change (the latter in closed form,
//! [`log_marginal`]): for Dirichlet(δ) weights ln p(z) = Σ_k ln Γ(δ + n_k) + const, for
//! stick-breaking weights it is [`log_label_prior`]. The same conditioning as the scan
//! holds (b, concentration and, location kernel, σ² fixed), so the move leaves
//! p(z | x, those) invariant; tested by enumeration in tests/collapsed_exact.rs.

use rand::Rng;
use statrs::function::gamma::ln_gamma;

use super::allocate::fastexp::exp_fast;
use super::allocate::fastln::{ln_fast_f64, ln_positive};
use super::allocate::SuffStats;
use super::collapsed::{log_marginal, log_predictive, predictive_terms, HalfSteps};
use super::label_moves::{distinct_pair, log_label_prior};
use super::mh::accept;
use crate::config::WeightsKind;
use crate::model::{Prior, State};

/// Proposals and acceptances of one call.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct SplitMergeTally {
    pub splits_proposed: u32,
    pub splits_accepted: u32,
    pub merges_proposed: u32,
    pub merges_accepted: u32,
}

/// A component being built up one point at a time: (n, sum, sum of squares).
#[derive(Clone, Copy)]
struct Running {
    stats: (u64, f64, f64),
}

impl Running {
    fn of(x: f64) -> Self {
        Running {
            stats: (1, x, x * x),
        }
    }

    fn push(&mut self, x: f64) {
        self.stats.0 += 1;
        self.stats.1 += x;
        self.stats.2 += x * x;
    }

    fn log_m(&self, prior: &Prior, state: &State) -> f64 {
        log_marginal(prior, state, self.stats)
    }
}

/// ln p(n | weights prior) up to a constant that does not depend on the labelled counts.
fn log_weights_prior(prior: &Prior, concentration: f64, n: &[u64]) -> f64 {
    match prior.weights {
        WeightsKind::Dirichlet => n.iter().map(|&c| ln_gamma(concentration + c as f64)).sum(),
        WeightsKind::StickBreaking => log_label_prior(concentration, n),
    }
}

/// Whether to leave out the label-choice probabilities (the exact test's fault, see
/// [`run`]).
#[doc(hidden)]
#[derive(Clone, Copy, PartialEq, Eq)]
pub enum Labels {
    Counted,
    Ignored,
}

/// Runs `proposals` split–merge proposals on the allocations `z`, keeping `stats` (their
/// counts, sums and sums of squares) in step.
pub fn split_merge<R: Rng + ?Sized>(
    x: &[f64],
    z: &mut [u32],
    stats: &mut SuffStats,
    prior: &Prior,
    state: &State,
    proposals: usize,
    rng: &mut R,
) -> SplitMergeTally {
    run(x, z, stats, prior, state, proposals, rng, Labels::Counted)
}

/// [`split_merge`], with the label-choice probabilities P(l) and P′(c_j) left out of the
/// acceptance ratios when `labels` is [`Labels::Ignored`], for the exact test that must
/// reject it.
#[doc(hidden)]
#[allow(clippy::too_many_arguments)]
pub fn run<R: Rng + ?Sized>(
    x: &[f64],
    z: &mut [u32],
    stats: &mut SuffStats,
    prior: &Prior,
    state: &State,
    proposals: usize,
    rng: &mut R,
    labels: Labels,
) -> SplitMergeTally {
    let n_obs = x.len();
    let mut tally = SplitMergeTally::default();
    if n_obs < 2 {
        return tally;
    }
    let half = HalfSteps::new(prior.var_shape, n_obs);
    // ln n for the sides' sizes, the same values ln_positive gives, computed once.
    let ln_n: Vec<f64> = (0..=n_obs).map(|v| ln_positive(v as f64)).collect();
    let mut members: Vec<usize> = Vec::new();
    let mut to_b: Vec<bool> = Vec::new();
    for _ in 0..proposals {
        let (i, j) = distinct_pair(n_obs, rng);
        let (ci, cj) = (z[i] as usize, z[j] as usize);
        let split = ci == cj;
        let empty: Vec<usize> = (0..stats.n.len()).filter(|&k| stats.n[k] == 0).collect();
        if split {
            tally.splits_proposed += 1;
            if empty.is_empty() {
                continue;
            }
        } else {
            tally.merges_proposed += 1;
        }
        // The other members of the component(s) involved, in index order; collected only
        // when a sequential pass will run (not for a merge rejected on its bound).
        let collect = |members: &mut Vec<usize>| {
            members.clear();
            members.extend(
                (0..n_obs)
                    .filter(|&k| k != i && k != j && (z[k] as usize == ci || z[k] as usize == cj)),
            );
        };
        let log_prior_now = log_weights_prior(prior, state.concentration, &stats.n);
        let mut n_after = stats.n.clone();

        if !split {
            // Merge. Everything but q is known from the statistics, and ln q ≤ 0, so a
            // uniform above that bound rejects without the sequential pass (the same
            // decision as computing q first).
            let (sa, sb) = (get(stats, ci), get(stats, cj));
            let sm = (sa.0 + sb.0, sa.1 + sb.1, sa.2 + sb.2);
            n_after[ci] = sm.0;
            n_after[cj] = 0;
            // ln of the probability that the split undoing this merge gives B label cj.
            let mut after: Vec<usize> = empty.clone();
            after.push(cj);
            after.sort_unstable();
            let e1 = match labels {
                Labels::Counted => -log_label_choice(prior.weights, &after, cj),
                Labels::Ignored => 0.0,
            };
            let bound = log_weights_prior(prior, state.concentration, &n_after) - log_prior_now
                + log_marginal(prior, state, sm)
                - log_marginal(prior, state, sa)
                - log_marginal(prior, state, sb)
                - e1;
            let log_u = (1.0 - rng.random::<f64>()).ln();
            if log_u >= bound {
                continue;
            }
            collect(&mut members);
            let (_, _, log_q) = sequential(
                x,
                (i, j),
                &members,
                Follow(z, cj),
                (prior, state, &half, &ln_n),
                rng,
                &mut to_b,
            );
            if log_u < bound + log_q {
                tally.merges_accepted += 1;
                z[j] = ci as u32;
                for &k in &members {
                    z[k] = ci as u32;
                }
                set(stats, ci, sm);
                set(stats, cj, (0, 0.0, 0.0));
            }
            continue;
        }

        // Split.
        collect(&mut members);
        let (a, b, log_q) = sequential(
            x,
            (i, j),
            &members,
            Draw,
            (prior, state, &half, &ln_n),
            rng,
            &mut to_b,
        );
        let sm = (
            a.stats.0 + b.stats.0,
            a.stats.1 + b.stats.1,
            a.stats.2 + b.stats.2,
        );
        let l = draw_label(prior.weights, &empty, rng);
        n_after[ci] = a.stats.0;
        n_after[l] = b.stats.0;
        let e = match labels {
            Labels::Counted => -log_label_choice(prior.weights, &empty, l),
            Labels::Ignored => 0.0,
        };
        let log_ratio = log_weights_prior(prior, state.concentration, &n_after) - log_prior_now
            + a.log_m(prior, state)
            + b.log_m(prior, state)
            - log_marginal(prior, state, sm)
            + e
            - log_q;
        if accept(log_ratio, rng) {
            tally.splits_accepted += 1;
            z[j] = l as u32;
            for (&k, &gb) in members.iter().zip(&to_b) {
                if gb {
                    z[k] = l as u32;
                }
            }
            set(stats, ci, a.stats);
            set(stats, l, b.stats);
        }
    }
    tally
}

/// Whether the sequential allocation draws the sides (a split) or follows the current
/// split between two components, the second being `.1` (a merge's reverse).
struct Draw;
struct Follow<'a>(&'a [u32], usize);

trait Side {
    fn goes_b<R: Rng + ?Sized>(&self, k: usize, p_b: f64, rng: &mut R) -> bool;
}

impl Side for Draw {
    fn goes_b<R: Rng + ?Sized>(&self, _: usize, p_b: f64, rng: &mut R) -> bool {
        rng.random::<f64>() < p_b
    }
}

impl Side for Follow<'_> {
    fn goes_b<R: Rng + ?Sized>(&self, k: usize, _: f64, _: &mut R) -> bool {
        self.0[k] as usize == self.1
    }
}

/// The sequential allocation from A = {i}, B = {j} over `members` in order: each joins a
/// side with probability ∝ |side| · predictive given the side so far. Returns both
/// sides and ln q, the probability of the choices made; `to_b` records them.
fn sequential<R: Rng + ?Sized, S: Side>(
    x: &[f64],
    (i, j): (usize, usize),
    members: &[usize],
    side: S,
    (prior, state, half, ln_n): (&Prior, &State, &HalfSteps, &[f64]),
    rng: &mut R,
    to_b: &mut Vec<bool>,
) -> (Running, Running, f64) {
    let mut a = Running::of(x[i]);
    let mut b = Running::of(x[j]);
    let mut log_q = 0.0;
    to_b.clear();
    // Each member changes one side, so only that side's terms are recomputed.
    let terms = |r: &Running| predictive_terms(prior, state, half, r.stats, false);
    let (mut ta, mut tb) = (terms(&a), terms(&b));
    let (mut lna, mut lnb) = (0.0, 0.0);
    for &k in members {
        let wa = lna + log_predictive(prior.kernel, &ta, x[k]);
        let wb = lnb + log_predictive(prior.kernel, &tb, x[k]);
        // ln P(B) = wb − ln(e^wa + e^wb), computed stably.
        // P(B) from r = e^(lo − hi) without a further exponential: 1/(1 + r) when B is the
        // likelier side, r/(1 + r) otherwise.
        let (hi, lo) = if wa >= wb { (wa, wb) } else { (wb, wa) };
        let r = exp_fast(lo - hi);
        let log_norm = hi + ln_fast_f64(1.0 + r);
        let p_b = if wb > wa {
            1.0 / (1.0 + r)
        } else {
            r / (1.0 + r)
        };
        let goes_b = side.goes_b(k, p_b, rng);
        if goes_b {
            log_q += wb - log_norm;
            b.push(x[k]);
            tb = terms(&b);
            lnb = ln_n[b.stats.0 as usize];
        } else {
            log_q += wa - log_norm;
            a.push(x[k]);
            ta = terms(&a);
            lna = ln_n[a.stats.0 as usize];
        }
        to_b.push(goes_b);
    }
    (a, b, log_q)
}

/// ln of the probability that a split gives the new component label `l`, from the empty
/// labels `empty` (in increasing order). Dirichlet weights are exchangeable, so the
/// choice is uniform. Stick-breaking weights favour small labels, so the r-th smallest
/// empty label is chosen with probability ∝ 2^−r: a split to a label far down the
/// sticks, whose prior weight is tiny, is proposed rarely instead of as often as any other.
fn log_label_choice(weights: WeightsKind, empty: &[usize], l: usize) -> f64 {
    let e = empty.len() as f64;
    match weights {
        WeightsKind::Dirichlet => -e.ln(),
        WeightsKind::StickBreaking => {
            let r = empty.iter().position(|&v| v == l).expect("label is empty") as f64;
            // Σ_{r<E} 2^−r = 2 − 2^{1−E}.
            -r * std::f64::consts::LN_2 - (2.0 - 2f64.powf(1.0 - e)).ln()
        }
    }
}

/// Draws the new component's label from the empty labels, see [`log_label_choice`].
fn draw_label<R: Rng + ?Sized>(weights: WeightsKind, empty: &[usize], rng: &mut R) -> usize {
    match weights {
        WeightsKind::Dirichlet => empty[rng.random_range(0..empty.len())],
        WeightsKind::StickBreaking => {
            let total = 2.0 - 2f64.powf(1.0 - empty.len() as f64);
            let u = rng.random::<f64>() * total;
            let (mut acc, mut p) = (0.0, 1.0);
            for &l in empty {
                acc += p;
                if u < acc {
                    return l;
                }
                p *= 0.5;
            }
            empty[empty.len() - 1]
        }
    }
}

fn get(stats: &SuffStats, k: usize) -> (u64, f64, f64) {
    (stats.n[k], stats.sum[k], stats.sumsq[k])
}

fn set(stats: &mut SuffStats, k: usize, (n, s1, s2): (u64, f64, f64)) {
    stats.n[k] = n;
    stats.sum[k] = s1;
    stats.sumsq[k] = s2;
}

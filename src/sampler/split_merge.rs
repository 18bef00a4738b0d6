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

use super::allocate::fastln::ln_positive;
use super::allocate::shortchain;
use super::allocate::SuffStats;
use super::collapsed::{log_marginal, log_predictive, predictive_terms, HalfSteps};
use super::label_moves::{distinct_pair, log_label_prior};
use super::mh::accept;
use crate::config::Kernel;
use crate::config::WeightsKind;
use crate::dist::LN_SQRT_2PI;
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
    let tables = PassTables::new(prior, n_obs);
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
            // Accepted iff ln q > log_u − bound. Each member adds a log-probability ≤ 0 to
            // ln q, so the pass stops as soon as ln q so far is at or below that floor: the
            // decision the whole pass would make. Most merges that pass the bound are
            // rejected, but usually late in the pass (the bound is large when two
            // components overlap, and ln q falls slowly), so this saves about a tenth of
            // the pass's member steps (docs/performance.md).
            let others = (0..n_obs)
                .filter(|&k| k != i && k != j && (z[k] as usize == ci || z[k] as usize == cj));
            let parts = (prior, state, &tables);
            let follow = Follow(z, cj, log_u - bound);
            if sequential(x, (i, j), others, follow, parts, rng, &mut to_b).is_some() {
                tally.merges_accepted += 1;
                for label in z.iter_mut() {
                    if *label as usize == cj {
                        *label = ci as u32;
                    }
                }
                set(stats, ci, sm);
                set(stats, cj, (0, 0.0, 0.0));
            }
            continue;
        }

        // Split.
        members.clear();
        members.extend((0..n_obs).filter(|&k| k != i && k != j && z[k] as usize == ci));
        let parts = (prior, state, &tables);
        let drawn = sequential(
            x,
            (i, j),
            members.iter().copied(),
            Draw,
            parts,
            rng,
            &mut to_b,
        );
        let (a, b, log_q) = drawn.expect("a drawn split has no floor");
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
/// split between two components, the second being `.1` (a merge's reverse), stopping once
/// ln q is at or below `.2` (the merge is then rejected whatever the rest of the pass).
struct Draw;
struct Follow<'a>(&'a [u32], usize, f64);

trait Side {
    fn goes_b<R: Rng + ?Sized>(&self, k: usize, p_b: f64, rng: &mut R) -> bool;
    /// The pass stops when ln q so far is at or below this.
    fn floor(&self) -> f64;
}

impl Side for Draw {
    fn goes_b<R: Rng + ?Sized>(&self, _: usize, p_b: f64, rng: &mut R) -> bool {
        rng.random::<f64>() < p_b
    }
    fn floor(&self) -> f64 {
        f64::NEG_INFINITY
    }
}

impl Side for Follow<'_> {
    fn goes_b<R: Rng + ?Sized>(&self, k: usize, _: f64, _: &mut R) -> bool {
        self.0[k] as usize == self.1
    }
    fn floor(&self) -> f64 {
        self.2
    }
}

/// The sequential allocation from A = {i}, B = {j} over `members` in order: each joins a
/// side with probability ∝ |side| · predictive given the side so far. Returns both
/// sides and ln q, the probability of the choices made (`to_b` records them), or `None`
/// once ln q is at or below the side's floor. Every member adds a log-probability ≤ 0, so
/// ln q so far bounds the final one from above and stopping there decides as the whole
/// pass would (up to the rounding of the last bits).
fn sequential<R: Rng + ?Sized, S: Side>(
    x: &[f64],
    (i, j): (usize, usize),
    members: impl IntoIterator<Item = usize>,
    side: S,
    (prior, state, tables): (&Prior, &State, &PassTables),
    rng: &mut R,
    to_b: &mut Vec<bool>,
) -> Option<(Running, Running, f64)> {
    let mut a = Running::of(x[i]);
    let mut b = Running::of(x[j]);
    // ln q = Σ ln P(side chosen). With r = e^(lo − hi) the likelier side has probability
    // 1/(1 + r) and the other r/(1 + r), so ln q = Σ_(less likely chosen) (lo − hi) +
    // ln Π 1/(1 + r): the product is kept, folded into `log_q` before it can underflow,
    // and no logarithm is taken per member. ln q so far is at or below the floor when
    // kept ≤ e^(floor − log_q).
    let floor = side.floor();
    let (mut log_q, mut kept) = (0.0, 1.0);
    let mut kept_floor = (floor - log_q).exp();
    to_b.clear();
    // Each member changes one side, so only that side's terms are recomputed.
    let terms = |r: &Running| tables.terms(prior, state, r.stats);
    let (mut ta, mut tb) = (terms(&a), terms(&b));
    let (mut lna, mut lnb) = (0.0, 0.0);
    let ln_n = &tables.ln_n;
    for k in members {
        let wa = lna + PassTables::log_predictive(prior.kernel, &ta, x[k]);
        let wb = lnb + PassTables::log_predictive(prior.kernel, &tb, x[k]);
        let b_likelier = wb > wa;
        let (hi, lo) = if b_likelier { (wb, wa) } else { (wa, wb) };
        let r = shortchain::exp(lo - hi);
        let inv = 1.0 / (1.0 + r);
        let p_b = if b_likelier { inv } else { r * inv };
        let goes_b = side.goes_b(k, p_b, rng);
        kept *= inv;
        let mut moved = false;
        if goes_b != b_likelier {
            log_q += lo - hi;
            moved = true;
        }
        if kept < 1e-280 {
            log_q += shortchain::ln_positive(kept);
            kept = 1.0;
            moved = true;
        }
        if moved {
            kept_floor = (floor - log_q).exp();
        }
        if kept <= kept_floor {
            return None;
        }
        if goes_b {
            b.push(x[k]);
            tb = terms(&b);
            lnb = ln_n[b.stats.0 as usize];
        } else {
            a.push(x[k]);
            ta = terms(&a);
            lna = ln_n[a.stats.0 as usize];
        }
        to_b.push(goes_b);
    }
    log_q += shortchain::ln_positive(kept);
    (log_q > floor).then_some((a, b, log_q))
}

/// What the sequential pass reads for a side of n members, tabulated once a call for
/// n = 0..=N, and the side's predictive in a form whose two logarithms do not wait on each
/// other. The pass is latency-bound: each member's side depends on the one before, and
/// [`predictive_terms`] followed by [`log_predictive`] takes ln(ν s²) and then, through
/// 1/(ν s²), ln(1 + (x − loc)²/(ν s²)), with five divisions before them. Writing the
/// Student-t log-density as
///
///   ln p(x) = D[n] − ln √π + a_n ln(ν s²) − (a_n + ½) ln(ν s² + (x − loc)²),
///
/// (the same density: ln Γ(a_n + ½) − ln Γ(a_n) − ½ ln(π ν s²) − (a_n + ½) ln(1 + q) with
/// q = (x − loc)²/(ν s²)) and every n-dependent ratio from a table leaves one logarithm on
/// the path from one member to the next. Split and merge both use these terms, so the
/// proposal's probability is computed as it is drawn, and the move stays exact
/// (tests/collapsed_exact.rs); they agree with the collapsed scan's predictive to about
/// 1e-15 (test below). The location kernel keeps [`predictive_terms`].
struct PassTables {
    half: HalfSteps,
    /// ln n, the same values `ln_positive` gives.
    ln_n: Vec<f64>,
    /// 1/n (n ≥ 1; 0 at n = 0, never read).
    inv_n: Vec<f64>,
    /// 1/κ_n, κ_n = κ + n.
    inv_kn: Vec<f64>,
    /// κ n/(2 κ_n).
    shrink: Vec<f64>,
    /// 2 (κ_n + 1)/κ_n, so that ν s² = b_n · ratio.
    ratio: Vec<f64>,
}

impl PassTables {
    fn new(prior: &Prior, n_obs: usize) -> Self {
        let kappa = prior.centre_shrink;
        let each = |f: &dyn Fn(f64) -> f64| (0..=n_obs).map(|v| f(v as f64)).collect();
        PassTables {
            half: HalfSteps::new(prior.var_shape, n_obs),
            ln_n: each(&ln_positive),
            inv_n: each(&|v| if v > 0.0 { 1.0 / v } else { 0.0 }),
            inv_kn: each(&|v| 1.0 / (kappa + v)),
            shrink: each(&|v| kappa * v / (2.0 * (kappa + v))),
            ratio: each(&|v| 2.0 * (kappa + v + 1.0) / (kappa + v)),
        }
    }

    /// The terms of a side holding `(n, sum, sum of squares)` (n ≥ 1): location-scale
    /// [D[n] − ln √π + a_n ln(ν s²), loc, ν s², a_n + ½]; location, [`predictive_terms`].
    #[inline]
    fn terms(&self, prior: &Prior, state: &State, (n, sum, sumsq): (u64, f64, f64)) -> [f64; 4] {
        if prior.kernel == Kernel::Location {
            return predictive_terms(prior, state, &self.half, (n, sum, sumsq), false);
        }
        let v = n as usize;
        let m = prior.centre;
        let xbar = sum * self.inv_n[v];
        let ss = (sumsq - sum * xbar).max(0.0);
        let bn = state.var_scale + 0.5 * ss + self.shrink[v] * (xbar - m) * (xbar - m);
        let nu_s2 = bn * self.ratio[v];
        let an = prior.var_shape + 0.5 * n as f64;
        let c = self.half.0[v] - LN_SQRT_2PI + 0.5 * std::f64::consts::LN_2;
        [
            c + an * shortchain::ln_positive(nu_s2),
            (prior.centre_shrink * m + sum) * self.inv_kn[v],
            nu_s2,
            an + 0.5,
        ]
    }

    /// ln p(x) from [`PassTables::terms`].
    #[inline]
    fn log_predictive(kernel: Kernel, t: &[f64; 4], x: f64) -> f64 {
        match kernel {
            Kernel::Location => log_predictive(kernel, t, x),
            Kernel::LocationScale => {
                let d = x - t[1];
                t[0] - t[3] * shortchain::ln_positive(t[2] + d * d)
            }
        }
    }
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sampler::collapsed::tests::{prior, state};
    use rand::SeedableRng;

    /// The pass's predictive equals the collapsed scan's (`predictive_terms` then
    /// `log_predictive`, itself checked against statrs' Student-t and normal densities in
    /// `collapsed`) for sides of every size from 1 to 500 with random members, both
    /// kernels: the rearranged logarithms and the tables change only the rounding. The
    /// rearranged form takes the difference of two terms of size a_n |ln ν s²|, a_n ≈ n/2,
    /// so the bound is a few units of rounding of the largest term, not of the result (at
    /// n = 10^4 about 1e-12 in a log-probability).
    #[test]
    fn pass_predictive_matches_the_scan_predictive() {
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(5);
        for kernel in [Kernel::Location, Kernel::LocationScale] {
            let (prior, state) = (prior(kernel, WeightsKind::Dirichlet), state(3));
            let tables = PassTables::new(&prior, 500);
            // The size of the terms the location-scale form subtracts.
            let magnitude = |t: &[f64; 4], x: f64| match kernel {
                Kernel::Location => 1.0,
                Kernel::LocationScale => {
                    let d = x - t[1];
                    t[0].abs() + t[3] * (t[2] + d * d).ln().abs() + 1.0
                }
            };
            let (centre, spread) = (rng.random::<f64>() * 4.0 - 2.0, 0.05 + rng.random::<f64>());
            let mut side = Running::of(centre);
            for n in 1..=500u64 {
                if n > 1 {
                    side.push(centre + spread * (rng.random::<f64>() - 0.5));
                }
                let fast = tables.terms(&prior, &state, side.stats);
                let scan = predictive_terms(&prior, &state, &tables.half, side.stats, false);
                for x in [-6.0, -1.0, 0.0, 0.37, centre, 2.5, 9.0] {
                    let (got, want) = (
                        PassTables::log_predictive(kernel, &fast, x),
                        log_predictive(kernel, &scan, x),
                    );
                    assert!(
                        (got - want).abs() <= 1e-15 * magnitude(&fast, x).max(want.abs()),
                        "{kernel:?} n = {n}, x = {x}: {got} vs {want}"
                    );
                }
            }
        }
    }

    /// ln q of a long sequential pass against the sum of ln P(side chosen) written out with
    /// std's exp and ln: 3000 members from one uniform group followed to alternating sides,
    /// so that each choice is near even and the kept product of 1/(1 + r) is folded into
    /// ln q several times. And a drawn split, followed back as a merge's reverse does, gets
    /// the same ln q bit for bit.
    #[test]
    fn sequential_log_q_is_the_sum_of_the_choices_log_probabilities() {
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(17);
        let n = 3002;
        let x: Vec<f64> = (0..n).map(|_| rng.random::<f64>() - 0.5).collect();
        let (prior, state) = (
            prior(Kernel::LocationScale, WeightsKind::Dirichlet),
            state(2),
        );
        let tables = PassTables::new(&prior, n);
        let members: Vec<usize> = (2..n).collect();
        let pass = |z: Option<&[u32]>, rng: &mut rand_chacha::ChaCha8Rng| {
            let mut to_b = Vec::new();
            let parts = (&prior, &state, &tables);
            let (_, _, log_q) = match z {
                Some(z) => {
                    let follow = Follow(z, 1, f64::NEG_INFINITY);
                    sequential(&x, (0, 1), members.clone(), follow, parts, rng, &mut to_b)
                }
                None => sequential(&x, (0, 1), members.clone(), Draw, parts, rng, &mut to_b),
            }
            .unwrap();
            (to_b, log_q)
        };
        let labels = |to_b: &[bool]| -> Vec<u32> {
            (0..n)
                .map(|k| u32::from(k == 1 || (k >= 2 && to_b[k - 2])))
                .collect()
        };

        let alternating: Vec<bool> = (0..n - 2).map(|k| k % 2 == 0).collect();
        let (followed, log_q) = pass(Some(&labels(&alternating)), &mut rng);
        assert_eq!(followed, alternating);
        let (mut a, mut b) = (Running::of(x[0]), Running::of(x[1]));
        let mut want = 0.0;
        for (&k, &gb) in members.iter().zip(&alternating) {
            let w = |r: &Running| {
                let t = predictive_terms(&prior, &state, &tables.half, r.stats, false);
                (r.stats.0 as f64).ln() + log_predictive(prior.kernel, &t, x[k])
            };
            let (wa, wb) = (w(&a), w(&b));
            let m = wa.max(wb);
            let norm = m + ((wa - m).exp() + (wb - m).exp()).ln();
            want += if gb { wb } else { wa } - norm;
            if gb {
                b.push(x[k]);
            } else {
                a.push(x[k]);
            }
        }
        assert!(want < -1000.0, "the product must be folded: ln q = {want}");
        assert!(
            (log_q - want).abs() < 1e-9 * want.abs(),
            "{log_q} vs {want}"
        );

        let (drawn, log_q) = pass(None, &mut rng);
        let (back, log_q_back) = pass(Some(&labels(&drawn)), &mut rng);
        assert_eq!(back, drawn);
        assert_eq!(log_q_back.to_bits(), log_q.to_bits());
    }

    /// A merge's reverse pass stopped at a floor decides as the whole pass does: it
    /// returns the sides exactly when the whole pass's ln q is above the floor, and when
    /// the floor is well above that ln q it stops after a part of the members.
    #[test]
    fn follow_with_a_floor_decides_as_the_whole_pass() {
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(23);
        let n = 402;
        let x: Vec<f64> = (0..n).map(|_| rng.random::<f64>() * 2.0 - 1.0).collect();
        let (prior, state) = (
            prior(Kernel::LocationScale, WeightsKind::Dirichlet),
            state(2),
        );
        let tables = PassTables::new(&prior, n);
        let parts = (&prior, &state, &tables);
        let mut to_b = Vec::new();
        for round in 0..20 {
            // Labels 0 and 1 over the members, each member to 1 with a probability that
            // rises with x, so that the split ranges from near-even to a clear cut.
            let tilt = round as f64 * 0.5;
            let z: Vec<u32> = (0..n)
                .map(|k| match k {
                    0 => 0,
                    1 => 1,
                    _ => u32::from(rng.random::<f64>() < 1.0 / (1.0 + (-tilt * x[k]).exp())),
                })
                .collect();
            let whole = |floor: f64, to_b: &mut Vec<bool>| {
                sequential(
                    &x,
                    (0, 1),
                    2..n,
                    Follow(&z, 1, floor),
                    parts,
                    &mut rng.clone(),
                    to_b,
                )
            };
            let (_, _, log_q) = whole(f64::NEG_INFINITY, &mut to_b).unwrap();
            assert_eq!(to_b.len(), n - 2);
            for floor in [
                log_q - 1.0,
                log_q - 1e-9,
                log_q + 1e-9,
                log_q + 1.0,
                0.5 * log_q,
                0.1 * log_q,
            ] {
                let got = whole(floor, &mut to_b);
                assert_eq!(
                    got.is_some(),
                    log_q > floor,
                    "round {round}, floor {floor}, ln q {log_q}"
                );
                if let Some((_, _, q)) = got {
                    assert_eq!(q.to_bits(), log_q.to_bits());
                }
                if floor >= 0.5 * log_q && log_q < -10.0 {
                    assert!(
                        to_b.len() < n - 2,
                        "round {round}: no early stop at {floor}"
                    );
                }
            }
        }
    }
}

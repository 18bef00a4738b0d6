//! Metropolis–Hastings label-switching moves for the truncated stick-breaking prior.
//!
//! The stick-breaking prior is not exchangeable in the labels: it favours large weights at
//! small labels. The blocked Gibbs sweep changes a component's label only by emptying it,
//! so it moves slowly between orderings that carry different prior weight, and the
//! concentration α (whose full conditional depends on the sticks) mixes slowly with it.
//! Two moves of Papaspiliopoulos & Roberts (2008, §3.4) and Hastie, Liverani & Richardson
//! (2015, §3) jump between orderings directly:
//!
//! 1. pick two occupied components j ≠ l uniformly and swap their labels (allocations and
//!    parameters), keeping the weights: accept with min{1, (w_j / w_l)^{n_l − n_j}};
//! 2. pick k uniformly in 1..K−2 and swap components k and k+1 together with their sticks
//!    v_k ↔ v_{k+1}: accept with min{1, (1 − v_{k+1})^{n_k} / (1 − v_k)^{n_{k+1}}}.
//!
//! Both proposals are involutions with unit Jacobian that leave the likelihood and the
//! (exchangeable) prior of the parameters unchanged, so the ratio is that of
//! p(z | w) = Π_k w_k^{n_k}; the derivation is in docs/model.md, "Label-switching moves".
//! Allocations are not stored: the moves act on the counts, sums and sums of squares just
//! after the allocation step, and the weights and parameters drawn next are drawn given
//! the swapped labels. Move 2 stops at K − 2 because v_K = 1 is fixed by the truncation.

use rand::Rng;

use super::mh::accept;
use statrs::function::gamma::ln_gamma;

use super::allocate::SuffStats;
use crate::model::State;

/// Log acceptance ratios of the two moves. The sampler uses [`EXACT`]; the joint
/// distribution test swaps in a wrong one to show that it would notice.
#[derive(Debug, Clone, Copy)]
pub struct MoveRatios {
    /// Swap occupied j and l, weights kept: arguments (n_j, n_l, ln w_j, ln w_l).
    pub swap_labels: fn(f64, f64, f64, f64) -> f64,
    /// Swap k and k+1 with their sticks: arguments (n_k, n_{k+1}, ln(1 − v_k), ln(1 − v_{k+1})).
    pub swap_adjacent: fn(f64, f64, f64, f64) -> f64,
}

/// ln[(w_j / w_l)^{n_l − n_j}].
pub fn log_ratio_swap_labels(n_j: f64, n_l: f64, log_w_j: f64, log_w_l: f64) -> f64 {
    (n_l - n_j) * (log_w_j - log_w_l)
}

/// ln[(1 − v_{k+1})^{n_k} / (1 − v_k)^{n_{k+1}}].
pub fn log_ratio_swap_adjacent(n_k: f64, n_k1: f64, log_1mv_k: f64, log_1mv_k1: f64) -> f64 {
    n_k * log_1mv_k1 - n_k1 * log_1mv_k
}

/// The correct acceptance ratios.
pub const EXACT: MoveRatios = MoveRatios {
    swap_labels: log_ratio_swap_labels,
    swap_adjacent: log_ratio_swap_adjacent,
};

/// How many proposals of each move were made and accepted in one call.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct MoveTally {
    pub labels_proposed: u32,
    pub labels_accepted: u32,
    pub adjacent_proposed: u32,
    pub adjacent_accepted: u32,
}

/// Exchanges everything attached to labels `a` and `b` except the weights.
fn swap_components(stats: &mut SuffStats, state: &mut State, a: usize, b: usize) {
    stats.n.swap(a, b);
    stats.sum.swap(a, b);
    stats.sumsq.swap(a, b);
    state.mu.swap(a, b);
    state.var.swap(a, b);
}

/// An ordered pair of distinct indices in 0..m, uniformly (m ≥ 2).
pub(crate) fn distinct_pair<R: Rng + ?Sized>(m: usize, rng: &mut R) -> (usize, usize) {
    let i = rng.random_range(0..m);
    let mut l = rng.random_range(0..m - 1);
    if l >= i {
        l += 1;
    }
    (i, l)
}

/// Runs both moves on the allocation statistics `stats` and the stick-breaking `state`:
/// one proposal of move 1 per occupied component, then K − 2 proposals of move 2.
pub fn label_moves<R: Rng + ?Sized>(
    stats: &mut SuffStats,
    state: &mut State,
    ratios: &MoveRatios,
    rng: &mut R,
) -> MoveTally {
    label_moves_carrying::<R, ()>(stats, state, ratios, rng, None)
}

/// [`label_moves`] that also swaps `carry[a]` and `carry[b]` with every accepted swap of
/// components a and b (what else a caller keeps per component, such as the cells each
/// holds).
pub fn label_moves_carrying<R: Rng + ?Sized, T>(
    stats: &mut SuffStats,
    state: &mut State,
    ratios: &MoveRatios,
    rng: &mut R,
    mut carry: Option<&mut [T]>,
) -> MoveTally {
    let k = state.k();
    let mut tally = MoveTally::default();
    debug_assert_eq!(
        state.log_v.len(),
        k,
        "label moves need stick-breaking weights"
    );

    // Move 1. Swapping two occupied components leaves the set of occupied labels as it
    // was, so drawing the pair from that set is a symmetric proposal.
    let occupied: Vec<usize> = (0..k).filter(|&j| stats.n[j] > 0).collect();
    let m = occupied.len();
    if m >= 2 {
        for _ in 0..m {
            let (i, l) = distinct_pair(m, rng);
            let (a, b) = (occupied[i], occupied[l]);
            let log_r = (ratios.swap_labels)(
                stats.n[a] as f64,
                stats.n[b] as f64,
                state.log_w[a],
                state.log_w[b],
            );
            tally.labels_proposed += 1;
            if accept(log_r, rng) {
                swap_components(stats, state, a, b);
                if let Some(c) = carry.as_deref_mut() {
                    c.swap(a, b);
                }
                tally.labels_accepted += 1;
            }
        }
    }

    // Move 2, on the pairs (k, k+1) whose sticks are both free (v_K = 1 is fixed).
    if k >= 3 {
        for _ in 0..k - 2 {
            let a = rng.random_range(0..k - 2);
            let b = a + 1;
            let log_r = (ratios.swap_adjacent)(
                stats.n[a] as f64,
                stats.n[b] as f64,
                state.log_1mv[a],
                state.log_1mv[b],
            );
            tally.adjacent_proposed += 1;
            if accept(log_r, rng) {
                swap_components(stats, state, a, b);
                if let Some(c) = carry.as_deref_mut() {
                    c.swap(a, b);
                }
                state.log_v.swap(a, b);
                state.log_1mv.swap(a, b);
                tally.adjacent_accepted += 1;
            }
        }
        state.weights_from_sticks();
    }
    tally
}

/// ln p(n | α) for truncated stick-breaking weights integrated out, as a function of the
/// labelled counts: Σ_{k<K} ln[α Γ(1 + n_k) Γ(α + T_k) / Γ(1 + α + n_k + T_k)] with
/// T_k = Σ_{j>k} n_j (each factor is E[v_k^{n_k} (1 − v_k)^{T_k}], v_k ~ Beta(1, α)).
/// Unlike [`crate::sampler::concentration::log_lik_stick`] it keeps the Γ(1 + n_k) terms,
/// which change when labels are permuted.
pub fn log_label_prior(alpha: f64, n: &[u64]) -> f64 {
    let mut tail: u64 = n.iter().sum();
    let mut s = 0.0;
    for &c in &n[..n.len().saturating_sub(1)] {
        tail -= c;
        if c == 0 && tail == 0 {
            break;
        }
        let (c, t) = (c as f64, tail as f64);
        s += alpha.ln() + ln_gamma(1.0 + c) + ln_gamma(alpha + t) - ln_gamma(1.0 + c + alpha + t);
    }
    s
}

/// Label moves for the collapsed sweep, where the weights and parameters are integrated
/// out: the target of a permutation of labels is p(n | α) (the integrated likelihood does
/// not depend on the labels, the parameters' prior being exchangeable), so each proposal
/// is accepted with min{1, p(n′ | α)/p(n | α)}. Move 1 swaps two occupied components,
/// move 2 swaps k and k+1 for k uniform in 1..K−1 (no sticks to carry, so the last pair
/// is included). Acts on the statistics only; the weights and parameters are drawn next.
pub fn label_moves_counts<R: Rng + ?Sized>(
    stats: &mut SuffStats,
    alpha: f64,
    rng: &mut R,
) -> MoveTally {
    label_moves_counts_with(stats, alpha, rng, log_label_prior)
}

/// [`label_moves_counts`] with the target `log_prior` given explicitly; only the exact
/// tests pass anything but [`log_label_prior`] (to show that a wrong one is caught).
#[doc(hidden)]
pub fn label_moves_counts_with<R: Rng + ?Sized>(
    stats: &mut SuffStats,
    alpha: f64,
    rng: &mut R,
    log_prior: fn(f64, &[u64]) -> f64,
) -> MoveTally {
    let k = stats.n.len();
    let mut tally = MoveTally::default();
    let mut current = log_prior(alpha, &stats.n);
    let mut try_swap = |stats: &mut SuffStats, a: usize, b: usize, rng: &mut R| -> bool {
        stats.n.swap(a, b);
        let proposed = log_prior(alpha, &stats.n);
        if accept(proposed - current, rng) {
            current = proposed;
            stats.sum.swap(a, b);
            stats.sumsq.swap(a, b);
            true
        } else {
            stats.n.swap(a, b);
            false
        }
    };
    let occupied: Vec<usize> = (0..k).filter(|&j| stats.n[j] > 0).collect();
    let m = occupied.len();
    if m >= 2 {
        for _ in 0..m {
            let (i, l) = distinct_pair(m, rng);
            tally.labels_proposed += 1;
            if try_swap(stats, occupied[i], occupied[l], rng) {
                tally.labels_accepted += 1;
            }
        }
    }
    if k >= 2 {
        for _ in 0..k - 1 {
            let a = rng.random_range(0..k - 1);
            tally.adjacent_proposed += 1;
            if try_swap(stats, a, a + 1, rng) {
                tally.adjacent_accepted += 1;
            }
        }
    }
    tally
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sampler::rng::StreamKey;

    fn stick_state(v: &[f64]) -> State {
        let k = v.len();
        let mut s = State {
            log_w: vec![0.0; k],
            log_v: v.iter().map(|x| x.ln()).collect(),
            log_1mv: v
                .iter()
                .map(|x| if *x < 1.0 { (1.0 - x).ln() } else { 0.0 })
                .collect(),
            mu: (0..k).map(|j| j as f64).collect(),
            var: (0..k).map(|j| 1.0 + j as f64).collect(),
            concentration: 1.0,
            var_scale: 1.0,
        };
        s.weights_from_sticks();
        s
    }

    /// ln Π_k w_k^{n_k}, evaluated directly from the sticks.
    fn log_pz(state: &State, n: &[u64]) -> f64 {
        let mut acc = 0.0;
        let mut total = 0.0;
        for (j, &c) in n.iter().enumerate() {
            let w = state.log_v[j] + acc;
            acc += state.log_1mv[j];
            total += c as f64 * w;
        }
        total
    }

    #[test]
    fn adjacent_ratio_equals_the_change_in_the_allocation_prior() {
        // The ratio must equal p(z' | v') / p(z | v) evaluated from its definition
        // (w_k = v_k Π_{j<k} (1 − v_j), Ishwaran & James 2001).
        let v = [0.3, 0.6, 0.2, 0.45, 1.0];
        let n = [4u64, 9, 0, 2, 5];
        let before = stick_state(&v);
        for a in 0..3 {
            let mut v2 = v;
            v2.swap(a, a + 1);
            let mut n2 = n;
            n2.swap(a, a + 1);
            let after = stick_state(&v2);
            let direct = log_pz(&after, &n2) - log_pz(&before, &n);
            let formula = log_ratio_swap_adjacent(
                n[a] as f64,
                n[a + 1] as f64,
                before.log_1mv[a],
                before.log_1mv[a + 1],
            );
            assert!(
                (direct - formula).abs() < 1e-12,
                "pair {a}: {direct} vs {formula}"
            );
        }
    }

    #[test]
    fn label_ratio_equals_the_change_in_the_allocation_prior() {
        let state = stick_state(&[0.3, 0.6, 0.2, 0.45, 1.0]);
        let n = [4u64, 9, 0, 2, 5];
        let (a, b) = (1, 4);
        let mut n2 = n;
        n2.swap(a, b);
        let direct = log_pz(&state, &n2) - log_pz(&state, &n);
        let formula =
            log_ratio_swap_labels(n[a] as f64, n[b] as f64, state.log_w[a], state.log_w[b]);
        assert!((direct - formula).abs() < 1e-12);
    }

    #[test]
    fn moves_permute_statistics_and_parameters_together() {
        let mut state = stick_state(&[0.1, 0.2, 0.3, 0.4, 0.5, 1.0]);
        let mut stats = SuffStats::zeros(6);
        for j in 0..6 {
            stats.n[j] = (j as u64 * 3) % 5;
            stats.sum[j] = j as f64 * 10.0;
            stats.sumsq[j] = j as f64 * 100.0;
        }
        let mut rng = StreamKey::new(3, 1).label_rng(1);
        let mut accepted = 0;
        let mut carried: Vec<usize> = (0..6).collect();
        for _ in 0..50 {
            let t =
                label_moves_carrying(&mut stats, &mut state, &EXACT, &mut rng, Some(&mut carried));
            accepted += t.labels_accepted + t.adjacent_accepted;
        }
        assert!(accepted > 0);
        // Every label still carries its own statistics, parameters and carried item, in
        // some order.
        for j in 0..6 {
            let orig = (stats.sum[j] / 10.0).round() as usize;
            assert_eq!(stats.n[j], (orig as u64 * 3) % 5);
            assert_eq!(stats.sumsq[j], orig as f64 * 100.0);
            assert_eq!(state.mu[j], orig as f64);
            assert_eq!(state.var[j], 1.0 + orig as f64);
        }
        for (c, sum) in carried.iter().zip(&stats.sum) {
            assert_eq!(*c, (sum / 10.0).round() as usize);
        }
        // The sticks are a permutation of the free ones, the last is still 1, and the
        // weights were recomputed from them.
        assert_eq!(state.log_v[5], 0.0);
        let w: f64 = state.weights().iter().sum();
        assert!((w - 1.0).abs() < 1e-12);
    }
}

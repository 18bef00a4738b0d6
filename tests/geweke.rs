//! Joint-distribution ("getting it right") tests of the Gibbs sweep, Geweke (2004),
//! "Getting it right: joint distribution tests of posterior simulators", JASA 99, 799–804.
//!
//! Two ways to draw (θ, x) from the joint p(θ) p(x | θ) on a tiny data set:
//! - marginal-conditional: θ ~ prior ([`draw_from_prior`]), x ~ p(x | θ) ([`simulate_data`]);
//! - successive-conditional: one Gibbs sweep θ' ~ K(θ, · ; x) on fixed x, then x' ~ p(x | θ').
//!
//! If every full conditional is right the sweep leaves p(θ | x) invariant and both
//! simulators have the same stationary distribution, so the means of any test function
//! g(θ, x) agree. Test functions are label-invariant (the sampler need not switch labels).
//! The successive chain is autocorrelated, so its standard error comes from batch means;
//! each mean difference gets a z-test, Bonferroni-corrected over all test functions of a
//! kernel × weight combination at family-wise level 0.001 (fixed seeds, so a pass is
//! reproducible). Sweeps with one conditional deliberately wrong (the variance shape off by
//! one half; the stick-breaking tail count off by one) must be rejected by the same test,
//! which shows the test has power.

mod common;
mod geweke_support;

use common::{batch_means_se, bonferroni_z, mean, var};
use mixband::config::{Kernel, WeightsKind};
use mixband::dist::log_beta;
use mixband::model::{draw_from_prior, simulate_data, Concentration, Prior, State, VarScale};
use mixband::sampler::allocate::SuffStats;
use mixband::sampler::allocate::{allocate, loglik, ComponentTable};
use mixband::sampler::components::update_components;
use mixband::sampler::concentration::update_concentration_given_counts;
use mixband::sampler::hyper::{update_concentration, update_var_scale};
use mixband::sampler::rng::StreamKey;
use mixband::sampler::sweep;
use mixband::sampler::var_scale::{update_var_scale_given_stats, update_var_scale_with};
use mixband::sampler::weights::update_weights;
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;

/// Observations per simulated data set.
const N_OBS: usize = 8;
/// Family-wise level of the Bonferroni-corrected z-tests of one combination.
const ALPHA: f64 = 0.001;

/// Proper priors with hyperpriors on, in standard units. var_shape 4 keeps the fourth
/// moments of σ² (hence the variances of the test functions) finite.
fn prior(kernel: Kernel, weights: WeightsKind) -> Prior {
    prior_with(kernel, weights, false)
}

/// [`prior`] with the collapsed allocation scan on or off; with it on, the stick-breaking
/// sweep also runs its label moves (the count-based ones of the collapsed sweep).
fn prior_with(kernel: Kernel, weights: WeightsKind, collapsed: bool) -> Prior {
    Prior {
        // The conditional sweep's label moves have their own joint-distribution test
        // (tests/geweke_label_moves.rs).
        label_moves: collapsed && weights == WeightsKind::StickBreaking,
        ..geweke_support::small_prior(kernel, weights, collapsed)
    }
}

/// Which transition the successive-conditional simulator uses.
#[derive(Clone, Copy, PartialEq, Eq, Debug)]
enum Kernelised {
    /// The production sweep, `mixband::sampler::sweep`.
    Production,
    /// The sweep rebuilt from the single conditionals, all correct (must equal Production).
    Rebuilt,
    /// The rebuilt sweep with the variance conditional's shape a + n/2 replaced by
    /// a + (n + 1)/2: a plausible off-by-one-observation bug.
    WrongVarShape,
    /// The rebuilt sweep with stick-breaking v_k | z ~ Beta(1 + n_k, α + Σ_{j≥k} n_j): the
    /// tail count wrongly includes component k itself.
    WrongStickTail,
    /// The rebuilt sweep with b drawn from its marginal conditional without the
    /// κ n_k (x̄_k − m)²/(2κ_n) part of C_k: the component means' prior forgotten.
    WrongVarScaleMarginal,
}

fn step(how: Kernelised, x: &[f64], prior: &Prior, state: &mut State, key: &StreamKey, t: u64) {
    if how == Kernelised::Production {
        sweep(x, prior, state, key, t);
        return;
    }

    // Same streams and order as src/sampler/sweep.rs.
    let alloc = allocate(x, &ComponentTable::new(state), key, t);
    let mut rng = key.sweep_rng(t);
    update_concentration_given_counts(prior, &alloc.stats.n, state, &mut rng);
    if how == Kernelised::WrongStickTail {
        wrong_sticks(&alloc.stats.n, state, &mut rng);
    } else {
        update_weights(prior.weights, &alloc.stats.n, state, &mut rng);
    }
    if how == Kernelised::WrongVarScaleMarginal {
        update_var_scale_with(prior, &alloc.stats, state, &mut rng, wrong_var_scale_target);
    } else {
        update_var_scale_given_stats(prior, &alloc.stats, state, &mut rng);
    }
    if how == Kernelised::WrongVarShape {
        let wrong = Prior {
            var_shape: prior.var_shape + 0.5,
            ..prior.clone()
        };
        update_components(&wrong, &alloc.stats, state, &mut rng);
    } else {
        update_components(prior, &alloc.stats, state, &mut rng);
    }
    update_var_scale(prior, state, &mut rng);
    update_concentration(prior, state, &mut rng);
}

/// ln p(ln b | z, x) of src/sampler/var_scale.rs with C_k = SS_k/2 alone.
fn wrong_var_scale_target(
    prior: &Prior,
    stats: &SuffStats,
    shape: f64,
    rate: f64,
    eta: f64,
) -> f64 {
    let a = prior.var_shape;
    let mut s = shape * eta - rate * eta.exp();
    for j in (0..stats.n.len()).filter(|&j| stats.n[j] > 0) {
        let nk = stats.n[j] as f64;
        let xbar = stats.sum[j] / nk;
        let c = 0.5 * (stats.sumsq[j] - nk * xbar * xbar).max(0.0);
        s += a * eta - (a + 0.5 * nk) * (eta.exp() + c).ln();
    }
    s
}

/// The stick-breaking weight update of src/sampler/weights.rs with the off-by-one tail.
fn wrong_sticks(n: &[u64], state: &mut State, rng: &mut ChaCha8Rng) {
    let k = n.len();
    let mut tail: u64 = n.iter().sum();
    for (j, &nj) in n.iter().enumerate().take(k - 1) {
        let (lv, l1mv) = log_beta(1.0 + nj as f64, state.concentration + tail as f64, rng);
        tail -= nj;
        state.log_v[j] = lv;
        state.log_1mv[j] = l1mv;
    }
    state.log_v[k - 1] = 0.0;
    state.log_1mv[k - 1] = 0.0;
    state.weights_from_sticks();
}

/// Label-invariant test functions g(θ, x), with names for messages.
fn test_functions(prior: &Prior) -> Vec<&'static str> {
    let mut names = vec![
        "f(-1)",
        "f(0)",
        "f(1.2)",
        "sum w mu",
        "sum w var",
        "sum w mu^2",
        "sum w^2",
        "mean x",
        "mean x^2",
        "loglik",
    ];
    if matches!(prior.var_scale, VarScale::Gamma { .. }) {
        names.push("var_scale");
    }
    if matches!(prior.concentration, Concentration::Gamma { .. }) {
        names.push("ln concentration");
    }
    names
}

fn evaluate(prior: &Prior, s: &State, x: &[f64], out: &mut [Vec<f64>]) {
    let w = s.weights();
    let k = s.k();
    let mut g = vec![
        s.density(-1.0),
        s.density(0.0),
        s.density(1.2),
        (0..k).map(|j| w[j] * s.mu[j]).sum(),
        (0..k).map(|j| w[j] * s.var[j]).sum(),
        (0..k).map(|j| w[j] * s.mu[j] * s.mu[j]).sum(),
        w.iter().map(|v| v * v).sum(),
        mean(x),
        x.iter().map(|v| v * v).sum::<f64>() / x.len() as f64,
        loglik(x, &ComponentTable::new(s)),
    ];
    if matches!(prior.var_scale, VarScale::Gamma { .. }) {
        g.push(s.var_scale);
    }
    if matches!(prior.concentration, Concentration::Gamma { .. }) {
        g.push(s.concentration.ln());
    }
    for (o, v) in out.iter_mut().zip(g) {
        assert!(v.is_finite(), "non-finite test function value");
        o.push(v);
    }
}

/// Marginal-conditional simulator: `m` independent draws of g(θ, x).
fn marginal_conditional(prior: &Prior, m: usize, seed: u64) -> Vec<Vec<f64>> {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let mut out = vec![Vec::with_capacity(m); test_functions(prior).len()];
    for _ in 0..m {
        let s = draw_from_prior(prior, &mut rng);
        let x = simulate_data(&s, N_OBS, &mut rng);
        evaluate(prior, &s, &x, &mut out);
    }
    out
}

/// Successive-conditional simulator: `m` sweeps, recording g(θ_t, x_{t−1}) after the
/// sweep on x_{t−1} (a draw from the joint when the sweep is right), then x_t ~ p(x | θ_t).
fn successive_conditional(prior: &Prior, m: usize, seed: u64, how: Kernelised) -> Vec<Vec<f64>> {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let key = StreamKey::new(seed, 1);
    let mut s = draw_from_prior(prior, &mut rng);
    let mut x = simulate_data(&s, N_OBS, &mut rng);
    let mut out = vec![Vec::with_capacity(m); test_functions(prior).len()];
    for t in 1..=m as u64 {
        step(how, &x, prior, &mut s, &key, t);
        evaluate(prior, &s, &x, &mut out);
        x = simulate_data(&s, N_OBS, &mut rng);
    }
    out
}

/// z statistics (successive − marginal) for every test function.
fn geweke_z(prior: &Prior, m: usize, seed: u64, how: Kernelised) -> Vec<(&'static str, f64)> {
    let mc = marginal_conditional(prior, m, seed);
    let sc = successive_conditional(prior, m, seed.wrapping_add(1), how);
    test_functions(prior)
        .into_iter()
        .zip(mc.iter().zip(&sc))
        .map(|(name, (a, b))| {
            let se_a2 = var(a) / a.len() as f64;
            let se_b = batch_means_se(b);
            (name, (mean(b) - mean(a)) / (se_a2 + se_b * se_b).sqrt())
        })
        .collect()
}

/// Largest |z| and the Bonferroni critical value.
fn verdict(zs: &[(&'static str, f64)]) -> (f64, f64) {
    let worst = zs.iter().map(|(_, z)| z.abs()).fold(0.0, f64::max);
    (worst, bonferroni_z(ALPHA, zs.len()))
}

const COMBOS: [(Kernel, WeightsKind); 4] = [
    (Kernel::Location, WeightsKind::Dirichlet),
    (Kernel::Location, WeightsKind::StickBreaking),
    (Kernel::LocationScale, WeightsKind::Dirichlet),
    (Kernel::LocationScale, WeightsKind::StickBreaking),
];

fn check_combo(kernel: Kernel, weights: WeightsKind, m: usize, seed: u64) {
    check_prior(&prior(kernel, weights), m, seed);
}

fn check_prior(p: &Prior, m: usize, seed: u64) {
    let (kernel, weights) = (p.kernel, p.weights);
    let zs = geweke_z(p, m, seed, Kernelised::Production);
    let (worst, crit) = verdict(&zs);
    assert!(
        worst < crit,
        "{kernel:?} x {weights:?} (collapsed: {}): Geweke test rejects (max |z| {worst:.2} >= {crit:.2}): {zs:?}",
        p.collapsed
    );
}

/// Draws per simulator in the default tests (about a second each in release mode).
const M_FAST: usize = 60_000;
/// Draws for the fault-injection test; the fault gives |z| near 30 at M_FAST, so fewer do.
const M_FAULT: usize = 20_000;

#[test]
fn geweke_location_dirichlet() {
    check_combo(Kernel::Location, WeightsKind::Dirichlet, M_FAST, 11);
}

#[test]
fn geweke_location_stick_breaking() {
    check_combo(Kernel::Location, WeightsKind::StickBreaking, M_FAST, 12);
}

#[test]
fn geweke_location_scale_dirichlet() {
    check_combo(Kernel::LocationScale, WeightsKind::Dirichlet, M_FAST, 13);
}

#[test]
fn geweke_location_scale_stick_breaking() {
    check_combo(
        Kernel::LocationScale,
        WeightsKind::StickBreaking,
        M_FAST,
        14,
    );
}

/// The fault-injection sweep differs from production only in the injected fault: with all
/// conditionals right it reproduces the production sweep bit for bit.
#[test]
fn rebuilt_sweep_equals_production_sweep() {
    for (kernel, weights) in COMBOS {
        let p = prior(kernel, weights);
        let a = successive_conditional(&p, 500, 3, Kernelised::Production);
        let b = successive_conditional(&p, 500, 3, Kernelised::Rebuilt);
        assert_eq!(a, b, "{kernel:?} x {weights:?}");
    }
}

/// A variance conditional with shape a + (n + 1)/2 instead of a + n/2 is rejected.
#[test]
fn geweke_rejects_wrong_variance_shape() {
    for (i, (kernel, weights)) in COMBOS.into_iter().enumerate() {
        let p = prior(kernel, weights);
        let zs = geweke_z(&p, M_FAULT, 21 + i as u64, Kernelised::WrongVarShape);
        let (worst, crit) = verdict(&zs);
        assert!(
            worst > crit,
            "{kernel:?} x {weights:?}: the wrong variance shape went undetected (max |z| {worst:.2} < {crit:.2}): {zs:?}"
        );
    }
}

/// The location-scale kernel's b drawn from a marginal conditional that forgets the
/// component means' prior is rejected (the location kernel does not use that step).
#[test]
fn geweke_rejects_wrong_var_scale_marginal() {
    for (i, weights) in [WeightsKind::Dirichlet, WeightsKind::StickBreaking]
        .into_iter()
        .enumerate()
    {
        let p = prior(Kernel::LocationScale, weights);
        let zs = geweke_z(
            &p,
            M_FAULT,
            71 + i as u64,
            Kernelised::WrongVarScaleMarginal,
        );
        let (worst, crit) = verdict(&zs);
        assert!(
            worst > crit,
            "location-scale x {weights:?}: the wrong b conditional went undetected (max |z| {worst:.2} < {crit:.2}): {zs:?}"
        );
    }
}

/// A stick-breaking weight conditional whose tail count includes the component itself is
/// rejected.
#[test]
fn geweke_rejects_wrong_stick_tail() {
    for (i, kernel) in [Kernel::Location, Kernel::LocationScale]
        .into_iter()
        .enumerate()
    {
        let p = prior(kernel, WeightsKind::StickBreaking);
        let zs = geweke_z(&p, M_FAULT, 31 + i as u64, Kernelised::WrongStickTail);
        let (worst, crit) = verdict(&zs);
        assert!(
            worst > crit,
            "{kernel:?} x stick-breaking: the wrong stick tail went undetected (max |z| {worst:.2} < {crit:.2}): {zs:?}"
        );
    }
}

/// The collapsed allocation scan (src/sampler/collapsed.rs), with the count-based label
/// moves for stick-breaking weights, on every kernel x weight combination. The scan on its
/// own is checked against the exact allocation posterior, with a fault it must catch, in
/// tests/collapsed_exact.rs.
#[test]
fn geweke_collapsed_all_combinations() {
    for (i, (kernel, weights)) in COMBOS.into_iter().enumerate() {
        check_prior(&prior_with(kernel, weights, true), M_FAST, 41 + i as u64);
    }
}

/// The collapsed sweep with δ ~ Gamma (the default weight prior): the concentration is
/// updated given the counts after the scan and split–merge.
#[test]
fn geweke_collapsed_dirichlet_with_delta_prior() {
    for (i, kernel) in [Kernel::Location, Kernel::LocationScale]
        .into_iter()
        .enumerate()
    {
        let p = Prior {
            concentration: Concentration::Gamma {
                shape: 2.0,
                rate: 2.0,
            },
            ..prior_with(kernel, WeightsKind::Dirichlet, true)
        };
        check_prior(&p, M_FAST, 61 + i as u64);
    }
}

/// Longer version: ten times the draws, for a stricter check after sampler changes.
#[test]
#[ignore]
fn geweke_long_all_combinations() {
    for (i, (kernel, weights)) in COMBOS.into_iter().enumerate() {
        check_combo(kernel, weights, 10 * M_FAST, 101 + i as u64);
    }
}

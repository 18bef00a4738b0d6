//! The concentration given the allocation counts (weights integrated out): δ of Dirichlet
//! weights with a Gamma prior (sparse finite mixtures, Malsiner-Walli, Frühwirth-Schnatter
//! & Grün 2016) and α of stick-breaking weights, each updated by Metropolis–Hastings.
//!
//! Checks, each against something outside the sampler:
//! - the count likelihood of δ equals the beta-binomial for K = 2 (statrs ln_beta);
//! - the count likelihood of α equals numerical integration over the sticks with the
//!   statrs Beta density;
//! - with no data the sweep samples the prior, so the concentration must follow its
//!   Gamma(shape, rate) prior: Kolmogorov–Smirnov distance of thinned draws from the statrs
//!   Gamma CDF, for both weight priors;
//! - the joint-distribution test of Geweke (2004) with data (Dirichlet here; the
//!   stick-breaking one is in tests/geweke_label_moves.rs).

mod geweke_support;
use geweke_support as geweke;

use geweke::{bonferroni_threshold, expected_count, table, Plan, TestFn};
use mixband::config::{Kernel, WeightsKind};
use mixband::model::{Concentration, Prior, State, VarScale};
use mixband::sampler::concentration::log_target;
use mixband::sampler::rng::StreamKey;
use mixband::sampler::{initial_state, sweep};
use statrs::distribution::{Beta, Continuous, ContinuousCDF, Gamma};
use statrs::function::beta::ln_beta;

fn prior(shape: f64, rate: f64, k: usize) -> Prior {
    Prior {
        kernel: Kernel::LocationScale,
        weights: WeightsKind::Dirichlet,
        components: k,
        centre: 0.0,
        centre_sd: 2.0,
        centre_shrink: 0.25,
        var_shape: 3.0,
        var_scale: VarScale::Fixed(1.0),
        concentration: Concentration::Gamma { shape, rate },
        label_moves: true,
        collapsed: false,
    }
}

/// Differences ln p(counts | c_b) − ln p(counts | c_a) from our likelihood.
fn our_diff(w: WeightsKind, n: &[u64], a: f64, b: f64) -> f64 {
    // log_target minus its prior part (shape = rate → 0 is not allowed; subtract instead).
    let t = |c: f64| log_target(w, c.ln(), 2.0, 3.0, n) - (2.0 * c.ln() - 3.0 * c);
    t(b) - t(a)
}

#[test]
fn dirichlet_count_likelihood_is_the_beta_binomial() {
    // K = 2: p(n_1, n_2 | δ) ∝ B(δ + n_1, δ + n_2) / B(δ, δ) (beta-binomial; statrs ln_beta).
    let n = [7u64, 2];
    let reference = |d: f64| ln_beta(d + 7.0, d + 2.0) - ln_beta(d, d);
    for (a, b) in [(0.01, 0.3), (0.3, 2.0), (0.05, 5.0)] {
        let ours = our_diff(WeightsKind::Dirichlet, &n, a, b);
        let theirs = reference(b) - reference(a);
        assert!(
            (ours - theirs).abs() < 1e-9 * theirs.abs().max(1.0),
            "{a}→{b}: {ours} vs {theirs}"
        );
    }
}

#[test]
fn stick_count_likelihood_matches_quadrature_over_the_sticks() {
    // p(z | α) = Π_{k<K} ∫ v^{n_k} (1 − v)^{T_k} Beta(v; 1, α) dv, by composite Simpson
    // quadrature with the statrs Beta density, for a count vector with an empty component,
    // an occupied last component and empty components in between (α ≥ 2 keeps the
    // integrand smooth at v = 1, where Simpson's rule needs it).
    let n = [3u64, 0, 5, 2, 0, 0];
    let simpson = |f: &dyn Fn(f64) -> f64| {
        let m = 20_000;
        let h = 1.0 / m as f64;
        let mut s = f(0.0) + f(1.0);
        for i in 1..m {
            s += f(i as f64 * h) * if i % 2 == 1 { 4.0 } else { 2.0 };
        }
        s * h / 3.0
    };
    let reference = |alpha: f64| {
        let beta = Beta::new(1.0, alpha).unwrap();
        let mut tail: u64 = n.iter().sum();
        let mut total = 0.0;
        for &c in &n[..n.len() - 1] {
            tail -= c;
            let f = |v: f64| v.powi(c as i32) * (1.0 - v).powi(tail as i32) * beta.pdf(v);
            total += simpson(&f).ln();
        }
        total
    };
    for (a, b) in [(2.0, 3.5), (3.5, 7.0)] {
        let ours = our_diff(WeightsKind::StickBreaking, &n, a, b);
        let theirs = reference(b) - reference(a);
        assert!((ours - theirs).abs() < 1e-7, "{a}→{b}: {ours} vs {theirs}");
    }
}

#[test]
fn without_data_the_concentration_keeps_its_gamma_prior() {
    for weights in [WeightsKind::Dirichlet, WeightsKind::StickBreaking] {
        no_data_check(weights);
    }
}

fn no_data_check(weights: WeightsKind) {
    // The sweep on an empty sample is a Gibbs sampler of the prior; its δ draws, thinned,
    // must follow Gamma(2, 10) for either weight prior (shape, rate). KS critical distance at level 0.001 for
    // m draws is about 1.95/√m (Kolmogorov distribution, asymptotic; common practice, no
    // source); autocorrelation after thinning by 25 is small, checked below by the lag-1
    // correlation.
    let (shape, rate) = (2.0, 10.0);
    let mut p = prior(shape, rate, 8);
    p.weights = weights;
    let key = StreamKey::new(77, 1);
    let x: Vec<f64> = Vec::new();
    let mut state = initial_state(&[0.0], &p, &key);
    let thin = 25;
    let m = 4000;
    let mut draws = Vec::with_capacity(m);
    for t in 1..=(m * thin) as u64 {
        sweep(&x, &p, &mut state, &key, t);
        if t % thin as u64 == 0 {
            draws.push(state.concentration);
        }
    }
    let lag1 = {
        let mean = draws.iter().sum::<f64>() / m as f64;
        let v: f64 = draws.iter().map(|d| (d - mean) * (d - mean)).sum();
        draws
            .windows(2)
            .map(|w| (w[0] - mean) * (w[1] - mean))
            .sum::<f64>()
            / v
    };
    assert!(
        lag1 < 0.1,
        "{weights:?}: thinned draws still correlated: lag-1 {lag1:.3}"
    );
    let g = Gamma::new(shape, rate).unwrap();
    draws.sort_by(|a, b| a.total_cmp(b));
    let ks = draws
        .iter()
        .enumerate()
        .map(|(i, &d)| {
            let f = g.cdf(d);
            (f - i as f64 / m as f64)
                .abs()
                .max(((i + 1) as f64 / m as f64 - f).abs())
        })
        .fold(0.0, f64::max);
    let limit = 1.95 / (m as f64).sqrt();
    assert!(ks < limit, "{weights:?}: KS distance {ks:.4} ≥ {limit:.4}");
}

#[test]
fn dirichlet_sweep_with_delta_prior_passes_the_joint_distribution_test() {
    let p = prior(2.0, 4.0, 4);
    let fns = vec![
        TestFn {
            name: "delta",
            f: |s, _| s.concentration,
        },
        TestFn {
            name: "ln delta",
            f: |s, _| s.concentration.ln(),
        },
        TestFn {
            name: "w_1",
            f: |s, _| s.log_w[0].exp(),
        },
        TestFn {
            name: "sum w^2",
            f: |s, _| s.weights().iter().map(|w| w * w).sum(),
        },
        TestFn {
            name: "E[n_1]",
            f: |s, y| expected_count(s, y, 0),
        },
        TestFn {
            name: "mu_1",
            f: |s, _| s.mu[0],
        },
        TestFn {
            name: "data sd",
            f: |_, y| {
                let m = y.iter().sum::<f64>() / y.len() as f64;
                (y.iter().map(|v| (v - m) * (v - m)).sum::<f64>() / y.len() as f64).sqrt()
            },
        },
    ];
    let plan = Plan {
        n_obs: 12,
        mc_draws: 100_000,
        sc_sweeps: 200_000,
        batches: 100,
        seed: 4242,
    };
    let run = |y: &[f64], p: &Prior, s: &mut State, k: &StreamKey, t: u64| {
        sweep(y, p, s, k, t);
    };
    let cmp = geweke::run(&p, plan, &fns, &run);
    let limit = bonferroni_threshold(0.01, fns.len());
    let worst = cmp.iter().map(|c| c.z.abs()).fold(0.0, f64::max);
    assert!(
        worst < limit,
        "|z| {worst:.2} ≥ {limit:.2}\n{}",
        table(&cmp)
    );
}

//! The Gamma prior on the Dirichlet concentration δ and its Metropolis–Hastings update
//! (sparse finite mixtures, Malsiner-Walli, Frühwirth-Schnatter & Grün 2016).
//!
//! Checks, each against something outside the sampler:
//! - the log target equals the log of the Gamma prior density (statrs) plus the log
//!   Dirichlet density of w (written from its definition), up to a constant in δ;
//! - with no data the sweep samples the prior, so δ must be Gamma(shape, rate):
//!   Kolmogorov–Smirnov distance of thinned draws from the statrs Gamma CDF;
//! - the joint-distribution test of Geweke (2004) with data.

mod geweke;

use geweke::{bonferroni_threshold, expected_count, table, Plan, TestFn};
use mixband::config::{Kernel, WeightsKind};
use mixband::model::{Concentration, Prior, State, VarScale};
use mixband::sampler::dirichlet_delta::log_target;
use mixband::sampler::rng::StreamKey;
use mixband::sampler::{initial_state, sweep};
use statrs::distribution::{Continuous, ContinuousCDF, Gamma};
use statrs::function::gamma::ln_gamma;

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
    }
}

#[test]
fn log_target_is_gamma_prior_times_dirichlet_density() {
    // ln Dirichlet(w; δ) = ln Γ(Kδ) − K ln Γ(δ) + (δ − 1) Σ ln w_k (definition), and the
    // Gamma density from statrs; on η = ln δ the Jacobian adds η.
    let log_w: Vec<f64> = [0.5f64, 0.3, 0.15, 0.05 - 1e-9, 1e-9].iter().map(|w| w.ln()).collect();
    let s: f64 = log_w.iter().sum();
    let k = log_w.len();
    let g = Gamma::new(3.0, 7.0).unwrap();
    let reference = |d: f64| {
        g.ln_pdf(d) + ln_gamma(k as f64 * d) - k as f64 * ln_gamma(d) + (d - 1.0) * s + d.ln()
    };
    let (d0, d1, d2) = (0.02, 0.4, 3.0);
    for (a, b) in [(d0, d1), (d1, d2), (d0, d2)] {
        let ours = log_target(f64::ln(b), 3.0, 7.0, s, k) - log_target(f64::ln(a), 3.0, 7.0, s, k);
        let theirs = reference(b) - reference(a);
        assert!((ours - theirs).abs() < 1e-9 * theirs.abs().max(1.0), "{a}→{b}: {ours} vs {theirs}");
    }
}

#[test]
fn without_data_delta_keeps_its_gamma_prior() {
    // The sweep on an empty sample is a Gibbs sampler of the prior; its δ draws, thinned,
    // must follow Gamma(2, 10) (shape, rate). KS critical distance at level 0.001 for
    // m draws is about 1.95/√m (Kolmogorov distribution, asymptotic; common practice, no
    // source); autocorrelation after thinning by 25 is small, checked below by the lag-1
    // correlation.
    let (shape, rate) = (2.0, 10.0);
    let p = prior(shape, rate, 8);
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
        draws.windows(2).map(|w| (w[0] - mean) * (w[1] - mean)).sum::<f64>() / v
    };
    assert!(lag1 < 0.1, "thinned δ draws still correlated: lag-1 {lag1:.3}");
    let g = Gamma::new(shape, rate).unwrap();
    draws.sort_by(|a, b| a.total_cmp(b));
    let ks = draws
        .iter()
        .enumerate()
        .map(|(i, &d)| {
            let f = g.cdf(d);
            (f - i as f64 / m as f64).abs().max(((i + 1) as f64 / m as f64 - f).abs())
        })
        .fold(0.0, f64::max);
    let limit = 1.95 / (m as f64).sqrt();
    assert!(ks < limit, "KS distance {ks:.4} ≥ {limit:.4}");
}

#[test]
fn dirichlet_sweep_with_delta_prior_passes_the_joint_distribution_test() {
    let p = prior(2.0, 4.0, 4);
    let fns = vec![
        TestFn { name: "delta", f: |s, _| s.concentration },
        TestFn { name: "ln delta", f: |s, _| s.concentration.ln() },
        TestFn { name: "w_1", f: |s, _| s.log_w[0].exp() },
        TestFn { name: "sum w^2", f: |s, _| s.weights().iter().map(|w| w * w).sum() },
        TestFn { name: "E[n_1]", f: |s, y| expected_count(s, y, 0) },
        TestFn { name: "mu_1", f: |s, _| s.mu[0] },
        TestFn { name: "data sd", f: |_, y| {
            let m = y.iter().sum::<f64>() / y.len() as f64;
            (y.iter().map(|v| (v - m) * (v - m)).sum::<f64>() / y.len() as f64).sqrt()
        } },
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
    assert!(worst < limit, "|z| {worst:.2} ≥ {limit:.2}\n{}", table(&cmp));
}

//! The joint-distribution test of Geweke (2004), "Getting it right: joint distribution
//! tests of posterior simulators", JASA 99:799–804, shared by the sampler tests.
//!
//! Marginal-conditional simulator: θ ~ p(θ), y ~ p(y | θ), independent draws.
//! Successive-conditional simulator: from θ⁰ ~ p(θ), alternate one sweep of the posterior
//! sampler θ ~ q(θ | y, θ′) with y ~ p(y | θ). If the sweep leaves p(θ | y) invariant both
//! simulate the joint p(θ, y), so every test function g(θ, y) has the same mean under both.
//! The statistic is (ḡ_MC − ḡ_SC) / √(var_MC/M + var(ḡ_SC)), var(ḡ_SC) by batch means, and
//! compared with a Bonferroni-corrected two-sided normal threshold.

#![allow(dead_code)]

use mixband::model::{draw_from_prior, simulate_data, Prior, State};
use mixband::sampler::rng::StreamKey;
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use statrs::distribution::{ContinuousCDF, Normal};

/// A test function g(θ, y) with a name for messages.
pub struct TestFn {
    pub name: &'static str,
    pub f: fn(&State, &[f64]) -> f64,
}

/// One test function's comparison.
#[derive(Debug, Clone)]
pub struct Comparison {
    pub name: &'static str,
    pub mean_mc: f64,
    pub mean_sc: f64,
    pub z: f64,
}

/// Sizes and seed of a test.
#[derive(Debug, Clone, Copy)]
pub struct Plan {
    pub n_obs: usize,
    pub mc_draws: usize,
    pub sc_sweeps: usize,
    pub batches: usize,
    pub seed: u64,
}

fn mean_var(xs: &[f64]) -> (f64, f64) {
    let n = xs.len() as f64;
    let m = xs.iter().sum::<f64>() / n;
    let v = xs.iter().map(|x| (x - m) * (x - m)).sum::<f64>() / (n - 1.0);
    (m, v)
}

/// One sweep of the posterior sampler: (data, prior, state, stream key, sweep number).
pub type Sweep<'a> = &'a dyn Fn(&[f64], &Prior, &mut State, &StreamKey, u64);

/// Runs both simulators and compares every test function. `sweep` advances the state by
/// one sweep given the data, the stream key and the sweep number.
pub fn run(prior: &Prior, plan: Plan, fns: &[TestFn], sweep: Sweep<'_>) -> Vec<Comparison> {
    // Marginal-conditional.
    let mut rng = ChaCha8Rng::seed_from_u64(plan.seed);
    let mut mc: Vec<Vec<f64>> = vec![Vec::with_capacity(plan.mc_draws); fns.len()];
    for _ in 0..plan.mc_draws {
        let theta = draw_from_prior(prior, &mut rng);
        let y = simulate_data(&theta, plan.n_obs, &mut rng);
        for (out, g) in mc.iter_mut().zip(fns) {
            out.push((g.f)(&theta, &y));
        }
    }
    // Successive-conditional.
    let mut rng = ChaCha8Rng::seed_from_u64(plan.seed ^ 0x5C5C_5C5C);
    let key = StreamKey::new(plan.seed, 1);
    let mut theta = draw_from_prior(prior, &mut rng);
    let mut y = simulate_data(&theta, plan.n_obs, &mut rng);
    let mut sc: Vec<Vec<f64>> = vec![Vec::with_capacity(plan.sc_sweeps); fns.len()];
    for t in 1..=plan.sc_sweeps as u64 {
        sweep(&y, prior, &mut theta, &key, t);
        y = simulate_data(&theta, plan.n_obs, &mut rng);
        for (out, g) in sc.iter_mut().zip(fns) {
            out.push((g.f)(&theta, &y));
        }
    }
    fns.iter()
        .zip(mc.iter().zip(&sc))
        .map(|(g, (a, b))| {
            let (ma, va) = mean_var(a);
            let (mb, _) = mean_var(b);
            let size = b.len() / plan.batches;
            let batch_means: Vec<f64> = b
                .chunks_exact(size)
                .map(|c| c.iter().sum::<f64>() / size as f64)
                .collect();
            let (_, vbm) = mean_var(&batch_means);
            let se = (va / a.len() as f64 + vbm / batch_means.len() as f64).sqrt();
            Comparison {
                name: g.name,
                mean_mc: ma,
                mean_sc: mb,
                z: (ma - mb) / se,
            }
        })
        .collect()
}

/// Two-sided normal threshold for `tests` comparisons at family-wise level `level`
/// (Bonferroni): Φ⁻¹(1 − level / (2 · tests)), from statrs.
pub fn bonferroni_threshold(level: f64, tests: usize) -> f64 {
    Normal::standard().inverse_cdf(1.0 - level / (2.0 * tests as f64))
}

/// Human-readable table of the comparisons.
pub fn table(cmp: &[Comparison]) -> String {
    cmp.iter()
        .map(|c| {
            format!(
                "{:>14}: MC {:+.5}  SC {:+.5}  z {:+.2}\n",
                c.name, c.mean_mc, c.mean_sc, c.z
            )
        })
        .collect()
}

/// Σ_i P(z_i = k | y_i, θ): the expected number of observations in component k, a
/// function of (θ, y) that stands in for the count n_k (allocations are not part of θ).
pub fn expected_count(state: &State, y: &[f64], k: usize) -> f64 {
    let mut total = 0.0;
    let mut t = vec![0.0; state.k()];
    for &yi in y {
        for (j, tj) in t.iter_mut().enumerate() {
            let sd = state.var[j].sqrt();
            *tj = state.log_w[j] + mixband::dist::ln_normal_pdf(yi, state.mu[j], sd);
        }
        let lse = mixband::dist::log_sum_exp(&t);
        total += (t[k] - lse).exp();
    }
    total
}

/// Test functions every mixture sweep shares: the density at three points, the weighted
/// means of the component means and variances, the sum of squared weights, and the data's
/// second moment.
pub fn mixture_fns() -> Vec<TestFn> {
    fn w(s: &State) -> Vec<f64> {
        s.weights()
    }
    vec![
        TestFn {
            name: "f(-1)",
            f: |s, _| s.density(-1.0),
        },
        TestFn {
            name: "f(0)",
            f: |s, _| s.density(0.0),
        },
        TestFn {
            name: "f(1.2)",
            f: |s, _| s.density(1.2),
        },
        TestFn {
            name: "sum w mu",
            f: |s, _| w(s).iter().zip(&s.mu).map(|(a, b)| a * b).sum(),
        },
        TestFn {
            name: "sum w var",
            f: |s, _| w(s).iter().zip(&s.var).map(|(a, b)| a * b).sum(),
        },
        TestFn {
            name: "sum w^2",
            f: |s, _| w(s).iter().map(|a| a * a).sum(),
        },
        TestFn {
            name: "mean y^2",
            f: |_, y| y.iter().map(|v| v * v).sum::<f64>() / y.len() as f64,
        },
    ]
}

/// The small prior the sampler's joint-distribution tests share: three components, a
/// Gamma prior on the variance scale, Dirichlet(1) weights or stick-breaking weights with
/// α ~ Gamma(2, 2) (label moves on).
pub fn small_prior(
    kernel: mixband::config::Kernel,
    weights: mixband::config::WeightsKind,
    collapsed: bool,
) -> Prior {
    use mixband::config::WeightsKind;
    use mixband::model::{Concentration, VarScale};
    Prior {
        kernel,
        weights,
        components: 3,
        label_moves: weights == WeightsKind::StickBreaking,
        collapsed,
        centre: 0.0,
        centre_sd: 1.5,
        centre_shrink: 0.5,
        var_shape: 4.0,
        var_scale: VarScale::Gamma {
            shape: 3.0,
            rate: 2.0,
        },
        concentration: match weights {
            WeightsKind::Dirichlet => Concentration::Fixed(1.0),
            WeightsKind::StickBreaking => Concentration::Gamma {
                shape: 2.0,
                rate: 2.0,
            },
        },
    }
}

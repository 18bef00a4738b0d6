//! Prior sensitivity on the demo (configs/demo.toml, location-scale kernel, Dirichlet
//! weights, K = 10): the posterior mean density must move by less than a stated L1 amount
//! when every default prior scale is halved or doubled (check of the defaults' robustness;
//! common practice, no source).
//!
//! "Prior scales" are the hyperparameters that set the scale of a prior distribution:
//! centre_sd (sd of component means, location kernel), 1/√centre_shrink (sd of a mean
//! relative to its component's σ, location-scale kernel), var_scale (scale b of the
//! Inverse-Gamma on variances, when fixed) and 1/var_scale_rate (scale of the Gamma prior
//! on b). Each is multiplied by f ∈ {½, 2} together; shapes and the Dirichlet
//! concentration are not scales and stay at their defaults. The Monte Carlo baseline is the
//! L1 distance between two runs with the default prior and different seeds.

mod validation_support;

use std::path::Path;

use mixband::run::Prepared;
use mixband::sampler::ChainPlan;
use validation_support::{chain_states, l1, linspace, PosteriorDensity};

/// Largest accepted L1 change of the posterior mean (the density integrates to 1, so L1 is
/// at most 2): 0.05, i.e. at most 2.5% of the probability mass moves.
pub const MAX_L1: f64 = 0.05;

fn demo() -> (String, std::path::PathBuf) {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("configs");
    let text = std::fs::read_to_string(dir.join("demo.toml")).expect("configs/demo.toml");
    (text, dir)
}

/// Posterior mean on the demo's grid with every prior scale multiplied by `f`.
pub fn demo_mean(f: f64, seed: u64, chains: u64, plan: ChainPlan) -> (Vec<f64>, Vec<f64>) {
    let (text, dir) = demo();
    let base = Prepared::from_text(&text, "demo.toml", &dir, None).expect("demo prepares");
    let p = &base.config.prior;
    assert!(
        !text.contains("[prior]"),
        "the demo sets no prior; the defaults are what is tested"
    );
    let scaled = format!(
        "{text}\n[prior]\ncentre_sd = {:?}\ncentre_shrink = {:?}\nvar_scale = {:?}\nvar_scale_rate = {:?}\n",
        p.centre_sd * f,
        p.centre_shrink / (f * f),
        p.var_scale * f,
        p.var_scale_rate / f
    );
    let prep = Prepared::from_text(&scaled, "demo.toml", &dir, None).expect("scaled demo prepares");
    let c = &prep.config;
    let grid = linspace(c.grid_from, c.grid_to, c.grid_points);
    let mut states = Vec::new();
    for ch in 1..=chains {
        states.extend(chain_states(&prep.data.z, &prep.prior, seed, ch, plan));
    }
    let mean = PosteriorDensity::new(&states, &grid, prep.data.centre, prep.data.scale).mean();
    (grid, mean)
}

pub fn sensitivity(chains: u64, plan: ChainPlan) {
    let (grid, base) = demo_mean(1.0, 11, chains, plan);
    let (_, again) = demo_mean(1.0, 12, chains, plan);
    let noise = l1(&grid, &base, &again);
    eprintln!("prior sensitivity: Monte Carlo baseline L1 (default prior, two seeds) = {noise:.4}");
    for f in [0.5, 2.0] {
        let (_, m) = demo_mean(f, 11, chains, plan);
        let d = l1(&grid, &base, &m);
        eprintln!("prior sensitivity: scales × {f}: L1 change of posterior mean = {d:.4} (limit {MAX_L1})");
        assert!(d < MAX_L1, "scales × {f}: L1 change {d:.4} ≥ {MAX_L1}");
    }
}

#[test]
fn demo_posterior_mean_is_insensitive_to_halving_or_doubling_prior_scales() {
    sensitivity(
        2,
        ChainPlan {
            warmup: 500,
            draws: 500,
            thin: 1,
        },
    );
}

/// Demo length (4 chains × 1000 + 1000 sweeps) for docs/validation.md.
#[test]
#[ignore]
fn prior_sensitivity_large() {
    sensitivity(
        4,
        ChainPlan {
            warmup: 1000,
            draws: 1000,
            thin: 1,
        },
    );
}

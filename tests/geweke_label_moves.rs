//! Joint-distribution tests (Geweke 2004) of the stick-breaking sweep with the
//! label-switching moves of Papaspiliopoulos & Roberts (2008) and Hastie, Liverani &
//! Richardson (2015), and a check that the same test rejects a deliberately wrong
//! acceptance ratio, so a pass means something.
//!
//! The moves change only the labels, so label-invariant test functions cannot see a wrong
//! ratio; label-dependent ones (w_1, w_2, the expected count of component 1) can, and the
//! moves must not bias them. Fixed seeds; family-wise level 0.01, Bonferroni over the
//! test functions.

mod geweke_support;
use geweke_support as geweke;

use geweke::{bonferroni_threshold, expected_count, table, Plan, TestFn};
use mixband::config::{Kernel, WeightsKind};
use mixband::model::{Concentration, Prior, State, VarScale};
use mixband::sampler::label_moves::{
    log_ratio_swap_adjacent, log_ratio_swap_labels, MoveRatios, EXACT,
};
use mixband::sampler::rng::StreamKey;
use mixband::sampler::sweep_with;

fn prior(kernel: Kernel) -> Prior {
    Prior {
        kernel,
        weights: WeightsKind::StickBreaking,
        components: 4,
        centre: 0.0,
        centre_sd: 2.0,
        centre_shrink: 0.25,
        var_shape: 3.0,
        var_scale: VarScale::Gamma {
            shape: 4.0,
            rate: 4.0,
        },
        concentration: Concentration::Gamma {
            shape: 2.0,
            rate: 2.0,
        },
        label_moves: true,
        collapsed: false,
    }
}

fn test_fns() -> Vec<TestFn> {
    vec![
        TestFn {
            name: "w_1",
            f: |s, _| s.log_w[0].exp(),
        },
        TestFn {
            name: "w_2",
            f: |s, _| s.log_w[1].exp(),
        },
        TestFn {
            name: "E[n_1]",
            f: |s, y| expected_count(s, y, 0),
        },
        TestFn {
            name: "E[n_2]",
            f: |s, y| expected_count(s, y, 1),
        },
        TestFn {
            name: "mu_1",
            f: |s, _| s.mu[0],
        },
        TestFn {
            name: "alpha",
            f: |s, _| s.concentration,
        },
        TestFn {
            name: "sum w^2",
            f: |s, _| s.weights().iter().map(|w| w * w).sum(),
        },
        TestFn {
            name: "mix mean",
            f: |s, _| s.weights().iter().zip(&s.mu).map(|(w, m)| w * m).sum(),
        },
        TestFn {
            name: "ln var_1",
            f: |s, _| s.var[0].ln(),
        },
        TestFn {
            name: "data mean",
            f: |_, y| y.iter().sum::<f64>() / y.len() as f64,
        },
    ]
}

const PLAN: Plan = Plan {
    n_obs: 12,
    mc_draws: 100_000,
    sc_sweeps: 200_000,
    batches: 100,
    seed: 20_261_201,
};

/// Largest |z| over the test functions, and the table for messages.
fn worst(kernel: Kernel, ratios: MoveRatios) -> (f64, String) {
    let p = prior(kernel);
    let sweep = move |y: &[f64], p: &Prior, s: &mut State, k: &StreamKey, t: u64| {
        let out = sweep_with(y, p, s, k, t, &ratios);
        // The moves must really run in this configuration.
        assert!(out.moves.adjacent_proposed > 0);
    };
    let cmp = geweke::run(&p, PLAN, &test_fns(), &sweep);
    let worst = cmp.iter().map(|c| c.z.abs()).fold(0.0, f64::max);
    let t = table(&cmp);
    eprintln!("{kernel:?}:\n{t}");
    (worst, t)
}

#[test]
fn stick_breaking_sweep_with_label_moves_samples_the_posterior() {
    let limit = bonferroni_threshold(0.01, test_fns().len());
    for kernel in [Kernel::LocationScale, Kernel::Location] {
        let (z, t) = worst(kernel, EXACT);
        assert!(z < limit, "{kernel:?}: |z| {z:.2} ≥ {limit:.2}\n{t}");
    }
}

#[test]
fn joint_test_rejects_an_inverted_label_swap_ratio() {
    // (w_l / w_j)^{n_l − n_j} instead of (w_j / w_l)^{n_l − n_j}.
    let wrong = MoveRatios {
        swap_labels: |nj, nl, wj, wl| -log_ratio_swap_labels(nj, nl, wj, wl),
        swap_adjacent: log_ratio_swap_adjacent,
    };
    let limit = bonferroni_threshold(0.01, test_fns().len());
    let (z, t) = worst(Kernel::LocationScale, wrong);
    assert!(
        z > limit,
        "wrong swap ratio not detected: |z| {z:.2} < {limit:.2}\n{t}"
    );
}

#[test]
fn joint_test_rejects_an_adjacent_swap_that_ignores_the_sticks() {
    // Accepting every adjacent swap is the ratio of an exchangeable prior, wrong here.
    let wrong = MoveRatios {
        swap_labels: log_ratio_swap_labels,
        swap_adjacent: |_, _, _, _| 0.0,
    };
    let limit = bonferroni_threshold(0.01, test_fns().len());
    let (z, t) = worst(Kernel::LocationScale, wrong);
    assert!(
        z > limit,
        "wrong adjacent ratio not detected: |z| {z:.2} < {limit:.2}\n{t}"
    );
}

//! Joint-distribution test (Geweke 2004, "Getting it right", JASA 99:799–804) of the sweep
//! for data recorded at a resolution: the exact values y ~ p(y | θ) are simulated, the
//! sampler sees only their cells [x − r/2, x + r/2) with x = r · round(y / r), and draws
//! the latent exact values and components itself (src/sampler/censored.rs). If the
//! augmented sweep leaves p(θ | cells) invariant, the successive-conditional simulator
//! (sweep on the cells of y, then fresh y ~ p(y | θ)) has the joint p(θ) p(y | θ) as its
//! stationary law, so test functions of (θ, y) have the same means under both simulators.
//!
//! On the conditional sweep the sampler draws no exact values: it draws counts per cell and
//! updates the parameters given them by Metropolis–Hastings (src/sampler/cell_counts.rs,
//! cell_params.rs); the collapsed sweep draws the exact values for its scan.
//!
//! The resolution is coarse (0.8 standard units against component sds near 0.7), so the
//! censoring matters; a sampler told cells twice as wide (a wrong truncation) must be
//! rejected by the same test.

mod geweke_support;
use geweke_support as geweke;

use geweke::{bonferroni_threshold, table, Plan, TestFn};
use mixband::config::{Kernel, WeightsKind};
use mixband::data::{Cells, Transform};
use mixband::model::{Prior, State};
use mixband::sampler::cell_params::CellRatio;
use mixband::sampler::rng::StreamKey;
use mixband::sampler::{sweep_opts, SweepOptions};

/// Width of a recorded cell, standard units.
const R: f64 = 0.8;

fn prior(kernel: Kernel, weights: WeightsKind, collapsed: bool) -> Prior {
    geweke::small_prior(kernel, weights, collapsed)
}

/// The cells of `y` recorded at resolution `r`, told to the sampler with width `told`.
fn cells_of(y: &[f64], r: f64, told: f64) -> Cells {
    let x: Vec<f64> = y.iter().map(|v| r * (v / r).round()).collect();
    Cells::from_rows(&x, None, told, Transform::None, 0.0, 1.0)
}

fn test_fns() -> Vec<TestFn> {
    let mut fns = geweke::mixture_fns();
    fns.extend([
        TestFn {
            name: "censored loglik",
            f: |s, y| mixband::sampler::censored::loglik_censored(&cells_of(y, R, R), s),
        },
        TestFn {
            name: "var_scale",
            f: |s, _| s.var_scale,
        },
    ]);
    fns
}

const PLAN: Plan = Plan {
    n_obs: 8,
    mc_draws: 60_000,
    sc_sweeps: 60_000,
    batches: 60,
    seed: 20_261_202,
};

/// Largest |z| with the sampler told cells of width `told`, and the table for messages.
fn worst(p: &Prior, told: f64, plan: Plan) -> (f64, String) {
    worst_with(p, told, plan, CellRatio::Exact)
}

/// [`worst`] with the given ratio for the parameter updates given counts per cell.
fn worst_with(p: &Prior, told: f64, plan: Plan, cell_ratio: CellRatio) -> (f64, String) {
    let sweep = move |y: &[f64], p: &Prior, s: &mut State, k: &StreamKey, t: u64| {
        let cells = cells_of(y, R, told);
        let opts = SweepOptions {
            cells: Some(&cells),
            cell_ratio,
            ..SweepOptions::default()
        };
        sweep_opts(y, p, s, k, t, &opts);
    };
    let cmp = geweke::run(p, plan, &test_fns(), &sweep);
    let z = cmp.iter().map(|c| c.z.abs()).fold(0.0, f64::max);
    (z, table(&cmp))
}

fn check(kernel: Kernel, weights: WeightsKind, collapsed: bool, seed: u64) {
    let p = prior(kernel, weights, collapsed);
    let limit = bonferroni_threshold(0.001, test_fns().len());
    let (z, t) = worst(&p, R, Plan { seed, ..PLAN });
    assert!(
        z < limit,
        "{kernel:?} x {weights:?} (collapsed {collapsed}): |z| {z:.2} >= {limit:.2}\n{t}"
    );
}

#[test]
fn censored_conditional_sweep_location_scale_dirichlet() {
    check(Kernel::LocationScale, WeightsKind::Dirichlet, false, 31);
}

#[test]
fn censored_conditional_sweep_location_stick_breaking() {
    check(Kernel::Location, WeightsKind::StickBreaking, false, 32);
}

#[test]
fn censored_conditional_sweep_location_scale_stick_breaking() {
    check(Kernel::LocationScale, WeightsKind::StickBreaking, false, 35);
}

#[test]
fn censored_conditional_sweep_location_dirichlet() {
    check(Kernel::Location, WeightsKind::Dirichlet, false, 36);
}

#[test]
fn censored_collapsed_sweep_location_scale_stick_breaking() {
    check(Kernel::LocationScale, WeightsKind::StickBreaking, true, 33);
}

#[test]
fn censored_collapsed_sweep_location_dirichlet() {
    check(Kernel::Location, WeightsKind::Dirichlet, true, 34);
}

/// Cells told twice as wide as recorded: the latent values are drawn from the wrong
/// truncation, and the test must see it.
#[test]
fn joint_test_rejects_a_wrong_truncation() {
    let p = prior(Kernel::LocationScale, WeightsKind::Dirichlet, false);
    let limit = bonferroni_threshold(0.001, test_fns().len());
    let plan = Plan {
        mc_draws: 20_000,
        sc_sweeps: 20_000,
        batches: 40,
        seed: 41,
        ..PLAN
    };
    let (z, t) = worst(&p, 2.0 * R, plan);
    assert!(z > limit, "wrong truncation not detected: |z| {z:.2}\n{t}");
}

/// The conditional sweep updates the parameters given counts per cell by
/// Metropolis–Hastings with a proposal that depends on the current point; without the
/// proposal's correction in the ratio it samples the wrong law, and the test must see it.
#[test]
fn joint_test_rejects_the_cell_update_without_its_proposal_ratio() {
    let limit = bonferroni_threshold(0.001, test_fns().len());
    let plan = Plan {
        mc_draws: 20_000,
        sc_sweeps: 20_000,
        batches: 40,
        seed: 42,
        ..PLAN
    };
    for kernel in [Kernel::LocationScale, Kernel::Location] {
        let p = prior(kernel, WeightsKind::Dirichlet, false);
        let (z, t) = worst_with(&p, R, plan, CellRatio::WithoutProposal);
        assert!(
            z > limit,
            "{kernel:?}: wrong ratio not detected: |z| {z:.2}\n{t}"
        );
    }
}

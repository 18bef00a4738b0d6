//! Joint-distribution test (Geweke 2004, "Getting it right", JASA 99:799–804) of the
//! pair moves: re-split (src/sampler/resplit.rs) and relocation (src/sampler/relocate.rs).
//! The conditional sweep followed by several moves must leave p(θ | data) invariant, on
//! exact values (all four kernel × weight combinations) and on data recorded at a
//! resolution (the counts-per-cell sweep). With three components and four moves a sweep,
//! much of each sweep's change to the pair structure comes from the moves, so a wrong
//! move shows: the same test must reject the re-split moves with the Jacobian of their
//! coordinates left out, and the relocation moves without their proposal's densities.

mod geweke_support;
use geweke_support as geweke;

use geweke::{bonferroni_threshold, table, Plan, TestFn};
use mixband::config::{Kernel, WeightsKind};
use mixband::data::{Cells, Transform};
use mixband::model::{Prior, State};
use mixband::sampler::relocate::RelocateTarget;
use mixband::sampler::resplit::ResplitTarget;
use mixband::sampler::rng::StreamKey;
use mixband::sampler::{sweep_opts, SweepOptions};

/// Moves of each kind a sweep.
const PAIRS: usize = 4;

/// Which moves run, and with which ratios.
#[derive(Clone, Copy)]
struct Moves {
    resplit: usize,
    relocate: usize,
    resplit_target: ResplitTarget,
    relocate_target: RelocateTarget,
}

const RESPLIT: Moves = Moves {
    resplit: PAIRS,
    relocate: 0,
    resplit_target: ResplitTarget::Exact,
    relocate_target: RelocateTarget::Exact,
};

const RELOCATE: Moves = Moves {
    resplit: 0,
    relocate: PAIRS,
    ..RESPLIT
};

const BOTH: Moves = Moves {
    resplit: PAIRS,
    relocate: PAIRS,
    ..RESPLIT
};
/// Width of a recorded cell, standard units, for the recorded-data case.
const R: f64 = 0.5;

fn prior(kernel: Kernel, weights: WeightsKind) -> Prior {
    geweke::small_prior(kernel, weights, false)
}

fn cells_of(y: &[f64]) -> Cells {
    let x: Vec<f64> = y.iter().map(|v| R * (v / R).round()).collect();
    Cells::from_rows(&x, None, R, Transform::None, 0.0, 1.0)
}

fn test_fns() -> Vec<TestFn> {
    let mut fns = geweke::mixture_fns();
    fns.extend([
        TestFn {
            name: "sum w mu^2",
            f: |s, _| s.weights().iter().zip(&s.mu).map(|(a, b)| a * b * b).sum(),
        },
        TestFn {
            name: "sum ln var",
            f: |s, _| s.var.iter().map(|v| v.ln()).sum(),
        },
        TestFn {
            name: "w_1",
            f: |s, _| s.log_w[0].exp(),
        },
        TestFn {
            name: "spread of means",
            f: |s, _| {
                let (lo, hi) =
                    s.mu.iter()
                        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &m| {
                            (a.min(m), b.max(m))
                        });
                hi - lo
            },
        },
    ]);
    fns
}

const PLAN: Plan = Plan {
    n_obs: 8,
    mc_draws: 50_000,
    sc_sweeps: 50_000,
    batches: 50,
    seed: 20_261_203,
};

/// Largest |z| and the table, for exact values or (`recorded`) their cells.
fn worst(p: &Prior, plan: Plan, recorded: bool, moves: Moves) -> (f64, String) {
    let sweep = move |y: &[f64], p: &Prior, s: &mut State, k: &StreamKey, t: u64| {
        let cells = recorded.then(|| cells_of(y));
        let opts = SweepOptions {
            cells: cells.as_ref(),
            resplit_pairs: moves.resplit,
            resplit_target: moves.resplit_target,
            relocate_moves: moves.relocate,
            relocate_target: moves.relocate_target,
            ..SweepOptions::default()
        };
        sweep_opts(y, p, s, k, t, &opts);
    };
    let cmp = geweke::run(p, plan, &test_fns(), &sweep);
    let z = cmp.iter().map(|c| c.z.abs()).fold(0.0, f64::max);
    (z, table(&cmp))
}

fn check(kernel: Kernel, weights: WeightsKind, recorded: bool, seed: u64) {
    check_moves(kernel, weights, recorded, seed, RESPLIT);
}

fn check_moves(kernel: Kernel, weights: WeightsKind, recorded: bool, seed: u64, moves: Moves) {
    let p = prior(kernel, weights);
    let limit = bonferroni_threshold(0.001, test_fns().len());
    let (z, t) = worst(&p, Plan { seed, ..PLAN }, recorded, moves);
    assert!(
        z < limit,
        "{kernel:?} x {weights:?} (recorded {recorded}): |z| {z:.2} >= {limit:.2}\n{t}"
    );
}

#[test]
fn resplit_location_scale_dirichlet() {
    check(Kernel::LocationScale, WeightsKind::Dirichlet, false, 51);
}

#[test]
fn resplit_location_scale_stick_breaking() {
    check(Kernel::LocationScale, WeightsKind::StickBreaking, false, 52);
}

#[test]
fn resplit_location_dirichlet() {
    check(Kernel::Location, WeightsKind::Dirichlet, false, 53);
}

#[test]
fn resplit_location_stick_breaking() {
    check(Kernel::Location, WeightsKind::StickBreaking, false, 54);
}

#[test]
fn resplit_on_cells_location_scale_dirichlet() {
    check(Kernel::LocationScale, WeightsKind::Dirichlet, true, 55);
}

#[test]
fn resplit_on_cells_location_stick_breaking() {
    check(Kernel::Location, WeightsKind::StickBreaking, true, 56);
}

/// `wrong` samples the wrong law; the joint-distribution test must see it on both kernels
/// (`what` names the fault in the message).
fn assert_fault_detected(wrong: Moves, seed: u64, what: &str) {
    let limit = bonferroni_threshold(0.001, test_fns().len());
    let plan = Plan {
        mc_draws: 20_000,
        sc_sweeps: 20_000,
        batches: 40,
        seed,
        ..PLAN
    };
    for kernel in [Kernel::LocationScale, Kernel::Location] {
        let p = prior(kernel, WeightsKind::Dirichlet);
        let (z, t) = worst(&p, plan, false, wrong);
        assert!(
            z > limit,
            "{kernel:?}: {what} not detected: |z| {z:.2}\n{t}"
        );
    }
}

/// The moves without the Jacobian of their coordinates sample the wrong law.
#[test]
fn joint_test_rejects_the_moves_without_their_jacobian() {
    let wrong = Moves {
        resplit_target: ResplitTarget::WithoutJacobian,
        ..RESPLIT
    };
    assert_fault_detected(wrong, 57, "missing Jacobian");
}

#[test]
fn relocate_location_scale_dirichlet() {
    check_moves(
        Kernel::LocationScale,
        WeightsKind::Dirichlet,
        false,
        61,
        RELOCATE,
    );
}

#[test]
fn relocate_location_scale_stick_breaking() {
    check_moves(
        Kernel::LocationScale,
        WeightsKind::StickBreaking,
        false,
        62,
        RELOCATE,
    );
}

#[test]
fn relocate_location_dirichlet() {
    check_moves(
        Kernel::Location,
        WeightsKind::Dirichlet,
        false,
        63,
        RELOCATE,
    );
}

#[test]
fn relocate_location_stick_breaking() {
    check_moves(
        Kernel::Location,
        WeightsKind::StickBreaking,
        false,
        64,
        RELOCATE,
    );
}

#[test]
fn both_moves_on_cells_location_scale_dirichlet() {
    check_moves(
        Kernel::LocationScale,
        WeightsKind::Dirichlet,
        true,
        65,
        BOTH,
    );
}

#[test]
fn both_moves_on_cells_location_stick_breaking() {
    check_moves(Kernel::Location, WeightsKind::StickBreaking, true, 66, BOTH);
}

/// The relocation moves without q(x) / q(x′) in their ratio sample the wrong law.
#[test]
fn joint_test_rejects_relocation_without_its_proposal_ratio() {
    let wrong = Moves {
        relocate_target: RelocateTarget::WithoutProposal,
        ..RELOCATE
    };
    assert_fault_detected(wrong, 67, "missing proposal ratio");
}

/// The moves after the collapsed sweep (the default up to 20 000 observations).
#[test]
fn both_moves_after_the_collapsed_sweep() {
    let p = Prior {
        collapsed: true,
        ..prior(Kernel::LocationScale, WeightsKind::StickBreaking)
    };
    let limit = bonferroni_threshold(0.001, test_fns().len());
    let (z, t) = worst(&p, Plan { seed: 68, ..PLAN }, false, BOTH);
    assert!(
        z < limit,
        "collapsed sweep with both moves: |z| {z:.2} >= {limit:.2}\n{t}"
    );
}

//! The allocation step alone, one thread, at a fixed state: ns per (observation ×
//! component) for the reference loop and for each build of the blocked kernel, so the
//! speed-up is measured on the same inputs.

use std::time::Instant;

use crate::run::Prepared;
use crate::sampler::allocate::{
    allocate_reference, allocate_with, loglik_with, AllocOptions, ComponentTable, ExpKind, Simd,
};
use crate::sampler::initial_state;
use crate::sampler::rng::StreamKey;

/// One kernel's figure.
#[derive(Debug, Clone)]
pub struct KernelResult {
    pub kernel: String,
    pub ns_per_pair: f64,
}

/// Seconds of this thread's CPU time (wall time where that is not available).
fn now_s(t0: Instant) -> f64 {
    match super::cputime::thread_ns() {
        Some(ns) => ns as f64 * 1e-9,
        None => t0.elapsed().as_secs_f64(),
    }
}

/// Times `f` (one allocation pass) repeatedly for about `budget_s`; returns CPU seconds per
/// call (the best of three rounds).
fn time_pass(budget_s: f64, mut f: impl FnMut(u64)) -> f64 {
    let t0 = Instant::now();
    let a = now_s(t0);
    f(1);
    let once = (now_s(t0) - a).max(1e-7);
    let reps = ((budget_s / 3.0 / once) as u64).clamp(1, 10_000);
    let mut best = f64::INFINITY;
    for round in 0..3u64 {
        let a = now_s(t0);
        for r in 0..reps {
            f(2 + round * reps + r);
        }
        best = best.min((now_s(t0) - a) / reps as f64);
    }
    best
}

/// Every kernel on case `prep`, at the chain-1 starting state.
pub fn run_kernels(prep: &Prepared, budget_s: f64) -> Vec<KernelResult> {
    let x = &prep.data.z;
    let key = StreamKey::new(prep.config.seed, 1);
    let table = ComponentTable::new(&initial_state(x, &prep.prior, &key));
    let pairs = (x.len() * table.k()) as f64;
    let mut out = Vec::new();
    let secs = time_pass(budget_s, |s| {
        std::hint::black_box(allocate_reference(x, &table, &key, s));
    });
    out.push(KernelResult {
        kernel: "reference".into(),
        ns_per_pair: secs * 1e9 / pairs,
    });
    for exp in [ExpKind::Std, ExpKind::Fast] {
        for simd in Simd::ALL.into_iter().filter(|s| s.available()) {
            let opts = AllocOptions {
                simd,
                exp,
                threads: 1,
            };
            let secs = time_pass(budget_s, |s| {
                std::hint::black_box(allocate_with(x, &table, &key, s, opts));
            });
            let e = match exp {
                ExpKind::Std => "std-exp",
                ExpKind::Fast => "fast-exp",
            };
            out.push(KernelResult {
                kernel: format!("blocked/{}/{e}", simd.name()),
                ns_per_pair: secs * 1e9 / pairs,
            });
        }
    }
    // The log-likelihood pass alone (terms, exp, log; no uniforms, no picks), best build.
    let opts = AllocOptions::fast(1);
    let secs = time_pass(budget_s, |_| {
        std::hint::black_box(loglik_with(x, &table, opts));
    });
    out.push(KernelResult {
        kernel: format!("loglik-only/{}/fast-exp", opts.simd.name()),
        ns_per_pair: secs * 1e9 / pairs,
    });
    out
}

//! Agreement of mixband's diagnostics with ArviZ on stored draws.
//!
//! Source of every expected value: ArviZ 0.23.4 (PyPI `arviz`) `rhat`
//! (methods "rank", "split"), `ess` ("bulk", "tail", "mean") and `mcse`
//! ("mean", "quantile" at 0.05 and 0.95), plus numpy mean/std(ddof=1), as
//! produced by tests/reference/arviz_diagnostics.py into
//! tests/reference/fixtures/arviz_diagnostics.json (the JSON records the
//! versions). For the one-chain case the R-hat reference is ArviZ's internal
//! R-hat on the chain's two halves (public ArviZ returns NaN for one chain).
//! Where ArviZ returned NaN (R-hat of a constant quantity) the fixture holds
//! null and the test checks mixband's documented convention (R-hat = 1.0).

use mixband::diagnostics::{
    ess_bulk, ess_mean, ess_tail, mcse_mean, mcse_quantile, rank_rhat, scalar_diagnostics,
    split_rhat, ChainStatus, ScalarDiagnostics,
};
use serde::Deserialize;

const REL_TOL: f64 = 1e-6;
/// Absolute floor for expected values of exactly zero (MCSE of constant draws, tied quantiles).
const ABS_TOL: f64 = 1e-12;

#[derive(Deserialize)]
struct Fixture {
    versions: Versions,
    cases: Vec<Case>,
}

#[derive(Deserialize)]
struct Versions {
    arviz: String,
    numpy: String,
    python: String,
}

#[derive(Deserialize)]
struct Case {
    name: String,
    draws: Vec<Vec<f64>>,
    expected: Expected,
}

#[derive(Deserialize)]
struct Expected {
    mean: f64,
    sd: f64,
    rhat_rank: Option<f64>,
    rhat_split: Option<f64>,
    ess_bulk: f64,
    ess_tail: f64,
    ess_mean: f64,
    mcse_mean: f64,
    mcse_q05: f64,
    mcse_q95: f64,
}

fn load() -> Fixture {
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/reference/fixtures/arviz_diagnostics.json"
    );
    let text = std::fs::read_to_string(path).expect("fixture readable");
    serde_json::from_str(&text).expect("fixture parses")
}

fn close(got: f64, want: f64) -> bool {
    (got - want).abs() <= REL_TOL * want.abs() + ABS_TOL
}

/// Compares every field, collecting all mismatches so one run shows them all.
fn check_case(case: &Case, failures: &mut Vec<String>) {
    let chains: Vec<&[f64]> = case.draws.iter().map(Vec::as_slice).collect();
    let e = &case.expected;
    let d: ScalarDiagnostics = scalar_diagnostics(&chains).expect("valid fixture draws");
    let mut cmp = |what: &str, got: f64, want: f64| {
        if !close(got, want) {
            failures.push(format!(
                "{}: {what} = {got:.15e}, ArviZ {want:.15e}",
                case.name
            ));
        }
    };
    // Individual functions.
    cmp(
        "split_rhat",
        split_rhat(&chains).unwrap(),
        e.rhat_split.unwrap_or(1.0),
    );
    cmp(
        "rank_rhat",
        rank_rhat(&chains).unwrap(),
        e.rhat_rank.unwrap_or(1.0),
    );
    cmp("ess_bulk", ess_bulk(&chains).unwrap(), e.ess_bulk);
    cmp("ess_tail", ess_tail(&chains).unwrap(), e.ess_tail);
    cmp("ess_mean", ess_mean(&chains).unwrap(), e.ess_mean);
    cmp("mcse_mean", mcse_mean(&chains).unwrap(), e.mcse_mean);
    cmp(
        "mcse_q05",
        mcse_quantile(&chains, 0.05).unwrap(),
        e.mcse_q05,
    );
    cmp(
        "mcse_q95",
        mcse_quantile(&chains, 0.95).unwrap(),
        e.mcse_q95,
    );
    // The one-call summary must agree with the same references.
    cmp("summary.mean", d.mean, e.mean);
    cmp("summary.sd", d.sd, e.sd);
    cmp("summary.rhat", d.rhat, e.rhat_rank.unwrap_or(1.0));
    cmp(
        "summary.rhat_split",
        d.rhat_split,
        e.rhat_split.unwrap_or(1.0),
    );
    cmp("summary.ess_bulk", d.ess_bulk, e.ess_bulk);
    cmp("summary.ess_tail", d.ess_tail, e.ess_tail);
    cmp("summary.mcse_mean", d.mcse_mean, e.mcse_mean);
    cmp("summary.mcse_q05", d.mcse_q05, e.mcse_q05);
    cmp("summary.mcse_q95", d.mcse_q95, e.mcse_q95);
}

#[test]
fn fixture_records_its_sources() {
    let f = load();
    assert!(!f.versions.arviz.is_empty() && !f.versions.numpy.is_empty());
    assert!(!f.versions.python.is_empty());
    assert!(f.cases.len() >= 10, "expected the full case list");
}

#[test]
fn every_case_matches_arviz_to_1e6_relative() {
    let f = load();
    let mut failures = Vec::new();
    for case in &f.cases {
        check_case(case, &mut failures);
    }
    assert!(
        failures.is_empty(),
        "{} mismatches:\n{}",
        failures.len(),
        failures.join("\n")
    );
}

#[test]
fn null_rhat_only_where_quantity_is_constant() {
    // ArviZ's NaN R-hat marks a constant quantity; mixband reports 1.0 and the Constant status.
    let f = load();
    for case in &f.cases {
        let chains: Vec<&[f64]> = case.draws.iter().map(Vec::as_slice).collect();
        let d = scalar_diagnostics(&chains).unwrap();
        let constant = case.expected.rhat_rank.is_none();
        assert_eq!(constant, d.status == ChainStatus::Constant, "{}", case.name);
        if constant {
            assert_eq!((d.rhat, d.rhat_split), (1.0, 1.0), "{}", case.name);
        }
    }
}

#[test]
fn stuck_chain_case_is_flagged() {
    let f = load();
    let case = f
        .cases
        .iter()
        .find(|c| c.name == "one_constant_chain")
        .expect("case present");
    let chains: Vec<&[f64]> = case.draws.iter().map(Vec::as_slice).collect();
    assert_eq!(
        scalar_diagnostics(&chains).unwrap().status,
        ChainStatus::StuckChain
    );
}

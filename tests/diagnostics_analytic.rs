//! Diagnostics against analytic expectations and edge-case conventions.
//!
//! Sources: the ESS of a stationary Gaussian AR(1) chain with coefficient rho
//! is n (1 - rho) / (1 + rho), since its integrated autocorrelation time is
//! sum_t rho^|t| = (1 + rho) / (1 - rho) (common practice, no source; it
//! follows from the definition of ESS in BDA3 section 11.5). R-hat above 1.1
//! for chains centred at different places is the BDA3 section 11.4 rule of
//! thumb (common practice). The edge-case results are mixband's own
//! conventions, documented in docs/diagnostics.md.

use mixband::diagnostics::{
    ess_bulk, ess_mean, ess_tail, mcse_mean, mcse_quantile, rank_rhat, scalar_diagnostics,
    split_rhat, ChainStatus, DiagnosticsError, ScalarDiagnostics, RHAT_UNBOUNDED,
};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rand_distr::StandardNormal;

/// Stationary AR(1): x_0 ~ N(0, 1/(1 - rho^2)), x_t = rho x_{t-1} + e_t, e_t ~ N(0, 1).
fn ar1(rng: &mut ChaCha8Rng, n: usize, rho: f64) -> Vec<f64> {
    let mut x = rng.sample::<f64, _>(StandardNormal) / (1.0 - rho * rho).sqrt();
    (0..n)
        .map(|_| {
            x = rho * x + rng.sample::<f64, _>(StandardNormal);
            x
        })
        .collect()
}

fn iid_normal(rng: &mut ChaCha8Rng, n: usize, mean: f64) -> Vec<f64> {
    (0..n)
        .map(|_| mean + rng.sample::<f64, _>(StandardNormal))
        .collect()
}

fn views(chains: &[Vec<f64>]) -> Vec<&[f64]> {
    chains.iter().map(Vec::as_slice).collect()
}

fn all_finite(d: &ScalarDiagnostics) -> bool {
    [
        d.mean,
        d.sd,
        d.rhat,
        d.rhat_split,
        d.ess_bulk,
        d.ess_tail,
        d.mcse_mean,
        d.mcse_q05,
        d.mcse_q95,
    ]
    .iter()
    .all(|v| v.is_finite())
}

#[test]
fn ar1_bulk_ess_near_analytic_value() {
    // 4 chains x 1e5 draws, rho = 0.9: ESS ~ 4e5 * 0.1 / 1.9 = 21052.6 (within 10%).
    let rho = 0.9;
    let n = 100_000;
    let mut rng = ChaCha8Rng::seed_from_u64(0x00A2_0009);
    let chains: Vec<Vec<f64>> = (0..4).map(|_| ar1(&mut rng, n, rho)).collect();
    let v = views(&chains);
    let expected = (4 * n) as f64 * (1.0 - rho) / (1.0 + rho);
    let bulk = ess_bulk(&v).unwrap();
    let mean = ess_mean(&v).unwrap();
    assert!(
        (bulk / expected - 1.0).abs() < 0.10,
        "bulk ESS {bulk} vs analytic {expected}"
    );
    assert!(
        (mean / expected - 1.0).abs() < 0.10,
        "mean ESS {mean} vs analytic {expected}"
    );
    let d = scalar_diagnostics(&v).unwrap();
    assert_eq!(d.status, ChainStatus::Varying);
    assert_eq!(d.ess_bulk, bulk);
    // Well-mixed chains: R-hat near 1 (common practice: below 1.01).
    assert!(d.rhat < 1.01 && d.rhat_split < 1.01, "{d:?}");
    // MCSE of the mean ~ sd / sqrt(ESS) with the stationary sd 1/sqrt(1 - rho^2).
    let sd = 1.0 / (1.0 - rho * rho).sqrt();
    let mcse = sd / expected.sqrt();
    assert!(
        (d.mcse_mean / mcse - 1.0).abs() < 0.10,
        "{} vs {mcse}",
        d.mcse_mean
    );
}

#[test]
fn iid_ess_near_number_of_draws() {
    // rho = 0: ESS ~ n (within 10%), for bulk and tail alike.
    let mut rng = ChaCha8Rng::seed_from_u64(7);
    let chains: Vec<Vec<f64>> = (0..4).map(|_| iid_normal(&mut rng, 5_000, 0.0)).collect();
    let v = views(&chains);
    for (what, ess) in [
        ("bulk", ess_bulk(&v).unwrap()),
        ("tail", ess_tail(&v).unwrap()),
    ] {
        assert!((ess / 20_000.0 - 1.0).abs() < 0.10, "{what} ESS {ess}");
    }
}

#[test]
fn shifted_means_give_large_rhat() {
    let mut rng = ChaCha8Rng::seed_from_u64(11);
    let chains: Vec<Vec<f64>> = [0.0, 0.0, 0.0, 2.0]
        .iter()
        .map(|&m| iid_normal(&mut rng, 1_000, m))
        .collect();
    let v = views(&chains);
    let rank = rank_rhat(&v).unwrap();
    let split = split_rhat(&v).unwrap();
    assert!(rank > 1.1, "rank R-hat {rank}");
    assert!(split > 1.1, "split R-hat {split}");
}

#[test]
fn one_chain_compares_its_halves() {
    let mut rng = ChaCha8Rng::seed_from_u64(13);
    // A chain whose second half sits 3 sd higher: within-chain R-hat must flag it.
    let mut drift = iid_normal(&mut rng, 500, 0.0);
    drift.extend(iid_normal(&mut rng, 500, 3.0));
    let d = scalar_diagnostics(&[&drift]).unwrap();
    assert!(d.rhat > 1.1 && d.rhat_split > 1.1, "{d:?}");
    // A stationary chain gives R-hat near 1 and finite everything.
    let good = iid_normal(&mut rng, 1_000, 0.0);
    let d = scalar_diagnostics(&[&good]).unwrap();
    assert!(d.rhat < 1.05 && all_finite(&d), "{d:?}");
}

#[test]
fn constant_quantity_reports_convention() {
    let c = vec![2.5; 100];
    let chains = vec![c.clone(), c.clone(), c.clone()];
    let v = views(&chains);
    let d = scalar_diagnostics(&v).unwrap();
    assert_eq!(
        d,
        ScalarDiagnostics {
            mean: 2.5,
            sd: 0.0,
            rhat: 1.0,
            rhat_split: 1.0,
            ess_bulk: 300.0,
            ess_tail: 300.0,
            mcse_mean: 0.0,
            mcse_q05: 0.0,
            mcse_q95: 0.0,
            status: ChainStatus::Constant,
        }
    );
    // The individual functions follow the same convention.
    assert_eq!(rank_rhat(&v), Ok(1.0));
    assert_eq!(split_rhat(&v), Ok(1.0));
    assert_eq!(ess_bulk(&v), Ok(300.0));
    assert_eq!(ess_tail(&v), Ok(300.0));
    assert_eq!(mcse_mean(&v), Ok(0.0));
    assert_eq!(mcse_quantile(&v, 0.05), Ok(0.0));
    // A value whose repeated sum is inexact (0.1) must still be treated as constant.
    let tenth = vec![vec![0.1; 37]; 2];
    let d = scalar_diagnostics(&views(&tenth)).unwrap();
    assert_eq!(
        (d.status, d.rhat, d.rhat_split),
        (ChainStatus::Constant, 1.0, 1.0)
    );
}

#[test]
fn stuck_chain_among_varying_is_flagged() {
    let mut rng = ChaCha8Rng::seed_from_u64(17);
    let mut chains: Vec<Vec<f64>> = (0..3).map(|_| iid_normal(&mut rng, 400, 0.0)).collect();
    chains.push(vec![0.0; 400]);
    let d = scalar_diagnostics(&views(&chains)).unwrap();
    assert_eq!(d.status, ChainStatus::StuckChain);
    assert!(all_finite(&d), "{d:?}");
    // The folded R-hat sees the stuck chain even though it sits at the centre.
    assert!(d.rhat > 1.1, "{d:?}");
}

#[test]
fn every_chain_stuck_at_its_own_value_is_unbounded_but_finite() {
    let chains = vec![vec![0.0; 50], vec![1.0; 50]];
    let d = scalar_diagnostics(&views(&chains)).unwrap();
    assert_eq!(d.status, ChainStatus::StuckChain);
    assert_eq!(d.rhat, RHAT_UNBOUNDED);
    assert_eq!(d.rhat_split, RHAT_UNBOUNDED);
    assert!(all_finite(&d), "{d:?}");
    // Finite sentinel survives a JSON round trip (NaN or infinity would not).
    let json = serde_json::to_string(&d).unwrap();
    let back: ScalarDiagnostics = serde_json::from_str(&json).unwrap();
    assert_eq!(back, d);
}

#[test]
fn non_finite_draws_are_errors_naming_the_draw() {
    let good = vec![0.0, 1.0, 2.0, 3.0, 4.0];
    let bad = vec![0.0, 1.0, 2.0, f64::NAN, 4.0];
    let err = scalar_diagnostics(&[&good, &bad]).unwrap_err();
    assert!(matches!(
        err,
        DiagnosticsError::NonFinite {
            chain: 1,
            draw: 3,
            ..
        }
    ));
    let msg = err.to_string();
    assert!(
        msg.contains("draw 3") && msg.contains("chain 1") && msg.contains("NaN"),
        "{msg}"
    );
    let inf = vec![f64::NEG_INFINITY, 1.0, 2.0, 3.0, 4.0];
    for f in [ess_bulk, ess_tail, rank_rhat, split_rhat, mcse_mean] {
        assert!(matches!(
            f(&[&inf, &good]),
            Err(DiagnosticsError::NonFinite {
                chain: 0,
                draw: 0,
                ..
            })
        ));
    }
}

#[test]
fn shape_errors() {
    let three = [1.0, 2.0, 3.0];
    let four = [1.0, 2.0, 3.0, 4.0];
    let five = [1.0, 2.0, 3.0, 4.0, 5.0];
    assert_eq!(
        scalar_diagnostics(&[&three, &three]).unwrap_err(),
        DiagnosticsError::TooFewDraws { draws: 3, min: 4 }
    );
    assert!(scalar_diagnostics(&[&four, &[4.0, 3.0, 1.0, 2.0]]).is_ok());
    assert_eq!(
        ess_bulk(&[&four, &five]).unwrap_err(),
        DiagnosticsError::UnequalChainLengths {
            chain: 1,
            len: 5,
            expected: 4
        }
    );
    assert_eq!(
        scalar_diagnostics(&[]).unwrap_err(),
        DiagnosticsError::NoChains
    );
    for p in [0.0, 1.0, -0.5, f64::NAN] {
        assert!(matches!(
            mcse_quantile(&[&four], p),
            Err(DiagnosticsError::InvalidProbability { .. })
        ));
    }
}

#[test]
fn huge_finite_draws_error_instead_of_nan() {
    // Squares overflow to infinity; the diagnostics must report it, not return NaN.
    let a = vec![1e300, -1e300, 5e299, -7e299, 2e300, -3e299];
    let b = vec![-1e300, 1e300, -5e299, 7e299, -2e300, 3e299];
    let r = scalar_diagnostics(&[&a, &b]);
    assert!(matches!(r, Err(DiagnosticsError::Overflow { .. })), "{r:?}");
}

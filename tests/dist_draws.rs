//! The random draws of src/dist against their distributions, with fixed seeds.
//!
//! - log_gamma: one-sample Kolmogorov–Smirnov test against the Gamma CDF of statrs, on the
//!   log scale (KS is invariant under the monotone map ln, and on the log scale draws with
//!   shape 0.01 stay representable). Critical value from Kolmogorov's limiting distribution
//!   (Kolmogorov 1933; Massey 1951, JASA 46), family-wise level 0.01 over the five shapes.
//!   The same test must reject draws compared with a shape 10% off (power).
//! - log_dirichlet, log_beta, inv_gamma: finiteness and normalisation, and z-tests of means
//!   (and Beta variances) against the textbook moment formulas (common practice, no source),
//!   Bonferroni-corrected at family-wise level 0.001 within each test.

mod common;

use common::{bonferroni_z, kolmogorov_critical, ks_statistic, mean, var};
use mixband::dist::{inv_gamma, log_beta, log_dirichlet, log_gamma, log_sum_exp};
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use statrs::distribution::{ContinuousCDF, Gamma};
use statrs::function::gamma::ln_gamma;

const SHAPES: [f64; 5] = [0.01, 0.3, 1.0, 3.7, 150.0];
const KS_DRAWS: usize = 20_000;

/// P(ln G ≤ y) for G ~ Gamma(a, 1). statrs's Gamma CDF is used wherever e^y ≥ 1e-10; below
/// that statrs returns exactly 0 for e^y < 1.1e-15 (its `gamma_lr` treats such x as 0), so
/// the leading term of the same power series is used instead,
/// P(a, t) = t^a e^{−t} Σ_n t^n / Γ(a + n + 1) ≈ t^a / Γ(a + 1) (Abramowitz & Stegun 6.5.29),
/// whose relative error is below t ≤ 1e-10.
fn log_gamma_cdf(a: f64, y: f64) -> f64 {
    let t = y.exp();
    if t >= 1e-10 {
        Gamma::new(a, 1.0).unwrap().cdf(t)
    } else {
        (a * y - ln_gamma(a + 1.0)).exp()
    }
}

fn ks_log_gamma(draw_shape: f64, test_shape: f64, seed: u64) -> f64 {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let mut u: Vec<f64> = (0..KS_DRAWS)
        .map(|_| {
            let y = log_gamma(draw_shape, &mut rng);
            assert!(y.is_finite(), "log_gamma({draw_shape}) gave {y}");
            log_gamma_cdf(test_shape, y)
        })
        .collect();
    ks_statistic(&mut u)
}

#[test]
fn log_gamma_passes_kolmogorov_smirnov() {
    let crit = kolmogorov_critical(0.01 / SHAPES.len() as f64) / (KS_DRAWS as f64).sqrt();
    for (i, &a) in SHAPES.iter().enumerate() {
        let d = ks_log_gamma(a, a, 1000 + i as u64);
        assert!(
            d < crit,
            "log_gamma({a}): KS D = {d:.5} >= critical {crit:.5}"
        );
        // Power: the same draws against a shape 10% larger are rejected.
        let d_wrong = ks_log_gamma(a, 1.1 * a, 1000 + i as u64);
        assert!(
            d_wrong > crit,
            "log_gamma({a}) vs shape {}: D = {d_wrong:.5} not rejected",
            1.1 * a
        );
    }
}

#[test]
fn kolmogorov_critical_values_match_tables() {
    // Massey 1951, Table 1, row "over 35": 1.36/√n at level 0.05 and 1.63/√n at 0.01; the
    // more precise 1.3581 and 1.6276 are from memory.
    assert!((kolmogorov_critical(0.05) - 1.3581).abs() < 1e-3);
    assert!((kolmogorov_critical(0.01) - 1.6276).abs() < 1e-3);
}

#[test]
fn sparse_dirichlet_log_weights_are_finite_and_unbiased() {
    const K: usize = 10;
    const DRAWS: usize = 20_000;
    let delta = 0.01;
    let alpha = vec![delta; K];
    let mut rng = ChaCha8Rng::seed_from_u64(77);
    let mut out = vec![0.0; K];
    let mut sums = [0.0; K];
    let mut below_min_positive = 0usize;
    for _ in 0..DRAWS {
        log_dirichlet(&alpha, &mut rng, &mut out);
        for (j, &l) in out.iter().enumerate() {
            assert!(
                !l.is_nan() && l != f64::NEG_INFINITY && l <= 1e-15,
                "log weight {l}"
            );
            if l < f64::MIN_POSITIVE.ln() {
                below_min_positive += 1;
            }
            sums[j] += l.exp();
        }
        let total = log_sum_exp(&out);
        assert!(total.abs() < 1e-12, "weights sum to e^{total}");
    }
    // The draws reach weights below the smallest normal double: the log-space path is
    // exercised, not just reported.
    assert!(below_min_positive > 0);
    // E w_k = 1/K, Var w_k = (1/K)(1 − 1/K)/(Kδ + 1) for the symmetric Dirichlet.
    let a0 = K as f64 * delta;
    let m = 1.0 / K as f64;
    let se = (m * (1.0 - m) / (a0 + 1.0) / DRAWS as f64).sqrt();
    let crit = bonferroni_z(0.001, K);
    for (j, s) in sums.iter().enumerate() {
        let z = (s / DRAWS as f64 - m) / se;
        assert!(z.abs() < crit, "Dirichlet component {j}: mean z = {z:.2}");
    }
}

#[test]
fn log_beta_pairs_match_beta_moments() {
    const DRAWS: usize = 50_000;
    let cases = [
        (1.0, 0.05),
        (1.0, 3.0),
        (0.5, 0.5),
        (2.5, 150.0),
        (0.01, 1.0),
        (30.0, 0.2),
    ];
    let crit = bonferroni_z(0.001, 2 * cases.len());
    for (i, &(a, b)) in cases.iter().enumerate() {
        let mut rng = ChaCha8Rng::seed_from_u64(300 + i as u64);
        let v: Vec<f64> = (0..DRAWS)
            .map(|_| {
                let (lv, l1mv) = log_beta(a, b, &mut rng);
                assert!(
                    lv.is_finite() && l1mv.is_finite() && lv <= 0.0 && l1mv <= 0.0,
                    "({lv}, {l1mv})"
                );
                let sum = lv.exp() + l1mv.exp();
                assert!((sum - 1.0).abs() < 1e-12, "v + (1 - v) = {sum}");
                lv.exp()
            })
            .collect();
        let mu = a / (a + b);
        let sigma2 = a * b / ((a + b) * (a + b) * (a + b + 1.0));
        let z_mean = (mean(&v) - mu) / (sigma2 / DRAWS as f64).sqrt();
        assert!(
            z_mean.abs() < crit,
            "Beta({a}, {b}): mean {} vs {mu}, z = {z_mean:.2}",
            mean(&v)
        );
        // SE of the sample variance: sqrt((m4 − s⁴)/n) with m4 the sample fourth central
        // moment (large-sample formula).
        let m = mean(&v);
        let m4 = v.iter().map(|x| (x - m).powi(4)).sum::<f64>() / DRAWS as f64;
        let s2 = var(&v);
        let z_var = (s2 - sigma2) / ((m4 - s2 * s2) / DRAWS as f64).sqrt();
        assert!(
            z_var.abs() < crit,
            "Beta({a}, {b}): variance {s2} vs {sigma2}, z = {z_var:.2}"
        );
    }
}

#[test]
fn inv_gamma_mean_is_scale_over_shape_minus_one() {
    const DRAWS: usize = 50_000;
    let cases = [(3.5, 2.0), (50.0, 3.0), (4.5, 0.01)];
    let crit = bonferroni_z(0.001, cases.len());
    for (i, &(a, b)) in cases.iter().enumerate() {
        let mut rng = ChaCha8Rng::seed_from_u64(500 + i as u64);
        let x: Vec<f64> = (0..DRAWS).map(|_| inv_gamma(a, b, &mut rng)).collect();
        assert!(x.iter().all(|v| v.is_finite() && *v > 0.0));
        // E X = b/(a − 1), Var X = b²/((a − 1)²(a − 2)), a > 2.
        let mu = b / (a - 1.0);
        let sd = b / ((a - 1.0) * (a - 2.0).sqrt());
        let z = (mean(&x) - mu) / (sd / (DRAWS as f64).sqrt());
        assert!(
            z.abs() < crit,
            "IG({a}, {b}): mean {} vs {mu}, z = {z:.2}",
            mean(&x)
        );
    }
}

//! `[data] transform = "log"`: the Jacobian against statrs' LogNormal, and a fit to
//! log-normal data whose reported density has the log-normal's shape and unit mass.

mod common;

use std::path::PathBuf;

use mixband::data::Transform;
use mixband::run::Prepared;
use mixband::store::DrawRow;
use mixband::summary::{
    mixture_cdf_on, mixture_density_on, mixture_mean_on, mixture_quantile_on, mixture_sd_on,
};
use statrs::distribution::{Continuous, ContinuousCDF, LogNormal, Normal};
use statrs::statistics::Distribution;

fn one(mu: f64, sd: f64) -> DrawRow {
    DrawRow {
        iteration: 1,
        loglik: 0.0,
        occupied: 1,
        concentration: 1.0,
        weight: vec![1.0],
        mean: vec![mu],
        sd: vec![sd],
    }
}

fn scratch(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("mixband-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

#[test]
fn one_component_on_the_log_scale_is_statrs_lognormal() {
    // A draw N(μ, σ²) for ln x is LogNormal(μ, σ) for x: pdf, CDF, quantiles, mean, sd
    // (statrs LogNormal as reference; its quantiles as exp(μ + σ Φ⁻¹(p))).
    let (mu, s) = (0.7, 0.45);
    let row = one(mu, s);
    let ln = LogNormal::new(mu, s).unwrap();
    for x in [0.05, 0.5, 1.0, 2.0, 2.2, 5.0, 12.0] {
        let (a, b) = (mixture_density_on(&row, x, Transform::Log), ln.pdf(x));
        assert!(
            (a - b).abs() <= 1e-12 * b.max(1e-300),
            "pdf at {x}: {a} vs {b}"
        );
        let (a, b) = (mixture_cdf_on(&row, x, Transform::Log), ln.cdf(x));
        assert!(
            (a - b).abs() <= 1e-10 * b.max(1e-300),
            "cdf at {x}: {a} vs {b}"
        );
    }
    assert_eq!(mixture_density_on(&row, 0.0, Transform::Log), 0.0);
    assert_eq!(mixture_density_on(&row, -1.0, Transform::Log), 0.0);
    assert_eq!(mixture_cdf_on(&row, -1.0, Transform::Log), 0.0);
    let z = Normal::new(0.0, 1.0).unwrap();
    for p in [0.05, 0.5, 0.95] {
        let want = (mu + s * z.inverse_cdf(p)).exp();
        assert!(
            (mixture_quantile_on(&row, p, Transform::Log) / want - 1.0).abs() < 1e-9,
            "p = {p}"
        );
    }
    assert!((mixture_mean_on(&row, Transform::Log) / ln.mean().unwrap() - 1.0).abs() < 1e-12);
    assert!((mixture_sd_on(&row, Transform::Log) / ln.std_dev().unwrap() - 1.0).abs() < 1e-12);
}

/// n log-normal "normal scores" exp(μ + σ Φ⁻¹((i − ½)/n)): a deterministic sample whose
/// empirical distribution is close to LogNormal(μ, σ).
fn lognormal_scores(n: usize, mu: f64, s: f64) -> Vec<f64> {
    let z = Normal::new(0.0, 1.0).unwrap();
    (1..=n)
        .map(|i| (mu + s * z.inverse_cdf((i as f64 - 0.5) / n as f64)).exp())
        .collect()
}

fn write_run_inputs(dir: &std::path::Path, values: &[f64], grid: &str) -> PathBuf {
    let mut csv = String::from("x\n");
    for v in values {
        csv.push_str(&format!("{v}\n"));
    }
    std::fs::write(dir.join("d.csv"), csv).unwrap();
    let cfg = format!(
        "[data]\nfile = \"d.csv\"\ncolumn = \"x\"\ntransform = \"log\"\n[model]\ncomponents = 4\n\
         [sampler]\nchains = 2\nwarmup = 300\ndraws = 300\nseed = 11\n{grid}"
    );
    std::fs::write(dir.join("run.toml"), cfg).unwrap();
    dir.join("run.toml")
}

#[test]
fn log_fit_reports_a_lognormal_shaped_density_with_unit_mass() {
    let dir = scratch("logfit");
    let (mu, s) = (1.0, 0.5);
    let cfg = write_run_inputs(
        &dir,
        &lognormal_scores(400, mu, s),
        "[grid]\nfrom = 0\nto = 40\npoints = 801\n",
    );
    let out = dir.join("run");
    // Exit 0, or 3 when the gate fails on this short run; outputs are still written.
    common::sample_in_process(&cfg, &out);
    let rows = common::bands_mean(&out.join("bands.csv"));
    // Total mass on [0, 40] by the trapezoid rule: the LogNormal(1, 0.5) mass beyond 40 is
    // below 1e-9, so ≈ 1 up to grid and Monte Carlo error (tolerance 0.01).
    let mass: f64 = rows
        .windows(2)
        .map(|w| 0.5 * (w[1].0 - w[0].0) * (w[0].1 + w[1].1))
        .sum();
    assert!((mass - 1.0).abs() < 0.01, "mass {mass}");
    // Shape: the posterior mean density is within 10% of the log-normal's peak height of
    // the LogNormal(1, 0.5) pdf everywhere (statrs), with the mode near e^(μ − σ²) = 2.117.
    let ln = LogNormal::new(mu, s).unwrap();
    let peak = ln.pdf((mu - s * s).exp());
    let worst = rows
        .iter()
        .map(|&(x, f)| (f - ln.pdf(x)).abs())
        .fold(0.0, f64::max);
    assert!(
        worst < 0.1 * peak,
        "max |f − lognormal pdf| = {worst}, peak {peak}"
    );
    let mode = rows
        .iter()
        .fold((0.0, 0.0), |m, &(x, f)| if f > m.1 { (x, f) } else { m })
        .0;
    assert!((mode - (mu - s * s).exp()).abs() < 0.3, "mode at {mode}");
    // The run records the transform in its resolved config and manifest.
    let cfg_text = std::fs::read_to_string(out.join("config.toml")).unwrap();
    assert!(cfg_text.contains("transform = \"log\""), "{cfg_text}");
    let manifest = std::fs::read_to_string(out.join("manifest.json")).unwrap();
    assert!(manifest.contains("\"transform\": \"log\""));
    // summary.json reports the median on the original scale: LogNormal median e^μ = 2.718.
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    let median = summary["quantiles"][1]["posterior"]["median"]
        .as_f64()
        .unwrap();
    assert!((median - mu.exp()).abs() < 0.15, "median {median}");
    // `diagnose` assesses the same density as `sample` did: the one on the original scale
    // that bands.csv reports (common practice, no source: the gate must judge what is
    // reported). Its per-point diagnostics equal those in diagnostics.json.
    let again = mixband::gate::assess_run(
        &mixband::store::RunLayout::new(&out),
        &mixband::gate::ThresholdOverrides::default(),
    )
    .unwrap();
    let written: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("diagnostics.json")).unwrap())
            .unwrap();
    let reassessed: serde_json::Value = serde_json::from_slice(&again.to_json().unwrap()).unwrap();
    assert_eq!(written["density_grid"], reassessed["density_grid"]);
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn default_grid_is_on_the_original_scale_and_non_positive_data_are_refused() {
    let dir = scratch("loggrid");
    let x = lognormal_scores(50, 1.0, 0.5);
    let prep = Prepared::from_config_file(&write_run_inputs(&dir, &x, "")).unwrap();
    let c = &prep.config;
    let max = x.iter().copied().fold(0.0, f64::max);
    assert!(
        c.grid_from >= 0.0 && c.grid_from < x[0] && c.grid_to > max,
        "{} {}",
        c.grid_from,
        c.grid_to
    );
    assert!(
        prep.data.summary.max < max.ln() + 1e-12,
        "the sampler sees ln x"
    );
    let mut bad = x.clone();
    bad[6] = 0.0;
    bad[9] = -2.0;
    let e = Prepared::from_config_file(&write_run_inputs(&dir, &bad, ""))
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("line 8 (data row 7) holds 0") && e.contains("line 11 (data row 10) holds -2"),
        "{e}"
    );
    let _ = std::fs::remove_dir_all(&dir);
}

//! The model check against the data (src/check/): power against a misfitting model,
//! calibration of the posterior predictive p-values on data from the model's own prior
//! predictive, LOO-PIT uniformity for a well-specified normal sample, frequency weights
//! and the log transform, independence of the thread count, and the `[check]` keys.

mod common;

use mixband::check::{check_run, CheckReport, Tail};
use mixband::config::{parse_config_str, resolve};
use mixband::model::{draw_from_prior, simulate_data, Prior};
use mixband::run::Prepared;
use mixband::store::RunLayout;
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;

/// Writes `values` (and `counts`, when given) to dir/data.csv and `config` (which names
/// data.csv) to dir/run.toml, samples it into dir/run and runs the check on `threads`.
fn fit_and_check(
    dir: &std::path::Path,
    values: &[f64],
    counts: Option<&[u64]>,
    config: &str,
    threads: usize,
) -> (Prepared, CheckReport) {
    let mut csv = String::from(if counts.is_some() { "y,count\n" } else { "y\n" });
    for (i, v) in values.iter().enumerate() {
        match counts {
            Some(c) => csv.push_str(&format!("{v},{}\n", c[i])),
            None => csv.push_str(&format!("{v}\n")),
        }
    }
    std::fs::write(dir.join("data.csv"), csv).unwrap();
    std::fs::write(dir.join("run.toml"), config).unwrap();
    let prep = Prepared::from_config_file(&dir.join("run.toml")).unwrap();
    let out = dir.join("run");
    common::execute_quiet(&prep, &out, true).unwrap();
    let r = check_run(&RunLayout::new(&out), &prep, threads).unwrap();
    (prep, r)
}

fn stat<'a>(r: &'a CheckReport, name: &str) -> &'a mixband::check::StatCheck {
    r.statistics.iter().find(|s| s.name == name).unwrap()
}

/// n draws of a log-normal(0, s²) (strongly right-skewed for s = 0.8: skewness ≈ 3.7).
fn lognormal(n: usize, s: f64, seed: u64) -> Vec<f64> {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    (0..n)
        .map(|_| (s * mixband::dist::normal(0.0, 1.0, &mut rng)).exp())
        .collect()
}

const SHORT: &str = "[sampler]\nchains = 2\nwarmup = 300\ndraws = 600\nseed = 11\n";

#[test]
fn one_normal_on_skewed_data_is_flagged_and_the_default_model_is_not() {
    // Issue 17's power requirement (common practice, no source): a single normal (the
    // location kernel with K = 1) cannot reproduce the skewness or the far tails of
    // log-normal data, so those statistics must have p < 0.01; the default model (a
    // location-scale mixture) on the same data must not flag them. Figures for
    // LogNormal(0, 0.8²) (closed forms): mean 1.377, sd 1.304, 99% quantile e^(0.8·2.326)
    // = 6.43 against 4.41 for the normal with that mean and sd, 1% quantile 0.16 against
    // −1.66; the 95% quantiles nearly agree (3.73 against 3.52), so q95 is not required.
    let x = lognormal(300, 0.8, 3);
    let dir = common::scratch_dir("check-power");
    let data = "[data]\nfile = \"data.csv\"\ncolumn = \"y\"\n";
    let one = format!("{data}[model]\nkernel = \"location\"\ncomponents = 1\n{SHORT}");
    let (_, bad) = fit_and_check(&dir, &x, None, &one, 2);
    for name in ["skewness", "q99", "q01", "q05"] {
        let s = stat(&bad, name);
        assert!(
            s.p_value < 0.01 && s.tail == Some(Tail::ObservedHigh),
            "{name}: {s:?}"
        );
    }
    for s in &bad.statistics {
        eprintln!("K = 1: {} p = {} tail {:?}", s.name, s.p_value, s.tail);
    }
    assert!(bad.verdict.misfit);
    assert!(bad
        .verdict
        .advice
        .iter()
        .any(|a| a.contains("location-scale")));
    assert!(
        !bad.loo_pit.within_band,
        "the LOO-PIT of a single normal on skewed data"
    );
    let (_, good) = fit_and_check(&dir, &x, None, &format!("{data}{SHORT}"), 2);
    for name in ["skewness", "q99", "q95", "q05", "q01"] {
        let s = stat(&good, name);
        assert!(s.tail.is_none() && s.p_value > 0.01, "{name}: {s:?}");
    }
    assert!(good.loo_pit.within_band);
}

#[test]
fn loo_pit_of_a_well_specified_normal_sample_is_uniform() {
    // A normal sample fitted by a normal mixture: the LOO-PIT ECDF stays inside its 95%
    // simultaneous band (Säilynoja et al. 2022), and few k̂ exceed 0.7 (Vehtari et al. 2024).
    let mut rng = ChaCha8Rng::seed_from_u64(8);
    let x: Vec<f64> = (0..400)
        .map(|_| mixband::dist::normal(10.0, 2.0, &mut rng))
        .collect();
    let dir = common::scratch_dir("check-normal");
    let cfg = format!("[data]\nfile = \"data.csv\"\ncolumn = \"y\"\n{SHORT}");
    let (_, r) = fit_and_check(&dir, &x, None, &cfg, 2);
    assert!(r.loo_pit.within_band, "{:?}", r.loo_pit.ecdf);
    assert!(r.loo_pit.uniformity_p_value > 0.05);
    assert!(r.loo_pit.share_k_above_0_7 < 0.02);
    assert!(!r.verdict.misfit, "{:?}", r.verdict);
}

#[test]
fn check_does_not_depend_on_the_thread_count() {
    // Every random number is keyed by purpose and replicate index (src/sampler/rng.rs).
    let x = lognormal(120, 0.5, 4);
    let dir = common::scratch_dir("check-threads");
    let cfg = format!("[data]\nfile = \"data.csv\"\ncolumn = \"y\"\n{SHORT}[check]\nreplicates = 60\nloo_draws = 200\n");
    let (prep, one) = fit_and_check(&dir, &x, None, &cfg, 1);
    let layout = RunLayout::new(dir.join("run"));
    for t in [2, 3, 8] {
        assert_eq!(check_run(&layout, &prep, t).unwrap(), one, "threads = {t}");
    }
    assert_eq!(one.replicates.draws_used, 60);
    assert_eq!(one.loo_pit.draws_used, 200);
}

#[test]
fn frequency_weights_count_and_log_runs_replicate_on_the_data_scale() {
    // Counts: the observed statistics of a weighted run are those of the expanded sample
    // (the median of 1×3, 2×1, 5×2 expanded is 1.5, Hyndman & Fan definition 7), and the
    // LOO-PIT ECDF counts each row as often as its weight.
    let dir = common::scratch_dir("check-weights");
    let values = [1.0, 2.0, 5.0, 3.0, 4.0, 2.5];
    let counts = [30u64, 10, 20, 15, 5, 20];
    let cfg = format!("[data]\nfile = \"data.csv\"\ncolumn = \"y\"\nweights = \"count\"\n{SHORT}");
    let (_, r) = fit_and_check(&dir, &values, Some(&counts), &cfg, 2);
    let mut expanded: Vec<f64> = values
        .iter()
        .zip(&counts)
        .flat_map(|(&v, &c)| std::iter::repeat_n(v, c as usize))
        .collect();
    expanded.sort_by(f64::total_cmp);
    assert_eq!(r.replicates.observations, 100);
    assert_eq!(r.replicates.size, 100);
    assert_eq!(
        stat(&r, "q50").observed,
        mixband::summary::quantile_sorted(&expanded, 0.5)
    );
    assert_eq!(r.loo_pit.counts, counts.to_vec());
    assert_eq!(r.loo_pit.band.n, 100);
    // Log transform: the observed 5% quantile is the data's own (original scale), and the
    // replicates, drawn on the log scale and mapped back, are all positive.
    let x = lognormal(200, 0.6, 5);
    let cfg = format!("[data]\nfile = \"data.csv\"\ncolumn = \"y\"\ntransform = \"log\"\n{SHORT}");
    let (_, r) = fit_and_check(&dir, &x, None, &cfg, 2);
    let mut s = x.clone();
    s.sort_by(f64::total_cmp);
    assert!((stat(&r, "q05").observed - mixband::summary::quantile_sorted(&s, 0.05)).abs() < 1e-12);
    assert!(stat(&r, "q01").replicated.lower_95 > 0.0);
    // A log-normal fitted on the log scale is well specified: skewness is not flagged.
    assert!(stat(&r, "skewness").tail.is_none());
}

#[test]
fn large_samples_are_checked_on_a_bounded_subsample() {
    // max_observations caps the replicate size and the LOO rows; both are stated.
    let x = lognormal(3000, 0.3, 6);
    let dir = common::scratch_dir("check-cap");
    let cfg = "[data]\nfile = \"data.csv\"\ncolumn = \"y\"\n[sampler]\nchains = 2\nwarmup = 100\ndraws = 200\nseed = 2\nallocation = \"conditional\"\n[check]\nmax_observations = 500\nreplicates = 50\n";
    let (_, r) = fit_and_check(&dir, &x, None, cfg, 2);
    assert_eq!((r.replicates.size, r.replicates.observations), (500, 3000));
    assert!(r.replicates.subsampled && r.loo_pit.subsampled);
    assert_eq!((r.loo_pit.rows_used, r.loo_pit.rows_total), (500, 3000));
}

#[test]
fn bad_check_keys_name_the_key_and_line() {
    for (body, key) in [
        ("tail_low = 0.7", "tail_low"),
        ("tail_high = 1.5", "tail_high"),
        ("replicates = 3", "replicates"),
        ("max_observations = -1", "max_observations"),
        ("loo_draws = 0", "loo_draws"),
    ] {
        let text = format!("[data]\nfile = \"d.csv\"\ncolumn = \"y\"\n[check]\n{body}\n");
        let raw = parse_config_str(&text, "t.toml").unwrap();
        let e = resolve(&raw, &text, "t.toml", std::path::Path::new("."), None)
            .unwrap_err()
            .to_string();
        assert!(
            e.contains(&format!("[check] {key}")) && e.contains("line 5"),
            "{e}"
        );
    }
}

/// p-values of every statistic of `datasets` data sets of `n` observations, each drawn from
/// the prior predictive of a fixed prior (explicit in the config, so it does not move with
/// the data) and fitted by that model.
fn prior_predictive_pvalues(datasets: usize, n: usize, draws: usize) -> Vec<Vec<f64>> {
    let prior_keys = "[prior]\ncentre = 0.0\ncentre_shrink = 0.2\nvar_shape = 3.0\nvar_scale_prior = \"fixed\"\nvar_scale = 2.0\ndelta_prior = \"fixed\"\ndirichlet_delta = 1.0\n";
    let model = "[model]\nkernel = \"location-scale\"\nweights = \"dirichlet\"\ncomponents = 3\n";
    let head = format!("[data]\nfile = \"data.csv\"\ncolumn = \"y\"\n{model}{prior_keys}");
    let raw = parse_config_str(&head, "p.toml").unwrap();
    let cfg = resolve(&raw, &head, "p.toml", std::path::Path::new("."), None).unwrap();
    // In units with centre 0 and scale 1 the standard-unit prior is the data-unit prior.
    let prior = Prior::from_config(&cfg, 0.0, 1.0);
    let dir = common::scratch_dir("check-calibration");
    let mut out = Vec::new();
    for d in 0..datasets {
        let mut rng = ChaCha8Rng::seed_from_u64(1000 + d as u64);
        let state = draw_from_prior(&prior, &mut rng);
        let x = simulate_data(&state, n, &mut rng);
        let text = format!(
            "{head}[sampler]\nchains = 2\nwarmup = 300\ndraws = {draws}\nseed = {}\n[check]\nreplicates = 200\nloo_draws = 200\n",
            d + 1
        );
        let (_, r) = fit_and_check(&dir, &x, None, &text, 2);
        out.push(r.statistics.iter().map(|s| s.p_value).collect());
    }
    out
}

/// Mean p-value and share of p-values outside [0.01, 0.99] of the continuous statistics.
fn calibration_figures(p: &[Vec<f64>]) -> (f64, f64, usize) {
    // Every statistic but the mode count (the last) is continuous.
    let all: Vec<f64> = p.iter().flat_map(|v| v[..v.len() - 1].to_vec()).collect();
    let mean = all.iter().sum::<f64>() / all.len() as f64;
    let tails =
        all.iter().filter(|&&v| !(0.01..=0.99).contains(&v)).count() as f64 / all.len() as f64;
    (mean, tails, all.len())
}

#[test]
fn pvalues_are_calibrated_on_prior_predictive_data() {
    // When the data come from the model's prior predictive, y and y_rep are exchangeable
    // (p(y, y_rep) = ∫ p(θ) p(y|θ) p(y_rep|θ) dθ, symmetric in y and y_rep), so
    // E[P(T(y_rep) ≥ T(y))] = 1/2 for a continuous statistic (Meng 1994, Ann. Statist. 22,
    // 1142–1160, cited from memory; the symmetry argument is written out here), and the
    // p-values are at most as dispersed as a uniform (conservative), so their share in the
    // tails is at most about the nominal 2%. Fast version: 24 data sets of 60, 11 continuous
    // statistics each; the mean of 264 correlated p-values has sd ≤ √(1/12/24) ≈ 0.06 at
    // worst (all statistics of a data set equal), 4 sd allowed; tails ≤ 6%.
    let p = prior_predictive_pvalues(24, 60, 400);
    let (mean, tails, m) = calibration_figures(&p);
    eprintln!("calibration (fast): mean p {mean:.4}, share in the tails {tails:.4}, {m} p-values");
    assert!((mean - 0.5).abs() < 0.24, "mean p {mean} over {m}");
    assert!(tails <= 0.06, "share in the tails {tails} over {m}");
}

#[test]
#[ignore]
fn pvalues_are_calibrated_on_prior_predictive_data_long() {
    // The long version recorded in docs/validation.md: 200 data sets of 100.
    let p = prior_predictive_pvalues(200, 100, 800);
    let (mean, tails, m) = calibration_figures(&p);
    let names = mixband::check::stats::names();
    for (i, name) in names.iter().enumerate() {
        let mut h = [0usize; 10];
        for v in &p {
            h[((v[i] * 10.0) as usize).min(9)] += 1;
        }
        let m: f64 = p.iter().map(|v| v[i]).sum::<f64>() / p.len() as f64;
        println!("{name:<10} mean {m:.3} deciles {h:?}");
    }
    println!("continuous statistics: mean p {mean:.4}, share outside [0.01, 0.99] {tails:.4}, {m} p-values");
    assert!((mean - 0.5).abs() < 0.08);
    assert!(tails <= 0.03);
}

#[test]
fn sample_writes_the_check_marks_summary_and_report_and_check_reproduces_it() {
    // `sample` runs the check: checks.json, plots/loo-pit.svg, the mark in summary.json and
    // the report's section; `mixband check RUN` recomputes the same file byte for byte.
    let dir = common::scratch_dir("check-cli");
    let x = lognormal(150, 0.8, 12);
    let csv: String = std::iter::once("y\n".to_string())
        .chain(x.iter().map(|v| format!("{v}\n")))
        .collect();
    std::fs::write(dir.join("data.csv"), csv).unwrap();
    // One normal on skewed data, so the verdict is a misfit with advice.
    let cfg = format!("[data]\nfile = \"data.csv\"\ncolumn = \"y\"\n[model]\nkernel = \"location\"\ncomponents = 1\n{SHORT}[check]\nreplicates = 100\n");
    std::fs::write(dir.join("run.toml"), cfg).unwrap();
    let run = dir.join("run");
    let args = |v: &[&str]| {
        v.iter()
            .map(Into::into)
            .collect::<Vec<std::ffi::OsString>>()
    };
    let code = mixband::cli::main_with_args(args(&[
        "mixband",
        "sample",
        dir.join("run.toml").to_str().unwrap(),
        "--out",
        run.to_str().unwrap(),
        "--quiet",
    ]));
    assert!(code == 0 || code == 3, "exit {code}");
    let first = std::fs::read(run.join("checks.json")).unwrap();
    let r: CheckReport = serde_json::from_slice(&first).unwrap();
    assert!(r.verdict.misfit && !r.verdict.advice.is_empty());
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(run.join("summary.json")).unwrap()).unwrap();
    assert_eq!(
        summary["model_check"]["misfit"],
        serde_json::Value::Bool(true)
    );
    assert_eq!(summary["model_check"]["file"], "checks.json");
    let html = std::fs::read_to_string(run.join("report.html")).unwrap();
    assert!(html.contains("id=\"model-check\"") && html.contains("MISFIT"));
    assert!(html.contains("LOO-PIT: ECDF of the PIT values"));
    assert!(run.join("plots/loo-pit.svg").exists());
    let config = std::fs::read_to_string(run.join("config.toml")).unwrap();
    assert!(config.contains("[check]") && config.contains("replicates = 100"));
    assert_eq!(
        mixband::cli::main_with_args(args(&["mixband", "check", run.to_str().unwrap()])),
        0
    );
    assert_eq!(std::fs::read(run.join("checks.json")).unwrap(), first);
}

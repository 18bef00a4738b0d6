//! The convergence gate end to end: fake stores with known defects fail it, an adequate
//! run passes it, diagnostics.json has the documented fields and no NaN, and the binary's
//! exit codes follow the verdict (3 failed, 0 passed, 2 bad input).
//!
//! External facts used: R-hat of chains with clearly different means is far above 1.01
//! and the ESS of iid draws is about their number (Vehtari et al. 2021, §3 and §4;
//! BDA3 §11.4–11.5). The 1.01 / 400 thresholds are the defaults recommended by
//! Vehtari et al. 2021 (§4.1, §4.3). Everything else here checks mixband's own
//! documented conventions (docs/diagnostics.md, "Gate and diagnostics.json").

use std::path::{Path, PathBuf};
use std::process::Command;

use mixband::gate::{
    assess, DiagnosticsReport, GateSpec, QuantityStatus, Thresholds, DENSITY_SUMMARY_NAME,
};
use mixband::store::{ChainDraws, DrawRow, RunDraws};
use mixband::summary::{linspace, DensityDraws};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rand_distr::StandardNormal;

const THRESHOLDS: Thresholds = Thresholds {
    max_rhat: 1.01,
    min_ess: 400.0,
    min_chains: 2,
};

fn spec(min_chains: usize) -> GateSpec {
    GateSpec {
        thresholds: Thresholds {
            min_chains,
            ..THRESHOLDS
        },
        concentration_sampled: false,
        location_kernel: true,
        run_complete: true,
    }
}

/// A fake one-component location-kernel store with iid draws: mean ~ N(shift, 0.05²),
/// sd ~ 1 + N(0, 0.02²), loglik ~ N(-100, 1), occupied 1. `shift(c)` moves chain c.
fn fake_run(chains: usize, draws: usize, seed: u64, shift: impl Fn(usize) -> f64) -> RunDraws {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let mut z = move || -> f64 { rng.sample(StandardNormal) };
    let chains = (0..chains)
        .map(|c| ChainDraws {
            chain: c as u64 + 1,
            rows: (0..draws)
                .map(|i| {
                    let m = shift(c) + 0.05 * z();
                    DrawRow {
                        iteration: i as u64 + 1,
                        loglik: -100.0 + z() - 20.0 * shift(c).abs(),
                        occupied: 1,
                        concentration: 1.0,
                        weight: vec![1.0],
                        mean: vec![m],
                        sd: vec![1.0 + 0.02 * z()],
                    }
                })
                .collect(),
        })
        .collect();
    RunDraws { k: 1, chains }
}

fn assess_fake(run: &RunDraws, min_chains: usize) -> DiagnosticsReport {
    let grid = linspace(-3.0, 3.0, 13);
    let dens = DensityDraws::new(run, &grid);
    assess(run, &dens, &spec(min_chains))
}

/// Every number in the JSON is finite (an unbounded R-hat is f64::MAX), and the numbers
/// of every assessable quantity are present.
fn assert_clean_json(r: &DiagnosticsReport) -> serde_json::Value {
    fn walk(v: &serde_json::Value) {
        match v {
            serde_json::Value::Number(n) => assert!(n.as_f64().is_some_and(f64::is_finite), "{n}"),
            serde_json::Value::Array(a) => a.iter().for_each(walk),
            serde_json::Value::Object(o) => o.values().for_each(walk),
            _ => {}
        }
    }
    let text = String::from_utf8(r.to_json().unwrap()).unwrap();
    let v: serde_json::Value = serde_json::from_str(&text).unwrap();
    walk(&v);
    for q in v["quantities"].as_array().unwrap() {
        if q["status"] != "unavailable" {
            for key in [
                "rhat",
                "ess_bulk",
                "ess_tail",
                "mcse_mean",
                "mcse_q05",
                "mcse_q95",
            ] {
                assert!(q[key].is_f64(), "{} {key} = {}", q["name"], q[key]);
            }
        }
    }
    let back: DiagnosticsReport = serde_json::from_str(&text).unwrap();
    assert_eq!(&back, r, "diagnostics.json reads back to the same report");
    v
}

#[test]
fn iid_fake_store_passes_and_shifted_copy_fails() {
    // iid draws, 4 chains x 500: R-hat near 1 and ESS near 2000 (iid), far inside the limits.
    let good = assess_fake(&fake_run(4, 500, 1, |_| 0.0), 2);
    assert!(good.passed, "{:?}", good.failures);
    assert!(good.failures.is_empty() && good.advice.is_empty());
    assert_clean_json(&good);

    // The same with chain 2 a copy shifted by 1 (20 sd of the component-mean draws).
    let bad = assess_fake(&fake_run(4, 500, 1, |c| if c == 1 { 1.0 } else { 0.0 }), 2);
    assert!(!bad.passed);
    let loglik = bad.quantity("loglik").unwrap();
    assert!(loglik.rhat.unwrap() > 1.1 && !loglik.passed);
    let dens = bad.quantity(DENSITY_SUMMARY_NAME).unwrap();
    assert!(dens.rhat.unwrap() > 1.1 && !dens.passed);
    assert!(bad
        .failures
        .iter()
        .any(|f| f.starts_with("loglik: R-hat") && f.contains("above the limit 1.01 (by")));
    assert!(bad
        .failures
        .iter()
        .any(|f| f.starts_with("density (worst over grid) at x = ")));
    assert!(bad
        .advice
        .iter()
        .any(|a| a.contains("warm-up") && a.contains("kernel")));
    // Per-component parameters are reported but never gate.
    let mean1 = bad.quantity("mean_1").unwrap();
    assert!(!mean1.label_invariant && !mean1.gated);
    assert!(!bad.failures.iter().any(|f| f.starts_with("mean_1")));
    assert_clean_json(&bad);
}

#[test]
fn too_few_draws_fail_on_ess_with_advice_on_how_many_more() {
    // 2 chains x 100 iid draws: ESS about 200 < 400.
    let r = assess_fake(&fake_run(2, 100, 2, |_| 0.0), 2);
    assert!(!r.passed);
    assert!(r
        .failures
        .iter()
        .any(|f| f.contains("bulk ESS") && f.contains("below the minimum 400")));
    assert!(r
        .advice
        .iter()
        .any(|a| a.contains("mixband extend <run> --draws")));
}

#[test]
fn one_chain_fails_for_min_chains_and_says_so() {
    let run = fake_run(1, 2000, 3, |_| 0.0);
    let r = assess_fake(&run, 2);
    assert!(!r.passed);
    assert_eq!(r.rhat_scope, mixband::gate::RhatScope::WithinChain);
    assert!(r.failures[0].contains("1 chain(s)") && r.failures[0].contains("min_chains"));
    assert!(r.failures[0].contains("within-chain"));
    assert_eq!(
        r.failures.len(),
        1,
        "only the chain count fails: {:?}",
        r.failures
    );
    assert!(r.advice[0].contains("[sampler] chains"));
    assert!(r.notes.iter().any(|n| n.contains("within-chain")));
    // R-hat is still computed on the two halves.
    assert!(r.quantity("loglik").unwrap().rhat.unwrap() < 1.01);
    // With min_chains = 1 the same run passes.
    assert!(assess_fake(&run, 1).passed);
}

#[test]
fn constant_continuous_quantity_fails_as_stuck_constant_count_does_not() {
    // Every draw identical: occupied (a count) constant is fine, but loglik and sigma
    // cannot repeat exactly in a moving sampler.
    let mut run = fake_run(2, 400, 4, |_| 0.0);
    for c in &mut run.chains {
        for r in &mut c.rows {
            r.loglik = -100.0;
            r.sd = vec![1.0];
            r.mean = vec![0.0];
        }
    }
    let r = assess_fake(&run, 2);
    assert!(!r.passed);
    let ll = r.quantity("loglik").unwrap();
    assert_eq!(ll.status, QuantityStatus::Constant);
    assert_eq!(ll.rhat, Some(1.0));
    assert!(r
        .failures
        .iter()
        .any(|f| f.starts_with("loglik: every draw")));
    let occ = r.quantity("occupied").unwrap();
    assert_eq!(occ.status, QuantityStatus::Constant);
    assert!(occ.passed);
    assert_clean_json(&r);
}

#[test]
fn stuck_half_chain_of_a_count_alone_does_not_fail_but_of_a_continuous_quantity_does() {
    // occupied is 3 in 97% of draws; chain 1's first half is all 3 (StuckChain). Its R-hat
    // stays below 1.01 and its ESS is high, so the count passes with a note.
    let mut run = fake_run(4, 1000, 5, |_| 0.0);
    let mut rng = ChaCha8Rng::seed_from_u64(55);
    for (c, ch) in run.chains.iter_mut().enumerate() {
        for (i, row) in ch.rows.iter_mut().enumerate() {
            let four = rng.random::<f64>() < 0.03 && !(c == 0 && i < 500);
            row.occupied = if four { 4 } else { 3 };
        }
    }
    let r = assess_fake(&run, 2);
    let occ = r.quantity("occupied").unwrap();
    assert_eq!(occ.status, QuantityStatus::StuckChain);
    assert!(occ.gated && occ.passed, "{occ:?}");
    assert!(occ.rhat.unwrap() <= 1.01);
    assert!(occ.note.as_deref().unwrap().contains("count"));
    assert!(
        !r.failures.iter().any(|f| f.starts_with("occupied")),
        "{:?}",
        r.failures
    );

    // The same stuck half in loglik (continuous) fails the gate.
    for row in &mut run.chains[0].rows[..500] {
        row.loglik = -100.0;
    }
    let r = assess_fake(&run, 2);
    assert!(r
        .failures
        .iter()
        .any(|f| f.starts_with("loglik: a chain stayed at one value")));
    assert!(!r.passed);
}

#[test]
fn nearly_constant_count_is_shown_but_not_gated() {
    // 4 draws of 4000 differ from the mode (0.1%), all in chain 2: R-hat of such a near
    // point mass is noise; the count is reported and not gated.
    let mut run = fake_run(4, 1000, 6, |_| 0.0);
    for i in [10, 400, 700, 900] {
        run.chains[1].rows[i].occupied = 2;
    }
    let r = assess_fake(&run, 2);
    let occ = r.quantity("occupied").unwrap();
    assert!(!occ.gated);
    assert!(occ
        .note
        .as_deref()
        .unwrap()
        .starts_with("nearly constant: 99.9%"));
    assert!(r.passed, "{:?}", r.failures);
}

#[test]
fn non_finite_density_and_too_short_chains_are_unavailable_not_nan() {
    // A component sd of 5e-324 (the smallest subnormal) makes the density overflow to +inf
    // at its mean; the diagnostics refuse non-finite draws.
    let mut run = fake_run(2, 400, 7, |_| 0.0);
    run.chains[0].rows[3].sd = vec![5e-324];
    run.chains[0].rows[3].mean = vec![0.0];
    let r = assess_fake(&run, 2);
    assert!(!r.passed);
    let d = r.quantity(DENSITY_SUMMARY_NAME).unwrap();
    assert_eq!(d.status, QuantityStatus::Unavailable);
    assert!(r
        .failures
        .iter()
        .any(|f| f.contains("cannot be assessed") && f.contains("draw 3 of chain 0")));
    let v = assert_clean_json(&r);
    let x0 = v["density_grid"]
        .as_array()
        .unwrap()
        .iter()
        .find(|p| p["x"] == 0.0)
        .unwrap();
    assert!(x0["rhat"].is_null() && x0["status"] == "unavailable");

    // Three draws per chain: below the minimum of 4.
    let r = assess_fake(&fake_run(2, 3, 8, |_| 0.0), 2);
    assert!(!r.passed);
    assert!(r
        .failures
        .iter()
        .any(|f| f.starts_with("loglik: cannot be assessed")));
    assert!(r.advice.iter().any(|a| a.contains("at least 4 draws")));
    assert_clean_json(&r);

    // No chains at all: no panic, a failed gate.
    let r = assess_fake(
        &RunDraws {
            k: 0,
            chains: vec![],
        },
        2,
    );
    assert!(!r.passed);
    assert_clean_json(&r);
}

#[test]
fn unequal_chains_are_cut_to_the_shortest() {
    let mut run = fake_run(3, 600, 9, |_| 0.0);
    run.chains[2].rows.truncate(450);
    let r = assess_fake(&run, 2);
    assert_eq!(r.draws_per_chain, 450);
    assert!(r
        .notes
        .iter()
        .any(|n| n.contains("600, 600, 450") && n.contains("cut to the shortest")));
}

#[test]
fn density_underflowing_to_zero_in_a_tail_is_not_a_stuck_chain() {
    // A grid point about 42 sd from the component: the density underflows to exactly 0 in
    // chain 1 (mean near 0; exp(-745) is below the smallest double) and is tiny but
    // positive in chain 2 (mean near 8, about 34 sd away).
    let run = fake_run(2, 500, 10, |c| 8.0 * c as f64);
    let grid = vec![42.0];
    let dens = DensityDraws::new(&run, &grid);
    assert!(dens.series(0, 0).iter().all(|v| *v == 0.0));
    assert!(dens.series(1, 0).iter().all(|v| *v > 0.0));
    let r = assess(&run, &dens, &spec(2));
    let p = &r.density_grid[0];
    assert_eq!(p.status, QuantityStatus::StuckChain);
    // It fails on R-hat (the chains really differ), not as a stuck chain.
    assert!(
        !r.failures.iter().any(|f| f.contains("stayed at one value")),
        "{:?}",
        r.failures
    );
    assert!(r
        .failures
        .iter()
        .any(|f| f.contains("density (worst over grid) at x = 42.0: R-hat")));
}

// ---- the binary on real runs ----

fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_mixband"))
}

fn tmp(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("mixband-gate-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

/// A bimodal sample: 40 points near -5 and 40 near +5 (deterministic, evenly spread).
fn write_config(dir: &Path, sampler: &str, extra: &str) -> PathBuf {
    let mut csv = String::from("y\n");
    for i in 0..40 {
        let u = (i as f64 + 0.5) / 40.0 - 0.5;
        csv.push_str(&format!("{}\n{}\n", -5.0 + u, 5.0 + 0.8 * u));
    }
    std::fs::write(dir.join("data.csv"), csv).unwrap();
    let cfg = format!(
        "[data]\nfile = \"{}\"\ncolumn = \"y\"\n\n[model]\nkernel = \"location\"\ncomponents = 4\n\n\
         [sampler]\n{sampler}\nseed = 7\n\n[grid]\npoints = 40\n\n{extra}",
        dir.join("data.csv").display()
    );
    let p = dir.join("run.toml");
    std::fs::write(&p, cfg).unwrap();
    p
}

fn run_sample(cfg: &Path, out: &Path) -> std::process::Output {
    bin()
        .args([
            "sample",
            cfg.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
            "--quiet",
            "--threads",
            "2",
        ])
        .output()
        .unwrap()
}

#[test]
fn short_run_fails_the_gate_exit_3_with_outputs_marked() {
    let dir = tmp("short");
    // max_draws = draws: the run must not grow to pass (tests/grow_run.rs).
    let cfg = write_config(
        &dir,
        "chains = 2\nwarmup = 2\ndraws = 30\nmax_draws = 30",
        "",
    );
    let out = dir.join("run");
    let o = run_sample(&cfg, &out);
    let stdout = String::from_utf8_lossy(&o.stdout);
    assert_eq!(
        o.status.code(),
        Some(3),
        "{stdout}\n{}",
        String::from_utf8_lossy(&o.stderr)
    );
    assert!(stdout.contains("NOT CONVERGED"), "{stdout}");
    assert!(stdout.contains("ESS") && stdout.contains("what to try"));
    assert!(out.join("bands.csv").exists());
    let bands: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("bands.json")).unwrap()).unwrap();
    assert_eq!(bands["converged"], false);
    assert!(bands["caution"]
        .as_str()
        .unwrap()
        .starts_with("NOT CONVERGED"));

    // The documented fields of diagnostics.json.
    let text = std::fs::read_to_string(out.join("diagnostics.json")).unwrap();
    let v: serde_json::Value = serde_json::from_str(&text).unwrap();
    assert_eq!(v["passed"], false);
    for k in ["max_rhat", "min_ess", "min_chains"] {
        assert!(v["thresholds"][k].is_number(), "{k}");
    }
    let names: Vec<&str> = v["quantities"]
        .as_array()
        .unwrap()
        .iter()
        .map(|q| q["name"].as_str().unwrap())
        .collect();
    for n in [
        "loglik",
        "occupied",
        "sigma",
        DENSITY_SUMMARY_NAME,
        "weight_1",
        "mean_1",
    ] {
        assert!(names.contains(&n), "{n} in {names:?}");
    }
    assert!(
        !names.contains(&"concentration"),
        "fixed Dirichlet concentration is not assessed"
    );
    for q in v["quantities"].as_array().unwrap() {
        for k in [
            "rhat",
            "ess_bulk",
            "ess_tail",
            "mcse_mean",
            "mcse_q05",
            "mcse_q95",
            "status",
            "label_invariant",
        ] {
            assert!(q.get(k).is_some(), "{k} in {q}");
        }
    }
    let d = v["quantities"]
        .as_array()
        .unwrap()
        .iter()
        .find(|q| q["name"] == DENSITY_SUMMARY_NAME)
        .unwrap();
    assert!(d["worst_at"]["rhat_x"].is_number() && d["worst_at"]["ess_bulk_x"].is_number());
    assert_eq!(v["density_grid"].as_array().unwrap().len(), 40);
    assert!(
        !v["failures"].as_array().unwrap().is_empty()
            && !v["advice"].as_array().unwrap().is_empty()
    );
    assert!(!text.contains("NaN"));

    // diagnose agrees: table and exit 3; --json prints the same report.
    let o = bin()
        .args(["diagnose", out.to_str().unwrap()])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(3));
    let table = String::from_utf8_lossy(&o.stdout);
    assert!(
        table.contains("NOT CONVERGED") && table.contains("loglik") && table.contains("FAIL"),
        "{table}"
    );
    let o = bin()
        .args(["diagnose", out.to_str().unwrap(), "--json"])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(3));
    assert_eq!(
        String::from_utf8_lossy(&o.stdout),
        text,
        "diagnose --json = diagnostics.json"
    );

    // Thresholds loose enough for 60 draws make it pass: exit 0.
    let o = bin()
        .args([
            "diagnose",
            out.to_str().unwrap(),
            "--max-rhat",
            "1e6",
            "--min-ess",
            "1",
        ])
        .output()
        .unwrap();
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stdout)
    );

    // Bad input: exit 2.
    let o = bin()
        .args(["diagnose", out.to_str().unwrap(), "--max-rhat", "0.9"])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("--max-rhat"));
    let o = bin()
        .args(["diagnose", dir.join("nope").to_str().unwrap()])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2));
    let o = bin()
        .args(["diagnose", dir.to_str().unwrap()])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2), "a folder that is not a run");

    // Same config and seed: byte-identical diagnostics.json.
    let out2 = dir.join("run2");
    assert_eq!(run_sample(&cfg, &out2).status.code(), Some(3));
    assert_eq!(
        std::fs::read(out2.join("diagnostics.json")).unwrap(),
        text.as_bytes()
    );
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn one_chain_run_fails_for_min_chains_via_the_binary() {
    let dir = tmp("one");
    let cfg = write_config(&dir, "chains = 1\nwarmup = 200\ndraws = 1000", "");
    let out = dir.join("run");
    let o = run_sample(&cfg, &out);
    let stdout = String::from_utf8_lossy(&o.stdout);
    assert_eq!(o.status.code(), Some(3), "{stdout}");
    assert!(
        stdout.contains("min_chains") && stdout.contains("within-chain"),
        "{stdout}"
    );
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn adequate_run_passes_the_gate_exit_0() {
    // Two well-separated groups, a two-component location mixture, 4 chains x 1500 draws
    // after 500 warm-up (under a second in release mode; the lowest ESS is about 5000).
    let dir = tmp("long");
    let cfg = write_config(&dir, "chains = 4\nwarmup = 500\ndraws = 1500", "");
    let text = std::fs::read_to_string(&cfg)
        .unwrap()
        .replace("components = 4", "components = 2");
    std::fs::write(&cfg, text).unwrap();
    let out = dir.join("run");
    let o = run_sample(&cfg, &out);
    let stdout = String::from_utf8_lossy(&o.stdout);
    assert_eq!(
        o.status.code(),
        Some(0),
        "{stdout}\n{}",
        String::from_utf8_lossy(&o.stderr)
    );
    assert!(
        stdout.contains("converged: passed the gate; worst R-hat"),
        "{stdout}"
    );
    let bands: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("bands.json")).unwrap()).unwrap();
    assert_eq!(bands["converged"], true);
    let o = bin()
        .args(["diagnose", out.to_str().unwrap()])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(0));
    assert!(String::from_utf8_lossy(&o.stdout).contains("convergence gate: PASSED"));
    let _ = std::fs::remove_dir_all(&dir);
}

/// The built-in demo extended to 4000 draws per chain passes (about 15 s in release mode on
/// the 2-core development machine, so not run by default; the shipped 1000 draws do not
/// pass: the density near the grid's ends has a bulk ESS near 200).
#[test]
#[ignore]
fn long_demo_run_passes() {
    let dir = tmp("demo");
    let out = dir.join("run");
    let o = bin()
        .args(["demo", "--out", out.to_str().unwrap(), "--quiet"])
        .output()
        .unwrap();
    assert!(matches!(o.status.code(), Some(0) | Some(3)));
    let o = bin()
        .args([
            "extend",
            out.to_str().unwrap(),
            "--draws",
            "3000",
            "--quiet",
        ])
        .output()
        .unwrap();
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stdout)
    );
    let _ = std::fs::remove_dir_all(&dir);
}

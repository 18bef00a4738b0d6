//! `compare` on real run directories: the recomputed pointwise log-likelihood adds up to
//! the sampler's stored log-likelihood of each draw (on the log and logit scales, after
//! removing the Jacobian), and runs over different data are refused.

mod common;

use std::path::{Path, PathBuf};

use mixband::compare::{compare, run_loglik};
use mixband::store::{read_run_draws, Manifest, RunLayout};

fn scratch(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("mixband-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

/// A small run on `values`; returns the run directory.
fn small_run(dir: &Path, tag: &str, values: &[f64], extra: &str) -> PathBuf {
    let csv: String = std::iter::once("x".to_string())
        .chain(values.iter().map(|v| v.to_string()))
        .collect::<Vec<_>>()
        .join("\n");
    std::fs::write(dir.join(format!("{tag}.csv")), csv + "\n").unwrap();
    let cfg = format!(
        "[data]\nfile = \"{tag}.csv\"\ncolumn = \"x\"\n{extra}\n[model]\ncomponents = 3\n[sampler]\nchains = 2\nwarmup = 50\ndraws = 60\nseed = 3\n"
    );
    let cfg_path = dir.join(format!("{tag}.toml"));
    std::fs::write(&cfg_path, cfg).unwrap();
    let out = dir.join(tag);
    // Exit 0, or 3 when the gate fails on this short run; outputs are still written.
    common::sample_in_process(&cfg_path, &out);
    out
}

fn stored_loglik(run: &Path) -> Vec<f64> {
    let m = Manifest::read(&RunLayout::new(run).manifest()).unwrap();
    let d = read_run_draws(&RunLayout::new(run).draws_dir(), &m.chain_ids()).unwrap();
    let n = d.min_len();
    d.chains
        .iter()
        .flat_map(|c| c.rows[..n].iter().map(|r| r.loglik))
        .collect()
}

#[test]
fn pointwise_loglik_adds_up_and_different_data_are_refused() {
    let dir = scratch("compare");
    // Positive, two-humped data (deterministic).
    let x: Vec<f64> = (0..80)
        .map(|i| {
            if i % 2 == 0 {
                2.0 + 0.013 * i as f64
            } else {
                6.0 + 0.02 * i as f64
            }
        })
        .collect();
    let a = small_run(&dir, "a", &x, "");
    let b = small_run(&dir, "b", &x, "transform = \"log\"");
    let jac: f64 = x.iter().map(|v| v.ln()).sum();
    // Logit on (0, 10): ln |dy/dx| = ln(10 / (x (10 − x))) (change of variables).
    let l = small_run(
        &dir,
        "l",
        &x,
        "transform = \"logit\"\nlower = 0\nupper = 10",
    );
    let jac_logit: f64 = x.iter().map(|v| (v * (10.0 - v) / 10.0).ln()).sum();
    for (run, shift) in [(&a, 0.0), (&b, jac), (&l, jac_logit)] {
        let r = run_loglik(run).unwrap();
        let stored = stored_loglik(run);
        assert_eq!(r.ll.draws, stored.len());
        for (s, want) in stored.iter().enumerate() {
            let got: f64 = r.ll.values[s * r.ll.obs..(s + 1) * r.ll.obs]
                .iter()
                .sum::<f64>()
                + shift;
            assert!(
                (got - want).abs() < 1e-8 * want.abs().max(1.0),
                "draw {s}: {got} vs stored {want}"
            );
        }
    }
    let scored = compare(&[
        run_loglik(&a).unwrap(),
        run_loglik(&b).unwrap(),
        run_loglik(&l).unwrap(),
    ])
    .unwrap();
    assert_eq!(scored.len(), 3);
    assert_eq!(scored[0].rank, 0);
    assert!(scored[1].elpd_diff_loo >= 0.0 && scored[1].se_diff_loo > 0.0);
    let mut y = x.clone();
    y[0] += 1.0;
    let c = small_run(&dir, "c", &y, "");
    let e = compare(&[run_loglik(&a).unwrap(), run_loglik(&c).unwrap()])
        .unwrap_err()
        .to_string();
    assert!(e.contains("not fitted to the same data"), "{e}");
    let _ = std::fs::remove_dir_all(&dir);
}

/// Runs on tabulated data and on data recorded at a resolution are compared too. Each
/// column stands for its count of observations, so Σ_i count_i · ln p_i(θ_s) must give the
/// sampler's stored log-likelihood of every draw: for weighted rows the density (plus the
/// Jacobian on the log scale), for recorded data the probability of each cell, which no
/// transform changes. A run that scores densities and one that scores cell probabilities
/// are not on one scale and are refused.
#[test]
fn weighted_and_recorded_runs_are_scored_by_their_counts() {
    let dir = scratch("compare-counted");
    // Values on a 0.5 lattice with ties (deterministic).
    let x: Vec<f64> = (0..120)
        .map(|i| 1.0 + 0.5 * ((i * 7 % 13) as f64) + if i % 3 == 0 { 4.0 } else { 0.0 })
        .collect();
    let plain = small_run(&dir, "plain", &x, "");
    let cells = small_run(&dir, "cells", &x, "resolution = 0.5");
    let cells_log = small_run(
        &dir,
        "cellslog",
        &x,
        "resolution = 0.5\ntransform = \"log\"",
    );
    // The same values as a (value, count) table.
    let mut table: std::collections::BTreeMap<i64, u64> = Default::default();
    for v in &x {
        *table.entry((v * 2.0).round() as i64).or_default() += 1;
    }
    let csv: String = std::iter::once("x,n".to_string())
        .chain(
            table
                .iter()
                .map(|(k, c)| format!("{},{c}", *k as f64 / 2.0)),
        )
        .collect::<Vec<_>>()
        .join("\n");
    std::fs::write(dir.join("tab.csv"), csv + "\n").unwrap();
    std::fs::write(
        dir.join("tab.toml"),
        "[data]\nfile = \"tab.csv\"\ncolumn = \"x\"\nweights = \"n\"\n[model]\ncomponents = 3\n\
         [sampler]\nchains = 2\nwarmup = 50\ndraws = 60\nseed = 3\n",
    )
    .unwrap();
    let tab = dir.join("tab");
    common::sample_in_process(&dir.join("tab.toml"), &tab);

    for run in [&cells, &cells_log, &tab] {
        let r = run_loglik(run).unwrap();
        assert_eq!(r.counts.len(), table.len(), "one column per distinct value");
        assert_eq!(r.observations(), x.len() as u64);
        let stored = stored_loglik(run);
        for (s, want) in stored.iter().enumerate() {
            let got: f64 = r.ll.values[s * r.ll.obs..(s + 1) * r.ll.obs]
                .iter()
                .zip(&r.counts)
                .map(|(v, &c)| c as f64 * v)
                .sum();
            assert!(
                (got - want).abs() < 1e-8 * want.abs().max(1.0),
                "{}: draw {s}: {got} vs stored {want}",
                run.display()
            );
        }
    }
    let scored = compare(&[run_loglik(&cells).unwrap(), run_loglik(&cells_log).unwrap()]).unwrap();
    assert_eq!(scored.len(), 2);
    assert!(scored[1].elpd_diff_loo >= 0.0 && scored[1].se_diff_loo > 0.0);
    // Cell probabilities are at most 1, so elpd of a recorded run is at most 0.
    assert!(scored.iter().all(|s| s.loo.elpd < 0.0 && s.waic.elpd < 0.0));
    let e = compare(&[run_loglik(&plain).unwrap(), run_loglik(&cells).unwrap()])
        .unwrap_err()
        .to_string();
    assert!(e.contains("same [data] resolution"), "{e}");
    let _ = std::fs::remove_dir_all(&dir);
}

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

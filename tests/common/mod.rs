//! Helpers shared by the statistical integration tests: Monte Carlo standard errors by
//! batch means, normal and Kolmogorov critical values, the Kolmogorov–Smirnov statistic,
//! and scratch directories. Each test file uses a subset, hence the `dead_code` allowance.
#![allow(dead_code)]

use std::path::PathBuf;
use std::sync::atomic::{AtomicUsize, Ordering};

use statrs::distribution::{ContinuousCDF, Normal};

/// Mean of `x`.
pub fn mean(x: &[f64]) -> f64 {
    x.iter().sum::<f64>() / x.len() as f64
}

/// Sample variance of `x` (divisor n − 1).
pub fn var(x: &[f64]) -> f64 {
    let m = mean(x);
    x.iter().map(|v| (v - m) * (v - m)).sum::<f64>() / (x.len() - 1) as f64
}

/// Monte Carlo standard error of the mean of a stationary series by non-overlapping batch
/// means with batch size ⌊√n⌋ (Flegal, Haran & Jones 2008, "Markov chain Monte Carlo: can
/// we trust the third significant figure?", Statistical Science 23; from memory). For iid
/// draws it estimates sd/√n, like the naive formula.
pub fn batch_means_se(x: &[f64]) -> f64 {
    let n = x.len();
    let b = (n as f64).sqrt().floor() as usize;
    let a = n / b;
    let used = a * b;
    let m = mean(&x[..used]);
    let batch: Vec<f64> = x[..used].chunks(b).map(mean).collect();
    let s2 = batch.iter().map(|v| (v - m) * (v - m)).sum::<f64>() / (a - 1) as f64;
    (s2 / a as f64).sqrt()
}

/// Two-sided standard-normal critical value at family-wise level `alpha` over `tests`
/// tests (Bonferroni): Φ⁻¹(1 − α / (2 · tests)).
pub fn bonferroni_z(alpha: f64, tests: usize) -> f64 {
    Normal::new(0.0, 1.0)
        .unwrap()
        .inverse_cdf(1.0 - alpha / (2.0 * tests as f64))
}

/// Kolmogorov's limiting distribution P(√n D_n ≤ t) = 1 − 2 Σ_{k≥1} (−1)^{k−1} e^{−2k²t²}
/// (Kolmogorov 1933; e.g. Massey 1951, JASA 46, "The Kolmogorov–Smirnov test for
/// goodness of fit").
pub fn kolmogorov_cdf(t: f64) -> f64 {
    if t <= 0.0 {
        return 0.0;
    }
    let mut s = 0.0;
    for k in 1..=100 {
        let k = k as f64;
        let term = (-2.0 * k * k * t * t).exp();
        s += if k as u64 % 2 == 1 { term } else { -term };
        if term < 1e-18 {
            break;
        }
    }
    1.0 - 2.0 * s
}

/// Asymptotic critical value c with P(√n D_n > c) = alpha, by bisection on
/// [`kolmogorov_cdf`] (c(0.01) ≈ 1.628, c(0.001) ≈ 1.949 in the usual tables).
pub fn kolmogorov_critical(alpha: f64) -> f64 {
    let (mut lo, mut hi) = (0.2, 5.0);
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if 1.0 - kolmogorov_cdf(mid) > alpha {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    0.5 * (lo + hi)
}

/// One-sample Kolmogorov–Smirnov statistic D_n = sup |F_n − F| given the hypothesised CDF
/// evaluated at each draw (`u[i] = F(x_i)`); `u` is sorted in place.
pub fn ks_statistic(u: &mut [f64]) -> f64 {
    u.sort_by(f64::total_cmp);
    let n = u.len() as f64;
    let mut d: f64 = 0.0;
    for (i, &ui) in u.iter().enumerate() {
        let i = i as f64;
        d = d.max((i + 1.0) / n - ui).max(ui - i / n);
    }
    d
}

/// A fresh, empty directory under the system temp dir, unique per process and call.
pub fn scratch_dir(tag: &str) -> PathBuf {
    static COUNTER: AtomicUsize = AtomicUsize::new(0);
    let n = COUNTER.fetch_add(1, Ordering::SeqCst);
    let dir = std::env::temp_dir().join(format!("mixband-test-{tag}-{}-{n}", std::process::id()));
    if dir.exists() {
        std::fs::remove_dir_all(&dir).unwrap();
    }
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

/// A fresh run of `prep` into `out` on two threads with no progress bars (`force`
/// replaces an earlier run there).
#[allow(dead_code)]
pub fn execute_quiet(
    prep: &mixband::run::Prepared,
    out: &std::path::Path,
    force: bool,
) -> mixband::error::Result<mixband::run::RunOutcome> {
    use mixband::run::{execute, ExecOptions, Mode};
    let stop = std::sync::atomic::AtomicBool::new(false);
    let opts = ExecOptions {
        threads: 2,
        quiet: true,
        stop: &stop,
    };
    execute(prep, out, Mode::Fresh { force }, opts, &[])
}

/// Writes `config` (with `data.csv` already in `dir`) to `dir/run.toml`, runs it to
/// completion into `dir/run` on two threads, and returns the prepared run, its stored
/// draws and the density draws on `points` grid points from `from` to `to`.
pub fn run_to_density(
    dir: &std::path::Path,
    config: &str,
    (from, to, points): (f64, f64, usize),
) -> (
    mixband::run::Prepared,
    mixband::store::RunDraws,
    mixband::summary::DensityDraws,
) {
    use mixband::run::Prepared;
    use mixband::store::{read_run_draws, Manifest, RunLayout};
    let cfg_path = dir.join("run.toml");
    std::fs::write(&cfg_path, config).unwrap();
    let prep = Prepared::from_config_file(&cfg_path).unwrap();
    let out = dir.join("run");
    execute_quiet(&prep, &out, false).unwrap();
    let layout = RunLayout::new(&out);
    let manifest = Manifest::read(&layout.manifest()).unwrap();
    let draws = read_run_draws(&layout.draws_dir(), &manifest.chain_ids()).unwrap();
    let grid = mixband::summary::linspace(from, to, points);
    let dens = mixband::summary::DensityDraws::new(&draws, &grid);
    (prep, draws, dens)
}

/// Runs `mixband sample CONFIG --out OUT -q --threads 1` in this process and checks its exit
/// code: 0, or 3 when the convergence gate fails on a short run (outputs are still written).
pub fn sample_in_process(config: &std::path::Path, out: &std::path::Path) {
    let code = mixband::cli::main_with_args(
        [
            "mixband",
            "sample",
            config.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
            "-q",
            "--threads",
            "1",
        ]
        .map(std::ffi::OsString::from),
    );
    assert!(code == 0 || code == 3, "exit code {code}");
}

/// The (x, mean) columns of a bands.csv.
pub fn bands_mean(path: &std::path::Path) -> Vec<(f64, f64)> {
    std::fs::read_to_string(path)
        .unwrap()
        .lines()
        .skip(1)
        .map(|l| {
            let c: Vec<f64> = l.split(',').take(2).map(|v| v.parse().unwrap()).collect();
            (c[0], c[1])
        })
        .collect()
}

/// Copies the folder `from` into `to`, recursively.
pub fn copy_dir(from: &std::path::Path, to: &std::path::Path) {
    std::fs::create_dir_all(to).unwrap();
    for e in std::fs::read_dir(from).unwrap() {
        let e = e.unwrap();
        let dest = to.join(e.file_name());
        if e.file_type().unwrap().is_dir() {
            copy_dir(&e.path(), &dest);
        } else {
            std::fs::copy(e.path(), dest).unwrap();
        }
    }
}

//! Shared helpers of the bump tests (tests/bumps.rs, tests/validation_bumps.rs): fitting a
//! sample through the ordinary config path and reading its summary.json content, the true
//! modes and antimodes of a normal mixture by root finding, and a data sample from one.
#![allow(dead_code)]

use std::path::Path;

use mixband::run::{summarise_in_memory, summary_file, Prepared, SummaryFile, SummaryPlan};
use mixband::store::RunDraws;
use mixband::summary::{linspace, BumpSummary};
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, StandardNormal};

#[path = "../common/mod.rs"]
mod common;

pub use common::scratch_dir;

/// A normal mixture: (weight, mean, sd) per component.
pub type Mixture = [(f64, f64, f64)];

pub fn density(m: &Mixture, x: f64) -> f64 {
    m.iter()
        .map(|&(w, mu, s)| {
            w * (-0.5 * ((x - mu) / s).powi(2)).exp() / (s * (2.0 * std::f64::consts::PI).sqrt())
        })
        .sum()
}

/// The derivative of [`density`], analytically: Σ w φ_k(x) · (μ_k − x)/σ_k².
pub fn slope(m: &Mixture, x: f64) -> f64 {
    m.iter()
        .map(|&(w, mu, s)| density(&[(w, mu, s)], x) * (mu - x) / (s * s))
        .sum()
}

/// The modes and antimodes of the mixture in [a, b]: the zeros of its derivative, found
/// by scanning 20 000 points for sign changes and bisecting each (common practice, no
/// source). Returns (modes, antimodes), each ascending.
pub fn critical_points(m: &Mixture, a: f64, b: f64) -> (Vec<f64>, Vec<f64>) {
    let xs = linspace(a, b, 20_001);
    let (mut modes, mut anti) = (Vec::new(), Vec::new());
    for w in xs.windows(2) {
        let (s0, s1) = (slope(m, w[0]), slope(m, w[1]));
        if (s0 > 0.0) != (s1 > 0.0) {
            let (mut lo, mut hi) = (w[0], w[1]);
            for _ in 0..100 {
                let mid = 0.5 * (lo + hi);
                if (slope(m, mid) > 0.0) == (s0 > 0.0) {
                    lo = mid;
                } else {
                    hi = mid;
                }
            }
            let x = 0.5 * (lo + hi);
            if s0 > 0.0 {
                modes.push(x);
            } else {
                anti.push(x);
            }
        }
    }
    (modes, anti)
}

/// `n` draws from the mixture (ChaCha8, seeded).
pub fn sample(m: &Mixture, n: usize, seed: u64) -> Vec<f64> {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    (0..n)
        .map(|_| {
            let u: f64 = rand::Rng::random(&mut rng);
            let mut acc = 0.0;
            let mut pick = m.len() - 1;
            for (j, c) in m.iter().enumerate() {
                acc += c.0;
                if u < acc {
                    pick = j;
                    break;
                }
            }
            let z: f64 = StandardNormal.sample(&mut rng);
            m[pick].1 + m[pick].2 * z
        })
        .collect()
}

/// Writes `x` as data.csv in `dir`, samples the config (the default model, `extra` lines
/// added) to completion, and returns the prepared run and its draws.
pub fn fit(dir: &Path, x: &[f64], sampler: &str, extra: &str) -> (Prepared, RunDraws) {
    let mut csv = String::from("x\n");
    for v in x {
        csv.push_str(&format!("{v:?}\n"));
    }
    std::fs::write(dir.join("data.csv"), csv).unwrap();
    let config =
        format!("[data]\nfile = \"data.csv\"\ncolumn = \"x\"\n\n[sampler]\n{sampler}\n\n{extra}\n");
    let (prep, draws, _) = common::run_to_density(dir, &config, (0.0, 1.0, 2));
    (prep, draws)
}

/// The content of summary.json for `draws` as the run's config summarises them.
pub fn summary(prep: &Prepared, draws: &RunDraws) -> SummaryFile {
    let c = &prep.config;
    let grid = linspace(c.grid_from, c.grid_to, c.grid_points);
    let plan = SummaryPlan {
        grid: &grid,
        transform: c.transform,
        levels: Some(&c.levels),
        gate: None,
        columns_per_pass: None,
        shape: Some(&c.shape),
    };
    let s = summarise_in_memory(draws, &plan);
    summary_file(
        s.features.as_ref().unwrap(),
        s.bands.as_ref().unwrap(),
        None,
    )
}

/// The bump of the summary whose stretch holds `x`.
pub fn bump_at(s: &SummaryFile, x: f64) -> Option<&BumpSummary> {
    s.shape
        .bumps
        .iter()
        .find(|b| b.from.is_none_or(|f| f < x) && b.to.is_none_or(|t| x <= t))
}

/// The interval at `level` of a posterior summary.
pub fn interval(p: &mixband::summary::Posterior, level: f64) -> (f64, f64) {
    let i = p
        .intervals
        .iter()
        .find(|i| (i.level - level).abs() < 1e-12)
        .expect("level configured");
    (i.lower, i.upper)
}

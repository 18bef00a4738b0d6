//! Shared helpers of the validation tests (tests/validation_*.rs) and the validation
//! examples: running the sampler in memory, turning states into densities on a grid in data
//! units, the Gaussian kernel estimate at Silverman's bandwidth, integrals and distances,
//! and reading the reference fixtures written by tests/reference/*.py.
#![allow(dead_code)]

pub mod marron_wand;

use std::path::PathBuf;
use std::sync::atomic::AtomicBool;

use mixband::model::{Prior, State};
use mixband::run::Prepared;
use mixband::sampler::rng::StreamKey;
use mixband::sampler::{initial_state, run_chain, ChainPlan, Checkpoint, DrawSink, KeptDraw};
use mixband::summary::quantile_sorted;

/// A [`DrawSink`] that keeps every kept state in memory.
#[derive(Default)]
pub struct Collect {
    pub states: Vec<State>,
    pub loglik: Vec<f64>,
}

impl DrawSink for Collect {
    fn draw(&mut self, d: KeptDraw<'_>) -> mixband::Result<()> {
        self.states.push(d.state.clone());
        self.loglik.push(d.loglik);
        Ok(())
    }
    fn checkpoint(&mut self, _cp: &dyn Fn() -> Checkpoint, _force: bool) -> mixband::Result<()> {
        Ok(())
    }
}

/// Runs one chain from [`initial_state`] and returns its kept states (standard units).
pub fn chain_states(
    z: &[f64],
    prior: &Prior,
    seed: u64,
    chain: u64,
    plan: ChainPlan,
) -> Vec<State> {
    chain_from(z, prior, seed, chain, plan, None)
}

/// As [`chain_states`], optionally from a given starting state.
pub fn chain_from(
    z: &[f64],
    prior: &Prior,
    seed: u64,
    chain: u64,
    plan: ChainPlan,
    start: Option<State>,
) -> Vec<State> {
    let key = StreamKey::new(seed, chain);
    let state = start.unwrap_or_else(|| initial_state(z, prior, &key));
    let start = Checkpoint {
        sweeps_done: 0,
        state,
        pending_occupied: None,
    };
    let mut sink = Collect::default();
    let stop = AtomicBool::new(false);
    run_chain(z, prior, &key, plan, start, &mut sink, &stop).expect("in-memory chain cannot fail");
    sink.states
}

/// Posterior draws of the density on a grid, in data units.
pub struct PosteriorDensity {
    pub grid: Vec<f64>,
    /// draws[d][g].
    pub draws: Vec<Vec<f64>>,
}

impl PosteriorDensity {
    /// Densities of standard-unit `states` at data-unit `grid`: f_x(x) = f_z((x − c)/s) / s.
    pub fn new(states: &[State], grid: &[f64], centre: f64, scale: f64) -> Self {
        let draws = states
            .iter()
            .map(|s| {
                grid.iter()
                    .map(|&x| s.density((x - centre) / scale) / scale)
                    .collect()
            })
            .collect();
        PosteriorDensity {
            grid: grid.to_vec(),
            draws,
        }
    }

    pub fn mean(&self) -> Vec<f64> {
        let n = self.draws.len() as f64;
        (0..self.grid.len())
            .map(|g| self.draws.iter().map(|d| d[g]).sum::<f64>() / n)
            .collect()
    }

    /// Equal-tailed pointwise band at `level`: (lower, upper).
    pub fn band(&self, level: f64) -> (Vec<f64>, Vec<f64>) {
        let mut lo = Vec::with_capacity(self.grid.len());
        let mut hi = Vec::with_capacity(self.grid.len());
        for g in 0..self.grid.len() {
            let mut v: Vec<f64> = self.draws.iter().map(|d| d[g]).collect();
            v.sort_by(f64::total_cmp);
            lo.push(quantile_sorted(&v, 0.5 * (1.0 - level)));
            hi.push(quantile_sorted(&v, 0.5 * (1.0 + level)));
        }
        (lo, hi)
    }
}

/// Fits `x` (data units) with the defaults a user gets from a config with the given
/// `[model]` and `[prior]` lines, running `chains` chains of `plan`; returns the posterior
/// density on `grid`.
pub fn fit_with_defaults(
    x: &[f64],
    model_and_prior: &str,
    seed: u64,
    chains: u64,
    plan: ChainPlan,
    grid: &[f64],
) -> PosteriorDensity {
    let prep = prepare(x, model_and_prior);
    let mut states = Vec::new();
    for c in 1..=chains {
        states.extend(chain_states(&prep.data.z, &prep.prior, seed, c, plan));
    }
    PosteriorDensity::new(&states, grid, prep.data.centre, prep.data.scale)
}

/// The run preparation (defaults resolved from the data) for in-memory data `x`.
pub fn prepare(x: &[f64], model_and_prior: &str) -> Prepared {
    let mut csv = String::from("x\n");
    for v in x {
        csv.push_str(&format!("{v:?}\n"));
    }
    let text = format!("[data]\nfile = \"memory.csv\"\ncolumn = \"x\"\n\n[sampler]\nseed = 1\n\n{model_and_prior}\n");
    Prepared::from_text(
        &text,
        "validation",
        std::path::Path::new("."),
        Some(csv.as_bytes()),
    )
    .expect("validation config is valid")
}

/// Sample sd with divisor n − 1.
pub fn sd(x: &[f64]) -> f64 {
    let n = x.len() as f64;
    let m = x.iter().sum::<f64>() / n;
    (x.iter().map(|v| (v - m) * (v - m)).sum::<f64>() / (n - 1.0)).sqrt()
}

/// Silverman's rule of thumb, Silverman (1986) eq. 3.31: h = 0.9 min(sd, IQR/1.34) n^(−1/5)
/// (quartiles by linear interpolation, Hyndman & Fan definition 7, as numpy's default).
pub fn silverman_bandwidth(x: &[f64]) -> f64 {
    let mut v = x.to_vec();
    v.sort_by(f64::total_cmp);
    let iqr = quantile_sorted(&v, 0.75) - quantile_sorted(&v, 0.25);
    0.9 * sd(x).min(iqr / 1.34) * (x.len() as f64).powf(-0.2)
}

/// Gaussian kernel density estimate with bandwidth `h` at each grid point.
pub fn kde(x: &[f64], h: f64, grid: &[f64]) -> Vec<f64> {
    let c = 1.0 / ((x.len() as f64) * h * (2.0 * std::f64::consts::PI).sqrt());
    grid.iter()
        .map(|&g| {
            c * x
                .iter()
                .map(|&xi| (-0.5 * ((g - xi) / h).powi(2)).exp())
                .sum::<f64>()
        })
        .collect()
}

/// Trapezoid rule on an evenly or unevenly spaced grid.
pub fn trapezoid(grid: &[f64], f: &[f64]) -> f64 {
    (1..grid.len())
        .map(|i| 0.5 * (grid[i] - grid[i - 1]) * (f[i] + f[i - 1]))
        .sum()
}

/// Integrated squared error ∫ (f − g)².
pub fn ise(grid: &[f64], f: &[f64], g: &[f64]) -> f64 {
    let d: Vec<f64> = f.iter().zip(g).map(|(a, b)| (a - b) * (a - b)).collect();
    trapezoid(grid, &d)
}

/// L1 distance ∫ |f − g|.
pub fn l1(grid: &[f64], f: &[f64], g: &[f64]) -> f64 {
    let d: Vec<f64> = f.iter().zip(g).map(|(a, b)| (a - b).abs()).collect();
    trapezoid(grid, &d)
}

/// Local maxima of `f` on `grid` whose height is at least `min_rel` of the highest: (x, height).
pub fn modes(grid: &[f64], f: &[f64], min_rel: f64) -> Vec<(f64, f64)> {
    let top = f.iter().cloned().fold(0.0, f64::max);
    (1..f.len() - 1)
        .filter(|&i| f[i] > f[i - 1] && f[i] >= f[i + 1] && f[i] >= min_rel * top)
        .map(|i| (grid[i], f[i]))
        .collect()
}

/// `points` evenly spaced values from `a` to `b`.
pub fn linspace(a: f64, b: f64, points: usize) -> Vec<f64> {
    mixband::summary::linspace(a, b, points)
}

/// Reads tests/reference/fixtures/`name`.
pub fn fixture(name: &str) -> serde_json::Value {
    let path: PathBuf = [
        env!("CARGO_MANIFEST_DIR"),
        "tests",
        "reference",
        "fixtures",
        name,
    ]
    .iter()
    .collect();
    let text = std::fs::read_to_string(&path)
        .unwrap_or_else(|e| panic!("cannot read {}: {e}", path.display()));
    serde_json::from_str(&text).unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

/// A JSON array of numbers as a vector.
pub fn floats(v: &serde_json::Value) -> Vec<f64> {
    v.as_array()
        .expect("array")
        .iter()
        .map(|x| x.as_f64().expect("number"))
        .collect()
}

/// The upper-`p` quantile of chi-square with `df` degrees of freedom from the scipy fixture.
pub fn chi2_upper(p: f64, df: usize) -> f64 {
    let fx = fixture("marron_wand.json");
    fx["chi2_upper"]
        .as_array()
        .unwrap()
        .iter()
        .find(|q| {
            (q["p"].as_f64().unwrap() - p).abs() < 1e-12 && q["df"].as_u64().unwrap() as usize == df
        })
        .map(|q| q["quantile"].as_f64().unwrap())
        .unwrap_or_else(|| panic!("no chi-square quantile for p = {p}, df = {df} in the fixture"))
}

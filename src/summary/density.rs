//! The mixture density of each stored draw on a grid, on the data scale. Draws are stored
//! on the fitted scale; under `[data] transform = "log"` the density of x is the fitted
//! density at ln x times the Jacobian 1/x (see [`crate::data::Transform`]).

use crate::data::Transform;
use crate::dist::LN_SQRT_2PI;
use crate::store::{DrawRow, RunDraws};

/// f(x) = Σ_k w_k N(x; μ_k, σ_k²) for one draw.
pub fn mixture_density(row: &DrawRow, x: f64) -> f64 {
    let mut f = 0.0;
    for j in 0..row.weight.len() {
        let z = (x - row.mean[j]) / row.sd[j];
        f += (row.weight[j].ln() - row.sd[j].ln() - LN_SQRT_2PI - 0.5 * z * z).exp();
    }
    f
}

/// One draw's density prepared for evaluation at many points: ln w_k − ln σ_k − ln √(2π)
/// is computed once per component instead of once per point. Every value has the same
/// bits as [`mixture_density`] and [`mixture_density_on`] (the same operations in the
/// same order).
pub struct DrawDensity<'a> {
    row: &'a DrawRow,
    log_coef: Vec<f64>,
}

impl<'a> DrawDensity<'a> {
    pub fn new(row: &'a DrawRow) -> Self {
        let log_coef = row
            .weight
            .iter()
            .zip(&row.sd)
            .map(|(w, sd)| w.ln() - sd.ln() - LN_SQRT_2PI)
            .collect();
        DrawDensity { row, log_coef }
    }

    /// f(x) on the fitted scale.
    pub fn at(&self, x: f64) -> f64 {
        let mut f = 0.0;
        for (j, c) in self.log_coef.iter().enumerate() {
            let z = (x - self.row.mean[j]) / self.row.sd[j];
            f += (c - 0.5 * z * z).exp();
        }
        f
    }

    /// The density of the original-scale variable at `x` (see [`mixture_density_on`]).
    pub fn at_on(&self, x: f64, t: Transform) -> f64 {
        if !t.in_support(x) {
            return 0.0;
        }
        self.at(t.forward(x)) * t.log_jacobian(x).exp()
    }
}

/// The density of the original-scale variable at `x` for a draw fitted on scale `t`.
pub fn mixture_density_on(row: &DrawRow, x: f64, t: Transform) -> f64 {
    if !t.in_support(x) {
        return 0.0;
    }
    mixture_density(row, t.forward(x)) * t.log_jacobian(x).exp()
}

/// A curve of every draw on a grid (the density, or the CDF built by
/// [`super::cdf::cdf_draws`]): `values[(c * draws + d) * grid + g]`.
#[derive(Debug, Clone, PartialEq)]
pub struct DensityDraws {
    pub grid: Vec<f64>,
    pub chains: usize,
    /// Draws per chain (chains are cut to the shortest).
    pub draws: usize,
    pub values: Vec<f64>,
}

impl DensityDraws {
    /// Evaluates every draw of `run` (cut to the shortest chain) on `grid`.
    pub fn new(run: &RunDraws, grid: &[f64]) -> Self {
        Self::from_fn(run, grid, mixture_density)
    }

    /// Densities on the original scale of draws fitted on scale `t`.
    pub fn new_on(run: &RunDraws, grid: &[f64], t: Transform) -> Self {
        Self::from_fn(run, grid, |row, x| mixture_density_on(row, x, t))
    }

    /// Evaluates `curve(draw, x)` for every draw of `run` (cut to the shortest chain).
    pub fn from_fn(run: &RunDraws, grid: &[f64], curve: impl Fn(&DrawRow, f64) -> f64) -> Self {
        let draws = run.min_len();
        let g = grid.len();
        let mut values = Vec::with_capacity(run.chains.len() * draws * g);
        for c in &run.chains {
            for row in &c.rows[..draws] {
                values.extend(grid.iter().map(|&x| curve(row, x)));
            }
        }
        DensityDraws {
            grid: grid.to_vec(),
            chains: run.chains.len(),
            draws,
            values,
        }
    }

    /// The density at grid point `g` for every draw of chain `c`.
    pub fn series(&self, c: usize, g: usize) -> Vec<f64> {
        let n = self.grid.len();
        (0..self.draws)
            .map(|d| self.values[(c * self.draws + d) * n + g])
            .collect()
    }

    /// The density at grid point `g` for every draw of every chain.
    pub fn pooled(&self, g: usize) -> Vec<f64> {
        let n = self.grid.len();
        self.values.iter().skip(g).step_by(n).copied().collect()
    }
}

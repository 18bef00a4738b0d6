//! Pointwise posterior summaries of the density: mean (the posterior predictive density),
//! median and equal-tailed credible bands at each level, and simultaneous bands over the
//! whole grid (see [`super::simultaneous`]), written as CSV and JSON.

use serde::Serialize;

use super::density::DensityDraws;
use super::quantile::quantile_sorted;
use super::simultaneous::{max_standardised_deviation, simultaneous_from_max, SimultaneousBand};
use crate::numfmt::fmt_f64;

/// Pointwise summaries over draws.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Bands {
    pub x: Vec<f64>,
    pub mean: Vec<f64>,
    pub median: Vec<f64>,
    pub levels: Vec<f64>,
    /// lower[l][g], upper[l][g] for level `levels[l]`.
    pub lower: Vec<Vec<f64>>,
    pub upper: Vec<Vec<f64>>,
    /// Pointwise posterior standard deviation (divisor S − 1).
    pub sd: Vec<f64>,
    /// Simultaneous bands, one per level, in the order of `levels`.
    #[serde(skip)]
    pub simul: Vec<SimultaneousBand>,
    pub draws_used: usize,
}

/// Column suffix for a level: 0.95 → "95", 0.975 → "97.5".
pub fn level_label(level: f64) -> String {
    let pct = (level * 100.0 * 1e6).round() / 1e6;
    format!("{pct}")
}

impl Bands {
    /// Bands of densities: simultaneous bands are clipped at 0.
    pub fn new(dens: &DensityDraws, levels: &[f64]) -> Self {
        Self::new_clipped(dens, levels, 0.0, f64::INFINITY)
    }

    /// Bands of any per-draw curve whose values lie in [lo, hi] (a CDF: [0, 1]); the
    /// simultaneous bands are clipped to that range.
    pub fn new_clipped(dens: &DensityDraws, levels: &[f64], lo: f64, hi: f64) -> Self {
        let g = dens.grid.len();
        let mut b = BandsBuilder::new(&dens.grid, levels, dens.chains * dens.draws);
        for i in 0..g {
            b.push_point(dens.pooled(i));
        }
        let m = max_standardised_deviation(&dens.values, g, &b.bands.mean, &b.bands.sd);
        b.finish(&m, lo, hi)
    }

    /// CSV text: `x, mean, median`, then `lower_<L>, upper_<L>` per level, then
    /// `simul_lower_<L>, simul_upper_<L>` per level.
    pub fn to_csv(&self) -> String {
        let mut s = String::from("x,mean,median");
        for &l in &self.levels {
            let lab = level_label(l);
            s.push_str(&format!(",lower_{lab},upper_{lab}"));
        }
        for &l in &self.levels {
            let lab = level_label(l);
            s.push_str(&format!(",simul_lower_{lab},simul_upper_{lab}"));
        }
        s.push('\n');
        for i in 0..self.x.len() {
            s.push_str(&fmt_f64(self.x[i]));
            s.push(',');
            s.push_str(&fmt_f64(self.mean[i]));
            s.push(',');
            s.push_str(&fmt_f64(self.median[i]));
            for l in 0..self.levels.len() {
                s.push(',');
                s.push_str(&fmt_f64(self.lower[l][i]));
                s.push(',');
                s.push_str(&fmt_f64(self.upper[l][i]));
            }
            for band in &self.simul {
                s.push(',');
                s.push_str(&fmt_f64(band.lower[i]));
                s.push(',');
                s.push_str(&fmt_f64(band.upper[i]));
            }
            s.push('\n');
        }
        s
    }
}

/// Bands built one grid point at a time, in grid order, from that point's values over every
/// draw; the simultaneous bands need each draw's maximal standardised deviation over the
/// whole grid, given at the end.
#[derive(Debug, Clone)]
pub struct BandsBuilder {
    bands: Bands,
}

impl BandsBuilder {
    /// Bands on `grid` at `levels` over `draws_used` draws, with no point summarised yet.
    pub fn new(grid: &[f64], levels: &[f64], draws_used: usize) -> Self {
        let g = grid.len();
        BandsBuilder {
            bands: Bands {
                x: grid.to_vec(),
                mean: Vec::with_capacity(g),
                median: Vec::with_capacity(g),
                levels: levels.to_vec(),
                lower: vec![Vec::with_capacity(g); levels.len()],
                upper: vec![Vec::with_capacity(g); levels.len()],
                sd: Vec::with_capacity(g),
                simul: Vec::new(),
                draws_used,
            },
        }
    }

    /// Summarises the next grid point from its values `v` over every draw (non-empty,
    /// chain after chain); returns the point's posterior mean and sd.
    pub fn push_point(&mut self, mut v: Vec<f64>) -> (f64, f64) {
        let b = &mut self.bands;
        let n = v.len() as f64;
        let mean = v.iter().sum::<f64>() / n;
        b.mean.push(mean);
        let ss: f64 = v.iter().map(|&y| (y - mean) * (y - mean)).sum();
        let sd = if v.len() > 1 {
            (ss / (n - 1.0)).sqrt()
        } else {
            0.0
        };
        b.sd.push(sd);
        v.sort_by(f64::total_cmp);
        b.median.push(quantile_sorted(&v, 0.5));
        for (l, &level) in b.levels.iter().enumerate() {
            b.lower[l].push(quantile_sorted(&v, 0.5 * (1.0 - level)));
            b.upper[l].push(quantile_sorted(&v, 0.5 * (1.0 + level)));
        }
        (mean, sd)
    }

    /// The bands, with simultaneous bands from `max_dev` (each draw's maximal standardised
    /// deviation, see [`super::simultaneous`]) clipped to [lo, hi].
    pub fn finish(mut self, max_dev: &[f64], lo: f64, hi: f64) -> Bands {
        let b = &mut self.bands;
        b.simul = simultaneous_from_max(max_dev, &b.mean, &b.sd, &b.levels, lo, hi);
        self.bands
    }
}

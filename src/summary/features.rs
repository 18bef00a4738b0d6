//! The per-draw numbers summary.json summarises over draws: the mean, sd and a few
//! quantiles of each draw's distribution, its number of modes on the grid, its bumps (five
//! numbers each, [`super::bumps`]), the mass of each region of interest, and its number
//! of occupied components. Collected one draw at a time (a few numbers a draw), so the
//! summaries can read the draws as a stream.

use super::bumps::{draw_bumps, DrawBump};
use super::cdf::mixture_cdf_on;
use super::density::DrawDensity;
use super::functionals::{mixture_mean_on, mixture_quantile_on, mixture_sd_on};
use super::shape::ShapeSpec;
use crate::data::Transform;
use crate::store::DrawRow;

/// The features of every draw used, in the order given (chain after chain).
#[derive(Debug, Clone, PartialEq)]
pub struct DrawFeatures {
    /// Probabilities of the quantiles in `quantiles`.
    pub probs: Vec<f64>,
    pub mean: Vec<f64>,
    pub sd: Vec<f64>,
    /// `quantiles[i][d]`: the `probs[i]`-quantile of draw d.
    pub quantiles: Vec<Vec<f64>>,
    pub modes: Vec<usize>,
    pub occupied: Vec<usize>,
    /// The shape settings: regions of interest and thresholds.
    pub shape: ShapeSpec,
    /// The bumps of every draw, draw after draw; draw d's are `bumps[bump_end[d-1]..bump_end[d]]`.
    pub bumps: Vec<DrawBump>,
    pub bump_end: Vec<usize>,
    /// `region_mass[r][d]`: the probability draw d gives region r.
    pub region_mass: Vec<Vec<f64>>,
}

impl DrawFeatures {
    /// No draws yet; quantiles at `probs`.
    pub fn new(probs: &[f64]) -> Self {
        DrawFeatures {
            probs: probs.to_vec(),
            mean: Vec::new(),
            sd: Vec::new(),
            quantiles: vec![Vec::new(); probs.len()],
            modes: Vec::new(),
            occupied: Vec::new(),
            shape: ShapeSpec::default(),
            bumps: Vec::new(),
            bump_end: Vec::new(),
            region_mass: Vec::new(),
        }
    }

    /// The same, with the shape settings `shape` (regions and thresholds).
    pub fn with_shape(mut self, shape: Option<&ShapeSpec>) -> Self {
        self.shape = shape.cloned().unwrap_or_default();
        self.region_mass = vec![Vec::new(); self.shape.regions.len()];
        self
    }

    /// The bumps of draw `d`, left to right.
    pub fn bumps_of(&self, d: usize) -> &[DrawBump] {
        let start = if d == 0 { 0 } else { self.bump_end[d - 1] };
        &self.bumps[start..self.bump_end[d]]
    }

    /// Adds one draw fitted on scale `t`; `density` is its density on `grid` (original
    /// scale), whose modes are counted and located.
    pub fn push(&mut self, row: &DrawRow, t: Transform, grid: &[f64], density: &[f64]) {
        self.mean.push(mixture_mean_on(row, t));
        self.sd.push(mixture_sd_on(row, t));
        for (q, &p) in self.quantiles.iter_mut().zip(&self.probs) {
            q.push(mixture_quantile_on(row, p, t));
        }
        let exact = DrawDensity::new(row);
        let bumps = draw_bumps(density, grid, |x| exact.at_on(x, t));
        self.modes.push(bumps.len());
        self.bumps.extend(bumps);
        self.bump_end.push(self.bumps.len());
        for (mass, r) in self.region_mass.iter_mut().zip(&self.shape.regions) {
            let m = mixture_cdf_on(row, r.to, t) - mixture_cdf_on(row, r.from, t);
            mass.push(m.max(0.0));
        }
        self.occupied.push(row.occupied as usize);
    }

    /// Appends the draws of `other` (taken at the same probabilities) after these.
    pub fn append(&mut self, other: DrawFeatures) {
        debug_assert_eq!(self.probs, other.probs);
        self.mean.extend(other.mean);
        self.sd.extend(other.sd);
        for (q, o) in self.quantiles.iter_mut().zip(other.quantiles) {
            q.extend(o);
        }
        self.modes.extend(other.modes);
        self.occupied.extend(other.occupied);
        debug_assert_eq!(self.shape, other.shape);
        let offset = self.bumps.len();
        self.bumps.extend(other.bumps);
        self.bump_end
            .extend(other.bump_end.into_iter().map(|e| e + offset));
        for (m, o) in self.region_mass.iter_mut().zip(other.region_mass) {
            m.extend(o);
        }
    }

    /// Number of draws.
    pub fn len(&self) -> usize {
        self.mean.len()
    }

    pub fn is_empty(&self) -> bool {
        self.mean.is_empty()
    }
}

//! The per-draw numbers summary.json summarises over draws: the mean, sd and a few
//! quantiles of each draw's distribution, its number of modes on the grid, and its number
//! of occupied components. Collected one draw at a time (a few numbers a draw), so the
//! summaries can read the draws as a stream.

use super::functionals::{mixture_mean_on, mixture_quantile_on, mixture_sd_on};
use super::modes::count_modes;
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
        }
    }

    /// Adds one draw fitted on scale `t`; `density` is its density on the grid (original
    /// scale), whose modes are counted.
    pub fn push(&mut self, row: &DrawRow, t: Transform, density: &[f64]) {
        self.mean.push(mixture_mean_on(row, t));
        self.sd.push(mixture_sd_on(row, t));
        for (q, &p) in self.quantiles.iter_mut().zip(&self.probs) {
            q.push(mixture_quantile_on(row, p, t));
        }
        self.modes.push(count_modes(density));
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
    }

    /// Number of draws.
    pub fn len(&self) -> usize {
        self.mean.len()
    }

    pub fn is_empty(&self) -> bool {
        self.mean.is_empty()
    }
}

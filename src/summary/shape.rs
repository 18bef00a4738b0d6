//! What the summaries say about the shape of the density beyond its bands: the settings
//! (`[shape]` in the config: regions of interest, the dip ratio that counts as a visible
//! dip, the mass a region must hold) and the summary.json part built from them — the
//! bumps of the posterior with their dips ([`super::bump_match`]) and the regions
//! ([`super::regions`]).

use serde::Serialize;

use super::bump_match::{match_bumps, BumpSummary, DipSummary};
use super::features::DrawFeatures;
use super::regions::{summarise_regions, RegionSummary};

/// An interval of the measurement, on the data scale (ends included).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Region {
    pub from: f64,
    pub to: f64,
}

/// The settings of the shape summaries.
#[derive(Debug, Clone, PartialEq)]
pub struct ShapeSpec {
    pub regions: Vec<Region>,
    /// A dip is visible when the density at its lowest point is below this fraction of the
    /// lower of its two peaks.
    pub dip_ratio: f64,
    /// The mass a region is asked to hold more than.
    pub region_mass: f64,
}

/// Default of `[shape] dip_ratio`.
pub const DEFAULT_DIP_RATIO: f64 = 0.9;
/// Default of `[shape] region_mass`.
pub const DEFAULT_REGION_MASS: f64 = 0.05;

impl Default for ShapeSpec {
    fn default() -> Self {
        ShapeSpec {
            regions: Vec::new(),
            dip_ratio: DEFAULT_DIP_RATIO,
            region_mass: DEFAULT_REGION_MASS,
        }
    }
}

/// The shape part of summary.json.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ShapeSummary {
    /// How the bumps of the draws were found and matched, in words.
    pub bump_rule: String,
    pub bumps: Vec<BumpSummary>,
    pub dips: Vec<DipSummary>,
    pub regions: Vec<RegionSummary>,
}

/// The shape summaries from the draws' features `f`, the posterior mean density `mean` on
/// `grid`, at the credible `levels`.
pub fn shape_summary(f: &DrawFeatures, grid: &[f64], mean: &[f64], levels: &[f64]) -> ShapeSummary {
    let (bumps, dips) = match_bumps(f, grid, mean, levels);
    ShapeSummary {
        bump_rule: BUMP_RULE.into(),
        bumps,
        dips,
        regions: summarise_regions(f, levels),
    }
}

const BUMP_RULE: &str = "each draw's modes on the grid (interior local maxima with prominence at least 1% of the \
draw's highest value), located between grid points by golden-section search; the bumps of the posterior are the \
modes of the posterior mean density (same rule), and each splits the axis at the lowest point of the posterior \
mean between it and its neighbours; a draw has a bump when it has a mode in that bump's stretch (the highest one \
if several); probability is the share of draws that have it, and location, height and prominence are summarised \
over those draws; see docs/model.md";

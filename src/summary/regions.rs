//! Regions of interest (`[shape] regions`): for each interval of the measurement, the
//! posterior probability that the density has a mode in it, and the posterior of the mass
//! it holds, with the probability that the mass exceeds `[shape] region_mass`. The mass of
//! each draw is exact (the draw's CDF at the two ends, see [`super::cdf`]); whether a draw
//! has a mode there uses that draw's bumps ([`super::bumps`]).

use serde::Serialize;

use super::features::DrawFeatures;
use super::functionals::Posterior;
use super::shape::Region;

/// The summary of one region.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RegionSummary {
    pub from: f64,
    pub to: f64,
    /// Share of draws with a mode in [from, to].
    pub probability_mode: f64,
    /// The posterior of the probability mass in [from, to].
    pub mass: Posterior,
    /// The mass asked about (`[shape] region_mass`).
    pub mass_above: f64,
    /// Share of draws whose mass in [from, to] exceeds `mass_above`.
    pub probability_mass_above: f64,
}

/// Whether a draw with bumps at `locations` has a mode in `r`.
pub fn has_mode_in(locations: impl IntoIterator<Item = f64>, r: Region) -> bool {
    locations.into_iter().any(|x| r.from <= x && x <= r.to)
}

/// The summaries of the regions of `f`'s shape settings.
pub fn summarise_regions(f: &DrawFeatures, levels: &[f64]) -> Vec<RegionSummary> {
    let n = f.len().max(1) as f64;
    let shape = &f.shape;
    shape
        .regions
        .iter()
        .zip(&f.region_mass)
        .map(|(&r, mass)| {
            let with_mode = (0..f.len())
                .filter(|&d| has_mode_in(f.bumps_of(d).iter().map(|b| b.location), r))
                .count();
            let above = mass.iter().filter(|&&m| m > shape.region_mass).count();
            RegionSummary {
                from: r.from,
                to: r.to,
                probability_mode: with_mode as f64 / n,
                mass: Posterior::of(mass, levels),
                mass_above: shape.region_mass,
                probability_mass_above: above as f64 / n,
            }
        })
        .collect()
}

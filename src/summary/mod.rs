//! Turning stored draws into answers on a grid and beyond: the mixture density and CDF of
//! each draw, pointwise and simultaneous bands, posterior summaries of quantiles, mean and
//! sd of the distribution, the posterior of the number of modes and of occupied
//! components, and where the bumps are (locations, heights, dips, regions).

mod bands;
mod bump_match;
mod bumps;
mod cdf;
mod density;
mod features;
mod finite_json;
mod functionals;
mod grid;
mod modes;
mod quantile;
mod regions;
mod shape;
mod simultaneous;

pub use bands::{level_label, Bands, BandsBuilder};
pub use bump_match::{assign, match_bumps, BumpSummary, DipSummary};
pub use bumps::{draw_bumps, DrawBump};
pub use cdf::{cdf_draws, mixture_cdf, mixture_cdf_on, std_normal_cdf};
pub use density::{mixture_density, mixture_density_on, DensityDraws, DrawDensity};
pub use features::DrawFeatures;
pub use finite_json::{number_or_words, NOT_FINITE};
pub use functionals::{
    mixture_mean, mixture_mean_on, mixture_quantile, mixture_quantile_on, mixture_sd,
    mixture_sd_on, Interval, Posterior,
};
pub use grid::linspace;
pub use modes::{
    count_modes, distribution, peaks, CountProbability, GridPeak, MIN_RELATIVE_PROMINENCE,
};
pub use quantile::quantile_sorted;
pub use regions::{has_mode_in, summarise_regions, RegionSummary};
pub use shape::{
    shape_summary, Region, ShapeSpec, ShapeSummary, DEFAULT_DIP_RATIO, DEFAULT_REGION_MASS,
};
pub use simultaneous::{
    critical_value, fold_max_deviation, max_standardised_deviation, simultaneous_bands,
    simultaneous_from_max, SimultaneousBand,
};

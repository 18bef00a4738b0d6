//! Turning stored draws into densities on a grid: the mixture density of each draw, and
//! pointwise summaries over draws (posterior mean, median, credible bands).

mod bands;
mod density;
mod grid;
mod quantile;

pub use bands::{level_label, Bands};
pub use density::{mixture_density, DensityDraws};
pub use grid::linspace;
pub use quantile::quantile_sorted;

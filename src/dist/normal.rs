//! Normal draws and the log density of the normal distribution.

use rand::Rng;
use rand_distr::{Distribution, StandardNormal};

/// ln √(2π).
pub const LN_SQRT_2PI: f64 = 0.918_938_533_204_672_8;

/// A standard normal draw (ziggurat method of rand_distr).
pub fn std_normal<R: Rng + ?Sized>(rng: &mut R) -> f64 {
    StandardNormal.sample(rng)
}

/// A N(mean, sd²) draw.
pub fn normal<R: Rng + ?Sized>(mean: f64, sd: f64, rng: &mut R) -> f64 {
    mean + sd * std_normal(rng)
}

/// ln N(x; mean, sd²).
pub fn ln_normal_pdf(x: f64, mean: f64, sd: f64) -> f64 {
    let z = (x - mean) / sd;
    -0.5 * z * z - sd.ln() - LN_SQRT_2PI
}

//! The cumulative distribution function of each stored draw on a grid. For a normal
//! mixture it is exact: F(x) = Σ_k w_k Φ((x − μ_k)/σ_k), with Φ from the complementary
//! error function, Φ(z) = ½ erfc(−z/√2), accurate in both tails.

use statrs::function::erf::erfc;

use super::density::DensityDraws;
use crate::data::Transform;
use crate::store::{DrawRow, RunDraws};

/// Φ(z), the standard normal CDF.
pub fn std_normal_cdf(z: f64) -> f64 {
    0.5 * erfc(-z * std::f64::consts::FRAC_1_SQRT_2)
}

/// F(x) = Σ_k w_k Φ((x − μ_k)/σ_k) for one draw (on the fitted scale).
pub fn mixture_cdf(row: &DrawRow, x: f64) -> f64 {
    let mut f = 0.0;
    for j in 0..row.weight.len() {
        f += row.weight[j] * std_normal_cdf((x - row.mean[j]) / row.sd[j]);
    }
    f.clamp(0.0, 1.0)
}

/// The CDF of the original-scale variable at `x` for a draw fitted on scale `t`
/// (t is increasing, so F_X(x) = F_Y(t(x)); 0 below the support and 1 above it).
pub fn mixture_cdf_on(row: &DrawRow, x: f64, t: Transform) -> f64 {
    if let Some(f) = t.cdf_outside(x) {
        return f;
    }
    mixture_cdf(row, t.forward(x))
}

/// The CDF of every draw of `run` (cut to the shortest chain) on `grid`, in the same
/// layout as the densities, so the pointwise and simultaneous band code applies as is.
pub fn cdf_draws(run: &RunDraws, grid: &[f64], t: Transform) -> DensityDraws {
    DensityDraws::from_fn(run, grid, |row, x| mixture_cdf_on(row, x, t))
}

#[cfg(test)]
mod tests {
    use super::*;
    use statrs::distribution::{ContinuousCDF, Normal};

    #[test]
    fn one_component_matches_statrs_normal_cdf() {
        // K = 1: F is the N(μ, σ²) CDF (statrs Normal::cdf as the reference).
        let row = DrawRow {
            iteration: 1,
            loglik: 0.0,
            occupied: 1,
            concentration: 1.0,
            weight: vec![1.0],
            mean: vec![3.0],
            sd: vec![0.7],
        };
        let n = Normal::new(3.0, 0.7).unwrap();
        for x in [-2.0, 1.0, 2.9, 3.0, 3.5, 6.0, 9.0] {
            let (a, b) = (mixture_cdf(&row, x), n.cdf(x));
            assert!((a - b).abs() < 1e-14, "x = {x}: {a} vs {b}");
        }
        // Far lower tail keeps relative accuracy (Φ(−10) = 7.6198530241605e-24, statrs).
        let far = mixture_cdf(&row, 3.0 - 7.0);
        assert!((far / n.cdf(-4.0) - 1.0).abs() < 1e-10);
    }

    #[test]
    fn two_components_weight_the_component_cdfs() {
        let row = DrawRow {
            iteration: 1,
            loglik: 0.0,
            occupied: 2,
            concentration: 1.0,
            weight: vec![0.3, 0.7],
            mean: vec![0.0, 5.0],
            sd: vec![1.0, 2.0],
        };
        let (a, b) = (
            Normal::new(0.0, 1.0).unwrap(),
            Normal::new(5.0, 2.0).unwrap(),
        );
        for x in [-1.0, 2.0, 5.0, 8.0] {
            let want = 0.3 * a.cdf(x) + 0.7 * b.cdf(x);
            assert!((mixture_cdf(&row, x) - want).abs() < 1e-14);
        }
    }
}

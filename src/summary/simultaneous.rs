//! Simultaneous credible bands over a grid from posterior draws.
//!
//! For draws f_d(x_g), d = 1..S, with pointwise posterior mean m_g and standard deviation
//! s_g, the band at level L is m_g ± c_L·s_g where c_L is the smallest constant such that
//! at least a fraction L of the draws lie inside the band at every grid point at once:
//! c_L is the ⌈L·S⌉-th smallest of M_d = max_g |f_d(x_g) − m_g| / s_g.
//!
//! Source: the MCMC form of the simultaneous band of Ruppert, Wand & Carroll (2003),
//! *Semiparametric Regression*, §6.5, as used for Bayesian penalised splines by
//! Crainiceanu, Ruppert, Carroll, Joshi & Goodner (2007), J. Comput. Graph. Stat. 16,
//! 265–288 (both cited from memory). Grid points where every draw agrees (s_g = 0) do not
//! constrain c. The band is reported clipped to the range the curve can take (a density
//! is never negative); clipping never removes a draw from the band.

/// The simultaneous band at one level.
#[derive(Debug, Clone, PartialEq)]
pub struct SimultaneousBand {
    pub level: f64,
    /// The multiplier c_L of the pointwise posterior sd.
    pub c: f64,
    pub lower: Vec<f64>,
    pub upper: Vec<f64>,
}

/// Per-draw curves laid out as `values[d * grid + g]`; `mean` and `sd` per grid point.
pub fn max_standardised_deviation(
    values: &[f64],
    grid: usize,
    mean: &[f64],
    sd: &[f64],
) -> Vec<f64> {
    values
        .chunks_exact(grid)
        .map(|row| {
            row.iter()
                .zip(mean.iter().zip(sd))
                .filter(|(_, (_, &s))| s > 0.0)
                .map(|(&v, (&m, &s))| (v - m).abs() / s)
                .fold(0.0, f64::max)
        })
        .collect()
}

/// The smallest c with at least `level`·S of `m` (the per-draw maximal deviations) ≤ c.
pub fn critical_value(m: &[f64], level: f64) -> f64 {
    let mut v = m.to_vec();
    v.sort_by(f64::total_cmp);
    let s = v.len();
    // A small allowance keeps 0.95 · 1000 = 950 from rounding up to 951.
    let need = ((level * s as f64) - 1e-9).ceil().max(1.0) as usize;
    v[need.min(s) - 1]
}

/// Simultaneous bands at each level, clipped to [lo, hi].
pub fn simultaneous_bands(
    values: &[f64],
    grid: usize,
    mean: &[f64],
    sd: &[f64],
    levels: &[f64],
    lo: f64,
    hi: f64,
) -> Vec<SimultaneousBand> {
    let m = max_standardised_deviation(values, grid, mean, sd);
    simultaneous_from_max(&m, mean, sd, levels, lo, hi)
}

/// Folds the deviations of one grid point (`values` over every draw, pointwise `mean` and
/// `sd`) into each draw's running maximum `max_dev`; after every point of the grid it holds
/// [`max_standardised_deviation`] (a maximum does not depend on the order it is taken in).
pub fn fold_max_deviation(max_dev: &mut [f64], values: &[f64], mean: f64, sd: f64) {
    if sd > 0.0 {
        for (m, &v) in max_dev.iter_mut().zip(values) {
            *m = m.max((v - mean).abs() / sd);
        }
    }
}

/// Simultaneous bands at each level from each draw's maximal standardised deviation `m`.
pub fn simultaneous_from_max(
    m: &[f64],
    mean: &[f64],
    sd: &[f64],
    levels: &[f64],
    lo: f64,
    hi: f64,
) -> Vec<SimultaneousBand> {
    levels
        .iter()
        .map(|&level| {
            let c = critical_value(m, level);
            SimultaneousBand {
                level,
                c,
                lower: mean
                    .iter()
                    .zip(sd)
                    .map(|(&a, &s)| (a - c * s).clamp(lo, hi))
                    .collect(),
                upper: mean
                    .iter()
                    .zip(sd)
                    .map(|(&a, &s)| (a + c * s).clamp(lo, hi))
                    .collect(),
            }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::SeedableRng;
    use statrs::distribution::{ContinuousCDF, Normal};

    fn mean_sd(values: &[f64], g: usize) -> (Vec<f64>, Vec<f64>) {
        let s = values.len() / g;
        let mean: Vec<f64> = (0..g)
            .map(|j| (0..s).map(|d| values[d * g + j]).sum::<f64>() / s as f64)
            .collect();
        let sd = (0..g)
            .map(|j| {
                let ss: f64 = (0..s).map(|d| (values[d * g + j] - mean[j]).powi(2)).sum();
                (ss / (s - 1) as f64).sqrt()
            })
            .collect();
        (mean, sd)
    }

    #[test]
    fn common_scalar_shift_gives_the_normal_quantile() {
        // Draws f_d = m + Z_d·s with one scalar Z_d per draw: every draw's maximal deviation
        // is |Z_d − Z̄|/sd(Z), so c_L is the L-quantile of |Z| — for Z standard normal,
        // Φ⁻¹((1 + L)/2) (1.95996 for L = 0.95; statrs Normal inverse CDF). Z_d are the
        // normal scores Φ⁻¹((d − ½)/S), symmetric and with sd close to 1.
        let s = 4000;
        let nrm = Normal::new(0.0, 1.0).unwrap();
        let z: Vec<f64> = (1..=s)
            .map(|d| nrm.inverse_cdf((d as f64 - 0.5) / s as f64))
            .collect();
        let m0 = [0.1, 0.5, 0.3, 0.05, 0.0];
        let s0 = [0.01, 0.2, 0.03, 0.01, 0.0];
        let values: Vec<f64> = z
            .iter()
            .flat_map(|&zd| m0.iter().zip(&s0).map(move |(&m, &sd)| m + zd * sd))
            .collect();
        let (mean, sd) = mean_sd(&values, 5);
        for level in [0.5, 0.9, 0.95] {
            let c = critical_value(&max_standardised_deviation(&values, 5, &mean, &sd), level);
            let want = nrm.inverse_cdf(0.5 * (1.0 + level));
            assert!(
                (c - want).abs() < 5e-3,
                "level {level}: c = {c}, normal quantile {want}"
            );
        }
    }

    #[test]
    fn band_holds_at_least_the_level_of_draws_jointly_and_c_is_smallest() {
        // Coverage by construction (common practice, no source): count draws inside the band
        // at every grid point; a slightly smaller c must hold fewer than L·S.
        use rand::Rng;
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(7);
        let (s, g) = (1000, 30);
        let values: Vec<f64> = (0..s * g)
            .map(|i| 1.0 + (i % g) as f64 * 0.1 + rng.random::<f64>())
            .collect();
        // The true mean and sd of the noise (U(0,1): ½ and 1/√12), so the known answer
        // below is exact up to Monte Carlo error of one order statistic.
        let mean: Vec<f64> = (0..g).map(|j| 1.5 + j as f64 * 0.1).collect();
        let sd = vec![1.0 / 12f64.sqrt(); g];
        for b in simultaneous_bands(
            &values,
            g,
            &mean,
            &sd,
            &[0.5, 0.9, 0.95],
            0.0,
            f64::INFINITY,
        ) {
            let inside = |c: f64| {
                values
                    .chunks_exact(g)
                    .filter(|r| (0..g).all(|j| (r[j] - mean[j]).abs() <= c * sd[j] * (1.0 + 1e-12)))
                    .count()
            };
            assert!(
                inside(b.c) as f64 >= b.level * s as f64,
                "level {}",
                b.level
            );
            assert!(
                (inside(b.c * (1.0 - 1e-9)) as f64) < b.level * s as f64,
                "level {}",
                b.level
            );
            // Independent U(0,1) noise at g points: |U − ½|/sd ≤ √3, and P(all g inside c) =
            // (c/√3)^g, so c_L ≈ √3·L^(1/g) (order statistics of the uniform, common practice,
            // no source); the tolerance is many times the order statistic's sampling sd.
            let want = 3f64.sqrt() * b.level.powf(1.0 / g as f64);
            assert!(
                (b.c - want).abs() < 0.01,
                "level {}: c = {}, expected ≈ {want}",
                b.level,
                b.c
            );
        }
    }
}

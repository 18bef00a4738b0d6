//! Simultaneous confidence bands for the ECDF of a sample that should be uniform on (0, 1)
//! (the LOO-PIT values), by the simulation method of Säilynoja, Bürkner & Vehtari (2022),
//! "Graphical test for discrete uniformity and its applications in goodness-of-fit
//! evaluation and multiple sample comparison", Statistics and Computing 32:32, §2.2
//! (section number from memory).
//!
//! With N values and evaluation points z_1 < … < z_K, the count N·F̂(z_k) of a uniform
//! sample is Binomial(N, z_k) at each point. For each of M simulated uniform samples take
//! γ_m = 2 · min_k min{P(B_k ≤ c_k), P(B_k ≥ c_k)}, B_k ~ Binomial(N, z_k), c_k the
//! simulated count: the smallest two-sided pointwise tail probability along the curve.
//! The pointwise level γ is the (1 − level)-quantile of the γ_m, and the band at z_k runs
//! from the γ/2 to the 1 − γ/2 quantile of Binomial(N, z_k), divided by N; a uniform
//! sample's ECDF then stays inside the whole band with probability `level`. The same γ
//! computed from the observed ECDF gives a p-value: the share of simulated γ_m at or below
//! it. ArviZ implements the same rule (`_simulate_simultaneous_ecdf_band_probability`);
//! tests/check_loo_pit.rs compares these bands with ArviZ's exact "optimized" ones.
//!
//! A simulated sample's counts at the K points are drawn as a multinomial (a chain of
//! conditional binomials), which has the same distribution as sorting N uniforms but costs
//! O(K), so the bands stay cheap for any N.

use std::collections::HashMap;

use rand::Rng;
use rand_distr::{Binomial as BinomialDraw, Distribution};
use serde::{Deserialize, Serialize};
use statrs::distribution::{Binomial, DiscreteCDF};

/// A simultaneous band for the ECDF of a uniform sample of `n`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct EcdfBand {
    pub level: f64,
    pub n: usize,
    pub simulations: usize,
    /// The pointwise tail probability γ that gives simultaneous coverage `level`.
    pub gamma: f64,
    pub z: Vec<f64>,
    pub lower: Vec<f64>,
    pub upper: Vec<f64>,
    /// Every simulated γ_m, ascending (for the p-value of an observed ECDF).
    #[serde(skip)]
    pub simulated: Vec<f64>,
}

/// Evaluation points 0, 1/K, …, 1.
pub fn eval_points(k: usize) -> Vec<f64> {
    (0..=k).map(|i| i as f64 / k as f64).collect()
}

/// Smallest c with P(Binomial(n, p) ≤ c) ≥ q (scipy's `binom.ppf`).
pub fn binom_quantile(n: u64, p: f64, q: f64) -> u64 {
    if p <= 0.0 {
        return 0;
    }
    if p >= 1.0 {
        return n;
    }
    let d = match Binomial::new(p, n) {
        Ok(d) => d,
        Err(_) => return 0,
    };
    let (mut lo, mut hi) = (0u64, n);
    while lo < hi {
        let mid = lo + (hi - lo) / 2;
        if d.cdf(mid) >= q {
            hi = mid;
        } else {
            lo = mid + 1;
        }
    }
    lo
}

/// γ of counts `c` (c_k = N·F̂(z_k)) against Binomial(n, z_k); points at 0 and 1 carry no
/// information and are skipped.
pub fn gamma_of(counts: &[u64], n: u64, z: &[f64]) -> f64 {
    gamma_cached(counts, n, z, &mut HashMap::new())
}

/// [`gamma_of`] with the tail probabilities of each (point, count) kept in `cache`: the
/// simulated counts at a point repeat a few dozen values, so the band's simulation computes
/// each tail once (the values are the same numbers either way).
fn gamma_cached(counts: &[u64], n: u64, z: &[f64], cache: &mut HashMap<(usize, u64), f64>) -> f64 {
    let mut tail: f64 = 1.0;
    for (k, (&c, &p)) in counts.iter().zip(z).enumerate() {
        if p <= 0.0 || p >= 1.0 {
            continue;
        }
        let t = *cache
            .entry((k, c))
            .or_insert_with(|| match Binomial::new(p, n) {
                Ok(d) => {
                    let below = d.cdf(c);
                    let above = if c == 0 { 1.0 } else { d.sf(c - 1) };
                    below.min(above)
                }
                Err(_) => 1.0,
            });
        tail = tail.min(t);
    }
    (2.0 * tail).min(1.0)
}

/// The band for `n` values at points `z` (ascending, from 0 to 1) by `sims` simulations.
pub fn simulated_band<R: Rng>(
    n: usize,
    z: &[f64],
    level: f64,
    sims: usize,
    rng: &mut R,
) -> EcdfBand {
    let nn = n as u64;
    let mut cache = HashMap::new();
    let mut gammas: Vec<f64> = (0..sims)
        .map(|_| {
            let mut left = nn;
            let mut mass_left = 1.0;
            let mut cum = 0u64;
            let mut prev = 0.0;
            let counts: Vec<u64> = z
                .iter()
                .map(|&p| {
                    let width = (p - prev).max(0.0);
                    prev = p;
                    if left > 0 && width > 0.0 && mass_left > 0.0 {
                        let q = (width / mass_left).min(1.0);
                        let got = BinomialDraw::new(left, q).map_or(0, |b| b.sample(rng));
                        left -= got;
                        cum += got;
                    }
                    mass_left -= width;
                    cum
                })
                .collect();
            gamma_cached(&counts, nn, z, &mut cache)
        })
        .collect();
    gammas.sort_by(f64::total_cmp);
    let gamma = crate::summary::quantile_sorted(&gammas, 1.0 - level);
    let (lower, upper) = z
        .iter()
        .map(|&p| {
            (
                binom_quantile(nn, p, gamma / 2.0) as f64 / n as f64,
                binom_quantile(nn, p, 1.0 - gamma / 2.0) as f64 / n as f64,
            )
        })
        .unzip();
    EcdfBand {
        level,
        n,
        simulations: sims,
        gamma,
        z: z.to_vec(),
        lower,
        upper,
        simulated: gammas,
    }
}

/// Counts N·F̂(z_k) of values `v` with integer weights `w` (the number of values ≤ z_k).
pub fn ecdf_counts(v: &[f64], w: &[u64], z: &[f64]) -> Vec<u64> {
    let mut idx: Vec<usize> = (0..v.len()).collect();
    idx.sort_by(|&a, &b| v[a].total_cmp(&v[b]));
    let mut out = Vec::with_capacity(z.len());
    let (mut j, mut c) = (0, 0u64);
    for &p in z {
        while j < idx.len() && v[idx[j]] <= p {
            c += w[idx[j]];
            j += 1;
        }
        out.push(c);
    }
    out
}

impl EcdfBand {
    /// Share of simulated uniform samples whose γ is at most `gamma_obs`: the p-value of
    /// the observed ECDF for the hypothesis of uniformity.
    pub fn p_value(&self, gamma_obs: f64) -> f64 {
        let at_most = self.simulated.partition_point(|&g| g <= gamma_obs);
        at_most as f64 / self.simulated.len().max(1) as f64
    }

    /// Whether the ECDF `f` (at the band's points) stays inside the band everywhere.
    pub fn contains(&self, f: &[f64]) -> bool {
        f.iter()
            .zip(self.lower.iter().zip(&self.upper))
            .all(|(&v, (&lo, &hi))| v >= lo - 1e-12 && v <= hi + 1e-12)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sampler::rng::check_rng;

    #[test]
    fn binom_quantile_matches_the_cdf_definition() {
        // Binomial(10, 0.5): P(≤ 2) = 56/1024 = 0.0547, P(≤ 1) = 11/1024 (exact sums).
        assert_eq!(binom_quantile(10, 0.5, 0.05), 2);
        assert_eq!(binom_quantile(10, 0.5, 0.01), 1);
        assert_eq!(binom_quantile(10, 0.5, 0.0107), 1);
        assert_eq!(binom_quantile(10, 0.5, 0.011), 2);
    }

    #[test]
    fn coverage_of_uniform_samples_is_the_level() {
        // The band's defining property (Säilynoja et al. 2022): the ECDF of a uniform sample
        // stays inside it with probability `level`. 400 fresh samples of 60 uniforms;
        // binomial sd of the coverage √(0.95·0.05/400) ≈ 0.011, 4 sd allowed.
        let z = eval_points(50);
        let band = simulated_band(60, &z, 0.95, 2000, &mut check_rng(5, 1));
        let mut rng = check_rng(5, 2);
        let inside = (0..400)
            .filter(|_| {
                let u: Vec<f64> = (0..60).map(|_| rng.random::<f64>()).collect();
                let c = ecdf_counts(&u, &[1; 60], &z);
                band.contains(&c.iter().map(|&x| x as f64 / 60.0).collect::<Vec<_>>())
            })
            .count() as f64
            / 400.0;
        assert!((inside - 0.95).abs() < 0.045, "coverage {inside}");
    }
}

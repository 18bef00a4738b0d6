//! The Marron & Wand (1992) benchmark densities (Annals of Statistics 20(2), 712–736,
//! Table 1; weights, means and sds recalled from memory and checked against
//! tests/reference/fixtures/marron_wand.json): density and sampling.

use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, StandardNormal};

/// (weight, mean, sd) of each component (Marron & Wand 1992, Table 1, from memory).
pub fn marron_wand(name: &str) -> Vec<(f64, f64, f64)> {
    match name {
        "1_gaussian" => vec![(1.0, 0.0, 1.0)],
        "2_skewed_unimodal" => vec![
            (0.2, 0.0, 1.0),
            (0.2, 0.5, 2.0 / 3.0),
            (0.6, 13.0 / 12.0, 5.0 / 9.0),
        ],
        "4_kurtotic_unimodal" => vec![(2.0 / 3.0, 0.0, 1.0), (1.0 / 3.0, 0.0, 0.1)],
        "6_bimodal" => vec![(0.5, -1.0, 2.0 / 3.0), (0.5, 1.0, 2.0 / 3.0)],
        "14_smooth_comb" => (0..6)
            .map(|l| {
                let p = 0.5f64.powi(l);
                (
                    2f64.powi(5 - l) / 63.0,
                    (65.0 - 96.0 * p) / 21.0,
                    (32.0 / 63.0) * p,
                )
            })
            .collect(),
        _ => panic!("unknown density {name}"),
    }
}

pub const NAMES: [&str; 5] = [
    "1_gaussian",
    "2_skewed_unimodal",
    "4_kurtotic_unimodal",
    "6_bimodal",
    "14_smooth_comb",
];

pub fn true_density(comps: &[(f64, f64, f64)], x: f64) -> f64 {
    comps
        .iter()
        .map(|&(w, m, s)| {
            w * (-0.5 * ((x - m) / s).powi(2)).exp() / (s * (2.0 * std::f64::consts::PI).sqrt())
        })
        .sum()
}

pub fn sample(comps: &[(f64, f64, f64)], n: usize, seed: u64) -> Vec<f64> {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    (0..n)
        .map(|_| {
            let u: f64 = rand::Rng::random(&mut rng);
            let mut acc = 0.0;
            let mut pick = comps.len() - 1;
            for (j, c) in comps.iter().enumerate() {
                acc += c.0;
                if u < acc {
                    pick = j;
                    break;
                }
            }
            let z: f64 = StandardNormal.sample(&mut rng);
            comps[pick].1 + comps[pick].2 * z
        })
        .collect()
}

//! Benchmark densities shared by the bench targets: normal mixtures of Marron & Wand
//! (1992, "Exact mean integrated squared error", Ann. Statist. 20:712–736, Table 1;
//! parameters written from memory) and the generator of the invented demo sample, and
//! samples drawn from them with a fixed seed.

// Each bench target uses part of this file.
#![allow(dead_code)]

use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;

/// A normal mixture: (weight, mean, sd) per component.
pub struct Density {
    pub name: &'static str,
    pub parts: Vec<(f64, f64, f64)>,
}

pub fn densities() -> Vec<Density> {
    let comb = (0..6)
        .map(|l| {
            let l = l as f64;
            (
                2f64.powf(5.0 - l) / 63.0,
                (65.0 - 96.0 * 0.5f64.powf(l)) / 21.0,
                (32.0 / 63.0) / 2f64.powf(l),
            )
        })
        .collect();
    vec![
        Density {
            name: "MW2 skewed",
            parts: vec![
                (0.2, 0.0, 1.0),
                (0.2, 0.5, 2.0 / 3.0),
                (0.6, 13.0 / 12.0, 5.0 / 9.0),
            ],
        },
        Density {
            name: "MW6 bimodal",
            parts: vec![(0.5, -1.0, 2.0 / 3.0), (0.5, 1.0, 2.0 / 3.0)],
        },
        Density {
            name: "MW8 asym bimodal",
            parts: vec![(0.75, 0.0, 1.0), (0.25, 1.5, 1.0 / 3.0)],
        },
        Density {
            name: "MW14 smooth comb",
            parts: comb,
        },
    ]
}

/// The generator of the invented demo sample (demo-data/generate.py): four groups of
/// wing lengths in mm, recorded to 0.1 mm.
pub fn demo_density() -> Density {
    Density {
        name: "demo generator",
        parts: vec![
            (0.45, 63.0, 0.9),
            (0.30, 66.2, 1.1),
            (0.17, 68.4, 1.0),
            (0.08, 72.5, 1.6),
        ],
    }
}

/// `n` draws from `d` as a one-column CSV ("value"), full precision.
pub fn sample_csv(d: &Density, n: usize, seed: u64) -> Vec<u8> {
    sample_csv_with(d, n, seed, None)
}

/// [`sample_csv`] with the values written to `decimals` decimal places when given (the
/// demo's values are recorded to 0.1 mm).
pub fn sample_csv_with(d: &Density, n: usize, seed: u64, decimals: Option<usize>) -> Vec<u8> {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let mut out = String::from("value\n");
    for _ in 0..n {
        let u: f64 = rand::Rng::random(&mut rng);
        let mut acc = 0.0;
        let mut pick = d.parts.len() - 1;
        for (j, p) in d.parts.iter().enumerate() {
            acc += p.0;
            if u < acc {
                pick = j;
                break;
            }
        }
        let (_, m, s) = d.parts[pick];
        let v = mixband::dist::normal(m, s, &mut rng);
        match decimals {
            Some(k) => out.push_str(&format!("{v:.k$}\n")),
            None => out.push_str(&format!("{v}\n")),
        }
    }
    out.into_bytes()
}

//! Unit tests of the lattice and heaping detector on samples simulated with a fixed seed.
//! The expected steps and shares are exact facts of how each sample was made (rounded to a
//! known step, a known share heaped); the thresholds are common practice, no source.

use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal};

use super::*;

fn normal(n: usize, mean: f64, sd: f64, seed: u64) -> Vec<f64> {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let d = Normal::new(mean, sd).unwrap();
    (0..n).map(|_| d.sample(&mut rng)).collect()
}

/// Rounded to `step` as a file would hold it: printed with `decimals` and read back.
fn printed(x: &[f64], step: f64, decimals: usize) -> Vec<f64> {
    x.iter()
        .map(|v| {
            format!("{:.decimals$}", (v / step).round() * step)
                .parse()
                .unwrap()
        })
        .collect()
}

/// Rounded to `step` by arithmetic only, with its floating-point noise (0.1 · 3 is
/// 0.30000000000000004).
fn multiplied(x: &[f64], step: f64) -> Vec<f64> {
    x.iter().map(|v| (v / step).round() * step).collect()
}

fn lattice_of(x: &[f64]) -> Lattice {
    Recording::detect(x, None, None)
        .lattice
        .expect("a lattice was expected")
}

fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-12 * b.abs().max(1e-300)
}

#[test]
fn decimal_rounded_samples_are_found_at_their_step() {
    // Exact: each sample was rounded to the step named (common practice, no source, for
    // the thresholds it must pass).
    for (step, decimals, mean, sd) in [
        (0.1, 1, 50.0, 3.0),
        (0.25, 2, 10.0, 2.0),
        (1.0, 0, 100.0, 15.0),
        (5.0, 0, 200.0, 40.0),
    ] {
        let x = normal(2000, mean, sd, 7);
        for values in [printed(&x, step, decimals), multiplied(&x, step)] {
            let r = Recording::detect(&values, None, None);
            let l = r.lattice.as_ref().expect("lattice");
            assert!(close(l.step, step), "step {} for {step}", l.step);
            assert_eq!(l.offset, 0.0);
            assert_eq!(l.share, 1.0);
            assert!(
                r.heaping.is_none(),
                "no heaping in a plainly rounded sample"
            );
            assert_eq!(r.n, 2000);
        }
    }
}

#[test]
fn continuous_samples_are_not_flagged() {
    // Normal samples at full precision and printed to 6 and 7 significant digits: they lie
    // on a fine decimal lattice but hardly tie (common practice, no source).
    for (mean, sd) in [(0.0, 1.0), (50.0, 3.0), (-1e4, 250.0), (3e-6, 1e-7)] {
        let x = normal(5000, mean, sd, 11);
        let six: Vec<f64> = x
            .iter()
            .map(|v| format!("{v:.5e}").parse().unwrap())
            .collect();
        let seven: Vec<f64> = x
            .iter()
            .map(|v| format!("{v:.6e}").parse().unwrap())
            .collect();
        for values in [&x, &six, &seven] {
            let r = Recording::detect(values, None, None);
            assert_eq!(r.lattice, None, "mean {mean}: {r:?}");
            assert_eq!(r.heaping, None, "mean {mean}: {r:?}");
            assert!(r.notes().is_empty());
        }
    }
}

#[test]
fn a_million_values_printed_to_six_digits_are_not_flagged() {
    // They tie (a third of them lie in [1, 4) on steps of 1e-5), but the lattice is a
    // millionth of the sd (common practice, no source).
    let x = normal(1_000_000, 0.0, 1.0, 12);
    let six: Vec<f64> = x
        .iter()
        .map(|v| format!("{v:.5e}").parse().unwrap())
        .collect();
    let r = Recording::detect(&six, None, None);
    assert_eq!((r.lattice, r.heaping), (None, None));
}

#[test]
fn extreme_values_give_no_lattice_and_no_panic() {
    for x in [
        vec![1e308, -1e308, 1e308],
        vec![5e-324, 0.0, 5e-324],
        vec![f64::MAX, f64::MAX, 0.0],
    ] {
        assert_eq!(Recording::detect(&x, None, None).lattice, None, "{x:?}");
    }
}

#[test]
fn few_ties_mean_no_lattice_note_even_on_a_lattice() {
    // 60 values to 0.01 over a spread of about 100: on a lattice, but almost no ties, so the
    // resolution does not matter to the fit (common practice, no source).
    let values = printed(&normal(60, 0.0, 30.0, 3), 0.01, 2);
    let r = Recording::detect(&values, None, None);
    assert!(r.distinct as f64 > 0.8 * 60.0);
    assert_eq!(r.lattice, None);
}

#[test]
fn heaping_on_whole_units_is_found_with_its_share() {
    // 25% of the values rounded to whole units, the rest to 0.1: whole units then hold
    // 25% + 75%·(1/10) = 32.5% of the values in expectation, against 7.5% from their
    // neighbours (exact arithmetic of how the sample was made).
    let x = normal(5000, 50.0, 5.0, 21);
    let mut rng = ChaCha8Rng::seed_from_u64(22);
    let values: Vec<f64> = x
        .iter()
        .map(|&v| {
            let whole = rand::Rng::random::<f64>(&mut rng) < 0.25;
            let s = if whole { 1.0 } else { 0.1 };
            format!("{:.1}", (v / s).round() * s).parse().unwrap()
        })
        .collect();
    let r = Recording::detect(&values, None, None);
    let l = r.lattice.as_ref().expect("lattice");
    assert!(close(l.step, 0.1), "recorded to 0.1, step {}", l.step);
    let h = r.heaping.as_ref().expect("heaping");
    assert_eq!((h.step, h.within), (1.0, 0.1));
    assert!((0.30..0.35).contains(&h.share), "share {}", h.share);
    assert!(
        (0.06..0.09).contains(&h.expected_share),
        "{}",
        h.expected_share
    );
    let note = r.heaping_note().unwrap();
    assert!(note.contains("multiples of 1, ") && note.contains("on the 0.1 lattice"));
    // Heaping is reported with a resolution set too; the lattice then matches it.
    let set = Recording::detect(&values, None, Some(0.1));
    assert!(set.heaping.is_some() && set.lattice_note().is_none());
}

#[test]
fn heaping_on_fives_among_whole_years() {
    // Ages in whole years, 30% rounded to a multiple of 5: multiples of 5 hold
    // 30% + 70%·(1/5) = 44% in expectation (exact arithmetic of the construction).
    let x = normal(4000, 40.0, 12.0, 31);
    let mut rng = ChaCha8Rng::seed_from_u64(32);
    let values: Vec<f64> = x
        .iter()
        .map(|&v| {
            let s = if rand::Rng::random::<f64>(&mut rng) < 0.3 {
                5.0
            } else {
                1.0
            };
            (v / s).round() * s
        })
        .collect();
    let r = Recording::detect(&values, None, None);
    assert!(close(r.lattice.as_ref().unwrap().step, 1.0));
    let h = r.heaping.expect("heaping");
    assert_eq!((h.step, h.within), (5.0, 1.0));
    assert!((0.41..0.47).contains(&h.share), "share {}", h.share);
}

#[test]
fn integer_valued_data_and_binary_data() {
    // Counts 0..=12 and a 0/1 variable with 95% zeros: both on the lattice of step 1 (the
    // 5% of ones do not make it a lattice of step 2: they are half the distinct values).
    let mut rng = ChaCha8Rng::seed_from_u64(41);
    let counts: Vec<f64> = (0..500)
        .map(|_| {
            (0..12)
                .filter(|_| rand::Rng::random::<f64>(&mut rng) < 0.4)
                .count() as f64
        })
        .collect();
    assert_eq!(lattice_of(&counts).step, 1.0);
    let binary: Vec<f64> = (0..200)
        .map(|i| if i % 20 == 0 { 1.0 } else { 0.0 })
        .collect();
    let l = lattice_of(&binary);
    assert_eq!((l.step, l.offset, l.share), (1.0, 0.0, 1.0));
}

#[test]
fn negative_values_and_offset_lattices() {
    let neg = printed(&normal(1000, -20.0, 3.0, 51), 0.1, 1);
    let l = lattice_of(&neg);
    assert!(close(l.step, 0.1) && l.offset == 0.0);
    // Half-unit steps through 0.25: step 0.5, offset 0.25, negative values included.
    let x = normal(1000, 0.0, 2.0, 52);
    let off: Vec<f64> = x
        .iter()
        .map(|v| ((v - 0.25) / 0.5).round() * 0.5 + 0.25)
        .collect();
    let l = lattice_of(&off);
    assert_eq!((l.step, l.offset), (0.5, 0.25));
    assert!(Recording::detect(&off, None, None)
        .lattice_note()
        .unwrap()
        .contains("offset by 0.25"));
}

#[test]
fn huge_and_small_scales() {
    let big = multiplied(&normal(1000, 1e9, 1e5, 61), 1000.0);
    assert!(close(lattice_of(&big).step, 1000.0));
    let small = printed(&normal(1000, 3e-6, 1e-8, 62), 1e-10, 13);
    assert!(
        close(lattice_of(&small).step, 1e-10),
        "{:?}",
        lattice_of(&small)
    );
}

#[test]
fn a_step_that_is_not_a_round_multiple_comes_from_the_gcd() {
    let x = printed(&normal(1000, 20.0, 3.0, 71), 0.3, 1);
    assert!(close(lattice_of(&x).step, 0.3));
}

#[test]
fn a_few_mistyped_values_do_not_hide_the_lattice() {
    let mut x = printed(&normal(2000, 50.0, 3.0, 81), 0.1, 1);
    for v in x.iter_mut().step_by(100) {
        *v += 0.03; // 20 values with a second decimal
    }
    let l = lattice_of(&x);
    assert!(close(l.step, 0.1));
    assert!((l.share - 0.99).abs() < 1e-12, "share {}", l.share);
}

#[test]
fn frequency_weights_count_as_rows() {
    let rows = [1.0, 1.5, 1.5, 2.0, 2.0, 2.0, 2.5, 3.0, 3.0, 1.0];
    let a = Recording::detect(&rows, None, None);
    let b = Recording::detect(
        &[2.0, 1.0, 3.0, 2.5, 1.5, 9.9],
        Some(&[3, 2, 2, 1, 2, 0]),
        None,
    );
    assert_eq!(a, b);
    assert_eq!((a.n, a.distinct), (10, 5));
    assert_eq!(a.lattice.unwrap().step, 0.5);
}

#[test]
fn degenerate_samples() {
    assert_eq!(Recording::detect(&[], None, None).lattice, None);
    assert_eq!(Recording::detect(&[3.0; 10], None, None).lattice, None);
    assert_eq!(Recording::detect(&[0.0, 0.0, 1.0], None, Some(1.0)).n, 3);
}

#[test]
fn notes_name_the_lattice_and_the_key() {
    let values = printed(&normal(5000, 60.0, 3.0, 91), 0.1, 1);
    let r = Recording::detect(&values, None, None);
    let note = r.lattice_note().unwrap();
    assert!(
        note.contains("lattice of step 0.1 (100% of 5000 values;"),
        "{note}"
    );
    assert!(note.contains("`[data] resolution = 0.1`"), "{note}");
    assert_eq!(r.treatment(), "values treated as exact");
    let set = Recording::detect(&values, None, Some(0.1));
    assert!(set.notes().is_empty());
    assert_eq!(
        set.treatment(),
        "values treated as recorded to 0.1: each stands for [x − 0.05, x + 0.05)"
    );
    let coarse = Recording::detect(&values, None, Some(0.5));
    assert!(coarse
        .lattice_note()
        .unwrap()
        .contains("finer than the resolution 0.5"));
    let fine = Recording::detect(&values, None, Some(0.01));
    assert!(fine
        .lattice_note()
        .unwrap()
        .contains("coarser than the resolution 0.01"));
}

#[test]
fn percentages_read_as_written() {
    // Exact formatting rules, no source.
    assert_eq!(percent(1.0), "100%");
    assert_eq!(percent(0.9996), "99%");
    assert_eq!(percent(0.377), "38%");
    assert_eq!(percent(0.0695), "7.0%");
    assert_eq!(percent(0.0004), "under 0.1%");
    assert_eq!(percent(0.0), "0.0%");
}

/// `x` with a share `p` of the values rounded to `coarse` and the rest to `fine`, printed
/// with `decimals`.
fn heaped(x: &[f64], p: f64, coarse: f64, fine: f64, decimals: usize, seed: u64) -> Vec<f64> {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    x.iter()
        .map(|&v| {
            let s = if rand::Rng::random::<f64>(&mut rng) < p {
                coarse
            } else {
                fine
            };
            format!("{:.decimals$}", (v / s).round() * s)
                .parse()
                .unwrap()
        })
        .collect()
}

#[test]
fn the_finest_heaped_step_is_named() {
    // Construction facts: heaping on halves (digits 0 and 5) is named 0.5, not 1; heaping
    // on tens among whole years is named 10, not 5 or 2.
    let halves = heaped(&normal(5000, 50.0, 5.0, 101), 0.3, 0.5, 0.1, 1, 102);
    let h = Recording::detect(&halves, None, None)
        .heaping
        .expect("heaping");
    assert_eq!((h.step, h.within), (0.5, 0.1));
    let tens = heaped(&normal(5000, 45.0, 15.0, 103), 0.3, 10.0, 1.0, 0, 104);
    let h = Recording::detect(&tens, None, None)
        .heaping
        .expect("heaping");
    assert_eq!((h.step, h.within), (10.0, 1.0));
    // 30% on tens + 70%·10% = 37% of the values lie on multiples of 10.
    assert!((0.34..0.40).contains(&h.share), "share {}", h.share);
}

#[test]
fn narrow_peaks_on_whole_units_are_not_heaping() {
    // A mixture of eleven normals with sd 0.35 centred on 40, 42, …, 60, recorded to 0.1:
    // the density peaks on whole units, smoothly, and nothing is heaped (common practice,
    // no source: the nearest neighbours are within 0.2 of the peak, where the density is
    // within 15% of it).
    let mut rng = ChaCha8Rng::seed_from_u64(111);
    let x: Vec<f64> = (0..6000)
        .map(|i| {
            let centre = 40.0 + 2.0 * (i % 11) as f64;
            Normal::new(centre, 0.35).unwrap().sample(&mut rng)
        })
        .collect();
    let r = Recording::detect(&printed(&x, 0.1, 1), None, None);
    assert!(close(r.lattice.as_ref().unwrap().step, 0.1));
    assert_eq!(r.heaping, None);
}

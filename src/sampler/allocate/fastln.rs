//! A branch-free natural logarithm for the allocation step's sums s = Σ_k exp(t_k − max)
//! ∈ [1, K], written once against `Lanes` so every instruction set gives the same bits
//! (std's `ln` is a library call per observation, about an eighth of a sweep's time).
//!
//! s = 2^e · m with m ∈ [√½, √2) (e from the exponent bits of s/√½); ln m = 2 atanh z,
//! z = (m − 1)/(m + 1), |z| ≤ 0.1716, as z · Σ_{i≤9} 2 z^{2i}/(2i + 1) (the series
//! truncated where the next term is below 3e-17 relative); ln s = e · ln 2 + ln m with
//! ln 2 split so that e · LN2_HI is exact. Plain IEEE operations in a fixed order, no
//! fused multiply-add.
//!
//! Accuracy (tested against std's `ln` in `tests/allocate_fast.rs`): absolute error
//! below 1e-15 · max(1, ln s) for s ≥ 1. Only for normal s ≥ √½ (the exponent is read
//! with a logical shift); the allocation passes s ≥ 1.

use super::lanes::Lanes;

/// Bits of √½: subtracting them leaves e in the exponent field.
pub(crate) const SQRT_HALF_BITS: u64 = 0x3FE6_A09E_667F_3BCD;
/// 2^52 as bits; OR-ing a small integer into its mantissa and subtracting 2^52 converts
/// the integer to a double exactly.
pub(crate) const TWO52_BITS: u64 = 0x4330_0000_0000_0000;
/// ln 2 split (the fdlibm constants): e · LN2_HI is exact for |e| < 2^11.
pub(crate) const LN2_HI: f64 = f64::from_bits(0x3FE6_2E42_FEE0_0000);
pub(crate) const LN2_LO: f64 = f64::from_bits(0x3DEA_39EF_3579_3C76);
/// 2/(2i + 1), i = 9 down to 1 (the i = 0 term, 2, is added last).
pub(crate) const COEF: [f64; 9] = [
    2.0 / 19.0,
    2.0 / 17.0,
    2.0 / 15.0,
    2.0 / 13.0,
    2.0 / 11.0,
    2.0 / 9.0,
    2.0 / 7.0,
    2.0 / 5.0,
    2.0 / 3.0,
];

/// ln s, lane by lane, for normal s ≥ √½.
#[inline(always)]
pub fn ln_fast<L: Lanes>(s: L) -> L {
    let e_int = s
        .bits_sub(L::splat(f64::from_bits(SQRT_HALF_BITS)))
        .bits_shr52();
    let m = s.bits_sub(e_int.bits_shl52());
    let two52 = L::splat(f64::from_bits(TWO52_BITS));
    let e = e_int.bits_or(two52).sub(two52);
    let one = L::splat(1.0);
    let z = m.sub(one).div(m.add(one));
    let w = z.mul(z);
    let mut p = L::splat(COEF[0]);
    for &c in &COEF[1..] {
        p = p.mul(w).add(L::splat(c));
    }
    let p = p.mul(w).add(L::splat(2.0));
    e.mul(L::splat(LN2_HI))
        .add(z.mul(p).add(e.mul(L::splat(LN2_LO))))
}

/// [`ln_fast`] on one double (normal s ≥ √½).
#[inline(always)]
pub fn ln_fast_f64(s: f64) -> f64 {
    ln_fast(s)
}

/// ln y for any y (the collapsed scan's variances, counts and concentrations): for
/// y ≥ √½ the fast series, for normal y below it −ln(1/y), whose rounding of 1/y adds at
/// most about 1.1e-16 to the absolute error; zero, subnormal, infinite and NaN inputs (a
/// concentration drawn absurdly small, say) go to std's `ln`.
#[inline(always)]
pub fn ln_positive(y: f64) -> f64 {
    ln_any(y, ln_fast_f64)
}

/// [`ln_positive`] with `series`, a ln valid for finite y ≥ √½, in place of the fast one.
#[inline(always)]
pub(crate) fn ln_any(y: f64, series: impl Fn(f64) -> f64) -> f64 {
    use std::f64::consts::FRAC_1_SQRT_2;
    if (FRAC_1_SQRT_2..=f64::MAX).contains(&y) {
        series(y)
    } else if (f64::MIN_POSITIVE..FRAC_1_SQRT_2).contains(&y) {
        -series(1.0 / y)
    } else {
        y.ln()
    }
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;

    /// Holds `ln` to std's `ln` within 1.2e-15 · max(1, |ln y|) over [1e-300, 1e300]
    /// (log-uniform), just above 1, on [½, 2] and at the edge values.
    pub(crate) fn assert_matches_std_ln(ln: fn(f64) -> f64, seed: u64) {
        use rand::{Rng, SeedableRng};
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(seed);
        let check = |y: f64| {
            let want = y.ln();
            let got = ln(y);
            assert!(
                (got - want).abs() <= 1.2e-15 * want.abs().max(1.0),
                "y = {y:e}: {got} vs {want}"
            );
        };
        for _ in 0..200_000 {
            check(10f64.powf(rng.random::<f64>() * 600.0 - 300.0));
            check(1.0 + 10f64.powf(-16.0 * rng.random::<f64>()));
            check(0.5 + 1.5 * rng.random::<f64>());
        }
        for y in [
            f64::MIN_POSITIVE,
            0.5,
            1.0 - f64::EPSILON,
            1.0,
            2.0,
            f64::MAX,
        ] {
            check(y);
        }
    }

    #[test]
    fn ln_positive_matches_std_ln() {
        assert_matches_std_ln(ln_positive, 9);
    }

    #[test]
    fn exact_points() {
        assert_eq!(ln_fast_f64(1.0), 0.0);
        assert!((ln_fast_f64(2.0) - std::f64::consts::LN_2).abs() <= 2e-16);
        assert!((ln_fast_f64(30.0) - 30f64.ln()).abs() <= 4e-15);
    }
}

//! ln and exp for scalar code that waits on each result before its next step, such as the
//! sequential pass of the split–merge moves (each member's side depends on the one
//! before). They are the approximations of [`super::fastln`] and [`super::fastexp`], the
//! same reductions, coefficients and tables, with the polynomials evaluated by Estrin's
//! scheme instead of Horner's rule: more multiplies, but a dependency chain of four
//! multiply–add levels instead of ten for ln and three instead of five for exp. The
//! vectorised kernels keep Horner's rule, which suits code bound by the arithmetic ports.
//! The rounding order differs, so results can differ from those functions in the last
//! bits; the accuracy is the same (tests below, against std). Plain multiplies and adds
//! only, so every instruction set gives the same bits.

use super::fastexp::{reduce, scale_back, A1, A2, A3, A4, A5};
use super::fastln::{ln_any, COEF, LN2_HI, LN2_LO, SQRT_HALF_BITS, TWO52_BITS};

/// ln s for normal s ≥ √½ (and finite): `fastln::ln_fast` by Estrin's scheme.
#[inline(always)]
fn ln_series(s: f64) -> f64 {
    let bits = s.to_bits();
    let e_int = bits.wrapping_sub(SQRT_HALF_BITS) >> 52;
    let m = f64::from_bits(bits.wrapping_sub(e_int << 52));
    let two52 = f64::from_bits(TWO52_BITS);
    let e = f64::from_bits(e_int | TWO52_BITS) - two52;
    let z = (m - 1.0) / (m + 1.0);
    let w = z * z;
    // P(w) = 2 + c₁ w + … + c₉ w⁹ with c_i = 2/(2i + 1); COEF lists c₉ down to c₁.
    let c = |i: usize| COEF[9 - i];
    let w2 = w * w;
    let w4 = w2 * w2;
    let w8 = w4 * w4;
    let a0 = 2.0 + c(1) * w;
    let a1 = c(2) + c(3) * w;
    let a2 = c(4) + c(5) * w;
    let a3 = c(6) + c(7) * w;
    let a4 = c(8) + c(9) * w;
    let b0 = a0 + a1 * w2;
    let b1 = a2 + a3 * w2;
    let p = (b0 + b1 * w4) + a4 * w8;
    e * LN2_HI + (z * p + e * LN2_LO)
}

/// ln y for any y, as `fastln::ln_positive`: the series for y ≥ √½, −ln(1/y) for normal
/// y below it, std's `ln` for zero, subnormal, infinite and NaN y.
#[inline(always)]
pub fn ln_positive(y: f64) -> f64 {
    ln_any(y, ln_series)
}

/// e^a for a ≤ 0 (correct up to a ≈ 709), 0 below the normal range and for −∞, NaN for
/// NaN: `fastexp::exp_fast` by Estrin's scheme.
#[inline(always)]
pub fn exp(a: f64) -> f64 {
    let (f, tb) = reduce(a);
    let f2 = f * f;
    let p = (1.0 + A1 * f) + f2 * ((A2 + A3 * f) + f2 * (A4 + A5 * f));
    scale_back(a, p, tb)
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::{Rng, SeedableRng};

    /// The bounds `fastln`'s test holds its `ln_positive` to, over the same ranges.
    #[test]
    fn ln_matches_std_ln() {
        super::super::fastln::tests::assert_matches_std_ln(ln_positive, 19);
        assert_eq!(ln_positive(1.0), 0.0);
        assert_eq!(ln_positive(0.0), f64::NEG_INFINITY);
        assert!(ln_positive(f64::NAN).is_nan());
    }

    /// The bounds `fastexp` is documented to (tests/allocate_fast.rs): relative error at
    /// most 7e-15 + 2.5e-16 |a|, and 0 below the normal range.
    #[test]
    fn exp_matches_std_exp() {
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(23);
        for _ in 0..200_000 {
            let a = -708.0 * rng.random::<f64>().powi(3);
            let (want, got) = (a.exp(), exp(a));
            assert!(
                ((got - want) / want).abs() <= 7e-15 + 2.5e-16 * a.abs(),
                "a = {a}: {got} vs {want}"
            );
        }
        assert_eq!(exp(0.0), 1.0);
        assert_eq!(exp(-800.0), 0.0);
        assert_eq!(exp(f64::NEG_INFINITY), 0.0);
        assert!(exp(f64::NAN).is_nan());
    }
}

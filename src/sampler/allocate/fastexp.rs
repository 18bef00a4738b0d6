//! A branch-free exp for the allocation step's arguments (t − max ≤ 0), written so the
//! compiler vectorises it: Cody–Waite range reduction x = n ln 2 + r, |r| ≤ ½ ln 2, a
//! degree-12 Taylor polynomial for e^r, and 2^n built in the exponent bits.
//!
//! Accuracy (tested against std's `exp` in `tests/allocate_fast.rs`): relative error below
//! 1e-15 wherever e^x is a normal double; results below the smallest normal double
//! (x < ln 2^-1022 ≈ −708.40) are returned as 0, an absolute error under 2.3e-308. In the
//! allocation every term is relative to the largest, which is 1, so those terms cannot
//! change a sum or a pick. NaN stays NaN. Only plain multiplies and adds are used (no fused
//! multiply-add: on the portable baseline it would be a call into the C library, and a
//! trial on the development machine showed no gain on AVX-512), so every instruction set
//! gives the same bits.

const LOG2_E: f64 = std::f64::consts::LOG2_E;
/// ln 2 split so that n · LN2_HI is exact for |n| < 2^11 (the fdlibm constants).
/// 6.93147180369123816490e-01 and 1.90821492927058770002e-10.
const LN2_HI: f64 = f64::from_bits(0x3FE6_2E42_FEE0_0000);
const LN2_LO: f64 = f64::from_bits(0x3DEA_39EF_3579_3C76);
/// 1.5 · 2^52: adding it rounds to an integer kept in the low mantissa bits.
const ROUND_MAGIC: f64 = 6_755_399_441_055_744.0;
/// ln of the smallest normal double, 2^-1022.
pub const MIN_NORMAL_ARG: f64 = -708.396_418_532_264_1;

/// 1/k!, k = 12 down to 0, for Horner's rule.
const COEF: [f64; 13] = [
    1.0 / 479_001_600.0,
    1.0 / 39_916_800.0,
    1.0 / 3_628_800.0,
    1.0 / 362_880.0,
    1.0 / 40_320.0,
    1.0 / 5_040.0,
    1.0 / 720.0,
    1.0 / 120.0,
    1.0 / 24.0,
    1.0 / 6.0,
    0.5,
    1.0,
    1.0,
];

/// e^x for x ≤ 709 (larger x overflow the exponent bits and give garbage; the allocation
/// only passes x ≤ 0).
#[inline(always)]
pub fn exp_fast(x: f64) -> f64 {
    // Clamp so n stays inside the exponent range (such inputs are flushed below); written
    // as a comparison, not `max`, so NaN passes through and no NaN fix-up is compiled in.
    let xc = if x < -709.0 { -709.0 } else { x };
    let t = xc * LOG2_E + ROUND_MAGIC;
    let n = t - ROUND_MAGIC;
    // n · LN2_HI is exact, so the first subtraction is too; the second takes the low part.
    let r = (xc - n * LN2_HI) - n * LN2_LO;
    let mut p = COEF[0];
    for &c in &COEF[1..] {
        p = p * r + c;
    }
    // t's low bits hold n (two's complement); shifting them into the exponent field and
    // adding the bias gives 2^n.
    let scale = f64::from_bits((t.to_bits() << 52).wrapping_add(1023u64 << 52));
    let y = p * scale;
    if x < MIN_NORMAL_ARG {
        0.0
    } else {
        y
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn exact_points() {
        assert_eq!(exp_fast(0.0), 1.0);
        assert_eq!(exp_fast(f64::NEG_INFINITY), 0.0);
        assert_eq!(exp_fast(-800.0), 0.0);
        assert!(exp_fast(f64::NAN).is_nan());
        let rel = (exp_fast(-1.0) - (-1.0f64).exp()).abs() / (-1.0f64).exp();
        assert!(rel < 1e-15, "{rel}");
    }
}

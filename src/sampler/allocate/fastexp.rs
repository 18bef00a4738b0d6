//! A branch-free exp for the allocation step's arguments (a = t − max ≤ 0): the scalar
//! definition, [`exp_fast`], and the same arithmetic on eight AVX-512 lanes; the SSE2 and
//! AVX2 versions are in `lanes.rs`.
//!
//! e^a = 2^(N/16) · 2^(f/16): y = 16 a log₂e, N = round(y) (the 1.5 · 2^52 trick), f =
//! y − N ∈ [−½, ½] (exact); 2^(f/16) by a degree-5 relative-minimax polynomial (error
//! ≤ 5.6e-15 on [−½, ½]) by Horner's rule; 2^(N/16) = 2^⌊N/16⌋ · 2^(j/16), j = N mod 16,
//! from a 16-entry table of bit patterns to which N << 48 is added in integer arithmetic
//! (the exponent and the index at once; the table holds bits(2^(j/16)) − (j << 48)).
//! Constants from `tests/reference/fastexp_coefficients.py`.
//!
//! Accuracy (tested against std's `exp` in `tests/allocate_fast.rs`): the rounding of y
//! (relative 2^-53 from the product plus 2^-53 from the constant) is an absolute error up
//! to |y| · 2.2e-16 in y, so the relative error grows with |a|: at most 7e-15 + 2.5e-16 ·
//! |a| (under 1.9e-13 at a = −708), and under 6e-15 for |a| ≤ 2, where the terms that
//! carry the probability mass lie. Results below the smallest normal double (a < ln
//! 2^-1022 ≈ −708.40, including −∞) are returned as 0, an absolute error under 2.3e-308.
//! NaN stays NaN. Only plain multiplies and adds are used, in the same order in every
//! variant (no fused multiply-add: on the portable baseline it would be a call into the C
//! library), and a table entry is the same value however it is fetched (scalar index,
//! gather or in-register permute), so every instruction set gives the same bits.

/// 16 log₂e: y = a · SCALE is a in units of 2^(1/16).
pub(crate) const SCALE: f64 = 16.0 * std::f64::consts::LOG2_E;
/// 1.5 · 2^52: adding it rounds to an integer kept in the low mantissa bits.
pub(crate) const ROUND_MAGIC: f64 = 6_755_399_441_055_744.0;
/// ln of the smallest normal double, 2^-1022.
pub const MIN_NORMAL_ARG: f64 = -708.396_418_532_264_1;

/// p(f) = 1 + A1 f + A2 f² + A3 f³ + A4 f⁴ + A5 f⁵ ≈ 2^(f/16) on [−½, ½].
pub(crate) const A1: f64 = 0.043_321_698_784_995_82;
pub(crate) const A2: f64 = 0.000_938_384_792_561_808_4;
pub(crate) const A3: f64 = 1.355_080_779_162_649_3e-5;
pub(crate) const A4: f64 = 1.467_641_989_384_163_7e-7;
pub(crate) const A5: f64 = 1.271_561_296_688_572_6e-9;

/// bits(2^(j/16)) − (j << 48), j = 0..15 (correctly rounded 2^(j/16)).
pub(crate) const TABLE: [u64; 16] = [
    0x3FF0_0000_0000_0000,
    0x3FEF_B558_6CF9_890F,
    0x3FEF_72B8_3C7D_517B,
    0x3FEF_387A_6E75_6238,
    0x3FEF_06FE_0A31_B715,
    0x3FEE_DEA6_4C12_3422,
    0x3FEE_BFDA_D536_2A27,
    0x3FEE_AB07_DD48_5429,
    0x3FEE_A09E_667F_3BCD,
    0x3FEE_A114_73EB_0187,
    0x3FEE_ACE5_422A_A0DB,
    0x3FEE_C491_82A3_F090,
    0x3FEE_E89F_995A_D3AD,
    0x3FEF_199B_DD85_529C,
    0x3FEF_5818_DCFB_A487,
    0x3FEF_A4AF_A2A4_90DA,
];

/// e^a for a ≤ 0 (also correct up to a ≈ 709; larger a overflow the exponent bits and give
/// garbage; the allocation only passes a ≤ 0).
#[inline(always)]
pub fn exp_fast(a: f64) -> f64 {
    let (f, tb) = reduce(a);
    // Horner's rule (Estrin's scheme, one multiply more for a shorter chain, measured
    // slower: the kernel is bound by the vector ports, not by latency).
    let p = ((((A5 * f + A4) * f + A3) * f + A2) * f + A1) * f + 1.0;
    scale_back(a, p, tb)
}

/// The reduction: f = y − N ∈ [−½, ½] with y = 16 a log₂e and N = round(y), and the bits
/// of t = y + 1.5 · 2^52, whose low bits hold N.
#[inline(always)]
pub(crate) fn reduce(a: f64) -> (f64, u64) {
    let y = a * SCALE;
    let t = y + ROUND_MAGIC;
    let n = t - ROUND_MAGIC;
    (y - n, t.to_bits())
}

/// p(f) · 2^(N/16) from the bits `tb` of [`reduce`], 0 below the normal range.
#[inline(always)]
pub(crate) fn scale_back(a: f64, p: f64, tb: u64) -> f64 {
    // t's low bits hold N (two's complement): the low 4 index the table, and N << 48
    // carries ⌊N/16⌋ into the exponent field (and j into the bits the table took it from).
    let scale = f64::from_bits(TABLE[(tb & 15) as usize].wrapping_add(tb << 48));
    let r = p * scale;
    // Far below the normal range (and for −∞, where the steps above give NaN) the result
    // is 0; written so NaN arguments pass through.
    if a < MIN_NORMAL_ARG {
        0.0
    } else {
        r
    }
}

/// [`exp_fast`] on eight lanes with AVX-512F, the same operations in the same order (the
/// table lookup as an in-register permute), so the same bits.
#[cfg(target_arch = "x86_64")]
pub(crate) mod avx512 {
    use std::arch::x86_64::*;

    use super::*;

    /// The table as two registers (entries 0–7, 8–15).
    #[derive(Clone, Copy)]
    pub struct Table(__m512i, __m512i);

    impl Table {
        #[target_feature(enable = "avx512f")]
        pub fn load() -> Table {
            // SAFETY: TABLE holds 16 u64; each load reads 8 of them, unaligned loads.
            unsafe {
                Table(
                    _mm512_loadu_si512(TABLE.as_ptr().cast()),
                    _mm512_loadu_si512(TABLE[8..].as_ptr().cast()),
                )
            }
        }
    }

    /// e^a lane by lane; see [`exp_fast`].
    #[target_feature(enable = "avx512f")]
    #[inline]
    pub fn exp_fast_x8(a: __m512d, tab: Table) -> __m512d {
        let y = _mm512_mul_pd(a, _mm512_set1_pd(SCALE));
        let magic = _mm512_set1_pd(ROUND_MAGIC);
        let t = _mm512_add_pd(y, magic);
        let n = _mm512_sub_pd(t, magic);
        let f = _mm512_sub_pd(y, n);
        let mut p = _mm512_set1_pd(A5);
        for c in [A4, A3, A2, A1, 1.0] {
            p = _mm512_add_pd(_mm512_mul_pd(p, f), _mm512_set1_pd(c));
        }
        let tb = _mm512_castpd_si512(t);
        // The shift first, so the permute may overwrite tb (no register copy).
        let shifted = _mm512_slli_epi64::<48>(tb);
        // vpermi2q/vpermt2q read the low 4 bits of each index lane: entry N mod 16.
        let entry = _mm512_permutex2var_epi64(tab.0, tb, tab.1);
        let scale = _mm512_castsi512_pd(_mm512_add_epi64(entry, shifted));
        // Lanes with a ≥ MIN_NORMAL_ARG or NaN (not-less-than, unordered true) keep p ·
        // scale; the others are 0.
        let keep = _mm512_cmp_pd_mask::<_CMP_NLT_UQ>(a, _mm512_set1_pd(MIN_NORMAL_ARG));
        _mm512_maskz_mul_pd(keep, p, scale)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn exact_points() {
        assert_eq!(exp_fast(0.0), 1.0);
        assert_eq!(exp_fast(-0.0), 1.0);
        assert_eq!(exp_fast(f64::NEG_INFINITY), 0.0);
        assert_eq!(exp_fast(-800.0), 0.0);
        assert!(exp_fast(f64::NAN).is_nan());
        let rel = (exp_fast(-1.0) - (-1.0f64).exp()).abs() / (-1.0f64).exp();
        assert!(rel < 2e-15, "{rel}");
    }

    #[test]
    fn table_entries_are_powers_of_two_sixteenths() {
        for (j, &b) in TABLE.iter().enumerate() {
            let v = f64::from_bits(b.wrapping_add((j as u64) << 48));
            let want = (j as f64 / 16.0).exp2();
            assert!(
                (v - want).abs() <= f64::EPSILON * want,
                "{j}: {v} vs {want}"
            );
        }
    }
}

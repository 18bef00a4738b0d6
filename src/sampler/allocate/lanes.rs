//! Vectors of doubles for the allocation kernel: one trait, [`Lanes`], with the handful of
//! operations the kernel uses, implemented for a plain `f64` (one lane, any target) and on
//! x86-64 for SSE2 (2 lanes, the portable baseline), AVX2 (4) and AVX-512F (8). The kernel
//! is written once against the trait, so every width performs the same IEEE operations in
//! the same order on each lane and gives the same bits; only the number of lanes differs.
//!
//! The fast exp is [`super::fastexp`]'s arithmetic on each width; its table entry is
//! fetched by a scalar index (f64, SSE2), a gather (AVX2) or an in-register permute
//! (AVX-512), all the same value.
//!
//! The x86 types may only be used by code compiled with their instruction set running on
//! a CPU that has it: they are private to this crate and instantiated only inside the
//! `#[target_feature]` entry points of [`super::dispatch`], which check the CPU first.

use super::fastexp::exp_fast;

/// Most lanes of any implementation (scratch buffers are sized for it).
pub const MAX_W: usize = 8;

/// A vector of `W` doubles with the kernel's operations.
pub trait Lanes: Copy {
    const W: usize;
    /// Per-lane counters for the pick.
    type Count: Copy;

    /// # Safety
    /// `p` must be valid for reading `W` doubles (no alignment needed).
    unsafe fn load(p: *const f64) -> Self;
    /// # Safety
    /// `p` must be valid for writing `W` doubles (no alignment needed).
    unsafe fn store(self, p: *mut f64);
    fn splat(v: f64) -> Self;
    fn add(self, o: Self) -> Self;
    fn sub(self, o: Self) -> Self;
    fn mul(self, o: Self) -> Self;
    fn div(self, o: Self) -> Self;
    /// Bit patterns as u64: `self − o` (wrapping).
    fn bits_sub(self, o: Self) -> Self;
    /// Bit patterns as u64: `self | o`.
    fn bits_or(self, o: Self) -> Self;
    /// Bit patterns as u64: `self << 52`.
    fn bits_shl52(self) -> Self;
    /// Bit patterns as u64: `self >> 52` (logical).
    fn bits_shr52(self) -> Self;
    /// `if self > m { self } else { m }` per lane.
    fn max_of(self, m: Self) -> Self;
    /// [`exp_fast`] per lane.
    fn exp_fast(self) -> Self;

    /// [`super::fastln::ln_fast`] per lane.
    #[inline(always)]
    fn ln_fast(self) -> Self {
        super::fastln::ln_fast(self)
    }

    /// std's `ln` per lane.
    #[inline(always)]
    fn ln_std(self) -> Self {
        let mut buf = [0.0; MAX_W];
        // SAFETY: buf holds MAX_W ≥ W doubles.
        unsafe {
            self.store(buf.as_mut_ptr());
            buf[..Self::W].iter_mut().for_each(|v| *v = v.ln());
            Self::load(buf.as_ptr())
        }
    }

    /// std's `exp` per lane.
    #[inline(always)]
    fn exp_std(self) -> Self {
        let mut buf = [0.0; MAX_W];
        // SAFETY: buf holds MAX_W ≥ W doubles.
        unsafe {
            self.store(buf.as_mut_ptr());
            buf[..Self::W].iter_mut().for_each(|v| *v = v.exp());
            Self::load(buf.as_ptr())
        }
    }

    fn count_zero() -> Self::Count;
    /// `c + (acc <= u)` per lane.
    fn count_le(c: Self::Count, acc: Self, u: Self) -> Self::Count;
    /// # Safety
    /// `p` must be valid for writing `W` u64 (no alignment needed).
    unsafe fn store_count(c: Self::Count, p: *mut u64);
}

impl Lanes for f64 {
    const W: usize = 1;
    type Count = u64;

    #[inline(always)]
    unsafe fn load(p: *const f64) -> Self {
        // SAFETY: the caller guarantees p is readable.
        unsafe { p.read_unaligned() }
    }
    #[inline(always)]
    unsafe fn store(self, p: *mut f64) {
        // SAFETY: the caller guarantees p is writable.
        unsafe { p.write_unaligned(self) }
    }
    #[inline(always)]
    fn splat(v: f64) -> Self {
        v
    }
    #[inline(always)]
    fn add(self, o: Self) -> Self {
        self + o
    }
    #[inline(always)]
    fn sub(self, o: Self) -> Self {
        self - o
    }
    #[inline(always)]
    fn mul(self, o: Self) -> Self {
        self * o
    }
    #[inline(always)]
    fn div(self, o: Self) -> Self {
        self / o
    }
    #[inline(always)]
    fn bits_sub(self, o: Self) -> Self {
        f64::from_bits(self.to_bits().wrapping_sub(o.to_bits()))
    }
    #[inline(always)]
    fn bits_or(self, o: Self) -> Self {
        f64::from_bits(self.to_bits() | o.to_bits())
    }
    #[inline(always)]
    fn bits_shl52(self) -> Self {
        f64::from_bits(self.to_bits() << 52)
    }
    #[inline(always)]
    fn bits_shr52(self) -> Self {
        f64::from_bits(self.to_bits() >> 52)
    }
    #[inline(always)]
    fn max_of(self, m: Self) -> Self {
        if self > m {
            self
        } else {
            m
        }
    }
    #[inline(always)]
    fn exp_fast(self) -> Self {
        exp_fast(self)
    }
    #[inline(always)]
    fn count_zero() -> u64 {
        0
    }
    #[inline(always)]
    fn count_le(c: u64, acc: f64, u: f64) -> u64 {
        c + u64::from(acc <= u)
    }
    #[inline(always)]
    unsafe fn store_count(c: u64, p: *mut u64) {
        // SAFETY: the caller guarantees p is writable.
        unsafe { p.write_unaligned(c) }
    }
}

#[cfg(target_arch = "x86_64")]
pub use x86::{Avx2, Avx512, Sse2};

#[cfg(target_arch = "x86_64")]
mod x86 {
    // SAFETY (whole module): every intrinsic below needs at most the instruction set its
    // type is named after; the types are only used as described in the module comment.
    use std::arch::x86_64::*;

    use super::super::fastexp::avx512::{exp_fast_x8, Table};
    use super::super::fastexp::{A1, A2, A3, A4, A5, MIN_NORMAL_ARG, ROUND_MAGIC, SCALE, TABLE};
    use super::Lanes;

    /// Two lanes, SSE2 (the x86-64 baseline).
    #[derive(Clone, Copy)]
    pub struct Sse2(__m128d);
    /// Four lanes, AVX2.
    #[derive(Clone, Copy)]
    pub struct Avx2(__m256d);
    /// Eight lanes, AVX-512F.
    #[derive(Clone, Copy)]
    pub struct Avx512(__m512d);

    impl Lanes for Sse2 {
        const W: usize = 2;
        type Count = __m128i;

        #[inline(always)]
        unsafe fn load(p: *const f64) -> Self {
            unsafe { Sse2(_mm_loadu_pd(p)) }
        }
        #[inline(always)]
        unsafe fn store(self, p: *mut f64) {
            unsafe { _mm_storeu_pd(p, self.0) }
        }
        #[inline(always)]
        fn splat(v: f64) -> Self {
            unsafe { Sse2(_mm_set1_pd(v)) }
        }
        #[inline(always)]
        fn add(self, o: Self) -> Self {
            unsafe { Sse2(_mm_add_pd(self.0, o.0)) }
        }
        #[inline(always)]
        fn sub(self, o: Self) -> Self {
            unsafe { Sse2(_mm_sub_pd(self.0, o.0)) }
        }
        #[inline(always)]
        fn mul(self, o: Self) -> Self {
            unsafe { Sse2(_mm_mul_pd(self.0, o.0)) }
        }
        #[inline(always)]
        fn div(self, o: Self) -> Self {
            unsafe { Sse2(_mm_div_pd(self.0, o.0)) }
        }
        #[inline(always)]
        fn bits_sub(self, o: Self) -> Self {
            unsafe {
                Sse2(_mm_castsi128_pd(_mm_sub_epi64(
                    _mm_castpd_si128(self.0),
                    _mm_castpd_si128(o.0),
                )))
            }
        }
        #[inline(always)]
        fn bits_or(self, o: Self) -> Self {
            unsafe {
                Sse2(_mm_castsi128_pd(_mm_or_si128(
                    _mm_castpd_si128(self.0),
                    _mm_castpd_si128(o.0),
                )))
            }
        }
        #[inline(always)]
        fn bits_shl52(self) -> Self {
            unsafe {
                Sse2(_mm_castsi128_pd(_mm_slli_epi64::<52>(_mm_castpd_si128(
                    self.0,
                ))))
            }
        }
        #[inline(always)]
        fn bits_shr52(self) -> Self {
            unsafe {
                Sse2(_mm_castsi128_pd(_mm_srli_epi64::<52>(_mm_castpd_si128(
                    self.0,
                ))))
            }
        }
        #[inline(always)]
        fn max_of(self, m: Self) -> Self {
            // maxpd(a, b) = a > b ? a : b, b when either is NaN.
            unsafe { Sse2(_mm_max_pd(self.0, m.0)) }
        }
        #[inline(always)]
        fn exp_fast(self) -> Self {
            unsafe {
                let a = self.0;
                let y = _mm_mul_pd(a, _mm_set1_pd(SCALE));
                let magic = _mm_set1_pd(ROUND_MAGIC);
                let t = _mm_add_pd(y, magic);
                let n = _mm_sub_pd(t, magic);
                let f = _mm_sub_pd(y, n);
                let mut p = _mm_set1_pd(A5);
                for c in [A4, A3, A2, A1, 1.0] {
                    p = _mm_add_pd(_mm_mul_pd(p, f), _mm_set1_pd(c));
                }
                let tb = _mm_castpd_si128(t);
                let lo = _mm_cvtsi128_si64(tb) as u64;
                let hi = _mm_cvtsi128_si64(_mm_unpackhi_epi64(tb, tb)) as u64;
                let entry = _mm_set_epi64x(
                    TABLE[(hi & 15) as usize] as i64,
                    TABLE[(lo & 15) as usize] as i64,
                );
                let scale = _mm_castsi128_pd(_mm_add_epi64(entry, _mm_slli_epi64::<48>(tb)));
                let r = _mm_mul_pd(p, scale);
                // Not-less-than is true for NaN: those lanes keep r (NaN).
                Sse2(_mm_and_pd(r, _mm_cmpnlt_pd(a, _mm_set1_pd(MIN_NORMAL_ARG))))
            }
        }
        #[inline(always)]
        fn count_zero() -> __m128i {
            unsafe { _mm_setzero_si128() }
        }
        #[inline(always)]
        fn count_le(c: __m128i, acc: Self, u: Self) -> __m128i {
            // The comparison is all ones (−1) where true.
            unsafe { _mm_sub_epi64(c, _mm_castpd_si128(_mm_cmple_pd(acc.0, u.0))) }
        }
        #[inline(always)]
        unsafe fn store_count(c: __m128i, p: *mut u64) {
            unsafe { _mm_storeu_si128(p.cast(), c) }
        }
    }

    impl Lanes for Avx2 {
        const W: usize = 4;
        type Count = __m256i;

        #[inline(always)]
        unsafe fn load(p: *const f64) -> Self {
            unsafe { Avx2(_mm256_loadu_pd(p)) }
        }
        #[inline(always)]
        unsafe fn store(self, p: *mut f64) {
            unsafe { _mm256_storeu_pd(p, self.0) }
        }
        #[inline(always)]
        fn splat(v: f64) -> Self {
            unsafe { Avx2(_mm256_set1_pd(v)) }
        }
        #[inline(always)]
        fn add(self, o: Self) -> Self {
            unsafe { Avx2(_mm256_add_pd(self.0, o.0)) }
        }
        #[inline(always)]
        fn sub(self, o: Self) -> Self {
            unsafe { Avx2(_mm256_sub_pd(self.0, o.0)) }
        }
        #[inline(always)]
        fn mul(self, o: Self) -> Self {
            unsafe { Avx2(_mm256_mul_pd(self.0, o.0)) }
        }
        #[inline(always)]
        fn div(self, o: Self) -> Self {
            unsafe { Avx2(_mm256_div_pd(self.0, o.0)) }
        }
        #[inline(always)]
        fn bits_sub(self, o: Self) -> Self {
            unsafe {
                Avx2(_mm256_castsi256_pd(_mm256_sub_epi64(
                    _mm256_castpd_si256(self.0),
                    _mm256_castpd_si256(o.0),
                )))
            }
        }
        #[inline(always)]
        fn bits_or(self, o: Self) -> Self {
            unsafe {
                Avx2(_mm256_castsi256_pd(_mm256_or_si256(
                    _mm256_castpd_si256(self.0),
                    _mm256_castpd_si256(o.0),
                )))
            }
        }
        #[inline(always)]
        fn bits_shl52(self) -> Self {
            unsafe {
                Avx2(_mm256_castsi256_pd(_mm256_slli_epi64::<52>(
                    _mm256_castpd_si256(self.0),
                )))
            }
        }
        #[inline(always)]
        fn bits_shr52(self) -> Self {
            unsafe {
                Avx2(_mm256_castsi256_pd(_mm256_srli_epi64::<52>(
                    _mm256_castpd_si256(self.0),
                )))
            }
        }
        #[inline(always)]
        fn max_of(self, m: Self) -> Self {
            unsafe { Avx2(_mm256_max_pd(self.0, m.0)) }
        }
        #[inline(always)]
        fn exp_fast(self) -> Self {
            unsafe {
                let a = self.0;
                let y = _mm256_mul_pd(a, _mm256_set1_pd(SCALE));
                let magic = _mm256_set1_pd(ROUND_MAGIC);
                let t = _mm256_add_pd(y, magic);
                let n = _mm256_sub_pd(t, magic);
                let f = _mm256_sub_pd(y, n);
                let mut p = _mm256_set1_pd(A5);
                for c in [A4, A3, A2, A1, 1.0] {
                    p = _mm256_add_pd(_mm256_mul_pd(p, f), _mm256_set1_pd(c));
                }
                let tb = _mm256_castpd_si256(t);
                let idx = _mm256_and_si256(tb, _mm256_set1_epi64x(15));
                let entry = _mm256_i64gather_epi64::<8>(TABLE.as_ptr().cast(), idx);
                let scale =
                    _mm256_castsi256_pd(_mm256_add_epi64(entry, _mm256_slli_epi64::<48>(tb)));
                let r = _mm256_mul_pd(p, scale);
                let keep = _mm256_cmp_pd::<_CMP_NLT_UQ>(a, _mm256_set1_pd(MIN_NORMAL_ARG));
                Avx2(_mm256_and_pd(r, keep))
            }
        }
        #[inline(always)]
        fn count_zero() -> __m256i {
            unsafe { _mm256_setzero_si256() }
        }
        #[inline(always)]
        fn count_le(c: __m256i, acc: Self, u: Self) -> __m256i {
            unsafe {
                let le = _mm256_cmp_pd::<_CMP_LE_OQ>(acc.0, u.0);
                _mm256_sub_epi64(c, _mm256_castpd_si256(le))
            }
        }
        #[inline(always)]
        unsafe fn store_count(c: __m256i, p: *mut u64) {
            unsafe { _mm256_storeu_si256(p.cast(), c) }
        }
    }

    impl Lanes for Avx512 {
        const W: usize = 8;
        type Count = __m512i;

        #[inline(always)]
        unsafe fn load(p: *const f64) -> Self {
            unsafe { Avx512(_mm512_loadu_pd(p)) }
        }
        #[inline(always)]
        unsafe fn store(self, p: *mut f64) {
            unsafe { _mm512_storeu_pd(p, self.0) }
        }
        #[inline(always)]
        fn splat(v: f64) -> Self {
            unsafe { Avx512(_mm512_set1_pd(v)) }
        }
        #[inline(always)]
        fn add(self, o: Self) -> Self {
            unsafe { Avx512(_mm512_add_pd(self.0, o.0)) }
        }
        #[inline(always)]
        fn sub(self, o: Self) -> Self {
            unsafe { Avx512(_mm512_sub_pd(self.0, o.0)) }
        }
        #[inline(always)]
        fn mul(self, o: Self) -> Self {
            unsafe { Avx512(_mm512_mul_pd(self.0, o.0)) }
        }
        #[inline(always)]
        fn div(self, o: Self) -> Self {
            unsafe { Avx512(_mm512_div_pd(self.0, o.0)) }
        }
        #[inline(always)]
        fn bits_sub(self, o: Self) -> Self {
            unsafe {
                Avx512(_mm512_castsi512_pd(_mm512_sub_epi64(
                    _mm512_castpd_si512(self.0),
                    _mm512_castpd_si512(o.0),
                )))
            }
        }
        #[inline(always)]
        fn bits_or(self, o: Self) -> Self {
            unsafe {
                Avx512(_mm512_castsi512_pd(_mm512_or_si512(
                    _mm512_castpd_si512(self.0),
                    _mm512_castpd_si512(o.0),
                )))
            }
        }
        #[inline(always)]
        fn bits_shl52(self) -> Self {
            unsafe {
                Avx512(_mm512_castsi512_pd(_mm512_slli_epi64::<52>(
                    _mm512_castpd_si512(self.0),
                )))
            }
        }
        #[inline(always)]
        fn bits_shr52(self) -> Self {
            unsafe {
                Avx512(_mm512_castsi512_pd(_mm512_srli_epi64::<52>(
                    _mm512_castpd_si512(self.0),
                )))
            }
        }
        #[inline(always)]
        fn max_of(self, m: Self) -> Self {
            unsafe { Avx512(_mm512_max_pd(self.0, m.0)) }
        }
        #[inline(always)]
        fn exp_fast(self) -> Self {
            unsafe { Avx512(exp_fast_x8(self.0, Table::load())) }
        }
        #[inline(always)]
        fn count_zero() -> __m512i {
            unsafe { _mm512_setzero_si512() }
        }
        #[inline(always)]
        fn count_le(c: __m512i, acc: Self, u: Self) -> __m512i {
            unsafe {
                let le = _mm512_cmp_pd_mask::<_CMP_LE_OQ>(acc.0, u.0);
                _mm512_mask_add_epi64(c, le, c, _mm512_set1_epi64(1))
            }
        }
        #[inline(always)]
        unsafe fn store_count(c: __m512i, p: *mut u64) {
            unsafe { _mm512_storeu_si512(p.cast(), c) }
        }
    }
}

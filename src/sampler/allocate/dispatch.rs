//! Runtime choice of instruction set for the blocked kernel: AVX-512 (8 lanes), AVX2 (4) or
//! the portable build's baseline (SSE2, 2 lanes, on x86-64; one lane elsewhere), detected
//! once per process. The kernel is one generic function over `Lanes`, uses no fused
//! multiply-add and sums in a fixed order, so every choice gives the same bits; the choice
//! only changes the speed.

use std::sync::OnceLock;

use rand_chacha::ChaCha8Rng;

use super::blocked::{block_pass, probabilities, ExpFn, FastExp, Scratch, StdExp};
#[cfg(target_arch = "x86_64")]
use super::lanes::Sse2;
use super::lanes::{Lanes, MAX_W};
use super::types::{ComponentTable, SuffStats};

/// Instruction set the kernel is compiled for.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Simd {
    /// The portable build's baseline.
    Scalar,
    Avx2,
    Avx512,
}

/// Which exponential the kernel uses.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ExpKind {
    /// [`super::fastexp::exp_fast`]: the production path.
    Fast,
    /// std's `exp`: reproduces the reference implementation bit for bit.
    Std,
}

impl Simd {
    /// Every variant, slowest first.
    pub const ALL: [Simd; 3] = [Simd::Scalar, Simd::Avx2, Simd::Avx512];

    /// Whether this CPU can run the variant.
    pub fn available(self) -> bool {
        match self {
            Simd::Scalar => true,
            #[cfg(target_arch = "x86_64")]
            Simd::Avx2 => std::is_x86_feature_detected!("avx2"),
            #[cfg(target_arch = "x86_64")]
            Simd::Avx512 => {
                std::is_x86_feature_detected!("avx512f") && std::is_x86_feature_detected!("avx2")
            }
            #[cfg(not(target_arch = "x86_64"))]
            _ => false,
        }
    }

    /// The fastest variant this CPU runs (detected once).
    pub fn detect() -> Simd {
        static BEST: OnceLock<Simd> = OnceLock::new();
        *BEST.get_or_init(|| {
            Simd::ALL
                .iter()
                .rev()
                .copied()
                .find(|s| s.available())
                .unwrap_or(Simd::Scalar)
        })
    }

    pub fn name(self) -> &'static str {
        match self {
            Simd::Scalar => "scalar",
            Simd::Avx2 => "avx2",
            Simd::Avx512 => "avx512",
        }
    }
}

/// Runs [`block_pass`] compiled for `simd` with exponential `exp`. A variant this CPU
/// cannot run falls back to the baseline.
pub fn run_block(
    simd: Simd,
    exp: ExpKind,
    x: &[f64],
    t: &ComponentTable,
    sc: &mut Scratch,
    rng: Option<&mut ChaCha8Rng>,
    stats: &mut SuffStats,
) -> f64 {
    match exp {
        ExpKind::Fast => run_with::<FastExp>(simd, x, t, sc, rng, stats),
        ExpKind::Std => run_with::<StdExp>(simd, x, t, sc, rng, stats),
    }
}

/// The variant that will actually run: `simd` if this CPU has it, else the baseline.
fn effective(simd: Simd) -> Simd {
    if simd.available() {
        simd
    } else {
        Simd::Scalar
    }
}

fn run_with<E: ExpFn>(
    simd: Simd,
    x: &[f64],
    t: &ComponentTable,
    sc: &mut Scratch,
    rng: Option<&mut ChaCha8Rng>,
    stats: &mut SuffStats,
) -> f64 {
    match effective(simd) {
        // SAFETY: `effective` only returns a variant this CPU supports.
        #[cfg(target_arch = "x86_64")]
        Simd::Avx512 => unsafe { x86::block_avx512::<E>(x, t, sc, rng, stats) },
        #[cfg(target_arch = "x86_64")]
        Simd::Avx2 => unsafe { x86::block_avx2::<E>(x, t, sc, rng, stats) },
        #[cfg(target_arch = "x86_64")]
        _ => block_pass::<Sse2, E>(x, t, sc, rng, stats),
        #[cfg(not(target_arch = "x86_64"))]
        _ => block_pass::<f64, E>(x, t, sc, rng, stats),
    }
}

/// Allocation probabilities (row i holds p_i1..p_iK) as the kernel built for `simd`
/// computes them, with exponential `exp`; for tests against the reference.
pub fn kernel_probabilities(
    simd: Simd,
    exp: ExpKind,
    x: &[f64],
    t: &ComponentTable,
) -> Vec<Vec<f64>> {
    match exp {
        ExpKind::Fast => probabilities_with::<FastExp>(simd, x, t),
        ExpKind::Std => probabilities_with::<StdExp>(simd, x, t),
    }
}

fn probabilities_with<E: ExpFn>(simd: Simd, x: &[f64], t: &ComponentTable) -> Vec<Vec<f64>> {
    match effective(simd) {
        // SAFETY: `effective` only returns a variant this CPU supports.
        #[cfg(target_arch = "x86_64")]
        Simd::Avx512 => unsafe { x86::probabilities_avx512::<E>(x, t) },
        #[cfg(target_arch = "x86_64")]
        Simd::Avx2 => unsafe { x86::probabilities_avx2::<E>(x, t) },
        #[cfg(target_arch = "x86_64")]
        _ => probabilities::<Sse2, E>(x, t),
        #[cfg(not(target_arch = "x86_64"))]
        _ => probabilities::<f64, E>(x, t),
    }
}

/// The fast exp of every entry of `xs`, in place, with the vector code the kernel built
/// for `simd` runs (for tests: every variant must give the same bits). A tail shorter
/// than a vector goes through a zero-padded vector.
pub fn exp_fast_in_place(simd: Simd, xs: &mut [f64]) {
    match effective(simd) {
        // SAFETY: `effective` only returns a variant this CPU supports.
        #[cfg(target_arch = "x86_64")]
        Simd::Avx512 => unsafe { x86::exp_avx512(xs) },
        #[cfg(target_arch = "x86_64")]
        Simd::Avx2 => unsafe { x86::exp_avx2(xs) },
        #[cfg(target_arch = "x86_64")]
        _ => exp_lanes::<Sse2>(xs),
        #[cfg(not(target_arch = "x86_64"))]
        _ => exp_lanes::<f64>(xs),
    }
}

#[inline(always)]
fn exp_lanes<L: Lanes>(xs: &mut [f64]) {
    for chunk in xs.chunks_mut(L::W) {
        let mut buf = [0.0; MAX_W];
        buf[..chunk.len()].copy_from_slice(chunk);
        // SAFETY: buf holds MAX_W ≥ W doubles.
        unsafe { L::load(buf.as_ptr()).exp_fast().store(buf.as_mut_ptr()) };
        chunk.copy_from_slice(&buf[..chunk.len()]);
    }
}

#[cfg(target_arch = "x86_64")]
mod x86 {
    use super::*;
    use crate::sampler::allocate::lanes::{Avx2, Avx512};

    #[target_feature(enable = "avx2")]
    pub unsafe fn block_avx2<E: ExpFn>(
        x: &[f64],
        t: &ComponentTable,
        sc: &mut Scratch,
        rng: Option<&mut ChaCha8Rng>,
        stats: &mut SuffStats,
    ) -> f64 {
        block_pass::<Avx2, E>(x, t, sc, rng, stats)
    }

    #[target_feature(enable = "avx512f,avx2")]
    pub unsafe fn block_avx512<E: ExpFn>(
        x: &[f64],
        t: &ComponentTable,
        sc: &mut Scratch,
        rng: Option<&mut ChaCha8Rng>,
        stats: &mut SuffStats,
    ) -> f64 {
        block_pass::<Avx512, E>(x, t, sc, rng, stats)
    }

    #[target_feature(enable = "avx2")]
    pub unsafe fn probabilities_avx2<E: ExpFn>(x: &[f64], t: &ComponentTable) -> Vec<Vec<f64>> {
        probabilities::<Avx2, E>(x, t)
    }

    #[target_feature(enable = "avx512f,avx2")]
    pub unsafe fn probabilities_avx512<E: ExpFn>(x: &[f64], t: &ComponentTable) -> Vec<Vec<f64>> {
        probabilities::<Avx512, E>(x, t)
    }

    #[target_feature(enable = "avx2")]
    pub unsafe fn exp_avx2(xs: &mut [f64]) {
        exp_lanes::<Avx2>(xs)
    }

    #[target_feature(enable = "avx512f,avx2")]
    pub unsafe fn exp_avx512(xs: &mut [f64]) {
        exp_lanes::<Avx512>(xs)
    }
}

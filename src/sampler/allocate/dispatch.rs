//! Runtime choice of instruction set for the blocked kernel: AVX-512, AVX2 or the portable
//! build's baseline (SSE2 on x86-64), detected once per process. The kernel uses no fused
//! multiply-add and sums in a fixed order, so every choice gives the same bits; the choice
//! only changes the speed.

use std::sync::OnceLock;

use rand_chacha::ChaCha8Rng;

use super::blocked::{block_pass, ExpFn, FastExp, Scratch, StdExp};
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

fn run_with<E: ExpFn>(
    simd: Simd,
    x: &[f64],
    t: &ComponentTable,
    sc: &mut Scratch,
    rng: Option<&mut ChaCha8Rng>,
    stats: &mut SuffStats,
) -> f64 {
    #[cfg(target_arch = "x86_64")]
    {
        if simd == Simd::Avx512 && Simd::Avx512.available() {
            // SAFETY: the CPU supports AVX-512F and AVX2 (checked just above).
            return unsafe { x86::block_avx512::<E>(x, t, sc, rng, stats) };
        }
        if simd != Simd::Scalar && Simd::Avx2.available() {
            // SAFETY: the CPU supports AVX2 (checked just above).
            return unsafe { x86::block_avx2::<E>(x, t, sc, rng, stats) };
        }
    }
    let _ = simd;
    block_pass::<E>(x, t, sc, rng, stats)
}

#[cfg(target_arch = "x86_64")]
mod x86 {
    use super::*;

    #[target_feature(enable = "avx2")]
    pub unsafe fn block_avx2<E: ExpFn>(
        x: &[f64],
        t: &ComponentTable,
        sc: &mut Scratch,
        rng: Option<&mut ChaCha8Rng>,
        stats: &mut SuffStats,
    ) -> f64 {
        block_pass::<E>(x, t, sc, rng, stats)
    }

    #[target_feature(enable = "avx512f,avx2")]
    pub unsafe fn block_avx512<E: ExpFn>(
        x: &[f64],
        t: &ComponentTable,
        sc: &mut Scratch,
        rng: Option<&mut ChaCha8Rng>,
        stats: &mut SuffStats,
    ) -> f64 {
        block_pass::<E>(x, t, sc, rng, stats)
    }
}

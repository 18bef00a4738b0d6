//! Random streams. Each piece of a sweep draws from its own ChaCha8 generator whose
//! 256-bit key is derived from (seed, chain, sweep, block) by SplitMix64 mixing, so no
//! stream depends on the thread count, the number of chains or on where a run was resumed.

use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;

/// SplitMix64 finaliser (Steele, Lea & Flood 2014), a bijective 64-bit mixer.
pub fn splitmix64(mut z: u64) -> u64 {
    z = z.wrapping_add(0x9E37_79B9_7F4A_7C15);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

/// Block index reserved for the per-sweep stream (weights, components, hyperparameters).
const SWEEP_STREAM: u64 = u64::MAX;
/// Block index reserved for the label-switching moves of a sweep (see `label_moves`), so
/// switching them on or off leaves every other stream as it was.
const LABEL_STREAM: u64 = u64::MAX - 1;
/// Block index reserved for the collapsed allocation scan of a sweep (see `collapsed`).
const COLLAPSED_STREAM: u64 = u64::MAX - 2;
/// Block index reserved for the split–merge proposals of a sweep (see `split_merge`).
const SPLIT_MERGE_STREAM: u64 = u64::MAX - 3;
/// Block index reserved for the re-split moves of a sweep (see `resplit`).
const RESPLIT_STREAM: u64 = u64::MAX - 4;
/// Block index reserved for the relocation moves of a sweep (see `relocate`).
const RELOCATE_STREAM: u64 = u64::MAX - 5;
/// Sweep index reserved for initialisation.
const INIT_SWEEP: u64 = u64::MAX;
/// Sweep index of the model check's streams (`src/check/`), under chain 0, which no chain
/// uses (chains count from 1): replicated data sets, subsamples, the band simulation.
const CHECK_SWEEP: u64 = u64::MAX - 1;

/// Generator for the model check of a run with `seed`; `purpose` separates its uses (a
/// replicate's index, or a reserved constant in `src/check/`).
pub fn check_rng(seed: u64, purpose: u64) -> ChaCha8Rng {
    StreamKey::new(seed, 0).rng(CHECK_SWEEP, purpose)
}

/// Identifies one chain's family of streams.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct StreamKey {
    pub seed: u64,
    /// Chain id, from 1.
    pub chain: u64,
}

impl StreamKey {
    pub fn new(seed: u64, chain: u64) -> Self {
        StreamKey { seed, chain }
    }

    /// Generator for (sweep, block).
    pub fn rng(&self, sweep: u64, block: u64) -> ChaCha8Rng {
        let mut seed = [0u8; 32];
        let mut h = splitmix64(self.seed ^ 0x6D69_7862_616E_6421);
        h = splitmix64(h ^ self.chain);
        h = splitmix64(h ^ sweep);
        h = splitmix64(h ^ block);
        for chunk in seed.chunks_exact_mut(8) {
            h = splitmix64(h);
            chunk.copy_from_slice(&h.to_le_bytes());
        }
        ChaCha8Rng::from_seed(seed)
    }

    /// Generator for the allocation of observation block `block` in sweep `sweep`.
    pub fn block_rng(&self, sweep: u64, block: u64) -> ChaCha8Rng {
        self.rng(sweep, block)
    }

    /// Generator for everything in sweep `sweep` after the allocations.
    pub fn sweep_rng(&self, sweep: u64) -> ChaCha8Rng {
        self.rng(sweep, SWEEP_STREAM)
    }

    /// Generator for the label-switching moves in sweep `sweep`.
    pub fn label_rng(&self, sweep: u64) -> ChaCha8Rng {
        self.rng(sweep, LABEL_STREAM)
    }

    /// Generator for the collapsed allocation scan in sweep `sweep`.
    pub fn collapsed_rng(&self, sweep: u64) -> ChaCha8Rng {
        self.rng(sweep, COLLAPSED_STREAM)
    }

    /// Generator for the split–merge proposals in sweep `sweep`.
    pub fn split_merge_rng(&self, sweep: u64) -> ChaCha8Rng {
        self.rng(sweep, SPLIT_MERGE_STREAM)
    }

    /// Generator for the re-split moves in sweep `sweep`.
    pub fn resplit_rng(&self, sweep: u64) -> ChaCha8Rng {
        self.rng(sweep, RESPLIT_STREAM)
    }

    /// Generator for the relocation moves in sweep `sweep`.
    pub fn relocate_rng(&self, sweep: u64) -> ChaCha8Rng {
        self.rng(sweep, RELOCATE_STREAM)
    }

    /// Generator for the chain's starting point.
    pub fn init_rng(&self) -> ChaCha8Rng {
        self.rng(INIT_SWEEP, SWEEP_STREAM)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::Rng;

    #[test]
    fn streams_differ_by_every_coordinate_and_repeat_exactly() {
        let a = StreamKey::new(7, 1);
        let first = |mut r: ChaCha8Rng| r.random::<u64>();
        let base = first(a.block_rng(3, 0));
        assert_eq!(base, first(StreamKey::new(7, 1).block_rng(3, 0)));
        assert_ne!(base, first(StreamKey::new(8, 1).block_rng(3, 0)));
        assert_ne!(base, first(StreamKey::new(7, 2).block_rng(3, 0)));
        assert_ne!(base, first(a.block_rng(4, 0)));
        assert_ne!(base, first(a.block_rng(3, 1)));
        assert_ne!(base, first(a.sweep_rng(3)));
    }
}

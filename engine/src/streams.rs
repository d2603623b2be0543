//! Random streams: one portable, seedable generator per source of randomness.
//!
//! A stream is derived from (base seed, replication, stream key) by hashing
//! with SplitMix64, so the same key gives the same numbers whatever else the
//! model does. That is what makes common random numbers work across
//! alternatives: a change of layout cannot shift another source's draws.

use rand::SeedableRng;
pub use rand_xoshiro::Xoshiro256PlusPlus;

/// The generator behind every stream: Xoshiro256++ (portable, fast, seedable).
pub type Stream = Xoshiro256PlusPlus;

/// One step of SplitMix64 (Steele, Lea & Flood 2014): a strong 64-bit mixer.
#[inline]
pub fn splitmix64(mut z: u64) -> u64 {
    z = z.wrapping_add(0x9E37_79B9_7F4A_7C15);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

/// A 64-bit seed for the stream named by `key` in `replication` of a run seeded `base`.
#[inline]
pub fn stream_seed(base: u64, replication: u64, key: &[u64]) -> u64 {
    let mut h = splitmix64(base ^ 0x6C61_7966_6C6F_7721);
    h = splitmix64(h ^ replication);
    for &k in key {
        h = splitmix64(h ^ k);
    }
    h
}

/// The generator for the stream named by `key` in `replication`.
#[inline]
pub fn stream(base: u64, replication: u64, key: &[u64]) -> Stream {
    Stream::seed_from_u64(stream_seed(base, replication, key))
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::Rng;

    #[test]
    fn splitmix64_matches_reference_values() {
        // Reference: the first outputs of the SplitMix64 generator seeded with 0
        // (Vigna's splitmix64.c; the generator's state advances by the golden
        // gamma before mixing, which is what `splitmix64(k * gamma)` reproduces).
        let gamma = 0x9E37_79B9_7F4A_7C15u64;
        assert_eq!(splitmix64(0), 0xE220_A839_7B1D_CDAF);
        assert_eq!(splitmix64(gamma), 0x6E78_9E6A_A1B9_65F4);
    }

    #[test]
    fn keys_give_distinct_repeatable_streams() {
        let mut a = stream(7, 0, &[1, 2]);
        let mut b = stream(7, 0, &[1, 2]);
        let mut c = stream(7, 0, &[1, 3]);
        let mut d = stream(7, 1, &[1, 2]);
        let x = a.next_u64();
        assert_eq!(x, b.next_u64());
        assert_ne!(x, c.next_u64());
        assert_ne!(x, d.next_u64());
    }
}

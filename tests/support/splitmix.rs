//! SplitMix64 (Steele, Lea & Flood, OOPSLA 2014; constants as published): a fixed, seedable
//! generator for synthetic test and benchmark data. Shared by `tests/integration/rank.rs`,
//! `benches/rank.rs` and the unit tests of `src/fast/trees.rs`.

#![allow(dead_code)]

pub struct Rng(pub u64);

impl Rng {
    pub fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        z ^ (z >> 31)
    }

    /// Uniform in [0, 1) from the top 53 bits.
    pub fn unit(&mut self) -> f64 {
        (self.next() >> 11) as f64 / (1u64 << 53) as f64
    }
}

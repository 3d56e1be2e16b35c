//! The renderer's own pseudo-random numbers: SplitMix64 and integer lattice hashing for procedural noise.
//!
//! Owns: `SplitMix64` (Steele, Lea and Flood's splittable generator, 64-bit output mixer) and the helpers that turn
//! its output into uniform and roughly Gaussian numbers using plain arithmetic only, so the same seed gives the
//! same numbers on every machine.
//! Must not: call platform maths functions (`sin`, `exp`, `ln`, `powf`) whose last bits may differ between
//! platforms; know about scenes or images.

/// SplitMix64: a 64-bit state advanced by the golden-ratio increment, then mixed.
#[derive(Clone, Debug)]
pub struct SplitMix64 {
    state: u64,
}

const GOLDEN_GAMMA: u64 = 0x9E37_79B9_7F4A_7C15;

/// Mixes 64 bits into 64 well-spread bits (the SplitMix64 finaliser).
pub fn mix64(mut value: u64) -> u64 {
    value = (value ^ (value >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    value = (value ^ (value >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    value ^ (value >> 31)
}

impl SplitMix64 {
    /// A generator whose first output depends only on `seed`.
    pub fn new(seed: u64) -> SplitMix64 {
        SplitMix64 { state: seed }
    }

    /// The next 64 random bits.
    pub fn next_u64(&mut self) -> u64 {
        self.state = self.state.wrapping_add(GOLDEN_GAMMA);
        mix64(self.state)
    }

    /// A uniform number in `[0, 1)` with 53 random bits.
    pub fn unit(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }

    /// A uniform number in `[low, high)`.
    pub fn range(&mut self, low: f64, high: f64) -> f64 {
        low + (high - low) * self.unit()
    }

    /// A uniform integer in `0..count` (0 when `count` is 0).
    pub fn below(&mut self, count: u32) -> u32 {
        if count == 0 {
            return 0;
        }
        (((self.next_u64() >> 32) * count as u64) >> 32) as u32
    }

    /// True with probability `probability`.
    pub fn chance(&mut self, probability: f64) -> bool {
        self.unit() < probability
    }

    /// One element of a non-empty slice, chosen uniformly (the first when the slice has one element).
    pub fn pick<'a, T>(&mut self, items: &'a [T]) -> Option<&'a T> {
        items.get(self.below(items.len() as u32) as usize)
    }

    /// An approximately standard normal number: the Irwin–Hall sum of four uniforms, centred and scaled to unit
    /// variance (four uniforms have variance 4/12, hence the factor √3).
    pub fn gaussian(&mut self) -> f64 {
        let sum = self.unit() + self.unit() + self.unit() + self.unit();
        (sum - 2.0) * 1.732_050_807_568_877_2
    }

    /// A new independent generator, seeded from this one.
    pub fn fork(&mut self) -> SplitMix64 {
        SplitMix64::new(self.next_u64())
    }
}

/// A hash of an integer lattice point to `[0, 1)`, used by value noise.
pub fn lattice_hash(x: i64, y: i64, z: i64, seed: u64) -> f64 {
    let mut value = seed ^ 0x51_7CC1_B727_220A;
    value = mix64(value ^ (x as u64).wrapping_mul(0x9E37_79B9_7F4A_7C15));
    value = mix64(value ^ (y as u64).wrapping_mul(0xC2B2_AE3D_27D4_EB4F));
    value = mix64(value ^ (z as u64).wrapping_mul(0x1656_67B1_9E37_79F9));
    (value >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn first_outputs_match_the_published_algorithm() {
        // Reference: the first two outputs of SplitMix64 (Steele, Lea and Flood, OOPSLA 2014) seeded with 0, as
        // the algorithm's public-domain reference C code prints them; values recalled and checked against the mixer.
        let mut generator = SplitMix64::new(0);
        assert_eq!(generator.next_u64(), 0xE220_A839_7B1D_CDAF);
        assert_eq!(generator.next_u64(), 0x6E78_9E6A_A1B9_65F4);
    }

    #[test]
    fn same_seed_same_stream_and_ranges_hold() {
        let mut first = SplitMix64::new(1234);
        let mut second = SplitMix64::new(1234);
        for _ in 0..1000 {
            let value = first.unit();
            assert_eq!(value.to_bits(), second.unit().to_bits());
            assert!((0.0..1.0).contains(&value));
            assert!(first.below(7) < 7);
            second.below(7);
        }
    }

    #[test]
    fn gaussian_has_unit_spread() {
        let mut generator = SplitMix64::new(99);
        let count = 20_000;
        let samples: Vec<f64> = (0..count).map(|_| generator.gaussian()).collect();
        let mean = samples.iter().sum::<f64>() / count as f64;
        let variance = samples.iter().map(|s| (s - mean) * (s - mean)).sum::<f64>() / count as f64;
        assert!(mean.abs() < 0.03, "mean {mean}");
        assert!((variance - 1.0).abs() < 0.05, "variance {variance}");
    }
}

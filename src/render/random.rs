//! The renderer's procedural noise: integer lattice hashing on the workspace's SplitMix64.
//!
//! Owns: `lattice_hash` (an integer lattice point to `[0, 1)`, for value noise), in plain arithmetic only, so
//! the same seed gives the same numbers on every machine; the generator itself is `sayso_core::random`'s.
//! Must not: call platform maths functions (`sin`, `exp`, `ln`, `powf`) whose last bits may differ between
//! platforms; know about scenes or images.

pub use sayso_core::random::{mix64, SplitMix64};

/// A hash of an integer lattice point to `[0, 1)`, used by value noise.
pub fn lattice_hash(x: i64, y: i64, z: i64, seed: u64) -> f64 {
    let mut value = seed ^ 0x51_7CC1_B727_220A;
    value = mix64(value ^ (x as u64).wrapping_mul(0x9E37_79B9_7F4A_7C15));
    value = mix64(value ^ (y as u64).wrapping_mul(0xC2B2_AE3D_27D4_EB4F));
    value = mix64(value ^ (z as u64).wrapping_mul(0x1656_67B1_9E37_79F9));
    (value >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
}

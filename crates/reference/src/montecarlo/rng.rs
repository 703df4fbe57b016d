//! Random numbers for the Monte Carlo kernels: the Xoshiro256++ generator (Blackman &
//! Vigna 2021), deterministic per-point seeds, uniform floats and bounded integers.

use rand_xoshiro::rand_core::{RngCore, SeedableRng};
pub use rand_xoshiro::Xoshiro256PlusPlus as McRng;

/// The SplitMix64 finaliser (Steele, Lea & Flood 2014): a bijective 64-bit mixer.
pub fn splitmix64(x: u64) -> u64 {
    let mut z = x.wrapping_add(0x9E37_79B9_7F4A_7C15);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

/// The seed of one (size, temperature-index) point: a hash of the three numbers, so a
/// point's random stream does not depend on which thread runs it or when.
pub fn point_seed(seed: u64, size: usize, temperature_index: usize) -> u64 {
    splitmix64(splitmix64(splitmix64(seed) ^ size as u64) ^ temperature_index as u64)
}

/// A generator seeded from one 64-bit number.
pub fn rng_from_seed(seed: u64) -> McRng {
    McRng::seed_from_u64(seed)
}

/// A uniform float in `[0, 1)` from the top 53 bits of one draw.
#[inline(always)]
pub fn uniform(rng: &mut McRng) -> f64 {
    (rng.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
}

/// A uniform integer in `0..n` by the multiply-shift map (Lemire 2019); its bias is at
/// most n / 2^64, far below anything a simulation resolves.
#[inline(always)]
pub fn below(rng: &mut McRng, n: usize) -> usize {
    ((u128::from(rng.next_u64()) * n as u128) >> 64) as usize
}

/// The 64-bit threshold t with `P(draw < t) = p` for a uniform 64-bit draw.
pub fn threshold(p: f64) -> u64 {
    if p <= 0.0 {
        0
    } else {
        // Saturating cast: p = 1 maps to u64::MAX (off by 2^-64).
        (p * 18_446_744_073_709_551_616.0) as u64
    }
}

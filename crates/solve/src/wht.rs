//! The fast Walsh–Hadamard transform, the only kernel the cluster-variation engine needs.
//!
//! `(W f)[σ] = Σ_c f[c] (−1)^{popcount(c ∧ σ)}`: with bit k of `σ` set when spin k is
//! −1, `(−1)^{popcount(c ∧ σ)} = χ_c(σ) = Π_{k∈c} σ_k`. W is symmetric and `W² = 2^n`.
//! In-place, `n 2^n` additions, no allocation.
//!
//! [`wht`] is the plain radix-2 loop. [`wht_fast`] gives the same result (bit for bit:
//! the same butterflies in the same order per element) for big clusters in two passes
//! over memory: first every contiguous block of [`BLOCK`] values is transformed in
//! cache, then the remaining levels run on column strips (the vector seen as rows of
//! `BLOCK` values; a strip of 256 columns, 2 KiB of each row, keeps the TLB and the
//! prefetcher busy with long runs instead of one cache line per page), blocks and strips
//! spread over threads with rayon. With AVX2 present the butterflies are compiled for it
//! (runtime detection).

use rayon::prelude::*;

/// Values per block of the first pass (2^13 f64 = 64 KiB).
pub const BLOCK: usize = 1 << 13;

/// Columns per strip of the second pass: 2 KiB of each row. Measured per transform
/// (two cores): 2^24 values 0.180 s with 8 columns, 0.104 s with 32, 0.071 s with 256;
/// 2^25 values 0.26 s with 32, 0.158 s with 256, 0.21 s with 2048.
const STRIP: usize = 256;

/// Transform `f` (length a power of two) in place.
pub fn wht(f: &mut [f64]) {
    debug_assert!(f.len().is_power_of_two());
    #[cfg(target_arch = "x86_64")]
    {
        if std::arch::is_x86_feature_detected!("avx2") {
            // SAFETY: the CPU supports AVX2 (checked just above).
            unsafe { wht_avx2(f) };
            return;
        }
    }
    wht_generic(f)
}

#[inline(always)]
fn wht_generic(f: &mut [f64]) {
    let n = f.len();
    let mut h = 1;
    if n >= 8 {
        // The three lowest levels fused, eight values in registers: the same butterflies
        // in the same order per element as the loop below, without its per-pair
        // overhead (these levels do not vectorise as separate passes).
        for c in f.chunks_exact_mut(8) {
            let mut v = [c[0], c[1], c[2], c[3], c[4], c[5], c[6], c[7]];
            for step in [1, 2, 4] {
                for i in 0..8 {
                    if i & step == 0 {
                        let (x, y) = (v[i], v[i + step]);
                        v[i] = x + y;
                        v[i + step] = x - y;
                    }
                }
            }
            c.copy_from_slice(&v);
        }
        h = 8;
    }
    while h < n {
        for block in f.chunks_exact_mut(2 * h) {
            let (lo, hi) = block.split_at_mut(h);
            for (a, b) in lo.iter_mut().zip(hi.iter_mut()) {
                let (x, y) = (*a, *b);
                *a = x + y;
                *b = x - y;
            }
        }
        h *= 2;
    }
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2")]
unsafe fn wht_avx2(f: &mut [f64]) {
    wht_generic(f)
}

/// A raw pointer shared by the strip workers; every worker touches its own columns.
#[derive(Clone, Copy)]
struct Shared(*mut f64);
// SAFETY: the strips of `wht_fast` are disjoint sets of elements.
unsafe impl Send for Shared {}
unsafe impl Sync for Shared {}

impl Shared {
    /// The pointer (a method, so closures capture the whole `Shared`).
    fn ptr(&self) -> *mut f64 {
        self.0
    }
}

/// The levels `BLOCK … rows·BLOCK/2` on the strip of columns `c0 .. c0 + STRIP`.
///
/// # Safety
/// `base` must point to `rows · BLOCK` values, and no other thread may touch these
/// columns meanwhile.
#[inline(always)]
unsafe fn strip_generic(base: *mut f64, c0: usize, rows: usize) {
    let mut h = 1;
    while h < rows {
        let mut r = 0;
        while r < rows {
            for i in r..r + h {
                let lo = base.add(i * BLOCK + c0);
                let hi = base.add((i + h) * BLOCK + c0);
                for k in 0..STRIP {
                    let (x, y) = (*lo.add(k), *hi.add(k));
                    *lo.add(k) = x + y;
                    *hi.add(k) = x - y;
                }
            }
            r += 2 * h;
        }
        h *= 2;
    }
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2")]
unsafe fn strip_avx2(base: *mut f64, c0: usize, rows: usize) {
    strip_generic(base, c0, rows)
}

/// Same result as [`wht`], cache-blocked and multi-threaded for long vectors.
pub fn wht_fast(f: &mut [f64]) {
    let n = f.len();
    debug_assert!(n.is_power_of_two());
    if n <= 4 * BLOCK {
        wht(f);
        return;
    }
    // Pass 1: levels below BLOCK inside each block.
    f.par_chunks_mut(BLOCK).for_each(wht);
    // Pass 2: levels BLOCK … n/2 as a transform over rows, strip by strip.
    let rows = n / BLOCK;
    let base = Shared(f.as_mut_ptr());
    #[cfg(target_arch = "x86_64")]
    let avx2 = std::arch::is_x86_feature_detected!("avx2");
    (0..BLOCK / STRIP).into_par_iter().for_each(|s| {
        // SAFETY: f holds rows·BLOCK values; strip s owns columns s·STRIP .. +STRIP.
        #[cfg(target_arch = "x86_64")]
        {
            if avx2 {
                unsafe { strip_avx2(base.ptr(), s * STRIP, rows) };
                return;
            }
        }
        unsafe { strip_generic(base.ptr(), s * STRIP, rows) };
    });
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn matches_the_definition_and_squares_to_n() {
        let f: Vec<f64> = (0..16).map(|i| (i as f64 * 0.37).sin()).collect();
        let mut g = f.clone();
        wht(&mut g);
        for (s, &gs) in g.iter().enumerate() {
            let direct: f64 = (0..16usize)
                .map(|c| {
                    f[c] * if (c & s).count_ones() % 2 == 0 {
                        1.0
                    } else {
                        -1.0
                    }
                })
                .sum();
            assert!((gs - direct).abs() < 1e-12);
        }
        wht(&mut g);
        for (a, b) in g.iter().zip(&f) {
            assert!((a / 16.0 - b).abs() < 1e-12);
        }
    }

    /// The radix-2 loop level by level, as written in textbooks.
    fn reference(f: &mut [f64]) {
        let mut h = 1;
        while h < f.len() {
            for block in f.chunks_exact_mut(2 * h) {
                let (lo, hi) = block.split_at_mut(h);
                for (a, b) in lo.iter_mut().zip(hi.iter_mut()) {
                    let (x, y) = (*a, *b);
                    *a = x + y;
                    *b = x - y;
                }
            }
            h *= 2;
        }
    }

    #[test]
    fn fused_low_levels_are_the_plain_loop_to_the_last_bit() {
        for n in [1usize, 2, 4, 8, 16, 1 << 10] {
            let f: Vec<f64> = (0..n).map(|i| (i as f64 * 0.731).sin() * 1e3).collect();
            let (mut a, mut b) = (f.clone(), f);
            reference(&mut a);
            wht(&mut b);
            assert!(a.iter().zip(&b).all(|(x, y)| x == y), "n = {n}");
        }
    }

    #[test]
    fn fast_transform_is_the_plain_one() {
        // Butterflies are exact sums of the same operands in the same order per output,
        // so the two agree to the last bit.
        let n = 1 << 17;
        let f: Vec<f64> = (0..n)
            .map(|i| ((i * 7919) % 1013) as f64 * 0.01 - 5.0)
            .collect();
        let (mut a, mut b) = (f.clone(), f);
        wht(&mut a);
        wht_fast(&mut b);
        assert!(a.iter().zip(&b).all(|(x, y)| x == y));
    }
}

//! Transforms on the 2^n states of a cluster, generic over the number type (f64 or
//! double-double), in place, `n 2^n` additions, no allocation.
//!
//! With bit k of an index meaning "site k is in the set":
//!
//! ```text
//! Walsh–Hadamard      (W f)[s]   = Σ_c (−1)^{|c ∧ s|} f[c]
//! subset sum          (Z f)[c]   = Σ_{A ⊆ c} f[A]
//! subset Möbius       (M f)[c]   = Σ_{A ⊆ c} (−1)^{|c∖A|} f[A]        (M = Z⁻¹)
//! superset sum        (Z↑ f)[A]  = Σ_{B ⊇ A} f[B]
//! superset Möbius     (M↑ f)[A]  = Σ_{B ⊇ A} (−1)^{|B∖A|} f[B]        (M↑ = (Z↑)⁻¹)
//! ```
//!
//! The subset transforms are the algebra of the flip basis (see [`crate::functional::Basis`]): with
//! `ζ_c` the probability that every site of c is flipped, the probability that exactly
//! the set A is flipped is `(M↑ ζ)[A]` (inclusion–exclusion).

use std::ops::{Add, Sub};

/// Numbers the transforms work on.
pub trait Scalar: Copy + Add<Output = Self> + Sub<Output = Self> {}
impl<T: Copy + Add<Output = T> + Sub<Output = T>> Scalar for T {}

/// Walsh–Hadamard transform in place.
pub fn walsh<T: Scalar>(f: &mut [T]) {
    let n = f.len();
    debug_assert!(n.is_power_of_two());
    let mut h = 1;
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

/// One pass over every pair (mask without bit h, mask with bit h): `op(lo, hi)`.
fn pairs<T: Scalar>(f: &mut [T], op: impl Fn(&mut T, &mut T)) {
    let n = f.len();
    debug_assert!(n.is_power_of_two());
    let mut h = 1;
    while h < n {
        for block in f.chunks_exact_mut(2 * h) {
            let (lo, hi) = block.split_at_mut(h);
            for (a, b) in lo.iter_mut().zip(hi.iter_mut()) {
                op(a, b);
            }
        }
        h *= 2;
    }
}

/// Subset sum `Z`: `f[c] ← Σ_{A ⊆ c} f[A]`.
pub fn zeta_subset<T: Scalar>(f: &mut [T]) {
    pairs(f, |lo, hi| *hi = *hi + *lo);
}

/// Subset Möbius `M = Z⁻¹`: `f[c] ← Σ_{A ⊆ c} (−1)^{|c∖A|} f[A]`.
pub fn mobius_subset<T: Scalar>(f: &mut [T]) {
    pairs(f, |lo, hi| *hi = *hi - *lo);
}

/// Superset sum `Z↑`: `f[A] ← Σ_{B ⊇ A} f[B]`.
pub fn zeta_superset<T: Scalar>(f: &mut [T]) {
    pairs(f, |lo, hi| *lo = *lo + *hi);
}

/// Superset Möbius `M↑ = (Z↑)⁻¹`: `f[A] ← Σ_{B ⊇ A} (−1)^{|B∖A|} f[B]`.
pub fn mobius_superset<T: Scalar>(f: &mut [T]) {
    pairs(f, |lo, hi| *lo = *lo - *hi);
}

/// `(−1)^{popcount(k)}`.
#[inline]
pub fn parity_sign(k: usize) -> f64 {
    if k.count_ones().is_multiple_of(2) {
        1.0
    } else {
        -1.0
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sample() -> Vec<f64> {
        (0..16).map(|i| (i as f64 * 0.37).sin()).collect()
    }

    #[test]
    fn subset_transforms_match_their_definitions_and_invert() {
        let f = sample();
        let mut z = f.clone();
        zeta_subset(&mut z);
        let mut zu = f.clone();
        zeta_superset(&mut zu);
        for c in 0..16usize {
            let sub: f64 = (0..16usize).filter(|a| a & c == *a).map(|a| f[a]).sum();
            let sup: f64 = (0..16usize).filter(|b| b & c == c).map(|b| f[b]).sum();
            assert!((z[c] - sub).abs() < 1e-12);
            assert!((zu[c] - sup).abs() < 1e-12);
        }
        mobius_subset(&mut z);
        mobius_superset(&mut zu);
        for c in 0..16 {
            assert!((z[c] - f[c]).abs() < 1e-12);
            assert!((zu[c] - f[c]).abs() < 1e-12);
        }
    }

    #[test]
    fn walsh_squares_to_n() {
        let f = sample();
        let mut g = f.clone();
        walsh(&mut g);
        walsh(&mut g);
        for (a, b) in g.iter().zip(&f) {
            assert!((a / 16.0 - b).abs() < 1e-12);
        }
    }
}

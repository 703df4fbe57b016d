//! The fast Walsh–Hadamard transform, the only kernel the cluster-variation engine needs.
//!
//! `(W f)[σ] = Σ_c f[c] (−1)^{popcount(c ∧ σ)}`: with bit k of `σ` set when spin k is
//! −1, `(−1)^{popcount(c ∧ σ)} = χ_c(σ) = Π_{k∈c} σ_k`. W is symmetric and `W² = 2^n`.
//! In-place, `n 2^n` additions, no allocation.

/// Transform `f` (length a power of two) in place.
pub fn wht(f: &mut [f64]) {
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
}

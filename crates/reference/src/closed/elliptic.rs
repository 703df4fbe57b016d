//! Complete elliptic integrals of the first and second kind by the arithmetic–geometric
//! mean (AGM).
//!
//! With `a₀ = 1`, `b₀ = k'` (the complementary modulus, `k'² = 1 − k²`), `c₀ = k` and
//! `a_{n+1} = (a_n + b_n)/2`, `b_{n+1} = √(a_n b_n)`, `c_{n+1} = (a_n − b_n)/2`:
//!
//! ```text
//! K(k) = π / (2 a_∞),      E(k) = K(k) · (1 − Σ_{n≥0} 2^{n−1} c_n²)
//! ```
//!
//! (Abramowitz & Stegun 1964, §17.6). The iteration converges quadratically; the moduli
//! here are the modulus `k` itself (not the parameter `m = k²`).

use std::f64::consts::FRAC_PI_2;

/// `K(k)` and `E(k)` from the modulus `k` and its complement `kp = √(1 − k²)`, both given
/// so callers that know `k'` in closed form (Onsager's `k' = 2 tanh² 2K − 1`) keep full
/// precision near `k = 1`. Sign of `kp` is ignored. Returns `(∞, 1)` at `k' = 0` and NaN
/// for a modulus outside `[0, 1]`.
pub fn complete_ke(k: f64, kp: f64) -> (f64, f64) {
    let kp = kp.abs();
    if !(0.0..=1.0).contains(&k) || !(0.0..=1.0).contains(&kp) {
        return (f64::NAN, f64::NAN);
    }
    if kp == 0.0 {
        return (f64::INFINITY, 1.0);
    }
    let (mut a, mut b) = (1.0_f64, kp);
    let mut sum = 0.5 * k * k; // n = 0 term: 2^{-1} c₀²
    let mut pow2 = 0.5;
    for _ in 0..64 {
        let c = 0.5 * (a - b);
        let an = 0.5 * (a + b);
        b = (a * b).sqrt();
        a = an;
        pow2 *= 2.0;
        sum += pow2 * c * c;
        if c.abs() <= 1e-17 * a {
            break;
        }
    }
    let kk = FRAC_PI_2 / a;
    (kk, kk * (1.0 - sum))
}

/// Complete elliptic integral of the first kind
/// `K(k) = ∫₀^{π/2} dθ / √(1 − k² sin² θ)`, by the AGM (Abramowitz & Stegun 1964, 17.6).
pub fn elliptic_k(k: f64) -> f64 {
    complete_ke(k, ((1.0 - k) * (1.0 + k)).max(0.0).sqrt()).0
}

/// Complete elliptic integral of the second kind
/// `E(k) = ∫₀^{π/2} √(1 − k² sin² θ) dθ`, by the AGM (Abramowitz & Stegun 1964, 17.6).
pub fn elliptic_e(k: f64) -> f64 {
    complete_ke(k, ((1.0 - k) * (1.0 + k)).max(0.0).sqrt()).1
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::PI;

    #[test]
    fn k_and_e_at_zero_are_pi_over_two() {
        // K(0) = E(0) = π/2: the integrands are 1 (definition).
        assert!((elliptic_k(0.0) - FRAC_PI_2).abs() < 1e-15);
        assert!((elliptic_e(0.0) - FRAC_PI_2).abs() < 1e-15);
    }

    #[test]
    fn legendre_relation_holds() {
        // Legendre's relation E K' + E' K − K K' = π/2 (Abramowitz & Stegun 1964, 17.3.13).
        for &k in &[0.1, 0.3, 0.5, 0.7, 0.9, 0.99] {
            let kp = (1.0f64 - k * k).sqrt();
            let (kk, e) = complete_ke(k, kp);
            let (kk2, e2) = complete_ke(kp, k);
            assert!(
                (e * kk2 + e2 * kk - kk * kk2 - FRAC_PI_2).abs() < 1e-12,
                "k = {k}"
            );
        }
    }

    #[test]
    fn lemniscate_value() {
        // K(1/√2) = Γ(1/4)² / (4√π) (Legendre's lemniscatic case; Whittaker & Watson 1927,
        // §22.8); Γ(1/4) = 3.6256099082219083 (from memory).
        let g = 3.625_609_908_221_908_f64;
        let expect = g * g / (4.0 * PI.sqrt());
        assert!((elliptic_k(std::f64::consts::FRAC_1_SQRT_2) - expect).abs() < 1e-14);
    }

    #[test]
    fn e_at_one_is_one_and_k_diverges() {
        assert_eq!(elliptic_e(1.0), 1.0);
        assert!(elliptic_k(1.0).is_infinite());
        assert!(elliptic_k(1.5).is_nan());
    }
}

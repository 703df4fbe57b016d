//! Exact critical temperatures (k_B = 1, in units of the coupling J).
//!
//! * square: `sinh(2J₁/Tc) sinh(2J₂/Tc) = 1` (Onsager 1944, Phys. Rev. 65, 117),
//!   isotropic `Tc = 2J/ln(1 + √2)` (Kramers & Wannier 1941, Phys. Rev. 60, 252);
//! * triangular: `Tc = 4J/ln 3`; honeycomb: `Tc = 2J/ln(2 + √3)` (Houtappel 1950,
//!   Physica 16, 425);
//! * kagome: `Tc = 4J/ln(3 + 2√3)` (Kanô & Naya 1953, Prog. Theor. Phys. 10, 158);
//! * Bethe lattice of coordination z: `Tc = 2J/ln(z/(z − 2))` (Bethe 1935, Proc. R. Soc.
//!   A 150, 552).

/// Isotropic square lattice: `2|J|/ln(1 + √2)` (Kramers & Wannier 1941; Onsager 1944).
pub fn square_tc(j: f64) -> f64 {
    2.0 * j.abs() / std::f64::consts::SQRT_2.ln_1p()
}

/// Anisotropic square lattice: the root of `sinh(2|J₁|/T) sinh(2|J₂|/T) = 1` (Onsager
/// 1944), by bisection in β = 1/T. `None` when a coupling is zero (decoupled chains, no
/// transition) or not finite.
pub fn anisotropic_square_tc(j1: f64, j2: f64) -> Option<f64> {
    let (a, b) = (j1.abs(), j2.abs());
    if a == 0.0 || b == 0.0 || !a.is_finite() || !b.is_finite() {
        return None;
    }
    let p = |beta: f64| (2.0 * a * beta).sinh() * (2.0 * b * beta).sinh();
    let (mut lo, mut hi) = (0.0, 1.0 / a.max(b));
    while p(hi) < 1.0 {
        lo = hi;
        hi *= 2.0;
    }
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if mid <= lo || mid >= hi {
            break;
        }
        if p(mid) < 1.0 {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    Some(2.0 / (lo + hi))
}

/// Triangular lattice, ferromagnetic J: `4J/ln 3` (Houtappel 1950).
pub fn triangular_tc(j: f64) -> f64 {
    4.0 * j / 3f64.ln()
}

/// Honeycomb lattice: `2|J|/ln(2 + √3)` (Houtappel 1950).
pub fn honeycomb_tc(j: f64) -> f64 {
    2.0 * j.abs() / (2.0 + 3f64.sqrt()).ln()
}

/// Kagome lattice, ferromagnetic J: `4J/ln(3 + 2√3)` (Kanô & Naya 1953).
pub fn kagome_tc(j: f64) -> f64 {
    4.0 * j / (3.0 + 2.0 * 3f64.sqrt()).ln()
}

/// Bethe lattice of coordination `z ≥ 3`, ferromagnetic J: `2J/ln(z/(z − 2))` (Bethe
/// 1935). `None` for `z < 3` (the chain has no transition).
pub fn bethe_tc(z: usize, j: f64) -> Option<f64> {
    (z >= 3).then(|| 2.0 * j / (z as f64 / (z as f64 - 2.0)).ln())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn published_values() {
        // 2/ln(1+√2) = 2.269185314213022 (Onsager 1944).
        assert!((square_tc(1.0) - 2.269_185_314_213_022).abs() < 1e-14);
        // 4/ln 3 = 3.640956 (Houtappel 1950).
        assert!((triangular_tc(1.0) - 3.640_956).abs() < 1e-6);
        // 2/ln(2+√3) = 1.518651 (Houtappel 1950).
        assert!((honeycomb_tc(1.0) - 1.518_651).abs() < 1e-6);
        // 4/ln(3+2√3) = 2.143319 (Kanô & Naya 1953).
        assert!((kagome_tc(1.0) - 2.143_319).abs() < 1e-6);
        // z = 4: 2/ln 2 = 2.885390 (Bethe 1935).
        assert!((bethe_tc(4, 1.0).unwrap() - 2.885_390).abs() < 1e-6);
        assert_eq!(bethe_tc(2, 1.0), None);
    }

    #[test]
    fn anisotropic_reduces_and_satisfies_criterion() {
        assert!((anisotropic_square_tc(1.0, 1.0).unwrap() - square_tc(1.0)).abs() < 1e-13);
        let tc = anisotropic_square_tc(1.0, 0.3).unwrap();
        let p = (2.0 / tc).sinh() * (0.6 / tc).sinh();
        assert!((p - 1.0).abs() < 1e-13);
        assert_eq!(anisotropic_square_tc(1.0, 0.0), None);
        assert!((anisotropic_square_tc(-1.0, 0.3).unwrap() - tc).abs() < 1e-14);
    }
}

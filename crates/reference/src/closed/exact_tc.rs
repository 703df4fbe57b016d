//! Exact critical temperatures (k_B = 1, in units of the coupling J).
//!
//! * square: `sinh(2J₁/Tc) sinh(2J₂/Tc) = 1` (Onsager 1944, Phys. Rev. 65, 117),
//!   isotropic `Tc = 2J/ln(1 + √2)` (Kramers & Wannier 1941, Phys. Rev. 60, 252);
//! * triangular: `Tc = 4J/ln 3`; honeycomb: `Tc = 2J/ln(2 + √3)` (Houtappel 1950,
//!   Physica 16, 425);
//! * triangular with three couplings `J₁, J₂, J₃ > 0` along its three bond directions,
//!   `Kᵢ = Jᵢ/Tc`: `sinh 2K₁ sinh 2K₂ + sinh 2K₂ sinh 2K₃ + sinh 2K₃ sinh 2K₁ = 1`;
//!   honeycomb with three couplings (either sign; the lattice is bipartite and every sign
//!   pattern is gauge-equivalent to `|Jᵢ|`):
//!   `tanh K₁ tanh K₂ + tanh K₂ tanh K₃ + tanh K₃ tanh K₁ = 1` (both Houtappel 1950; the
//!   two are exchanged by duality, `tanh K*ᵢ = e^{−2Kᵢ}`, and by the star–triangle
//!   transformation, which the tests check numerically);
//! * kagome: `Tc = 4J/ln(3 + 2√3)` (Syozi 1951, Prog. Theor. Phys. 6, 306, where it was
//!   first obtained; also Kanô & Naya 1953, Prog. Theor. Phys. 10, 158);
//! * Bethe lattice of coordination z: `Tc = 2J/ln(z/(z − 2))` (Bethe 1935, Proc. R. Soc.
//!   A 150, 552).

/// Isotropic square lattice: `2|J|/ln(1 + √2)` (Kramers & Wannier 1941; Onsager 1944).
pub fn square_tc(j: f64) -> f64 {
    2.0 * j.abs() / std::f64::consts::SQRT_2.ln_1p()
}

/// The temperature `T = 1/β` at which `p(β)`, increasing from `p(0) < 1` without bound,
/// crosses 1: bisection in β from the bracket `[0, β₀]`, doubled until it holds a root.
/// `β₀` should be of the order of the inverse largest coupling.
fn crossing_temperature(p: impl Fn(f64) -> f64, beta0: f64) -> f64 {
    let (mut lo, mut hi) = (0.0, beta0);
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
    2.0 / (lo + hi)
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
    Some(crossing_temperature(p, 1.0 / a.max(b)))
}

/// Triangular lattice with couplings `j = [J₁, J₂, J₃]` along its three bond directions,
/// all ferromagnetic: the root of
/// `sinh 2K₁ sinh 2K₂ + sinh 2K₂ sinh 2K₃ + sinh 2K₃ sinh 2K₁ = 1`, `Kᵢ = Jᵢ/T`
/// (Houtappel 1950). With `J₃ = 0` it is Onsager's anisotropic square lattice. `None`
/// unless every coupling is positive and finite (a negative one frustrates the
/// triangles: another problem, with another condition).
pub fn anisotropic_triangular_tc(j: [f64; 3]) -> Option<f64> {
    if j.iter().any(|&x| !(x > 0.0 && x.is_finite())) {
        return None;
    }
    let p = |beta: f64| {
        let s = j.map(|x| (2.0 * beta * x).sinh());
        s[0] * s[1] + s[1] * s[2] + s[2] * s[0]
    };
    Some(crossing_temperature(p, 1.0 / j[0].max(j[1]).max(j[2])))
}

/// Honeycomb lattice with couplings `j = [J₁, J₂, J₃]` on its three bond directions, of
/// either sign (every sign pattern is gauge-equivalent to `|Jᵢ|`): the root of
/// `tanh K₁ tanh K₂ + tanh K₂ tanh K₃ + tanh K₃ tanh K₁ = 1`, `Kᵢ = |Jᵢ|/T` (Houtappel
/// 1950). `None` when a coupling is zero (decoupled chains, no transition) or not finite.
pub fn anisotropic_honeycomb_tc(j: [f64; 3]) -> Option<f64> {
    let a = j.map(f64::abs);
    if a.iter().any(|&x| x == 0.0 || !x.is_finite()) {
        return None;
    }
    let p = |beta: f64| {
        let t = a.map(|x| (beta * x).tanh());
        t[0] * t[1] + t[1] * t[2] + t[2] * t[0]
    };
    // p rises from 0 at β = 0 to 3 as β → ∞ (every tanh → 1): the crossing exists.
    Some(crossing_temperature(p, 1.0 / a[0].max(a[1]).max(a[2])))
}

/// Triangular lattice, ferromagnetic J: `4J/ln 3` (Houtappel 1950).
pub fn triangular_tc(j: f64) -> f64 {
    4.0 * j / 3f64.ln()
}

/// Honeycomb lattice: `2|J|/ln(2 + √3)` (Houtappel 1950).
pub fn honeycomb_tc(j: f64) -> f64 {
    2.0 * j.abs() / (2.0 + 3f64.sqrt()).ln()
}

/// Kagome lattice, ferromagnetic J: `4J/ln(3 + 2√3)` (Syozi 1951).
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
        // 4/ln(3+2√3) = 2.143319 (Syozi 1951, Prog. Theor. Phys. 6, 306).
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

    /// Star–triangle transformation, computed numerically: summing out a spin joined to
    /// s₁, s₂, s₃ by K₁, K₂, K₃ leaves couplings L₁ (s₂s₃), L₂ (s₃s₁), L₃ (s₁s₂), read off
    /// as the Walsh coefficients of the log-weight (the transformation: Onsager 1944,
    /// Phys. Rev. 65, 117; the projection is elementary).
    fn star_triangle(k: [f64; 3]) -> [f64; 3] {
        let mut l = [0.0; 3];
        for s in 0..8u32 {
            let sg = |i: u32| if s >> i & 1 == 1 { -1.0 } else { 1.0 };
            let (s1, s2, s3) = (sg(0), sg(1), sg(2));
            let field = k[0] * s1 + k[1] * s2 + k[2] * s3;
            let lw = (2.0 * field.cosh()).ln();
            l[0] += lw * s2 * s3 / 8.0;
            l[1] += lw * s3 * s1 / 8.0;
            l[2] += lw * s1 * s2 / 8.0;
        }
        l
    }

    fn triangular_condition(k: [f64; 3]) -> f64 {
        let s = k.map(|x| (2.0 * x).sinh());
        s[0] * s[1] + s[1] * s[2] + s[2] * s[0]
    }

    #[test]
    fn anisotropic_triangular_and_honeycomb_reduce_to_the_isotropic_limits() {
        // Houtappel (1950): equal couplings give 4J/ln 3 and 2J/ln(2 + √3).
        for j in [0.5, 1.0, 2.0] {
            let t = anisotropic_triangular_tc([j; 3]).unwrap();
            assert!((t - triangular_tc(j)).abs() < 1e-13 * t, "{t}");
            let h = anisotropic_honeycomb_tc([j; 3]).unwrap();
            assert!((h - honeycomb_tc(j)).abs() < 1e-13 * h, "{h}");
        }
        // Honeycomb signs are a gauge choice.
        let h = anisotropic_honeycomb_tc([1.0, -0.7, 0.4]).unwrap();
        assert_eq!(h, anisotropic_honeycomb_tc([1.0, 0.7, 0.4]).unwrap());
        assert_eq!(anisotropic_honeycomb_tc([1.0, 0.0, 0.4]), None);
        assert_eq!(anisotropic_triangular_tc([1.0, -0.5, 0.4]), None);
    }

    #[test]
    fn anisotropic_triangular_and_honeycomb_reduce_to_the_square_lattice() {
        // J₃ → 0 on the triangular lattice leaves the square lattice (Onsager 1944);
        // J₃ → ∞ on the honeycomb lattice fuses each J₃ pair into one spin with two J₁
        // and two J₂ bonds: the square lattice again (elementary).
        let sq = anisotropic_square_tc(1.0, 0.4).unwrap();
        let t = anisotropic_triangular_tc([1.0, 0.4, 1e-12]).unwrap();
        assert!((t - sq).abs() < 1e-9, "{t} vs {sq}");
        let h = anisotropic_honeycomb_tc([1.0, 0.4, 1e4]).unwrap();
        assert!((h - sq).abs() < 1e-9, "{h} vs {sq}");
    }

    #[test]
    fn honeycomb_and_triangular_conditions_agree_under_star_triangle_and_duality() {
        // Decimating one sublattice of the honeycomb lattice (star–triangle) leaves a
        // triangular lattice with the same critical point; the dual of the triangular
        // lattice at Kᵢ is the honeycomb lattice at tanh K*ᵢ = e^{−2Kᵢ} (Kramers & Wannier
        // 1941 duality on this pair of lattices: common practice). Both maps are computed
        // here from their definitions, not from the conditions under test.
        for j in [[1.0, 0.6, 0.3], [1.0, 1.0, 0.2], [0.3, 2.0, 0.9]] {
            let tc = anisotropic_honeycomb_tc(j).unwrap();
            let l = star_triangle(j.map(|x| x / tc));
            assert!(
                (triangular_condition(l) - 1.0).abs() < 1e-10,
                "{j:?}: {l:?}"
            );
            let tt = anisotropic_triangular_tc(j).unwrap();
            let dual = j.map(|x| (-2.0 * x / tt).exp().atanh());
            let td = anisotropic_honeycomb_tc(dual).unwrap();
            assert!(
                (td - 1.0).abs() < 1e-10,
                "{j:?}: dual honeycomb at T = {td}"
            );
        }
    }
}

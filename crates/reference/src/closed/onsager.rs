//! Onsager's square lattice (Onsager 1944, Phys. Rev. 65, 117) at zero field: free
//! energy, internal energy and specific heat, isotropic and anisotropic, and the
//! spontaneous magnetisation (Yang 1952, Phys. Rev. 85, 808; anisotropic: Chang 1952,
//! Phys. Rev. 88, 1422).
//!
//! Anisotropic couplings `J₁` (one bond direction), `J₂` (the other), `Kᵢ = βJᵢ`,
//! `cᵢ = cosh 2Kᵢ`, `sᵢ = sinh 2Kᵢ`. Onsager's double integral
//!
//! ```text
//! −βf = ln 2 + (1/2π²) ∫₀^π∫₀^π ln[c₁c₂ − s₁ cos ω₁ − s₂ cos ω₂] dω₁ dω₂
//! ```
//!
//! becomes, after the elementary ω₂ integration, the single integral used here:
//!
//! ```text
//! −βf = ln 2 + (1/2π) ∫₀^π ln{[A + √(A² − s₂²)]/2} dω,   A = c₁c₂ − s₁ cos ω
//! ```
//!
//! (equivalently Onsager's `½ ln(2 sinh 2K₂) + (1/2π)∫₀^π γ(ω) dω`, `cosh γ = A/s₂`).
//! u and c follow by differentiating under the integral (see [`super::planar`]); the
//! gap `A − s₂ = (1 − s₁s₂)²/(c₁c₂ + s₁ + s₂) + 2 s₁ sin²(ω/2)` is used in this exact form
//! so the integrand stays accurate at Tc.
//!
//! Isotropic case `J₁ = J₂ = J`, `k = 2 sinh 2K / cosh² 2K`, `k' = 2 tanh² 2K − 1`:
//!
//! ```text
//! u = −J coth 2K [1 + (2/π) k' K(k)]
//! c = (4/π)(K coth 2K)² {K(k) − E(k) − (1 − tanh² 2K)[π/2 + k' K(k)]}
//! ```
//!
//! (Onsager 1944; this form of c as in Hjorth-Jensen 2015, *Computational Physics*
//! lecture notes, eq. 13.1 — both checked in the tests against the derivatives of the
//! integral form).
//!
//! Antiferromagnetic couplings are mapped to ferromagnetic ones by flipping every other
//! spin (the square lattice is bipartite): f, u and c depend on `|J₁|`, `|J₂|` only.

use std::f64::consts::PI;

use super::elliptic::complete_ke;
use super::planar::{evaluate, PlanarThermo, Terms};

fn square_terms(beta: f64, j1: f64, j2: f64) -> impl Fn(f64) -> Terms + Copy {
    let (k1, k2) = (beta * j1.abs(), beta * j2.abs());
    let (j1, j2) = (j1.abs(), j2.abs());
    let (c1, s1) = ((2.0 * k1).cosh(), (2.0 * k1).sinh());
    let (c2, s2) = ((2.0 * k2).cosh(), (2.0 * k2).sinh());
    let one_minus = 1.0 - s1 * s2;
    let gap0 = one_minus * one_minus / (c1 * c2 + s1 + s2);
    move |w: f64| {
        let cw = w.cos();
        let sh = (0.5 * w).sin();
        Terms {
            a: c1 * c2 - s1 * cw,
            a1: 2.0 * j1 * (s1 * c2 - c1 * cw) + 2.0 * j2 * c1 * s2,
            a2: 4.0 * j1 * j1 * (c1 * c2 - s1 * cw)
                + 8.0 * j1 * j2 * s1 * s2
                + 4.0 * j2 * j2 * c1 * c2,
            d: s2 * s2,
            d1: 4.0 * j2 * s2 * c2,
            d2: 8.0 * j2 * j2 * (c2 * c2 + s2 * s2),
            gap: gap0 + 2.0 * s1 * sh * sh,
        }
    }
}

/// Square lattice with couplings `j1`, `j2` along its two bond directions at temperature
/// `t > 0`, zero field: `−βf`, `f`, `u`, `c` per site from Onsager's integral in the single
/// integral form of the module docs (Onsager 1944), u and c by analytic differentiation
/// under the integral. At exactly `t = Tc` the specific heat is infinite.
pub fn square(t: f64, j1: f64, j2: f64) -> PlanarThermo {
    evaluate(
        t,
        std::f64::consts::LN_2,
        0.5 / PI,
        square_terms(1.0 / t, j1, j2),
    )
}

/// Isotropic square lattice (coupling `j`, temperature `t > 0`, zero field): `f` from
/// Onsager's integral, `u` and `c` from the elliptic-integral closed forms of the module
/// docs (Onsager 1944).
pub fn square_isotropic(t: f64, j: f64) -> PlanarThermo {
    let j = j.abs();
    let k = j / t;
    let (c2, s2) = ((2.0 * k).cosh(), (2.0 * k).sinh());
    let th = s2 / c2;
    let kappa = 2.0 * s2 / (c2 * c2);
    let kappa_p = 2.0 * th * th - 1.0;
    let (ek, ee) = complete_ke(kappa.min(1.0), kappa_p);
    let coth = c2 / s2;
    // k' K(k) → 0 at Tc (K diverges only logarithmically).
    let kpk = if kappa_p == 0.0 { 0.0 } else { kappa_p * ek };
    let energy = -j * coth * (1.0 + 2.0 / PI * kpk);
    let pre = 4.0 / PI * (k * coth) * (k * coth);
    let specific_heat = pre * (ek - ee - (1.0 - th * th) * (0.5 * PI + kpk));
    let mbf = square(t, j, j).minus_beta_f;
    PlanarThermo {
        minus_beta_f: mbf,
        free_energy: -t * mbf,
        energy,
        specific_heat,
    }
}

/// Spontaneous magnetisation per site of the square lattice at zero field (the h → 0⁺
/// branch): `m = [1 − (sinh 2K₁ sinh 2K₂)^{−2}]^{1/8}` below Tc, 0 above (Yang 1952 for
/// `K₁ = K₂`, where it reads `(1 − sinh⁻⁴ 2K)^{1/8}`; Chang 1952 for `K₁ ≠ K₂`). Returns 0
/// unless both couplings are ferromagnetic (antiferromagnetic order is staggered, its
/// uniform magnetisation vanishes).
pub fn square_magnetization(t: f64, j1: f64, j2: f64) -> f64 {
    if j1 <= 0.0 || j2 <= 0.0 {
        return 0.0;
    }
    let p = (2.0 * j1 / t).sinh() * (2.0 * j2 / t).sinh();
    if p <= 1.0 {
        0.0
    } else {
        (1.0 - 1.0 / (p * p)).powf(0.125)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const TC: f64 = 2.269_185_314_213_022; // 2/ln(1+√2), Onsager (1944)

    #[test]
    fn free_energy_at_tc_is_half_ln2_plus_2g_over_pi() {
        // −βf(Tc) = ½ ln 2 + 2G/π = 0.9296953983416102 (Onsager 1944, eq. 121; OEIS A242743).
        let got = square(TC, 1.0, 1.0).minus_beta_f;
        assert!((got - 0.929_695_398_341_610_2).abs() < 1e-12, "{got}");
    }

    #[test]
    fn energy_at_tc_is_minus_sqrt2() {
        // u(Tc) = −√2 J: coth 2Kc = √2 and the k' K(k) term vanishes (Onsager 1944).
        let u = square_isotropic(TC, 1.0).energy;
        assert!((u + std::f64::consts::SQRT_2).abs() < 1e-12, "{u}");
        let u2 = square(TC * (1.0 + 1e-9), 1.0, 1.0).energy;
        assert!((u2 + std::f64::consts::SQRT_2).abs() < 1e-6, "{u2}");
    }

    #[test]
    fn elliptic_forms_equal_integral_derivatives() {
        for &t in &[1.0, 1.5, 2.0, 2.2, 2.35, 2.5, 3.0, 5.0] {
            let a = square_isotropic(t, 1.0);
            let b = square(t, 1.0, 1.0);
            assert!(
                (a.energy - b.energy).abs() < 1e-11,
                "u at T={t}: {} vs {}",
                a.energy,
                b.energy
            );
            assert!(
                (a.specific_heat - b.specific_heat).abs() < 1e-8,
                "c at T={t}: {} vs {}",
                a.specific_heat,
                b.specific_heat
            );
        }
    }

    #[test]
    fn decoupled_rows_are_chains() {
        // J₂ = 0: independent chains, −βf = ln(2 cosh K), u = −J tanh K (Ising 1925).
        let t = 1.7;
        let k = 1.0 / t;
        let s = square(t, 1.0, 0.0);
        assert!((s.minus_beta_f - (2.0 * k.cosh()).ln()).abs() < 1e-13);
        assert!((s.energy + k.tanh()).abs() < 1e-12);
        let s = square(t, 0.0, 1.0);
        assert!((s.minus_beta_f - (2.0 * k.cosh()).ln()).abs() < 1e-13);
        assert!((s.energy + k.tanh()).abs() < 1e-12);
    }

    #[test]
    fn anisotropic_is_symmetric_and_consistent() {
        for &t in &[1.0, 1.8, 2.5, 4.0] {
            let a = square(t, 1.0, 0.4);
            let b = square(t, 0.4, 1.0);
            assert!((a.minus_beta_f - b.minus_beta_f).abs() < 1e-12);
            assert!((a.energy - b.energy).abs() < 1e-10);
            assert!((a.specific_heat - b.specific_heat).abs() < 1e-7);
            // u = ∂(βf)/∂β by central differences (thermodynamic identity).
            let db = 1e-5;
            let beta = 1.0 / t;
            let f = |b: f64| square(1.0 / b, 1.0, 0.4).minus_beta_f;
            let u_fd = -(f(beta + db) - f(beta - db)) / (2.0 * db);
            assert!(
                (u_fd - a.energy).abs() < 1e-7,
                "T={t}: {u_fd} vs {}",
                a.energy
            );
            let c_fd = beta * beta * (f(beta + db) - 2.0 * f(beta) + f(beta - db)) / (db * db);
            assert!(
                (c_fd - a.specific_heat).abs() < 1e-3,
                "T={t}: {c_fd} vs {}",
                a.specific_heat
            );
        }
    }

    #[test]
    fn yang_magnetization() {
        assert_eq!(square_magnetization(2.3, 1.0, 1.0), 0.0);
        let m = square_magnetization(2.0, 1.0, 1.0);
        // (1 − sinh⁻⁴ 1)^{1/8} evaluated independently (Yang 1952).
        let expect = (1.0 - 1.0 / 1.0f64.sinh().powi(4)).powf(0.125);
        assert!((m - expect).abs() < 1e-15);
        assert!(m > 0.91 && m < 0.912);
    }
}

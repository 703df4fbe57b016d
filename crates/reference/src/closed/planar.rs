//! The single-integral form shared by the planar free energies (square, triangular,
//! honeycomb): after one angular integration of the Onsager-type double integral
//! (`∫₀^{2π} ln(A − R cos ω) dω = 2π ln[(A + √(A² − R²))/2]`, elementary),
//!
//! ```text
//! −βf = c₀ + w ∫₀^π g(ω) dω,     g = ln[(A + √(A² − D))/2],   D = R²
//! ```
//!
//! with `A(β, ω)`, `D(β, ω)` supplied by each lattice together with their first two
//! β-derivatives. The internal energy and specific heat per site follow by
//! differentiating under the integral:
//!
//! ```text
//! u = −w ∫ g' dω,    c = β² w ∫ g'' dω,     r = √(A² − D),
//! r' = (2AA' − D')/(2r),  g' = (A' + r')/(A + r),
//! r'' = (2A'² + 2AA'' − D'')/(2r) − r'²/r,  g'' = (A'' + r'')/(A + r) − g'².
//! ```
//!
//! `r` vanishes only at ω = 0 and T = Tc, where the integrand of `c` diverges (the
//! logarithmic specific heat of Onsager 1944); each lattice supplies the gap
//! `A − √D` in a cancellation-free form so that `r` stays accurate near Tc.

use super::quad::integrate;

/// `A, A', A'', D, D', D''` at one angle (derivatives with respect to β), plus the gap
/// `A − √D ≥ 0` computed without cancellation.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Terms {
    pub a: f64,
    pub a1: f64,
    pub a2: f64,
    pub d: f64,
    pub d1: f64,
    pub d2: f64,
    pub gap: f64,
}

impl Terms {
    fn r(&self) -> f64 {
        (self.gap.max(0.0) * (self.a + self.d.max(0.0).sqrt())).sqrt()
    }
    fn g(&self) -> f64 {
        (0.5 * (self.a + self.r())).ln()
    }
    fn g1(&self) -> (f64, f64, f64) {
        let r = self.r();
        let r1 = (2.0 * self.a * self.a1 - self.d1) / (2.0 * r);
        ((self.a1 + r1) / (self.a + r), r, r1)
    }
    fn g2(&self) -> f64 {
        let (g1, r, r1) = self.g1();
        let r2 =
            (2.0 * self.a1 * self.a1 + 2.0 * self.a * self.a2 - self.d2) / (2.0 * r) - r1 * r1 / r;
        (self.a2 + r2) / (self.a + r) - g1 * g1
    }
}

const TOL: f64 = 1e-13;

/// `∫₀^π g`, `∫₀^π g'`, `∫₀^π g''` for the integrand family `terms(ω)`.
pub(crate) fn log_z_integral(terms: impl Fn(f64) -> Terms) -> f64 {
    integrate(|w| terms(w).g(), 0.0, std::f64::consts::PI, TOL)
}

/// `∫₀^π g' dω`.
pub(crate) fn energy_integral(terms: impl Fn(f64) -> Terms) -> f64 {
    integrate(|w| terms(w).g1().0, 0.0, std::f64::consts::PI, TOL)
}

/// `∫₀^π g'' dω`.
pub(crate) fn heat_integral(terms: impl Fn(f64) -> Terms) -> f64 {
    integrate(|w| terms(w).g2(), 0.0, std::f64::consts::PI, 1e-11)
}

/// Free energy, energy and specific heat per site from `−βf = c₀ + w ∫₀^π g`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PlanarThermo {
    /// `ln Z / N = −βf`.
    pub minus_beta_f: f64,
    /// Free energy per site `f`.
    pub free_energy: f64,
    /// Internal energy per site `u = ∂(βf)/∂β`.
    pub energy: f64,
    /// Specific heat per site `c = β² ∂²(−βf)/∂β²`.
    pub specific_heat: f64,
}

pub(crate) fn evaluate(
    t: f64,
    c0: f64,
    weight: f64,
    terms: impl Fn(f64) -> Terms + Copy,
) -> PlanarThermo {
    let beta = 1.0 / t;
    let mbf = c0 + weight * log_z_integral(terms);
    PlanarThermo {
        minus_beta_f: mbf,
        free_energy: -t * mbf,
        energy: -weight * energy_integral(terms),
        specific_heat: beta * beta * weight * heat_integral(terms),
    }
}

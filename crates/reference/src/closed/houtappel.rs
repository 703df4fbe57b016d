//! Triangular and honeycomb lattices at zero field (Houtappel 1950, Physica 16, 425;
//! Wannier 1950, Phys. Rev. 79, 357 for the triangular lattice), ferromagnetic `J`,
//! `K = βJ`, `c = cosh 2K`, `s = sinh 2K`:
//!
//! ```text
//! triangular: −βf = ln 2 + (1/8π²)∬ ln[c³ + s³ − s(cos ω₁ + cos ω₂ + cos(ω₁+ω₂))]
//! honeycomb:  −βf = ¾ ln 2 + (1/16π²)∬ ln[c³ + 1 − s²(cos ω₁ + cos ω₂ + cos(ω₁+ω₂))]
//! ```
//!
//! (both integrals over `[0, 2π]²`, per site; forms quoted from memory and verified in
//! the tests: high- and low-temperature limits, the singular point at the exact Tc, and
//! agreement with transfer matrices on wide strips). Since `cos ω₂ + cos(ω₁+ω₂)` is a
//! cosine of amplitude `2|cos(ω₁/2)|`, the ω₂ integral is elementary and both reduce to
//! the single-integral form of [`super::planar`]:
//!
//! ```text
//! triangular: A = c³ + s³ − s cos ω,   D = 4 s² cos²(ω/2),   −βf = ln 2 + (1/2π)∫₀^π g
//! honeycomb:  A = c³ + 1 − s² cos ω,   D = 4 s⁴ cos²(ω/2),   −βf = ¾ ln 2 + (1/4π)∫₀^π g
//! ```
//!
//! The gaps at ω = 0 are written without cancellation through the identities
//! `c³ + s³ − 3s = (1 − 3s²)² / (c³ − s³ + 3s)` and
//! `c³ + 1 − 3s² = s²(s² − 3)² / (c³ − 1 + 3s²)`, whose zeros are the exact critical
//! points `sinh 2K = 1/√3` (triangular) and `cosh 2K = 2` (honeycomb).
//!
//! Also the triangular spontaneous magnetisation,
//! `m = [1 − 16x³ / ((1 + 3x)(1 − x)³)]^{1/8}`, `x = e^{−4K}` (Potts 1952, Phys. Rev.
//! 88, 352), checked against its low-temperature series `1 − 2x³ − 12x⁵`.

use std::f64::consts::PI;

use super::planar::{evaluate, PlanarThermo, Terms};

fn triangular_terms(beta: f64, j: f64) -> impl Fn(f64) -> Terms + Copy {
    let k = beta * j;
    let (c, s) = ((2.0 * k).cosh(), (2.0 * k).sinh());
    let (c3, s3) = (c * c * c, s * s * s);
    // c³ − s³ = (c − s)(c² + cs + s²) with c − s = e^{−2K}: no cancellation at low T.
    let c3_minus_s3 = (-2.0 * k).exp() * (c * c + c * s + s * s);
    let gap0 = (1.0 - 3.0 * s * s).powi(2) / (c3_minus_s3 + 3.0 * s);
    move |w: f64| {
        let cw = w.cos();
        let q = (0.5 * w).cos();
        let q4 = (0.25 * w).sin();
        Terms {
            a: c3 + s3 - s * cw,
            a1: j * (6.0 * c * c * s + 6.0 * s * s * c - 2.0 * c * cw),
            a2: j
                * j
                * (12.0 * c3 + 24.0 * c * s * s + 24.0 * c * c * s + 12.0 * s3 - 4.0 * s * cw),
            d: 4.0 * q * q * s * s,
            d1: j * 16.0 * q * q * s * c,
            d2: j * j * 32.0 * q * q * (c * c + s * s),
            gap: gap0 + 4.0 * s * q4 * q4 * (2.0 + q),
        }
    }
}

fn honeycomb_terms(beta: f64, j: f64) -> impl Fn(f64) -> Terms + Copy {
    let k = beta * j;
    let (c, s) = ((2.0 * k).cosh(), (2.0 * k).sinh());
    let (c3, s2) = (c * c * c, s * s);
    let gap0 = if s2 < 0.5 {
        c3 + 1.0 - 3.0 * s2
    } else {
        s2 * (s2 - 3.0).powi(2) / (c3 - 1.0 + 3.0 * s2)
    };
    move |w: f64| {
        let cw = w.cos();
        let q = (0.5 * w).cos();
        let q4 = (0.25 * w).sin();
        Terms {
            a: c3 + 1.0 - s2 * cw,
            a1: j * (6.0 * c * c * s - 4.0 * s * c * cw),
            a2: j * j * (12.0 * c3 + 24.0 * c * s2 - 8.0 * (c * c + s2) * cw),
            d: 4.0 * q * q * s2 * s2,
            d1: j * 32.0 * q * q * s2 * s * c,
            d2: j * j * 64.0 * q * q * s2 * (3.0 * c * c + s2),
            gap: gap0 + 4.0 * s2 * q4 * q4 * (2.0 + q),
        }
    }
}

/// Triangular lattice, ferromagnetic `j > 0`, temperature `t > 0`, zero field: `−βf`, `f`,
/// `u`, `c` per site from Houtappel's integral (module docs).
pub fn triangular(t: f64, j: f64) -> PlanarThermo {
    evaluate(
        t,
        std::f64::consts::LN_2,
        0.5 / PI,
        triangular_terms(1.0 / t, j),
    )
}

/// Honeycomb lattice, coupling `j` (either sign: the lattice is bipartite, so f, u, c
/// depend on `|j|`), temperature `t > 0`, zero field: per-site `−βf`, `f`, `u`, `c` from
/// Houtappel's integral (module docs).
pub fn honeycomb(t: f64, j: f64) -> PlanarThermo {
    evaluate(
        t,
        0.75 * std::f64::consts::LN_2,
        0.25 / PI,
        honeycomb_terms(1.0 / t, j.abs()),
    )
}

/// Spontaneous magnetisation of the ferromagnetic triangular lattice (h → 0⁺ branch):
/// `m = [1 − 16x³/((1 + 3x)(1 − x)³)]^{1/8}`, `x = e^{−4J/T}`, below Tc; 0 above
/// (Potts 1952).
pub fn triangular_magnetization(t: f64, j: f64) -> f64 {
    if j <= 0.0 {
        return 0.0;
    }
    let x = (-4.0 * j / t).exp();
    let arg = 1.0 - 16.0 * x * x * x / ((1.0 + 3.0 * x) * (1.0 - x).powi(3));
    if arg <= 0.0 {
        0.0
    } else {
        arg.powf(0.125)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn high_and_low_temperature_limits() {
        // T → ∞: −βf → ln 2 (free spins). T → 0: −βf → K·(bonds per site) = 3K (triangular),
        // 1.5K (honeycomb): ground-state energy −zJ/2 per site (common practice).
        assert!((triangular(1e4, 1.0).minus_beta_f - std::f64::consts::LN_2).abs() < 1e-3);
        assert!((honeycomb(1e4, 1.0).minus_beta_f - std::f64::consts::LN_2).abs() < 1e-3);
        let t = 0.2;
        assert!((triangular(t, 1.0).minus_beta_f - 3.0 / t).abs() < 1e-10);
        assert!((honeycomb(t, 1.0).minus_beta_f - 1.5 / t).abs() < 1e-5);
        assert!((triangular(t, 1.0).energy + 3.0).abs() < 1e-10);
        assert!((honeycomb(t, 1.0).energy + 1.5).abs() < 1e-4);
    }

    #[test]
    fn energy_is_beta_derivative() {
        for &t in &[1.0, 2.0, 3.0, 3.8, 5.0] {
            for (name, f) in [
                ("tri", triangular as fn(f64, f64) -> PlanarThermo),
                ("hc", honeycomb),
            ] {
                let beta = 1.0 / t;
                let db = 1e-5;
                let g = |b: f64| f(1.0 / b, 1.0).minus_beta_f;
                let u_fd = -(g(beta + db) - g(beta - db)) / (2.0 * db);
                let th = f(t, 1.0);
                assert!(
                    (u_fd - th.energy).abs() < 1e-7,
                    "{name} T={t}: {u_fd} vs {}",
                    th.energy
                );
                let c_fd = beta * beta * (g(beta + db) - 2.0 * g(beta) + g(beta - db)) / (db * db);
                assert!(
                    (c_fd - th.specific_heat).abs() < 2e-3,
                    "{name} T={t}: {c_fd} vs {}",
                    th.specific_heat
                );
            }
        }
    }

    #[test]
    fn specific_heat_peaks_at_exact_tc() {
        // Logarithmic divergence at Tc = 4/ln 3 (triangular), 2/ln(2+√3) (honeycomb)
        // (Houtappel 1950).
        let tt = 4.0 / 3f64.ln();
        let th = 2.0 / (2.0 + 3f64.sqrt()).ln();
        assert!(
            triangular(tt * 1.0001, 1.0).specific_heat > triangular(tt * 1.01, 1.0).specific_heat
        );
        assert!(
            triangular(tt * 0.9999, 1.0).specific_heat > triangular(tt * 0.99, 1.0).specific_heat
        );
        assert!(
            honeycomb(th * 1.0001, 1.0).specific_heat > honeycomb(th * 1.01, 1.0).specific_heat
        );
        assert!(
            honeycomb(th * 0.9999, 1.0).specific_heat > honeycomb(th * 0.99, 1.0).specific_heat
        );
        assert!(triangular(tt * 1.000001, 1.0).specific_heat > 5.0);
    }

    #[test]
    fn potts_magnetization_low_temperature_series_and_tc() {
        let tt = 4.0 / 3f64.ln();
        assert_eq!(triangular_magnetization(tt * 1.001, 1.0), 0.0);
        assert!(triangular_magnetization(tt * 0.999, 1.0) > 0.0);
        // m = 1 − 2x³ − 12x⁵ + O(x⁶): one flipped spin breaks 6 bonds (x³), a flipped
        // neighbour pair 10 (x⁵), 3 pairs per site (low-temperature expansion, common practice).
        let t = 0.8;
        let x = (-4.0f64 / t).exp();
        let m = triangular_magnetization(t, 1.0);
        assert!((m - (1.0 - 2.0 * x.powi(3) - 12.0 * x.powi(5))).abs() < 40.0 * x.powi(6));
    }
}

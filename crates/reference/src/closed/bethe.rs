//! The Ising model deep inside a Bethe lattice (Cayley tree) of coordination `z ≥ 2`,
//! ferromagnetic `J > 0` (Bethe 1935, Proc. R. Soc. A 150, 552; Baxter 1982, *Exactly
//! Solved Models*, ch. 4). `K = βJ`, `B = βh`; the cavity field `x` on a branch solves
//!
//! ```text
//! x = B + (z − 1) φ(x),   φ(x) = atanh(tanh K tanh x) = ½ ln[cosh(K + x)/cosh(K − x)]
//! m = tanh(B + z φ(x))
//! ```
//!
//! and the free energy per site is the Bethe–Peierls one, site term minus `z/2` bond
//! terms with the same cavity fields:
//!
//! ```text
//! −βf = ln Z_site − (z/2) ln Z_bond
//! Z_site = 2 cosh(B + zφ) · [2 √(cosh(K + x) cosh(K − x))]^z
//! Z_bond = 2 e^K cosh 2x + 2 e^{−K}
//! ```
//!
//! (stationary in x, so `u = −(z/2) J ⟨ss'⟩ − h m` with `⟨ss'⟩ = tanh(K + ½ ln cosh 2x)`
//! from the bond marginal; z = 2 gives the chain, checked in the tests). Tc at h = 0 is
//! where `(z − 1) tanh K = 1`: `Tc = 2J / ln(z/(z − 2))`. Response functions follow
//! from differentiating the fixed point: with `φ_x = ½[tanh(K+x) + tanh(K−x)]`,
//! `φ_K = ½[tanh(K+x) − tanh(K−x)]`, `dx/dB = 1/(1 − (z−1)φ_x)` etc. (see the code).
//! Below Tc at h = 0 the h → 0⁺ branch (m > 0) is returned.

/// Bethe-lattice thermodynamics per site.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BetheThermo {
    /// `−βf`.
    pub minus_beta_f: f64,
    /// Free energy per site.
    pub free_energy: f64,
    /// Internal energy per site.
    pub energy: f64,
    /// Specific heat per site.
    pub specific_heat: f64,
    /// Magnetisation per site.
    pub magnetization: f64,
    /// Susceptibility per site `∂m/∂h`.
    pub susceptibility: f64,
    /// Nearest-neighbour correlation.
    pub nn_correlation: f64,
    /// The cavity field `x` (in units of k_B T).
    pub cavity_field: f64,
}

/// `ln cosh y` without overflow.
fn ln_cosh(y: f64) -> f64 {
    let a = y.abs();
    a + (-2.0 * a).exp().ln_1p() - std::f64::consts::LN_2
}

fn phi(k: f64, x: f64) -> f64 {
    0.5 * (ln_cosh(k + x) - ln_cosh(k - x))
}

/// Largest root of `x = B + (z − 1) φ(x)` for `B ≥ 0` by bisection (the map is concave
/// for x > 0, so the positive root is unique; at B = 0 the root x = 0 is taken only when
/// no positive one exists).
fn cavity_field(z: f64, k: f64, b: f64) -> f64 {
    let g = |x: f64| b + (z - 1.0) * phi(k, x) - x;
    let mut lo = 0.0;
    let mut hi = b + (z - 1.0) * k + 1.0;
    if b == 0.0 {
        if (z - 1.0) * k.tanh() <= 1.0 {
            return 0.0;
        }
        // g(x)/x > 0 near 0⁺; find a positive point of g to start from.
        lo = hi;
        while g(lo) <= 0.0 {
            lo *= 0.5;
            if lo < 1e-300 {
                return 0.0;
            }
        }
    }
    for _ in 0..2000 {
        let mid = 0.5 * (lo + hi);
        if mid <= lo || mid >= hi {
            break;
        }
        if g(mid) > 0.0 {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    0.5 * (lo + hi)
}

/// Thermodynamics of the Bethe lattice with coordination `z ≥ 2`, coupling `j > 0`, at
/// temperature `t > 0` and field `h` (module docs; Bethe 1935). `None` if `z < 2`,
/// `j ≤ 0` or `t ≤ 0`.
pub fn bethe(z: usize, t: f64, j: f64, h: f64) -> Option<BetheThermo> {
    if z < 2 || j <= 0.0 || !j.is_finite() || t <= 0.0 || !t.is_finite() || !h.is_finite() {
        return None;
    }
    let zf = z as f64;
    let beta = 1.0 / t;
    let (k, b0) = (beta * j, beta * h);
    let sign = if b0 < 0.0 { -1.0 } else { 1.0 };
    let b = b0.abs();
    let x = cavity_field(zf, k, b);
    let ph = phi(k, x);
    let hf = b + zf * ph;
    let ln2 = std::f64::consts::LN_2;
    let ln_site = ln2 + ln_cosh(hf) + zf * (ln2 + 0.5 * (ln_cosh(k + x) + ln_cosh(k - x)));
    let (la, lb) = (k + ln_cosh(2.0 * x), -k);
    let ln_bond = ln2 + la.max(lb) + (-(la - lb).abs()).exp().ln_1p();
    let mbf = ln_site - 0.5 * zf * ln_bond;
    let m = hf.tanh();
    let nn = (k + 0.5 * ln_cosh(2.0 * x)).tanh();
    // Derivatives of the fixed point.
    let (tp, tm) = ((k + x).tanh(), (k - x).tanh());
    let phi_x = 0.5 * (tp + tm);
    let phi_k = 0.5 * (tp - tm);
    let denom = 1.0 - (zf - 1.0) * phi_x;
    let dx_db = 1.0 / denom;
    let dm_db = (1.0 - m * m) * (1.0 + zf * phi_x * dx_db);
    // d/dβ at fixed J, h (working with |h| and the sign restored below).
    let habs = h.abs();
    let dx_dbeta = (habs + (zf - 1.0) * phi_k * j) / denom;
    let dnn = (1.0 - nn * nn) * (j + (2.0 * x).tanh() * dx_dbeta);
    let dm = (1.0 - m * m) * (habs + zf * (phi_k * j + phi_x * dx_dbeta));
    let du_dbeta = -0.5 * zf * j * dnn - habs * dm;
    Some(BetheThermo {
        minus_beta_f: mbf,
        free_energy: -t * mbf,
        energy: -0.5 * zf * j * nn - habs * m,
        specific_heat: -beta * beta * du_dbeta,
        magnetization: sign * m,
        susceptibility: beta * dm_db,
        nn_correlation: nn,
        cavity_field: sign * x,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::closed::chain::chain;

    #[test]
    fn z2_is_the_chain() {
        // The z = 2 Bethe lattice is the chain (Baxter 1982, ch. 4 vs §2.2).
        for &(t, h) in &[(1.0, 0.0), (0.7, 0.3), (2.0, -0.8)] {
            let b = bethe(2, t, 1.0, h).unwrap();
            let c = chain(t, 1.0, h);
            assert!(
                (b.minus_beta_f - c.minus_beta_f).abs() < 1e-12,
                "{b:?} {c:?}"
            );
            assert!((b.magnetization - c.magnetization).abs() < 1e-12);
            assert!((b.energy - c.energy).abs() < 1e-12);
            assert!((b.specific_heat - c.specific_heat).abs() < 1e-10);
            assert!((b.susceptibility - c.susceptibility).abs() < 1e-9);
        }
    }

    #[test]
    fn transition_at_bethe_tc() {
        // Tc = 2J/ln(z/(z−2)) (Bethe 1935); z = 4: 2/ln 2.
        let tc = 2.0 / 2f64.ln();
        assert_eq!(bethe(4, tc * 1.001, 1.0, 0.0).unwrap().magnetization, 0.0);
        let m = bethe(4, tc * 0.999, 1.0, 0.0).unwrap().magnetization;
        assert!(m > 0.01 && m < 0.2, "{m}");
        assert!(bethe(4, 0.5, 1.0, 0.0).unwrap().magnetization > 0.99);
    }

    #[test]
    fn thermodynamic_consistency() {
        for &(z, t, h) in &[
            (3usize, 1.5, 0.0),
            (4, 2.0, 0.0),
            (4, 3.5, 0.0),
            (6, 3.0, 0.2),
            (4, 2.5, -0.4),
        ] {
            let th = bethe(z, t, 1.0, h).unwrap();
            let e = 1e-5;
            let beta = 1.0 / t;
            let g = |b: f64| bethe(z, 1.0 / b, 1.0, h).unwrap().minus_beta_f;
            let u_fd = -(g(beta + e) - g(beta - e)) / (2.0 * e);
            assert!(
                (u_fd - th.energy).abs() < 1e-8,
                "z={z} T={t}: {u_fd} vs {}",
                th.energy
            );
            let c_fd = beta * beta * (g(beta + e) - 2.0 * g(beta) + g(beta - e)) / (e * e);
            assert!(
                (c_fd - th.specific_heat).abs() < 1e-4,
                "z={z} T={t}: {c_fd} vs {}",
                th.specific_heat
            );
            if h != 0.0 {
                let m_fd = t
                    * (bethe(z, t, 1.0, h + e).unwrap().minus_beta_f
                        - bethe(z, t, 1.0, h - e).unwrap().minus_beta_f)
                    / (2.0 * e);
                assert!((m_fd - th.magnetization).abs() < 1e-8);
                let chi_fd = (bethe(z, t, 1.0, h + e).unwrap().magnetization
                    - bethe(z, t, 1.0, h - e).unwrap().magnetization)
                    / (2.0 * e);
                assert!((chi_fd - th.susceptibility).abs() < 1e-6);
            }
        }
    }

    #[test]
    fn high_temperature_paramagnet() {
        // Above Tc at h = 0: x = 0, ⟨ss'⟩ = tanh K, u = −(z/2) J tanh K (Bethe 1935).
        let (z, t) = (4usize, 4.0);
        let th = bethe(z, t, 1.0, 0.0).unwrap();
        assert!((th.energy + 2.0 * (0.25f64).tanh()).abs() < 1e-14);
    }
}

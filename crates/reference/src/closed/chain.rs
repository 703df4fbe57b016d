//! The Ising chain in a field (Ising 1925, Z. Phys. 31, 253; transfer-matrix form as in
//! Baxter 1982, *Exactly Solved Models*, §2.2), coupling `J` of either sign, `K = βJ`,
//! `B = βh`. The transfer-matrix eigenvalues are
//! `λ± = e^K [cosh B ± D]`, `D = √(sinh² B + e^{−4K})`, so per site
//!
//! ```text
//! −βf = K + ln(cosh B + D)
//! m   = sinh B / D
//! ⟨s s'⟩ = 1 − 2e^{−4K} / [D (cosh B + D)]
//! u   = −J ⟨s s'⟩ − h m
//! χ   = β cosh B e^{−4K} / D³
//! c   = K² ∂²_K + 2KB ∂_K∂_B + B² ∂²_B  of (−βf)
//! ```
//!
//! with `∂²_B = cosh B e^{−4K}/D³`, `∂_K∂_B = 2 sinh B e^{−4K}/D³` and
//! `∂²_K = [8qP − 4q²(cosh B + 2D)/D]/P²` (`q = e^{−4K}`, `P = D(cosh B + D)`), all by
//! direct differentiation of `−βf`. A ring of N sites has `Z_N = λ+^N + λ−^N` exactly.

/// Thermodynamics per site of the infinite chain.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ChainThermo {
    /// `−βf = ln λ₊`.
    pub minus_beta_f: f64,
    /// Free energy per site.
    pub free_energy: f64,
    /// Internal energy per site.
    pub energy: f64,
    /// Specific heat per site.
    pub specific_heat: f64,
    /// Magnetisation per site.
    pub magnetization: f64,
    /// Susceptibility per site, `∂m/∂h`.
    pub susceptibility: f64,
    /// Nearest-neighbour correlation `⟨s_i s_{i+1}⟩`.
    pub nn_correlation: f64,
}

/// The infinite chain with coupling `j`, field `h`, at temperature `t > 0` (formulas in
/// the module docs; Ising 1925, Baxter 1982 §2.2).
pub fn chain(t: f64, j: f64, h: f64) -> ChainThermo {
    let beta = 1.0 / t;
    let (k, b) = (beta * j, beta * h);
    let q = (-4.0 * k).exp();
    let (sb, cb) = (b.sinh(), b.cosh());
    let d = (sb * sb + q).sqrt();
    let p = d * (cb + d);
    let mbf = k + (cb + d).ln();
    let m = sb / d;
    let nn = 1.0 - 2.0 * q / p;
    let d3 = d * d * d;
    let f_bb = cb * q / d3;
    let f_kb = 2.0 * sb * q / d3;
    let f_kk = (8.0 * q * p - 4.0 * q * q * (cb + 2.0 * d) / d) / (p * p);
    ChainThermo {
        minus_beta_f: mbf,
        free_energy: -t * mbf,
        energy: -j * nn - h * m,
        specific_heat: k * k * f_kk + 2.0 * k * b * f_kb + b * b * f_bb,
        magnetization: m,
        susceptibility: beta * f_bb,
        nn_correlation: nn,
    }
}

/// `ln Z` of a periodic ring of `n ≥ 2` sites: `Z = λ₊ⁿ + λ₋ⁿ` (trace of the n-th power of
/// the transfer matrix; Ising 1925). For `n = 2` the two bonds join the same pair.
pub fn ring_ln_z(n: usize, t: f64, j: f64, h: f64) -> f64 {
    let beta = 1.0 / t;
    let (k, b) = (beta * j, beta * h);
    let d = (b.sinh().powi(2) + (-4.0 * k).exp()).sqrt();
    let lp = b.cosh() + d;
    let lm = b.cosh() - d;
    let ratio = lm / lp;
    let n_i = i32::try_from(n).unwrap_or(i32::MAX);
    n as f64 * (k + lp.ln()) + ratio.powi(n_i).ln_1p()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn zero_field_closed_forms() {
        // h = 0: −βf = ln(2 cosh K), u = −J tanh K, c = K² sech² K, χ = β e^{2K}
        // (Ising 1925; Baxter 1982 §2.2).
        let (t, j) = (1.3, 0.8);
        let k = j / t;
        let c = chain(t, j, 0.0);
        assert!((c.minus_beta_f - (2.0 * k.cosh()).ln()).abs() < 1e-14);
        assert!((c.energy + j * k.tanh()).abs() < 1e-14);
        assert!((c.specific_heat - k * k / k.cosh().powi(2)).abs() < 1e-13);
        assert!((c.susceptibility - (2.0 * k).exp() / t).abs() < 1e-12);
        assert_eq!(c.magnetization, 0.0);
    }

    #[test]
    fn derivatives_match_finite_differences() {
        for &(t, j, h) in &[
            (1.0, 1.0, 0.3),
            (0.7, -0.5, 0.9),
            (2.5, 1.0, -1.2),
            (0.4, 1.0, 0.05),
        ] {
            let c = chain(t, j, h);
            let mbf = |t: f64, h: f64| chain(t, j, h).minus_beta_f;
            let e = 1e-5;
            let beta = 1.0 / t;
            // −βf as a function of β at fixed h.
            let g = |b: f64| mbf(1.0 / b, h);
            let u_fd = -(g(beta + e) - g(beta - e)) / (2.0 * e);
            assert!((u_fd - c.energy).abs() < 1e-8, "u: {u_fd} vs {}", c.energy);
            let c_fd = beta * beta * (g(beta + e) - 2.0 * g(beta) + g(beta - e)) / (e * e);
            assert!(
                (c_fd - c.specific_heat).abs() < 1e-4,
                "c: {c_fd} vs {}",
                c.specific_heat
            );
            let m_fd = t * (mbf(t, h + e) - mbf(t, h - e)) / (2.0 * e);
            assert!((m_fd - c.magnetization).abs() < 1e-8);
            let chi_fd =
                (chain(t, j, h + e).magnetization - chain(t, j, h - e).magnetization) / (2.0 * e);
            assert!((chi_fd - c.susceptibility).abs() < 1e-6 * c.susceptibility.max(1.0));
        }
    }

    #[test]
    fn small_ring_by_hand() {
        // 3-site ring at h = 0: Z = Σ exp(K(s1s2 + s2s3 + s3s1)) = 2e^{3K} + 6e^{−K}.
        let (t, j) = (0.9f64, 1.0f64);
        let k = j / t;
        let z = 2.0 * (3.0 * k).exp() + 6.0 * (-k).exp();
        assert!((ring_ln_z(3, t, j, 0.0) - z.ln()).abs() < 1e-13);
    }
}

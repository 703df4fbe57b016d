//! The Ising model read as a binary alloy A–B on the lattice (the lattice-gas mapping
//! of Lee & Yang 1952, Phys. Rev. 87, 410; its alloy form is common practice).
//!
//! A site holds an A atom where `s = +1` and a B atom where `s = −1`, so the occupation
//! of A is `(1 + s)/2`. With pair energies `V_AA, V_BB, V_AB` of neighbouring atoms,
//! the energy of a bond is
//!
//! ```text
//! V_AA (1+s_i)(1+s_j)/4 + V_BB (1−s_i)(1−s_j)/4 + V_AB [(1+s_i)(1−s_j) + (1−s_i)(1+s_j)]/4
//!   = const + (V_AA − V_BB)(s_i + s_j)/4 − (w/2) s_i s_j,     w = V_AB − (V_AA + V_BB)/2,
//! ```
//!
//! so the Ising coupling is `J = w/2`: the ordering energy is `w = 2J`. `w < 0`
//! (unlike neighbours preferred, J < 0) orders the alloy; `w > 0` (J > 0) makes it
//! separate into A-rich and B-rich phases. In the grand-canonical ensemble the term
//! `−μ_A N_A − μ_B N_B` is `const − (μ_A − μ_B)/2 · Σ s_i`, so the field is
//! `h = Δμ/2`: the chemical-potential difference is `Δμ = μ_A − μ_B = 2h` (the
//! `(V_AA − V_BB)` term, a shift of the field, counted in Δμ). The composition is the
//! fraction of B atoms, `x = ⟨(1 − s)/2⟩ = (1 − m)/2`: m = 1 is pure A (x = 0), m = −1
//! pure B (x = 1).

/// The composition (fraction of B) of a state of magnetisation m: `x = (1 − m)/2`.
///
/// ```
/// use rungs_solve::phases::alloy::composition;
/// assert_eq!(composition(0.0), 0.5);
/// assert_eq!(composition(1.0), 0.0);
/// ```
pub fn composition(m: f64) -> f64 {
    0.5 * (1.0 - m)
}

/// The chemical-potential difference `Δμ = μ_A − μ_B = 2h` of the field h.
pub fn chemical_potential(h: f64) -> f64 {
    2.0 * h
}

/// The ordering energy `w = V_AB − (V_AA + V_BB)/2 = 2J` of a coupling J.
pub fn ordering_energy(j: f64) -> f64 {
    2.0 * j
}

/// The mapping in one sentence, for reports.
pub const CONVENTION: &str = "alloy language: a site with s = +1 holds an A atom, s = −1 a B atom; x = (1 − m)/2 is the fraction of B, Δμ = μ_A − μ_B = 2h the chemical-potential difference, and each coupling's ordering energy is w = V_AB − (V_AA + V_BB)/2 = 2J (w < 0: ordering, w > 0: phase separation)";

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn mapping_is_the_lattice_gas_one() {
        // Energy of a bond from the pair energies equals const − (w/2) s_i s_j + linear
        // terms, checked on all four configurations.
        let (vaa, vbb, vab) = (-1.3, -0.4, 0.25);
        let w = vab - 0.5 * (vaa + vbb);
        let j = w / 2.0;
        assert_eq!(ordering_energy(j), w);
        let bond = |si: f64, sj: f64| {
            let (ai, aj) = ((1.0 + si) / 2.0, (1.0 + sj) / 2.0);
            vaa * ai * aj
                + vbb * (1.0 - ai) * (1.0 - aj)
                + vab * (ai * (1.0 - aj) + (1.0 - ai) * aj)
        };
        let c = (vaa + vbb + 2.0 * vab) / 4.0;
        for (si, sj) in [(1.0, 1.0), (1.0, -1.0), (-1.0, 1.0), (-1.0, -1.0)] {
            let model = c + (vaa - vbb) * (si + sj) / 4.0 - j * si * sj;
            assert!((bond(si, sj) - model).abs() < 1e-15);
        }
        assert_eq!(chemical_potential(0.25), 0.5);
        assert_eq!(composition(-1.0), 1.0);
    }
}

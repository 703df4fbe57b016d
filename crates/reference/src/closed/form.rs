//! [`ClosedForm`]: the exact result that applies to a lattice, with one method per
//! quantity. A quantity with no closed form at the requested (T, h) is `None`, as is any
//! request at a temperature that is not positive and finite.

use rungs_lattice::Lattice;

use super::{bethe, chain, exact_tc, houtappel, onsager};

/// An exactly solved model, with its couplings. Built by [`ClosedForm::recognise`] from a
/// lattice's bond structure, or directly (e.g. the Bethe lattice, which no periodic
/// lattice file describes).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum ClosedForm {
    /// The Ising chain, coupling `j` of either sign, any field (Ising 1925).
    Chain {
        /// Coupling J.
        j: f64,
    },
    /// The square lattice with couplings `j1`, `j2` along its two bond directions, zero
    /// field (Onsager 1944; Yang 1952; Chang 1952). Either sign: the lattice is bipartite.
    Square {
        /// Coupling along the first bond direction.
        j1: f64,
        /// Coupling along the second bond direction.
        j2: f64,
    },
    /// The ferromagnetic triangular lattice, zero field (Houtappel 1950; Potts 1952).
    Triangular {
        /// Coupling J > 0.
        j: f64,
    },
    /// The honeycomb lattice, zero field (Houtappel 1950); either sign of `j`.
    Honeycomb {
        /// Coupling J.
        j: f64,
    },
    /// The ferromagnetic triangular lattice with unequal couplings on its three bond
    /// directions, zero field: critical temperature only (Houtappel 1950).
    TriangularAnisotropic {
        /// Couplings J₁, J₂, J₃ > 0, in the lattice file's bond order.
        j: [f64; 3],
    },
    /// The honeycomb lattice with unequal couplings on its three bond directions (either
    /// sign), zero field: critical temperature only (Houtappel 1950).
    HoneycombAnisotropic {
        /// Couplings J₁, J₂, J₃, in the lattice file's bond order.
        j: [f64; 3],
    },
    /// The ferromagnetic kagome lattice: critical temperature only (Syozi 1951).
    Kagome {
        /// Coupling J > 0.
        j: f64,
    },
    /// The interior of a Bethe lattice of coordination `z ≥ 2`, ferromagnetic `j`, any
    /// field (Bethe 1935).
    Bethe {
        /// Coordination number.
        z: usize,
        /// Coupling J > 0.
        j: f64,
    },
}

/// Everything a closed form gives at one (T, h); `None` entries have no closed form here.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ClosedThermo {
    /// Free energy per site.
    pub free_energy: Option<f64>,
    /// Internal energy per site.
    pub energy: Option<f64>,
    /// Entropy per site, `(u − f)/T`.
    pub entropy: Option<f64>,
    /// Specific heat per site.
    pub specific_heat: Option<f64>,
    /// Magnetisation per site (h → 0⁺ branch at h = 0).
    pub magnetization: Option<f64>,
    /// Susceptibility per site, `∂m/∂h`.
    pub susceptibility: Option<f64>,
}

fn valid(t: f64, h: f64) -> bool {
    t > 0.0 && t.is_finite() && h.is_finite()
}

/// (f, u, c) for the lattices whose free energy is known.
fn fuc(form: &ClosedForm, t: f64, h: f64) -> Option<(f64, f64, f64)> {
    if !valid(t, h) {
        return None;
    }
    match *form {
        ClosedForm::Chain { j } => {
            let c = chain::chain(t, j, h);
            Some((c.free_energy, c.energy, c.specific_heat))
        }
        ClosedForm::Bethe { z, j } => {
            let b = bethe::bethe(z, t, j, h)?;
            Some((b.free_energy, b.energy, b.specific_heat))
        }
        _ if h != 0.0 => None,
        ClosedForm::Square { j1, j2 } => {
            let s = if j1.abs() == j2.abs() {
                onsager::square_isotropic(t, j1)
            } else {
                onsager::square(t, j1, j2)
            };
            Some((s.free_energy, s.energy, s.specific_heat))
        }
        ClosedForm::Triangular { j } => {
            let s = houtappel::triangular(t, j);
            Some((s.free_energy, s.energy, s.specific_heat))
        }
        ClosedForm::Honeycomb { j } => {
            let s = houtappel::honeycomb(t, j);
            Some((s.free_energy, s.energy, s.specific_heat))
        }
        ClosedForm::Kagome { .. }
        | ClosedForm::TriangularAnisotropic { .. }
        | ClosedForm::HoneycombAnisotropic { .. } => None,
    }
}

impl ClosedForm {
    /// The closed form that applies to `lattice`, recognised from its bond structure
    /// (see [`super::recognise`]); `None` when no closed form applies.
    pub fn recognise(lattice: &Lattice) -> Option<ClosedForm> {
        super::recognise::recognise(lattice)
    }

    /// Short name for reports.
    pub fn name(&self) -> &'static str {
        match self {
            ClosedForm::Chain { .. } => "chain",
            ClosedForm::Square { j1, j2 } if j1.abs() == j2.abs() => "square",
            ClosedForm::Square { .. } => "anisotropic square",
            ClosedForm::Triangular { .. } => "triangular",
            ClosedForm::Honeycomb { .. } => "honeycomb",
            ClosedForm::TriangularAnisotropic { .. } => "anisotropic triangular",
            ClosedForm::HoneycombAnisotropic { .. } => "anisotropic honeycomb",
            ClosedForm::Kagome { .. } => "kagome",
            ClosedForm::Bethe { .. } => "Bethe lattice",
        }
    }

    /// The published source of the exact results used.
    pub fn source(&self) -> &'static str {
        match self {
            ClosedForm::Chain { .. } => "Ising (1925), Z. Phys. 31, 253; Baxter (1982), Exactly Solved Models, §2.2",
            ClosedForm::Square { .. } => {
                "Onsager (1944), Phys. Rev. 65, 117; Yang (1952), Phys. Rev. 85, 808; Chang (1952), Phys. Rev. 88, 1422"
            }
            ClosedForm::Triangular { .. } => "Houtappel (1950), Physica 16, 425; Potts (1952), Phys. Rev. 88, 352",
            ClosedForm::Honeycomb { .. } => "Houtappel (1950), Physica 16, 425",
            ClosedForm::TriangularAnisotropic { .. } => {
                "Houtappel (1950), Physica 16, 425 — exact critical condition sinh 2K₁ sinh 2K₂ + sinh 2K₂ sinh 2K₃ + sinh 2K₃ sinh 2K₁ = 1"
            }
            ClosedForm::HoneycombAnisotropic { .. } => {
                "Houtappel (1950), Physica 16, 425 — exact critical condition tanh K₁ tanh K₂ + tanh K₂ tanh K₃ + tanh K₃ tanh K₁ = 1"
            }
            ClosedForm::Kagome { .. } => {
                "Syozi (1951), Prog. Theor. Phys. 6, 306; Kanô & Naya (1953), Prog. Theor. Phys. 10, 158"
            }
            ClosedForm::Bethe { .. } => "Bethe (1935), Proc. R. Soc. A 150, 552; Baxter (1982), Exactly Solved Models, ch. 4",
        }
    }

    /// Exact critical temperature at zero field; `None` where there is no transition
    /// (chain, decoupled square rows, z = 2 Bethe lattice).
    pub fn tc(&self) -> Option<f64> {
        match *self {
            ClosedForm::Chain { .. } => None,
            ClosedForm::Square { j1, j2 } => exact_tc::anisotropic_square_tc(j1, j2),
            ClosedForm::Triangular { j } => Some(exact_tc::triangular_tc(j)),
            ClosedForm::Honeycomb { j } => Some(exact_tc::honeycomb_tc(j)),
            ClosedForm::TriangularAnisotropic { j } => exact_tc::anisotropic_triangular_tc(j),
            ClosedForm::HoneycombAnisotropic { j } => exact_tc::anisotropic_honeycomb_tc(j),
            ClosedForm::Kagome { j } => Some(exact_tc::kagome_tc(j)),
            ClosedForm::Bethe { z, j } => exact_tc::bethe_tc(z, j),
        }
    }

    /// Free energy per site at temperature `t` and field `h`.
    pub fn free_energy(&self, t: f64, h: f64) -> Option<f64> {
        fuc(self, t, h).map(|x| x.0)
    }

    /// Internal energy per site.
    pub fn energy(&self, t: f64, h: f64) -> Option<f64> {
        fuc(self, t, h).map(|x| x.1)
    }

    /// Specific heat per site. It diverges logarithmically at Tc on the planar lattices;
    /// exactly at Tc the bounded quadrature returns a large finite number.
    pub fn specific_heat(&self, t: f64, h: f64) -> Option<f64> {
        fuc(self, t, h).map(|x| x.2)
    }

    /// Entropy per site `(u − f)/T`.
    pub fn entropy(&self, t: f64, h: f64) -> Option<f64> {
        fuc(self, t, h).map(|(f, u, _)| (u - f) / t)
    }

    /// Magnetisation per site; at h = 0 below Tc the spontaneous magnetisation (h → 0⁺
    /// branch). Known for the chain and Bethe lattice at any field, the square and
    /// triangular lattices at h = 0; for the honeycomb, kagome and anisotropic triangular
    /// and honeycomb lattices only above Tc (where it is 0).
    pub fn magnetization(&self, t: f64, h: f64) -> Option<f64> {
        if !valid(t, h) {
            return None;
        }
        match *self {
            ClosedForm::Chain { j } => Some(chain::chain(t, j, h).magnetization),
            ClosedForm::Bethe { z, j } => bethe::bethe(z, t, j, h).map(|b| b.magnetization),
            _ if h != 0.0 => None,
            ClosedForm::Square { j1, j2 } => Some(onsager::square_magnetization(t, j1, j2)),
            ClosedForm::Triangular { j } => Some(houtappel::triangular_magnetization(t, j)),
            ClosedForm::Honeycomb { .. }
            | ClosedForm::Kagome { .. }
            | ClosedForm::TriangularAnisotropic { .. }
            | ClosedForm::HoneycombAnisotropic { .. } => {
                self.tc().filter(|&tc| t > tc).map(|_| 0.0)
            }
        }
    }

    /// Susceptibility per site `∂m/∂h` (chain and Bethe lattice only).
    pub fn susceptibility(&self, t: f64, h: f64) -> Option<f64> {
        if !valid(t, h) {
            return None;
        }
        match *self {
            ClosedForm::Chain { j } => Some(chain::chain(t, j, h).susceptibility),
            ClosedForm::Bethe { z, j } => bethe::bethe(z, t, j, h).map(|b| b.susceptibility),
            _ => None,
        }
    }

    /// All quantities at once.
    pub fn thermo(&self, t: f64, h: f64) -> ClosedThermo {
        let f = fuc(self, t, h);
        ClosedThermo {
            free_energy: f.map(|x| x.0),
            energy: f.map(|x| x.1),
            entropy: f.map(|(f, u, _)| (u - f) / t),
            specific_heat: f.map(|x| x.2),
            magnetization: self.magnetization(t, h),
            susceptibility: self.susceptibility(t, h),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn availability() {
        let sq = ClosedForm::Square { j1: 1.0, j2: 1.0 };
        assert!(sq.free_energy(2.0, 0.0).is_some());
        assert!(sq.free_energy(2.0, 0.1).is_none());
        assert!(sq.free_energy(-1.0, 0.0).is_none());
        assert!((sq.tc().unwrap() - 2.269_185_314_213_022).abs() < 1e-13);
        let k = ClosedForm::Kagome { j: 1.0 };
        assert!(k.free_energy(2.0, 0.0).is_none());
        assert_eq!(k.magnetization(3.0, 0.0), Some(0.0));
        assert_eq!(k.magnetization(1.0, 0.0), None);
        let c = ClosedForm::Chain { j: 1.0 };
        assert!(c.tc().is_none());
        assert!(c.susceptibility(1.0, 0.5).is_some());
        let th = sq.thermo(2.0, 0.0);
        assert!(th.entropy.unwrap() > 0.0 && th.entropy.unwrap() < std::f64::consts::LN_2);
    }

    #[test]
    fn antiferromagnetic_square_maps_to_ferromagnet() {
        let f = ClosedForm::Square { j1: 1.0, j2: 1.0 };
        let af = ClosedForm::Square { j1: -1.0, j2: -1.0 };
        assert_eq!(f.free_energy(1.5, 0.0), af.free_energy(1.5, 0.0));
        assert_eq!(af.magnetization(1.5, 0.0), Some(0.0));
        assert_eq!(f.tc(), af.tc());
    }
}

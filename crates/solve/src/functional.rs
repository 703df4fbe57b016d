//! The cluster-variation free energy of a level, one functional for every level
//! (Kikuchi 1951, Phys. Rev. 81, 988; correlation-function form of Sanchez, Ducastelle
//! & Gratias 1984, Physica A 128, 334), in either of two coordinate systems
//! ([`Basis`]):
//!
//! ```text
//! F(x) = E(x) − T Σ_γ a_γ S_γ,   S_γ = −Σ_σ p_γ ln p_γ,   p_γ = p_ref,γ + T_γ x
//! ∂S/∂x_c       = −(T_γᵀ ln p)[c]
//! ∂²S/∂x_c∂x_d  = −(T_γᵀ diag(1/p) T_γ)[c, d]
//! ```
//!
//! * Walsh basis, `x = ξ − r` with ξ the correlation functions `⟨Π_{i∈c} s_i⟩` and `r` an
//!   optional reference state: `p = 2^-n W [1, r + x]`, `∂S/∂ξ_c = −2^-n (W ln p)[c]`,
//!   `∂²S/∂ξ_c∂ξ_d = −4^-n (W (1/p))[c ⊕ d]`. At h = 0 the paramagnet has every odd ξ
//!   zero and the Hessian splits into an even and an odd block: the basis of the Tc
//!   search. The reference keeps the probabilities of a state near r precise (the chain
//!   at T = 0.1 J has `1 − ξ_bond = 4·10⁻⁹`: stored as an offset, not as a difference of
//!   numbers near 1).
//! * Flip basis relative to a pattern ε (one sign per basis site), `x = ζ` with ζ_c the
//!   probability that every site of c is flipped against ε: `p(A) = (M↑ [1, ζ])[A]`
//!   (inclusion–exclusion over supersets), `∂S/∂ζ_c = −(M ln p)[c]`,
//!   `∂²S/∂ζ_c∂ζ_d = −(−1)^{|c|+|d|} (Z (1/p))[c ∧ d]` (see [`crate::subset`]). In an
//!   ordered or field-polarised state at low temperature the ζ are tiny and every cluster
//!   probability keeps its relative precision (an excitation of probability 10⁻⁶⁰ is
//!   still a positive double), where the Walsh form would subtract numbers near 1.
//!
//! The energy is linear in either set of coordinates (quadratic only for bonds in no
//! region, i.e. the site level, where `⟨s_i s_j⟩ = ξ_i ξ_j` makes the site level exactly
//! the Bogoliubov mean-field bound).

use std::sync::Arc;

use nalgebra::{DMatrix, DVector};
use rungs_lattice::{BondTerm, Level};

use crate::dd::Dd;
use crate::gram::StateGroups;
use crate::subset::{
    mobius_subset, mobius_superset, parity_sign, walsh, zeta_subset, zeta_superset,
};

/// Regions up to this many sites get their precise Hessian in the Gram form.
pub const GRAM_SITES: usize = 6;

/// Most correlation variables a level may have for the dense engine (a 6000² Hessian is
/// 288 MB; the square 3×3 block has 400 variables, the 4×4 block 57,856).
pub const MAX_DENSE_VARIABLES: usize = 6000;

/// Refuse a level too large for the dense engine, before any memory is spent.
pub fn check_size(level: &Level) -> Result<(), crate::error::SolveError> {
    let n = level.variables.len();
    if n > MAX_DENSE_VARIABLES {
        return Err(crate::error::SolveError::TooLarge {
            level: level.name.clone(),
            variables: n,
            gib: (n * n * 8) as f64 / (1u64 << 30) as f64,
            limit: MAX_DENSE_VARIABLES,
        });
    }
    Ok(())
}

/// The coordinates of a state.
#[derive(Debug, Clone, PartialEq)]
pub enum Basis {
    /// Correlation functions ξ_c = ⟨Π_{i∈c} s_i⟩.
    Walsh,
    /// Flip probabilities ζ_c = P(every site of c has s_i = −ε_i), relative to a pattern
    /// ε of one sign (±1) per basis site.
    Flip {
        /// ε per basis site.
        pattern: Vec<f64>,
    },
}

impl Basis {
    /// The flip basis of the all-up pattern (`sites` basis sites).
    pub fn flip_up(sites: usize) -> Basis {
        Basis::Flip {
            pattern: vec![1.0; sites],
        }
    }
}

/// One region's part of the entropy.
#[derive(Debug, Clone)]
struct RegionTerm {
    n: usize,
    coefficient: f64,
    vars: Vec<u32>,
    /// The basis site of each of the region's sites.
    basis_sites: Vec<usize>,
    /// Flip basis: bit k set when the pattern is −1 on site k (maps flip-set labels to
    /// spin labels: spin-label = flip-label XOR negative).
    negative: usize,
}

impl RegionTerm {
    /// Bit k set when `pattern` is −1 on the region's site k.
    fn negative_mask(&self, pattern: &[f64]) -> usize {
        self.basis_sites
            .iter()
            .enumerate()
            .filter(|(_, &a)| pattern[a] < 0.0)
            .fold(0usize, |m, (k, _)| m | 1 << k)
    }
}

/// The energy as `E = e0 + lin · v + Σ c v_a v_b`, v = the variables' values.
#[derive(Debug, Clone, Default)]
struct EnergyForm {
    e0_bonds: f64,
    e0_field: f64,
    lin_bonds: Vec<f64>,
    lin_field: Vec<f64>,
    quad: Vec<(usize, usize, f64)>,
    /// The bond (index in the level's `bond_terms`) of each quadratic term.
    quad_bonds: Vec<usize>,
}

/// Everything about a functional that does not depend on (T, h).
#[derive(Debug)]
struct Setup {
    regions: Vec<RegionTerm>,
    basis: Basis,
    /// Reference values r (variables are offsets from them) and each region's exact
    /// reference probabilities.
    reference: Option<(Vec<f64>, Vec<Vec<Dd>>)>,
    energy: EnergyForm,
    /// Per basis site: (variable, ∂m_a/∂x).
    sites: Vec<(usize, f64)>,
    /// Transforms of ln p and Hessians in double-double (flip basis, or a reference):
    /// low-temperature states, whose Hessian entries span 1/p over many decades and
    /// cancel between a region and its overlaps.
    precise: bool,
}

/// The free-energy functional of one level at temperature `t` and field `h`.
#[derive(Debug, Clone)]
pub struct Functional<'a> {
    level: &'a Level,
    t: f64,
    h: f64,
    setup: Arc<Setup>,
}

/// Value and gradient of F at a point, with the entropy and energy parts.
#[derive(Debug, Clone)]
pub struct Evaluation {
    /// Free energy per cell.
    pub free_energy: f64,
    /// Energy per cell.
    pub energy: f64,
    /// Entropy per cell, `Σ_γ a_γ S_γ`.
    pub entropy: f64,
    /// ∂F/∂x for every variable.
    pub gradient: Vec<f64>,
    /// F without its constant part (the energy of the reference or of the flip
    /// pattern): the same differences as `free_energy`, without the rounding of a large
    /// constant, so that a line search can compare states whose free energies differ by
    /// less than 10⁻¹⁶ of F (low temperature).
    pub merit: f64,
    /// The rounding scale of `merit`: 10⁻¹⁵ times the sum of the magnitudes of its
    /// terms (`T |a_γ| |p ln p|`, a region of n sites weighted by `max(1, 2^{n/2}/5)`
    /// for its 2^n rounded probabilities, and the energy's), below which two merits are
    /// equal.
    pub rounding: f64,
}

/// How a region's Hessian entry is read from its kernel array.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum KernelKind {
    /// Walsh basis: `H_kl = scale · K[k ⊕ l]`, `K = W(1/p)`.
    Xor,
    /// Flip basis: `H_kl = scale · (−1)^{|k|+|l|} K[k ∧ l]`, `K = Z(1/p)`.
    And,
}

/// One region's contribution to the Hessian: `H_{var k, var l} += entry(k, l)` for
/// every pair of non-empty masks k, l.
#[derive(Debug, Clone)]
pub struct RegionKernel<'f> {
    /// Sites of the region.
    pub n: usize,
    /// `T a_γ` times the transform's normalisation.
    pub scale: f64,
    /// The variable of each mask (entry 0 unused).
    pub vars: &'f [u32],
    /// The kernel array, length 2^n.
    pub kernel: Vec<f64>,
    /// The kernel's low parts when it was computed in double-double.
    pub kernel_lo: Option<Vec<f64>>,
    /// How to read it.
    pub kind: KernelKind,
    /// `1/p(σ)` per state, kept for the grouped Gram form ([`crate::gram`]) where the
    /// kernel is a plain Walsh one (empty otherwise).
    pub inv_p: Vec<f64>,
}

impl RegionKernel<'_> {
    /// Whether this is a plain Walsh kernel (correlations, doubles), for which `1/p` is
    /// kept and the grouped Gram and moment forms apply.
    pub fn is_plain_walsh(&self) -> bool {
        !self.inv_p.is_empty()
    }

    /// The Hessian contribution for masks k, l.
    #[inline]
    pub fn entry(&self, k: usize, l: usize) -> f64 {
        match self.kind {
            KernelKind::Xor => self.scale * self.kernel[k ^ l],
            KernelKind::And => self.scale * parity_sign(k ^ l) * self.kernel[k & l],
        }
    }

    /// The same in double-double (exact to the kernel's precision).
    #[inline]
    pub fn entry_dd(&self, k: usize, l: usize) -> Dd {
        let (idx, sign) = match self.kind {
            KernelKind::Xor => (k ^ l, 1.0),
            KernelKind::And => (k & l, parity_sign(k ^ l)),
        };
        let v = Dd {
            hi: self.kernel[idx],
            lo: self.kernel_lo.as_ref().map_or(0.0, |lo| lo[idx]),
        };
        v.mul_f64(self.scale * sign)
    }
}

impl<'a> Functional<'a> {
    /// The functional of `level` at temperature `t` (> 0) and field `h`, on correlation
    /// functions (Walsh basis, no reference).
    pub fn new(level: &'a Level, t: f64, h: f64) -> Functional<'a> {
        Functional::with_basis(level, t, h, Basis::Walsh, None)
    }

    /// The functional on the given coordinates; with `reference = Some(r)` the variables
    /// are offsets from r (values `r + x`), and the reference's cluster probabilities
    /// are computed once in double-double.
    pub fn with_basis(
        level: &'a Level,
        t: f64,
        h: f64,
        basis: Basis,
        reference: Option<Vec<f64>>,
    ) -> Functional<'a> {
        let pattern = match &basis {
            Basis::Walsh => None,
            Basis::Flip { pattern } => Some(pattern.as_slice()),
        };
        let regions: Vec<RegionTerm> = level
            .active_regions()
            .map(|r| {
                let mut rt = RegionTerm {
                    n: r.cluster.len(),
                    coefficient: r.coefficient as f64,
                    vars: r.subset_vars.clone(),
                    basis_sites: r.cluster.sites().map(|(a, _)| a).collect(),
                    negative: 0,
                };
                rt.negative = pattern.map_or(0, |eps| rt.negative_mask(eps));
                rt
            })
            .collect();
        let reference = reference.map(|r| {
            let p_ref = regions
                .iter()
                .map(|rt| reference_probabilities(&basis, rt, &r))
                .collect();
            (r, p_ref)
        });
        let energy = energy_form(level, pattern);
        let sites = (0..level.sites_per_cell)
            .map(|a| {
                let v = level.site_vars[a];
                (v, pattern.map_or(1.0, |eps| -2.0 * eps[a]))
            })
            .collect();
        let precise = reference.is_some() || basis != Basis::Walsh;
        Functional {
            level,
            t,
            h,
            setup: Arc::new(Setup {
                regions,
                basis,
                reference,
                energy,
                sites,
                precise,
            }),
        }
    }

    /// The level.
    pub fn level(&self) -> &'a Level {
        self.level
    }
    /// Temperature.
    pub fn temperature(&self) -> f64 {
        self.t
    }
    /// Field.
    pub fn field(&self) -> f64 {
        self.h
    }
    /// The coordinates.
    pub fn basis(&self) -> &Basis {
        &self.setup.basis
    }
    /// Whether gradients' transforms and Hessians are computed in double-double (the
    /// flip basis, or a reference): see [`Functional::hessian_block_precise`].
    pub fn is_precise(&self) -> bool {
        self.setup.precise
    }

    /// The reference values the variables are offsets from, if any.
    pub fn reference(&self) -> Option<&[f64]> {
        self.setup.reference.as_ref().map(|(r, _)| r.as_slice())
    }
    /// The same functional at another temperature and field (shares its setup).
    pub fn at(&self, t: f64, h: f64) -> Functional<'a> {
        Functional {
            level: self.level,
            t,
            h,
            setup: Arc::clone(&self.setup),
        }
    }

    /// Number of variables.
    pub fn len(&self) -> usize {
        self.level.variables.len()
    }
    /// Whether there are no variables (never, for a valid level).
    pub fn is_empty(&self) -> bool {
        self.level.variables.is_empty()
    }

    /// The values of the variables, `r + x` (x itself without a reference).
    pub fn values(&self, x: &[f64]) -> Vec<f64> {
        match &self.setup.reference {
            Some((r, _)) => r.iter().zip(x).map(|(a, b)| a + b).collect(),
            None => x.to_vec(),
        }
    }

    /// The product state with magnetisation `m[a]` on basis site a (|m| < 1: always
    /// feasible), as offsets from the reference: ξ_c = Π_{i∈c} m_i, or
    /// ζ_c = Π_{i∈c} (1 − ε_i m_i)/2.
    pub fn product_state_sites(&self, m: &[f64]) -> Vec<f64> {
        let r = self.reference();
        self.level
            .variables
            .iter()
            .enumerate()
            .map(|(v, c)| {
                let value: f64 = match &self.setup.basis {
                    Basis::Walsh => c.sites().map(|(a, _)| m[a]).product(),
                    Basis::Flip { pattern } => c
                        .sites()
                        .map(|(a, _)| 0.5 * (1.0 - pattern[a] * m[a]))
                        .product(),
                };
                value - r.map_or(0.0, |r| r[v])
            })
            .collect()
    }

    /// Magnetisation of each basis site at x.
    pub fn site_magnetizations(&self, x: &[f64]) -> Vec<f64> {
        let r = self.reference();
        self.setup
            .sites
            .iter()
            .enumerate()
            .map(|(a, &(v, dm))| {
                let value = x[v] + r.map_or(0.0, |r| r[v]);
                match &self.setup.basis {
                    Basis::Walsh => value,
                    Basis::Flip { pattern } => pattern[a] + dm * value,
                }
            })
            .collect()
    }

    /// Per basis site: its variable and `∂m_a/∂x` there (1 for ξ_a; −2ε_a for ζ_a).
    pub fn site_derivatives(&self) -> &[(usize, f64)] {
        &self.setup.sites
    }

    /// The cluster probabilities of region `r` at x, in f64; false if any is ≤ 0. The
    /// most probable state, when above 1/2, is recomputed as one minus the others, so
    /// that its logarithm ([`ln_largest`]) is precise.
    fn probabilities(&self, r: &RegionTerm, ri: usize, x: &[f64], p: &mut [f64]) -> bool {
        if self.setup.precise {
            // Inclusion–exclusion over supersets (flip basis) or a transform of offsets
            // (reference) can cancel: summed in double-double.
            return match self.probabilities_dd(r, ri, x) {
                Some(q) => {
                    p.iter_mut().zip(&q).for_each(|(a, b)| *a = b.to_f64());
                    true
                }
                None => false,
            };
        }
        p[0] = 0.0;
        for (slot, &v) in p.iter_mut().zip(&r.vars).skip(1) {
            *slot = x[v as usize];
        }
        self.transform(r, p);
        match &self.setup.reference {
            Some((_, p_ref)) => {
                for (q, pr) in p.iter_mut().zip(&p_ref[ri]) {
                    *q = pr.add_f64(*q).to_f64();
                }
            }
            None => match self.setup.basis {
                Basis::Walsh => {
                    let u = 1.0 / (1usize << r.n) as f64;
                    p.iter_mut().for_each(|q| *q += u);
                }
                Basis::Flip { .. } => p[0] += 1.0,
            },
        }
        p.iter().all(|&q| q > 0.0)
    }

    /// The linear part of the basis map, applied to `p` (holding the variables' values
    /// per mask, entry 0 = 0) in place.
    fn transform(&self, r: &RegionTerm, p: &mut [f64]) {
        match self.setup.basis {
            Basis::Walsh => {
                walsh(p);
                let scale = 1.0 / (1usize << r.n) as f64;
                p.iter_mut().for_each(|q| *q *= scale);
            }
            Basis::Flip { .. } => mobius_superset(p),
        }
    }

    /// The probabilities of region `r` in double-double (for precise Hessians).
    fn probabilities_dd(&self, r: &RegionTerm, ri: usize, x: &[f64]) -> Option<Vec<Dd>> {
        let size = 1usize << r.n;
        let mut lin = vec![0.0; size];
        for (slot, &v) in lin.iter_mut().zip(&r.vars).skip(1) {
            *slot = x[v as usize];
        }
        let mut p: Vec<Dd> = lin.iter().map(|&v| Dd::from_f64(v)).collect();
        match self.setup.basis {
            Basis::Walsh => {
                walsh(&mut p);
                let scale = 1.0 / size as f64;
                p.iter_mut().for_each(|q| *q = q.mul_f64(scale));
            }
            Basis::Flip { .. } => mobius_superset(&mut p),
        }
        match &self.setup.reference {
            Some((_, p_ref)) => p.iter_mut().zip(&p_ref[ri]).for_each(|(q, pr)| *q += *pr),
            None => match self.setup.basis {
                Basis::Walsh => {
                    let u = 1.0 / size as f64;
                    p.iter_mut().for_each(|q| *q = q.add_f64(u));
                }
                Basis::Flip { .. } => p[0] = p[0].add_f64(1.0),
            },
        }
        p.iter().all(|q| q.hi > 0.0).then_some(p)
    }

    /// Whether every region probability is strictly positive at `x`.
    pub fn feasible(&self, x: &[f64]) -> bool {
        let mut p = Vec::new();
        self.setup.regions.iter().enumerate().all(|(ri, r)| {
            p.resize(1 << r.n, 0.0);
            self.probabilities(r, ri, x, &mut p)
        })
    }

    /// Energy per cell `E(x)`.
    pub fn energy(&self, x: &[f64]) -> f64 {
        let (constant, variable) = self.energy_parts(x);
        constant + variable
    }

    /// The energy as (constant part, part that varies with x): the constant is the
    /// pattern's energy (flip basis) plus the linear terms at the reference.
    pub fn energy_parts(&self, x: &[f64]) -> (f64, f64) {
        let e = &self.setup.energy;
        let r = self.reference();
        let mut constant = e.e0_bonds + self.h * e.e0_field;
        let mut variable = 0.0;
        for (k, &xk) in x.iter().enumerate() {
            let c = e.lin_bonds[k] + self.h * e.lin_field[k];
            if c != 0.0 {
                variable += c * xk;
                if let Some(r) = r {
                    constant += c * r[k];
                }
            }
        }
        if !e.quad.is_empty() {
            let v = self.values(x);
            for &(a, b, c) in &e.quad {
                variable += c * v[a] * v[b];
            }
        }
        (constant, variable)
    }

    /// `∇E` at x (constant except for factorised bonds).
    pub fn energy_gradient(&self, x: &[f64]) -> Vec<f64> {
        let e = &self.setup.energy;
        let mut g: Vec<f64> = e
            .lin_bonds
            .iter()
            .zip(&e.lin_field)
            .map(|(b, f)| b + self.h * f)
            .collect();
        if !e.quad.is_empty() {
            let v = self.values(x);
            for &(a, b, c) in &e.quad {
                g[a] += c * v[b];
                g[b] += c * v[a];
            }
        }
        g
    }

    /// `∂(∇F)/∂h`: the field enters linearly, so this is constant.
    pub fn field_gradient(&self) -> Vec<f64> {
        self.setup.energy.lin_field.clone()
    }

    /// F, E, S and ∇F at `x`, or `None` where some cluster probability is not positive.
    pub fn evaluate(&self, x: &[f64]) -> Option<Evaluation> {
        let mut gradient = self.energy_gradient(x);
        let mut magnitude = 0.0;
        let entropy = self.entropy_and_gradient(x, &mut gradient, -self.t, &mut magnitude)?;
        let (constant, variable) = self.energy_parts(x);
        let merit = variable - self.t * entropy;
        let energy_terms: f64 = {
            let e = &self.setup.energy;
            x.iter()
                .enumerate()
                .map(|(k, xk)| ((e.lin_bonds[k] + self.h * e.lin_field[k]) * xk).abs())
                .sum()
        };
        Some(Evaluation {
            free_energy: constant + merit,
            energy: constant + variable,
            entropy,
            gradient,
            merit,
            rounding: 1e-15 * (self.t * magnitude + energy_terms) + 1e-300,
        })
    }

    /// Entropy per cell; adds `scale · ∂S/∂x` into `g` and
    /// `Σ_γ |a_γ| g(n_γ) Σ_σ |p ln p|` into `magnitude` (g: [`sum_growth`]). `None` if
    /// infeasible.
    fn entropy_and_gradient(
        &self,
        x: &[f64],
        g: &mut [f64],
        scale: f64,
        magnitude: &mut f64,
    ) -> Option<f64> {
        let mut p = Vec::new();
        let mut s_total = 0.0;
        for (ri, r) in self.setup.regions.iter().enumerate() {
            p.resize(1 << r.n, 0.0);
            if !self.probabilities(r, ri, x, &mut p) {
                return None;
            }
            let mut s = 0.0;
            let mut mag = 0.0;
            ln_largest(&mut p, |q, l| {
                s -= q * l;
                mag += (q * l).abs();
            });
            s_total += r.coefficient * s;
            *magnitude += r.coefficient.abs() * mag * sum_growth(r.n);
            // p now holds ln p; ∂S/∂x_c = −(Tᵀ ln p)[c].
            let f = scale * r.coefficient;
            if self.setup.precise {
                // Alternating sums of logarithms of size β ΔE: summed in double-double.
                let mut l: Vec<Dd> = p.iter().map(|&v| Dd::from_f64(v)).collect();
                let norm = match self.setup.basis {
                    Basis::Walsh => {
                        walsh(&mut l);
                        1.0 / (1usize << r.n) as f64
                    }
                    Basis::Flip { .. } => {
                        mobius_subset(&mut l);
                        1.0
                    }
                };
                for (mask, &v) in r.vars.iter().enumerate().skip(1) {
                    g[v as usize] -= f * norm * l[mask].to_f64();
                }
                continue;
            }
            match self.setup.basis {
                Basis::Walsh => {
                    walsh(&mut p);
                    let f = f / (1usize << r.n) as f64;
                    for (mask, &v) in r.vars.iter().enumerate().skip(1) {
                        g[v as usize] -= f * p[mask];
                    }
                }
                Basis::Flip { .. } => {
                    mobius_subset(&mut p);
                    for (mask, &v) in r.vars.iter().enumerate().skip(1) {
                        g[v as usize] -= f * p[mask];
                    }
                }
            }
        }
        Some(s_total)
    }

    /// The rounding scale of Hessian entries at `x`: `10⁻¹³ Σ_γ T |a_γ| 2^-n max_σ 1/p_γ`.
    /// Entries are sums of terms that large, so eigenvalues smaller than this are noise.
    pub fn hessian_rounding(&self, x: &[f64]) -> f64 {
        let mut p = Vec::new();
        let mut total = 0.0;
        for (ri, r) in self.setup.regions.iter().enumerate() {
            p.resize(1 << r.n, 0.0);
            if !self.probabilities(r, ri, x, &mut p) {
                return f64::INFINITY;
            }
            let pmin = p.iter().copied().fold(f64::INFINITY, f64::min);
            total += self.t * r.coefficient.abs() / (1u64 << r.n) as f64 / pmin;
        }
        1e-13 * total
    }

    /// `∇S` (entropy per cell) at `x`.
    pub fn entropy_gradient(&self, x: &[f64]) -> Option<Vec<f64>> {
        let mut g = vec![0.0; self.len()];
        self.entropy_and_gradient(x, &mut g, 1.0, &mut 0.0)?;
        Some(g)
    }

    /// The Hessian kernel of every active region at `x` (`None` if infeasible); with
    /// `precise`, 1/p and its transform are computed in double-double.
    pub fn region_kernels(&self, x: &[f64], precise: bool) -> Option<Vec<RegionKernel<'_>>> {
        let mut out = Vec::with_capacity(self.setup.regions.len());
        let mut p = Vec::new();
        for (ri, r) in self.setup.regions.iter().enumerate() {
            let size = 1usize << r.n;
            let mut kernel_lo = None;
            let mut inv_p = Vec::new();
            let kernel = if precise {
                let p = self.probabilities_dd(r, ri, x)?;
                let mut k: Vec<Dd> = p.iter().map(|q| q.recip()).collect();
                match self.setup.basis {
                    Basis::Walsh => walsh(&mut k),
                    Basis::Flip { .. } => zeta_subset(&mut k),
                }
                let (hi, lo) = k
                    .iter()
                    .map(|v| {
                        let r = Dd::from_f64(v.hi).add_f64(v.lo);
                        (r.hi, r.lo)
                    })
                    .unzip();
                kernel_lo = Some(lo);
                hi
            } else {
                p.resize(size, 0.0);
                if !self.probabilities(r, ri, x, &mut p) {
                    return None;
                }
                let mut k: Vec<f64> = p.iter().map(|q| 1.0 / q).collect();
                if self.setup.basis == Basis::Walsh {
                    inv_p.clone_from(&k);
                }
                match self.setup.basis {
                    Basis::Walsh => walsh(&mut k),
                    Basis::Flip { .. } => zeta_subset(&mut k),
                }
                k
            };
            let (scale, kind) = match self.setup.basis {
                // ∂²F/∂ξ_c∂ξ_d = −T a ∂²S = T a 4^-n (W 1/p)[c ⊕ d]
                Basis::Walsh => (
                    self.t * r.coefficient / (size as f64 * size as f64),
                    KernelKind::Xor,
                ),
                // ∂²F/∂ζ_c∂ζ_d = T a (−1)^{|c|+|d|} (Z 1/p)[c ∧ d]
                Basis::Flip { .. } => (self.t * r.coefficient, KernelKind::And),
            };
            out.push(RegionKernel {
                n: r.n,
                scale,
                vars: &r.vars,
                kernel,
                kernel_lo,
                kind,
                inv_p,
            });
        }
        Some(out)
    }

    /// The factorised-bond part of the Hessian: `(a, b, c)` adds c at (a, b) and (b, a).
    pub fn quadratic_terms(&self) -> &[(usize, usize, f64)] {
        &self.setup.energy.quad
    }

    /// For each of [`Functional::quadratic_terms`], its bond (index into the level's
    /// `bond_terms`, which follow the lattice's bonds).
    pub fn quadratic_bonds(&self) -> &[usize] {
        &self.setup.energy.quad_bonds
    }

    /// The Hessian of F restricted to the variables `vars` (`pos[v]` = row of variable v
    /// or `usize::MAX` when v is not in the block). Dense: `Σ_γ 4^{n_γ}` operations.
    pub fn hessian_block(&self, x: &[f64], vars: &[usize], pos: &[usize]) -> Option<DMatrix<f64>> {
        self.hessian_block_with(x, vars, pos, false)
    }

    /// [`Functional::hessian_block`] with every region's kernel and the sum over
    /// regions in double-double: entries keep their relative precision when positive
    /// and negative regions cancel (a paramagnet's soft mode at low temperature).
    pub fn hessian_block_precise(
        &self,
        x: &[f64],
        vars: &[usize],
        pos: &[usize],
    ) -> Option<DMatrix<f64>> {
        self.hessian_block_with(x, vars, pos, true)
    }

    /// The Hessian block with every entry in double-double (column-major `m × m`), for
    /// solves that need more than the entries' double precision (see
    /// [`crate::dd::inverse_form`]).
    ///
    /// Regions of up to [`GRAM_SITES`] sites are summed in the Gram form
    /// `H = Σ_σ u(σ) u(σ)ᵀ / p(σ)`, `u_c(σ) = Σ_{k: var(k) = c} ∂p(σ)/∂x_k`: the masks of a
    /// variable are combined state by state before the division by p, so that a rare
    /// state that does not move a variable (the chain's `+−` bond state for the
    /// magnetisation) contributes an exact zero instead of a cancellation of 1/p.
    pub fn hessian_block_dd(&self, x: &[f64], vars: &[usize], pos: &[usize]) -> Option<Vec<Dd>> {
        let m = vars.len();
        let kernels = self.region_kernels(x, true)?;
        let mut acc = vec![Dd::ZERO; m * m];
        for (ri, (k, r)) in kernels.iter().zip(&self.setup.regions).enumerate() {
            if k.n <= GRAM_SITES {
                self.add_gram(r, ri, x, pos, m, &mut acc)?;
                continue;
            }
            let rows = block_rows(k, pos);
            for &(c, rc) in &rows {
                for &(d, rd) in &rows {
                    acc[rc + m * rd] += k.entry_dd(c, d);
                }
            }
        }
        for &(a, b, c) in self.quadratic_terms() {
            let (pa, pb) = (pos[a], pos[b]);
            if pa != usize::MAX && pb != usize::MAX {
                acc[pa + m * pb] = acc[pa + m * pb].add_f64(c);
                acc[pb + m * pa] = acc[pb + m * pa].add_f64(c);
            }
        }
        Some(acc)
    }

    /// Add region `r`'s Hessian in the Gram form (see [`Functional::hessian_block_dd`]).
    fn add_gram(
        &self,
        r: &RegionTerm,
        ri: usize,
        x: &[f64],
        pos: &[usize],
        m: usize,
        acc: &mut [Dd],
    ) -> Option<()> {
        let p = self.probabilities_dd(r, ri, x)?;
        let size = 1usize << r.n;
        // Rows of the block this region touches, and for each the masks of its variable.
        let mut rows: Vec<(usize, Vec<usize>)> = Vec::new();
        for mask in 1..size {
            let row = pos[r.vars[mask] as usize];
            if row == usize::MAX {
                continue;
            }
            match rows.iter_mut().find(|(rw, _)| *rw == row) {
                Some((_, masks)) => masks.push(mask),
                None => rows.push((row, vec![mask])),
            }
        }
        // ∂p(σ)/∂x_k: Walsh 2^-n χ_k(σ) (σ in spin labels); flip (−1)^{|k|−|A|}[A ⊆ k].
        let (norm, scale) = match self.setup.basis {
            Basis::Walsh => (1.0 / size as f64, self.t * r.coefficient),
            Basis::Flip { .. } => (1.0, self.t * r.coefficient),
        };
        let mut u = vec![0.0; rows.len()];
        for (state, ps) in p.iter().enumerate() {
            for (slot, (_, masks)) in u.iter_mut().zip(&rows) {
                *slot = masks
                    .iter()
                    .map(|&k| match self.setup.basis {
                        Basis::Walsh => norm * crate::subset::parity_sign(k & state),
                        Basis::Flip { .. } => {
                            if state & !k == 0 {
                                crate::subset::parity_sign(k ^ state)
                            } else {
                                0.0
                            }
                        }
                    })
                    .sum();
            }
            if u.iter().all(|&v| v == 0.0) {
                continue;
            }
            let w = ps.recip().mul_f64(scale);
            for (i, (ri_, _)) in rows.iter().enumerate() {
                if u[i] == 0.0 {
                    continue;
                }
                for (j, (rj, _)) in rows.iter().enumerate() {
                    if u[j] != 0.0 {
                        acc[*ri_ + m * rj] += w.mul_f64(u[i] * u[j]);
                    }
                }
            }
        }
        Some(())
    }

    fn hessian_block_with(
        &self,
        x: &[f64],
        vars: &[usize],
        pos: &[usize],
        precise: bool,
    ) -> Option<DMatrix<f64>> {
        let m = vars.len();
        let kernels = self.region_kernels(x, precise)?;
        let mut acc = vec![Dd::ZERO; if precise { m * m } else { 0 }];
        let mut h = DMatrix::<f64>::zeros(m, m);
        // The Hessian is symmetric: each unordered pair of masks is visited once and
        // summed into the upper triangle (a pair of masks of one variable twice onto
        // its diagonal), with the kernel scaled once per region.
        for k in &kernels {
            let rows = block_rows(k, pos);
            if precise {
                let lo = k.kernel_lo.as_deref();
                let scaled: Vec<Dd> = (0..k.kernel.len())
                    .map(|i| {
                        Dd {
                            hi: k.kernel[i],
                            lo: lo.map_or(0.0, |l| l[i]),
                        }
                        .mul_f64(k.scale)
                    })
                    .collect();
                let entry = |c: usize, d: usize| match k.kind {
                    KernelKind::Xor => scaled[c ^ d],
                    KernelKind::And if (c ^ d).count_ones().is_multiple_of(2) => scaled[c & d],
                    KernelKind::And => -scaled[c & d],
                };
                upper_pairs(
                    &rows,
                    |r| r.1,
                    m,
                    |at, v2, (c, _), (d, _)| {
                        let v = entry(c, d);
                        acc[at] += if v2 { v + v } else { v };
                    },
                );
            } else {
                let scaled: Vec<f64> = k.kernel.iter().map(|v| v * k.scale).collect();
                let hs = h.as_mut_slice();
                let mut add = |at: usize, v2: bool, v: f64| hs[at] += if v2 { v + v } else { v };
                // The kernel's kind chosen once per region, not once per pair: the Newton
                // Hessians of the Tc search spend most of their time in these visits.
                match k.kind {
                    KernelKind::Xor => upper_pairs(
                        &rows,
                        |r| r.1,
                        m,
                        |at, v2, (c, _), (d, _)| add(at, v2, scaled[c ^ d]),
                    ),
                    KernelKind::And => upper_pairs(
                        &rows,
                        |r| r.1,
                        m,
                        |at, v2, (c, _), (d, _)| add(at, v2, parity_sign(c ^ d) * scaled[c & d]),
                    ),
                }
            }
        }
        for (at, v) in self.quadratic_upper(pos, m) {
            if precise {
                acc[at] = acc[at].add_f64(v);
            } else {
                h.as_mut_slice()[at] += v;
            }
        }
        for j in 0..m {
            for i in 0..=j {
                let v = if precise {
                    acc[i + m * j].to_f64()
                } else {
                    h[(i, j)]
                };
                h[(i, j)] = v;
                h[(j, i)] = v;
            }
        }
        Some(h)
    }

    /// The factorised bonds' part of a symmetric Hessian block of order `m` (`pos[v]`
    /// the row of variable v, `usize::MAX` outside), on its upper triangle: (index of the
    /// entry, column-major; value), a term on the diagonal counted twice.
    fn quadratic_upper<'s>(
        &'s self,
        pos: &'s [usize],
        m: usize,
    ) -> impl Iterator<Item = (usize, f64)> + 's {
        self.quadratic_terms().iter().filter_map(move |&(a, b, c)| {
            let (pa, pb) = (pos[a], pos[b]);
            (pa != usize::MAX && pb != usize::MAX).then(|| {
                let (lo, hi) = (pa.min(pb), pa.max(pb));
                (lo + m * hi, if lo == hi { 2.0 * c } else { c })
            })
        })
    }

    /// The cluster states of every region grouped for [`Functional::hessian_block_grouped`]
    /// on `block` (Walsh basis only; `None` in the flip basis or where grouping does not
    /// pay, see [`StateGroups::new`]). Depends on the level and the block alone: build
    /// once, use at every temperature.
    pub fn state_groups(&self, block: &Block) -> Option<StateGroups> {
        if self.setup.basis != Basis::Walsh {
            return None;
        }
        let regions = self.setup.regions.iter().map(|r| {
            let masks = (1..1usize << r.n)
                .filter_map(|c| {
                    let row = block.pos[r.vars[c] as usize];
                    (row != usize::MAX).then_some((c, row, 1))
                })
                .collect();
            (r.n, masks)
        });
        StateGroups::new(block.vars.len(), &vec![1.0; block.vars.len()], regions)
    }

    /// [`Functional::hessian_block`] on the block `groups` were built for, in the
    /// grouped Gram form `H = Σ_γ T a_γ 4^-n Σ_g (Σ_{σ∈g} 1/p_γ(σ)) u_g u_gᵀ` (see
    /// [`crate::gram`]): the same matrix to rounding, in plain doubles. `None` where `x`
    /// is infeasible, or where the functional is not a plain Walsh one (use
    /// [`Functional::hessian_block`] or [`Functional::hessian_block_precise`] there).
    pub fn hessian_block_grouped(
        &self,
        x: &[f64],
        block: &Block,
        groups: &StateGroups,
    ) -> Option<DMatrix<f64>> {
        let m = block.vars.len();
        if self.setup.precise
            || self.setup.basis != Basis::Walsh
            || groups.order() != m
            || groups.regions() != self.setup.regions.len()
        {
            return None;
        }
        let mut h = DMatrix::<f64>::zeros(m, m);
        let mut p = Vec::new();
        for (ri, r) in self.setup.regions.iter().enumerate() {
            let size = 1usize << r.n;
            p.resize(size, 0.0);
            if !self.probabilities(r, ri, x, &mut p) {
                return None;
            }
            p.iter_mut().for_each(|q| *q = 1.0 / *q);
            let scale = self.t * r.coefficient / (size as f64 * size as f64);
            groups.add_region(ri, &p, scale, h.as_mut_slice());
        }
        for (at, v) in self.quadratic_upper(&block.pos, m) {
            h.as_mut_slice()[at] += v;
        }
        h.fill_lower_triangle_with_upper_triangle();
        Some(h)
    }

    /// Hessian–vector product `H v` over all variables, matrix-free: per region two
    /// transforms of length 2^n (Walsh: `T a 4^-n W diag(1/p) W v`; flip:
    /// `T a (−1)^{|k|} Z diag(1/p) Z↑ ((−1)^{|l|} v)`) gathered onto the variables.
    pub fn hessian_vector(&self, x: &[f64], v: &[f64], out: &mut [f64]) -> Option<()> {
        out.iter_mut().for_each(|o| *o = 0.0);
        let mut p = Vec::new();
        let mut w = Vec::new();
        for (ri, r) in self.setup.regions.iter().enumerate() {
            let size = 1usize << r.n;
            p.resize(size, 0.0);
            w.resize(size, 0.0);
            if !self.probabilities(r, ri, x, &mut p) {
                return None;
            }
            w[0] = 0.0;
            match self.setup.basis {
                Basis::Walsh => {
                    for (slot, &var) in w.iter_mut().zip(&r.vars).skip(1) {
                        *slot = v[var as usize];
                    }
                    walsh(&mut w);
                    w.iter_mut().zip(&p).for_each(|(a, q)| *a /= q);
                    walsh(&mut w);
                    let f = self.t * r.coefficient / (size as f64 * size as f64);
                    for (mask, &var) in r.vars.iter().enumerate().skip(1) {
                        out[var as usize] += f * w[mask];
                    }
                }
                Basis::Flip { .. } => {
                    for (mask, (slot, &var)) in w.iter_mut().zip(&r.vars).enumerate().skip(1) {
                        *slot = parity_sign(mask) * v[var as usize];
                    }
                    zeta_superset(&mut w);
                    w.iter_mut().zip(&p).for_each(|(a, q)| *a /= q);
                    zeta_subset(&mut w);
                    let f = self.t * r.coefficient;
                    for (mask, &var) in r.vars.iter().enumerate().skip(1) {
                        out[var as usize] += f * parity_sign(mask) * w[mask];
                    }
                }
            }
        }
        for &(a, b, c) in self.quadratic_terms() {
            out[a] += c * v[b];
            out[b] += c * v[a];
        }
        Some(())
    }

    /// The worst cancellation in the cluster probabilities at x: the largest ratio of
    /// the sum of the magnitudes of the terms that make up a probability to the
    /// probability itself (flip basis: `Σ_{B ⊇ A} ζ_B / p(A)`; Walsh:
    /// `2^-n Σ_c |ξ_c| / p`). A probability's relative precision is about 10⁻¹⁶ times
    /// this; beyond ~10¹² the state is at the edge of what doubles can hold.
    pub fn cancellation(&self, x: &[f64]) -> f64 {
        let v: std::borrow::Cow<'_, [f64]> = match &self.setup.reference {
            Some(_) => self.values(x).into(),
            None => x.into(),
        };
        let (mut p, mut mags) = (Vec::new(), Vec::new());
        let mut worst: f64 = 1.0;
        for (ri, r) in self.setup.regions.iter().enumerate() {
            let size = 1usize << r.n;
            p.resize(size, 0.0);
            // (In the flip basis `p` is indexed by flip sets, as `mags` is.)
            if !self.probabilities(r, ri, x, &mut p) {
                return f64::INFINITY;
            }
            let magnitudes =
                std::iter::once(1.0).chain(r.vars[1..].iter().map(|&k| v[k as usize].abs()));
            match self.setup.basis {
                // Every probability sums the same magnitudes: the smallest decides.
                Basis::Walsh => {
                    let total: f64 = magnitudes.sum::<f64>() / size as f64;
                    let smallest = p.iter().copied().fold(f64::INFINITY, f64::min);
                    worst = worst.max(total / smallest);
                }
                Basis::Flip { .. } => {
                    mags.clear();
                    mags.extend(magnitudes);
                    zeta_superset(&mut mags);
                    for (m, q) in mags.iter().zip(&p) {
                        worst = worst.max(m / q);
                    }
                }
            }
        }
        worst
    }

    /// The smallest cluster probability of any active region at x, or `None` if x is
    /// infeasible.
    pub fn smallest_probability(&self, x: &[f64]) -> Option<f64> {
        (0..self.setup.regions.len()).try_fold(f64::INFINITY, |low, ri| {
            let p = self.region_probabilities(ri, x)?;
            Some(p.iter().copied().fold(low, f64::min))
        })
    }

    /// The probabilities of region orbit `ri` (index among the active regions) at x, in
    /// spin labels (bit k set ⇔ spin k is −1), or `None` if infeasible.
    pub fn region_probabilities(&self, ri: usize, x: &[f64]) -> Option<Vec<f64>> {
        let r = &self.setup.regions[ri];
        let mut p = vec![0.0; 1 << r.n];
        if !self.probabilities(r, ri, x, &mut p) {
            return None;
        }
        Some(match self.setup.basis {
            Basis::Walsh => p,
            Basis::Flip { .. } => (0..p.len()).map(|s| p[s ^ r.negative]).collect(),
        })
    }

    /// The coordinates, in `basis` (no reference), of the state x of this functional:
    /// every variable is read from the distribution of the first active region holding
    /// it (ξ_k = (W p)\[k\]; ζ_k = (Z↑ p_flip)\[k\]). Exact for a consistent state; precise
    /// as long as the region probabilities are.
    pub fn convert(&self, x: &[f64], basis: &Basis) -> Option<Vec<f64>> {
        let mut out = vec![f64::NAN; self.len()];
        let mut seen = vec![false; self.len()];
        for (ri, r) in self.setup.regions.iter().enumerate() {
            if r.vars[1..].iter().all(|&v| seen[v as usize]) {
                continue;
            }
            let mut p = self.region_probabilities(ri, x)?;
            match basis {
                Basis::Walsh => walsh(&mut p),
                Basis::Flip { pattern } => {
                    let negative = r.negative_mask(pattern);
                    p = (0..p.len()).map(|a| p[a ^ negative]).collect();
                    zeta_superset(&mut p);
                }
            }
            for (mask, &v) in r.vars.iter().enumerate().skip(1) {
                if !seen[v as usize] {
                    seen[v as usize] = true;
                    out[v as usize] = p[mask];
                }
            }
        }
        seen.iter().all(|&s| s).then_some(out)
    }
}

/// How much more than 10⁻¹⁵ of its terms' magnitudes a region's entropy is rounded:
/// `max(1, 2^{n/2}/5)` for n sites. Its 2^n probabilities are each a transform of 2^n
/// correlations, and rounding errors of random sign add up as the square root of their
/// number; small clusters keep the plain 10⁻¹⁵ (n ≤ 4). Calibrated on the square 4×4
/// block's paramagnet near Tc: F scatters by 4·10⁻¹³ rms under perturbations far below
/// its resolution, where 10⁻¹⁵ of the magnitudes alone gave a scale of 5·10⁻¹⁴ (and
/// Newton's line search then rejected full steps that shrank the gradient 10⁴-fold).
fn sum_growth(n: usize) -> f64 {
    (2f64.powf(n as f64 / 2.0) / 5.0).max(1.0)
}

/// Replace every probability by its logarithm, calling `visit(p, ln p)` for each. The
/// largest probability, when above 1/2, is taken as one minus the sum of the others and
/// its logarithm as `ln_1p(−rest)`, so that near-certain states (low temperature) keep
/// the rest's relative precision.
fn ln_largest(p: &mut [f64], mut visit: impl FnMut(f64, f64)) {
    let (k, &pk) = p
        .iter()
        .enumerate()
        .max_by(|a, b| a.1.total_cmp(b.1))
        .unwrap_or((0, &1.0));
    let (pk, lk) = if pk > 0.5 {
        let rest: f64 = p
            .iter()
            .enumerate()
            .filter(|&(i, _)| i != k)
            .map(|(_, q)| q)
            .sum();
        (1.0 - rest, (-rest).ln_1p())
    } else {
        (pk, pk.ln())
    };
    for (i, q) in p.iter_mut().enumerate() {
        let (qq, l) = if i == k { (pk, lk) } else { (*q, q.ln()) };
        visit(qq, l);
        *q = l;
    }
}

/// The exact (double-double) cluster probabilities of the reference values `r` in region
/// `rt`: `2^-n W [1, r]` or `M↑ [1, r]`.
fn reference_probabilities(basis: &Basis, rt: &RegionTerm, r: &[f64]) -> Vec<Dd> {
    let size = 1usize << rt.n;
    let mut p: Vec<Dd> = (0..size)
        .map(|mask| {
            if mask == 0 {
                Dd::from_f64(1.0)
            } else {
                Dd::from_f64(r[rt.vars[mask] as usize])
            }
        })
        .collect();
    match basis {
        Basis::Walsh => {
            walsh(&mut p);
            let scale = 1.0 / size as f64;
            p.iter_mut().for_each(|q| *q = q.mul_f64(scale));
        }
        Basis::Flip { .. } => mobius_superset(&mut p),
    }
    p
}

/// The energy of `level` as a linear (plus, at the site level, quadratic) form in the
/// coordinates: Walsh `E = −Σ J ξ_b − h Σ ξ_a`; flip, with `ξ_a = ε_a (1 − 2ζ_a)` and
/// `ξ_ab = ε_a ε_b (1 − 2ζ_a − 2ζ_b + 4ζ_ab)`.
fn energy_form(level: &Level, pattern: Option<&[f64]>) -> EnergyForm {
    let n = level.variables.len();
    let mut e = EnergyForm {
        lin_bonds: vec![0.0; n],
        lin_field: vec![0.0; n],
        ..EnergyForm::default()
    };
    let site_of = |var: usize, k: usize| -> (usize, usize) {
        let (a, _) = level.variables[var].site(k);
        (a, level.site_vars[a])
    };
    for (bi, b) in level.bond_terms.iter().enumerate() {
        if matches!(b, BondTerm::Factorised { .. }) {
            e.quad_bonds.push(bi);
        }
        match (*b, pattern) {
            (BondTerm::Correlated { var, j }, None) => e.lin_bonds[var] -= j,
            (BondTerm::Factorised { a, b, j }, None) => e.quad.push((a, b, -j)),
            (BondTerm::Correlated { var, j }, Some(eps)) => {
                let (a, va) = site_of(var, 0);
                let (b, vb) = site_of(var, 1);
                let s = j * eps[a] * eps[b];
                e.e0_bonds -= s;
                e.lin_bonds[va] += 2.0 * s;
                e.lin_bonds[vb] += 2.0 * s;
                e.lin_bonds[var] -= 4.0 * s;
            }
            (BondTerm::Factorised { a: va, b: vb, j }, Some(eps)) => {
                let a = basis_site_of(level, va);
                let b = basis_site_of(level, vb);
                let s = j * eps[a] * eps[b];
                e.e0_bonds -= s;
                e.lin_bonds[va] += 2.0 * s;
                e.lin_bonds[vb] += 2.0 * s;
                e.quad.push((va, vb, -4.0 * s));
            }
        }
    }
    for (a, &v) in level.site_vars.iter().enumerate() {
        match pattern {
            None => e.lin_field[v] -= 1.0,
            Some(eps) => {
                e.e0_field -= eps[a];
                e.lin_field[v] += 2.0 * eps[a];
            }
        }
    }
    e
}

/// The basis site whose magnetisation is variable `v`.
fn basis_site_of(level: &Level, v: usize) -> usize {
    level.variables[v].site(0).0
}

/// A subset of the variables (a sector), with the reverse map.
#[derive(Debug, Clone)]
pub struct Block {
    /// Variables in the block.
    pub vars: Vec<usize>,
    /// Position of each variable in `vars`, `usize::MAX` if absent.
    pub pos: Vec<usize>,
}

impl Block {
    /// The block of variables accepted by `keep`.
    pub fn new(level: &Level, keep: impl Fn(usize) -> bool) -> Block {
        let n = level.variables.len();
        let vars: Vec<usize> = (0..n).filter(|&v| keep(v)).collect();
        let mut pos = vec![usize::MAX; n];
        for (i, &v) in vars.iter().enumerate() {
            pos[v] = i;
        }
        Block { vars, pos }
    }
    /// Every variable.
    pub fn all(level: &Level) -> Block {
        Block::new(level, |_| true)
    }
    /// Variables even under spin reversal (the paramagnetic sector at h = 0).
    pub fn even(level: &Level) -> Block {
        Block::new(level, |v| !level.is_odd(v))
    }
    /// Variables odd under spin reversal.
    pub fn odd(level: &Level) -> Block {
        Block::new(level, |v| level.is_odd(v))
    }
    /// Gather `x[vars]`.
    pub fn gather(&self, x: &[f64]) -> DVector<f64> {
        DVector::from_iterator(self.vars.len(), self.vars.iter().map(|&v| x[v]))
    }
}

/// The masks of kernel `k` whose variable is in the block (`pos[var]` its row, or
/// `usize::MAX`): (mask, row).
/// Every unordered pair {i ≤ j} of `rows` once, for a symmetric matrix of order `m`
/// summed on its upper triangle: `visit(index of the upper-triangle entry (column-major),
/// whether the pair counts twice there (two different rows of one block row), row i,
/// row j)`, `row` giving a row's block row.
#[inline]
pub(crate) fn upper_pairs<T: Copy>(
    rows: &[T],
    row: impl Fn(T) -> usize,
    m: usize,
    mut visit: impl FnMut(usize, bool, T, T),
) {
    for (i, &a) in rows.iter().enumerate() {
        let ra = row(a);
        visit(ra + m * ra, false, a, a);
        for &b in &rows[i + 1..] {
            let rb = row(b);
            let (lo, hi) = if ra <= rb { (ra, rb) } else { (rb, ra) };
            visit(lo + m * hi, lo == hi, a, b);
        }
    }
}

fn block_rows(k: &RegionKernel<'_>, pos: &[usize]) -> Vec<(usize, usize)> {
    (1..1usize << k.n)
        .filter_map(|c| {
            let row = pos[k.vars[c] as usize];
            (row != usize::MAX).then_some((c, row))
        })
        .collect()
}

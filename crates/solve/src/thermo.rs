//! Per-site observables of a solved state.
//!
//! With H the Hessian of F (per cell) at the equilibrium x*, N_b the sites per cell,
//! `b = ∂(Σ_a m_a)/∂x` (the field's direction: ∂(∇F)/∂h = −b) and ∇E the energy's
//! gradient:
//!
//! ```text
//! m = Σ_a m_a / N_b,   U = E/N_b,   S = Σ_γ a_γ S_γ / N_b,   F = U − T S
//! χ = ∂m/∂h = bᵀ H⁻¹ b / N_b                 (dx*/dh = H⁻¹ b)
//! C = ∂U/∂T = ∇Eᵀ H⁻¹ ∇E / (T N_b)            (dx*/dT = H⁻¹ ∇S, ∇S = ∇E/T at x*)
//! ```
//!
//! Every term is a quadratic form of a simple vector with the inverse Hessian, solved by
//! Cholesky on a Hessian assembled in double-double: the precision the basis gives the
//! cluster probabilities carries through to C and χ (an ordered state at low
//! temperature in the flip basis; the paramagnet, whose even and odd blocks are solved
//! apart, in the Walsh basis with a reference). S is summed from the cluster entropies
//! themselves, not as (U − F)/T, so that it keeps its digits when it is tiny.

use nalgebra::{DMatrix, DVector};
use rungs_lattice::{BondTerm, Level};

use crate::error::SolveError;
use crate::functional::{Basis, Block, Functional};
use crate::state::{full_hessian, State};

/// Observables per site at one (T, h).
#[derive(Debug, Clone, PartialEq)]
pub struct Observables {
    /// Temperature.
    pub temperature: f64,
    /// Field.
    pub field: f64,
    /// Mean magnetisation per site.
    pub magnetization: f64,
    /// Magnetisation of each basis site (sublattice).
    pub sublattice_magnetization: Vec<f64>,
    /// Internal energy per site.
    pub energy: f64,
    /// Free energy per site.
    pub free_energy: f64,
    /// Entropy per site.
    pub entropy: f64,
    /// Specific heat per site.
    pub specific_heat: f64,
    /// Susceptibility per site.
    pub susceptibility: f64,
    /// ⟨s_i s_j⟩ of every bond of the lattice, in file order.
    pub bond_correlations: Vec<f64>,
}

/// Largest block solved in double-double (its Cholesky costs m³/3 double-double
/// operations: ~50 ms at 300 variables).
const PRECISE_SOLVE_LIMIT: usize = 300;

/// The error for a state whose Hessian is not positive definite.
fn not_a_minimum(level: &str, t: f64, h: f64) -> SolveError {
    SolveError::TcSearch {
        level: level.to_string(),
        detail: format!(
            "the Hessian is singular or not positive definite at T = {t}, h = {h} (a critical point, or a saddle): C and χ do not exist there"
        ),
    }
}

/// `vᵀ H⁻¹ v` for a symmetric positive definite H (Cholesky); `None` otherwise.
fn inverse_form(h: DMatrix<f64>, v: &DVector<f64>) -> Option<f64> {
    if v.is_empty() || v.iter().all(|&x| x == 0.0) {
        return Some(0.0);
    }
    let ch = h.cholesky()?;
    // vᵀH⁻¹v = |L⁻¹v|²: a sum of squares, no cancellation.
    let mut y = v.clone();
    ch.l_dirty().solve_lower_triangular_mut(&mut y);
    Some(y.norm_squared())
}

/// Whether x is a paramagnet in the Walsh basis at h = 0 (every odd value zero), whose
/// Hessian splits into even and odd blocks.
fn is_paramagnet(f: &Functional, x: &[f64]) -> bool {
    if f.field() != 0.0 || *f.basis() != Basis::Walsh {
        return false;
    }
    let v = f.values(x);
    let level = f.level();
    (0..v.len()).all(|k| !level.is_odd(k) || v[k] == 0.0)
}

/// The observables of the equilibrium state `x` of functional `f`.
pub fn observables_at(f: &Functional, x: &[f64]) -> Result<Observables, SolveError> {
    let level = f.level();
    let (t, h) = (f.temperature(), f.field());
    let nb = level.sites_per_cell as f64;
    let fail = || not_a_minimum(&level.name, t, h);
    let ev = f.evaluate(x).ok_or_else(fail)?;
    let mut b = vec![0.0; f.len()];
    for &(v, dm) in f.site_derivatives() {
        b[v] += dm;
    }
    let grad_e = f.energy_gradient(x);
    // Forms in double-double for precise functionals (low temperature), where the
    // Hessian's condition exceeds what doubles resolve.
    let form = |block: &Block, v: &[f64]| -> Option<f64> {
        let g = block.gather(v);
        if f.is_precise() && block.vars.len() <= PRECISE_SOLVE_LIMIT {
            let h = f.hessian_block_dd(x, &block.vars, &block.pos)?;
            if g.iter().all(|&e| e == 0.0) {
                return Some(0.0);
            }
            crate::dd::inverse_form(&h, block.vars.len(), g.as_slice())
        } else {
            let h = f.hessian_block_precise(x, &block.vars, &block.pos)?;
            inverse_form(h, &g)
        }
    };
    let (chi_form, c_form) = if is_paramagnet(f, x) {
        let (odd, even) = (Block::odd(level), Block::even(level));
        (
            form(&odd, &b).ok_or_else(fail)?,
            form(&even, &grad_e).ok_or_else(fail)?,
        )
    } else {
        let all = Block::all(level);
        (
            form(&all, &b).ok_or_else(fail)?,
            form(&all, &grad_e).ok_or_else(fail)?,
        )
    };
    let values = f.values(x);
    let bond_correlations = bond_correlations(f, &values);
    let sub = f.site_magnetizations(x);
    let energy = ev.energy / nb;
    let entropy = ev.entropy / nb;
    Ok(Observables {
        temperature: t,
        field: h,
        magnetization: sub.iter().sum::<f64>() / nb,
        sublattice_magnetization: sub,
        energy,
        free_energy: energy - t * entropy,
        entropy,
        specific_heat: c_form / (t * nb),
        susceptibility: chi_form / nb,
        bond_correlations,
    })
}

/// ⟨s_i s_j⟩ of every bond, from the variables' values in the functional's basis.
fn bond_correlations(f: &Functional, v: &[f64]) -> Vec<f64> {
    let level = f.level();
    let m = |var: usize| -> f64 {
        match f.basis() {
            Basis::Walsh => v[var],
            Basis::Flip { pattern } => {
                let a = level.variables[var].site(0).0;
                pattern[a] * (1.0 - 2.0 * v[var])
            }
        }
    };
    level
        .bond_terms
        .iter()
        .map(|b| match (*b, f.basis()) {
            (BondTerm::Correlated { var, .. }, Basis::Walsh) => v[var],
            (BondTerm::Correlated { var, .. }, Basis::Flip { pattern }) => {
                let c = &level.variables[var];
                let (a, b) = (c.site(0).0, c.site(1).0);
                let (va, vb) = (level.site_vars[a], level.site_vars[b]);
                pattern[a] * pattern[b] * (1.0 - 2.0 * v[va] - 2.0 * v[vb] + 4.0 * v[var])
            }
            (BondTerm::Factorised { a, b, .. }, _) => m(a) * m(b),
        })
        .collect()
}

/// The observables of `state` of `level` (Walsh basis, no reference).
pub fn observables(level: &Level, state: &State) -> Result<Observables, SolveError> {
    let f = Functional::new(level, state.t, state.h);
    let _ = full_hessian;
    observables_at(&f, &state.solution.x)
}

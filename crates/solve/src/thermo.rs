//! Per-site observables of a solved state.
//!
//! With H the Hessian of F (per cell) at the equilibrium ξ*, e the field direction
//! (`e_v = 1` on every site variable) and N_b the sites per cell:
//!
//! ```text
//! m = Σ_a ξ_a / N_b,   U = E/N_b,   F = F/N_b,   S = (U − F)/T
//! χ = ∂m/∂h = eᵀ H⁻¹ e / N_b           (dξ*/dh = H⁻¹ e)
//! C = ∂U/∂T = T ∇Sᵀ H⁻¹ ∇S / N_b       (dξ*/dT = H⁻¹ ∇S, ∇F = 0)
//! ```

use nalgebra::{DMatrix, DVector};
use rungs_lattice::{BondTerm, Level};

use crate::error::SolveError;
use crate::functional::Functional;
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

/// Solve `H y = b` for a symmetric H: Cholesky, else LU; `None` if singular.
fn solve_symmetric(h: &DMatrix<f64>, b: &DVector<f64>) -> Option<DVector<f64>> {
    if let Some(ch) = h.clone().cholesky() {
        return Some(ch.solve(b));
    }
    h.clone().lu().solve(b)
}

/// The observables of `state` of `level`.
pub fn observables(level: &Level, state: &State) -> Result<Observables, SolveError> {
    let f = Functional::new(level, state.t, state.h);
    let x = &state.solution.x;
    let ev = &state.solution.evaluation;
    let nb = level.sites_per_cell as f64;
    let singular = || SolveError::TcSearch {
        level: level.name.clone(),
        detail: format!(
            "the Hessian is singular at T = {}, h = {} (a critical point): C and χ diverge there",
            state.t, state.h
        ),
    };
    let hess = full_hessian(&f, x).ok_or_else(singular)?;
    let mut e = DVector::zeros(f.len());
    for &v in &level.site_vars {
        e[v] = 1.0;
    }
    let grad_s = DVector::from_vec(f.entropy_gradient(x).ok_or_else(singular)?);
    let he = solve_symmetric(&hess, &e).ok_or_else(singular)?;
    let hs = solve_symmetric(&hess, &grad_s).ok_or_else(singular)?;
    let susceptibility = e.dot(&he) / nb;
    let specific_heat = state.t * grad_s.dot(&hs) / nb;
    let bond_correlations = level
        .bond_terms
        .iter()
        .map(|b| match *b {
            BondTerm::Correlated { var, .. } => x[var],
            BondTerm::Factorised { a, b, .. } => x[a] * x[b],
        })
        .collect();
    let sub: Vec<f64> = level.site_vars.iter().map(|&v| x[v]).collect();
    let energy = ev.energy / nb;
    let free_energy = ev.free_energy / nb;
    Ok(Observables {
        temperature: state.t,
        field: state.h,
        magnetization: sub.iter().sum::<f64>() / nb,
        sublattice_magnetization: sub,
        energy,
        free_energy,
        entropy: (energy - free_energy) / state.t,
        specific_heat,
        susceptibility,
        bond_correlations,
    })
}

//! Equilibrium states at (T, h): the paramagnetic and ordered branches at h = 0, and
//! warm-started continuation for sweeps.

use nalgebra::DMatrix;

use crate::equilibrium::{minimise, product_state, NewtonOptions, Solution};
use crate::error::SolveError;
use crate::functional::{Block, Functional};
use rungs_lattice::Level;

/// Which solution a state is.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Branch {
    /// All odd correlations zero (h = 0 only).
    Paramagnetic,
    /// Spontaneous order at h = 0 (the m > 0 member of the pair).
    Ordered,
    /// In a field.
    Field,
}

/// A solved equilibrium point.
#[derive(Debug, Clone)]
pub struct State {
    /// Temperature.
    pub t: f64,
    /// Field.
    pub h: f64,
    /// The solution (all correlation variables, F, E, S, ∇F).
    pub solution: Solution,
    /// Which branch.
    pub branch: Branch,
}

/// Whether the odd-sector Hessian at a paramagnetic point is positive definite, i.e. the
/// paramagnetic solution is locally stable against order.
pub fn odd_sector_stable(f: &Functional, x: &[f64]) -> bool {
    let odd = Block::odd(f.level());
    match f.hessian_block(x, &odd.vars, &odd.pos) {
        Some(h) => h.cholesky().is_some(),
        None => false,
    }
}

/// Mean site magnetisation of a point.
pub fn magnetization(level: &Level, x: &[f64]) -> f64 {
    level.site_vars.iter().map(|&v| x[v]).sum::<f64>() / level.site_vars.len() as f64
}

/// The equilibrium state of `level` at (t, h), warm-started from `warm` when given.
///
/// At h = 0 the paramagnetic solution is found in the even sector; where it is unstable
/// against order (odd-sector Hessian not positive definite) the ordered solution with
/// m > 0 is found too and the one with the lower F returned. In a field all variables
/// are free.
pub fn equilibrium(
    level: &Level,
    t: f64,
    h: f64,
    warm: Option<&[f64]>,
) -> Result<State, SolveError> {
    if !(t.is_finite() && t > 0.0) {
        return Err(SolveError::BadTemperature { t });
    }
    crate::functional::check_size(level)?;
    let f = Functional::new(level, t, h);
    let opts = NewtonOptions::default();
    let all = Block::all(level);
    let feasible_warm = warm
        .filter(|w| w.len() == f.len() && f.feasible(w))
        .map(|w| w.to_vec());
    if h != 0.0 {
        let start = feasible_warm.unwrap_or_else(|| product_state(&f, (h / t).tanh() * 0.5));
        let solution = solve_with_restarts(&f, start, &all, opts, h.signum() * 0.5)?;
        return Ok(State {
            t,
            h,
            solution,
            branch: Branch::Field,
        });
    }
    let even = Block::even(level);
    let para_start = {
        let mut x = feasible_warm
            .clone()
            .unwrap_or_else(|| product_state(&f, 0.0));
        for &v in &Block::odd(level).vars {
            x[v] = 0.0;
        }
        if f.feasible(&x) {
            x
        } else {
            product_state(&f, 0.0)
        }
    };
    // Continuing an ordered branch (a sweep below Tc): the ordered minimum first. Newton
    // from an ordered warm start reaches m = 0 by itself once the order is gone.
    let ordered_warm = feasible_warm
        .as_ref()
        .filter(|w| magnetization(level, w).abs() > 1e-6)
        .cloned();
    if let Some(mut start) = ordered_warm.clone() {
        if magnetization(level, &start) < 0.0 {
            flip(level, &mut start);
        }
        if let Ok(ord) = minimise(&f, start, &all, opts) {
            if magnetization(level, &ord.x) > 1e-6 {
                return Ok(State {
                    t,
                    h,
                    solution: ord,
                    branch: Branch::Ordered,
                });
            }
        }
    }
    let para = minimise(&f, para_start, &even, opts);
    if let Ok(para) = &para {
        if odd_sector_stable(&f, &para.x) {
            return Ok(State {
                t,
                h,
                solution: para.clone(),
                branch: Branch::Paramagnetic,
            });
        }
    }
    // The paramagnet is unstable (or could not be followed): the ordered branch.
    let mut start = ordered_warm.unwrap_or_else(|| product_state(&f, 0.9));
    if magnetization(level, &start) < 0.0 {
        flip(level, &mut start);
    }
    let mut ord = match solve_with_restarts(&f, start, &all, opts, 0.9) {
        Ok(ord) => ord,
        // Never hand back an unstable paramagnet as if it were the equilibrium.
        Err(e) => return Err(para.err().unwrap_or(e)),
    };
    if let Ok(para) = &para {
        if ord.evaluation.free_energy >= para.evaluation.free_energy
            || magnetization(level, &ord.x).abs() <= 1e-6
        {
            return Err(SolveError::NoStableState {
                level: level.name.clone(),
                t,
                h,
            });
        }
    }
    if magnetization(level, &ord.x) < 0.0 {
        flip(level, &mut ord.x);
        ord = minimise(&f, ord.x, &all, opts)?;
    }
    Ok(State {
        t,
        h,
        solution: ord,
        branch: Branch::Ordered,
    })
}

/// Spin reversal: every odd correlation changes sign.
fn flip(level: &Level, x: &mut [f64]) {
    for (v, xv) in x.iter_mut().enumerate() {
        if level.is_odd(v) {
            *xv = -*xv;
        }
    }
}

fn solve_with_restarts(
    f: &Functional,
    start: Vec<f64>,
    block: &Block,
    opts: NewtonOptions,
    m_fallback: f64,
) -> Result<Solution, SolveError> {
    match minimise(f, start, block, opts) {
        Ok(s) => Ok(s),
        Err(first) => {
            for m in [
                m_fallback,
                0.99 * m_fallback.signum(),
                0.5 * m_fallback,
                0.0,
            ] {
                if let Ok(s) = minimise(f, product_state(f, m), block, opts) {
                    return Ok(s);
                }
            }
            Err(first)
        }
    }
}

/// The dense Hessian over every variable at a state.
pub fn full_hessian(f: &Functional, x: &[f64]) -> Option<DMatrix<f64>> {
    let all = Block::all(f.level());
    f.hessian_block(x, &all.vars, &all.pos)
}

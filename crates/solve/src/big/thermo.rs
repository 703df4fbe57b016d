//! Thermodynamics of big levels in point-group-symmetric phases (paramagnet, uniform
//! order, uniform field), matrix-free.
//!
//! The equilibrium is found on orbit variables y (the full ξ = P y); since H commutes
//! with the point group and the field direction e is symmetric, `H⁻¹e = P (PᵀHP)⁻¹ Pᵀe`,
//! so with b = Pᵀe (site variables per orbit) and s = Pᵀ∇S the formulas of the dense
//! engine hold on orbits unchanged:
//!
//! ```text
//! m = Σ_a y_a / N_b,  U = E/N_b,  F = F/N_b,  S = (U − F)/T
//! χ = bᵀ (PᵀHP)⁻¹ b / N_b,      C = T sᵀ (PᵀHP)⁻¹ s / N_b
//! ```
//!
//! the two linear solves by preconditioned conjugate gradients on Hessian–vector
//! products (at h = 0 in the paramagnet H is even ⊕ odd, and b is odd, s even).

use rungs_lattice::{BondTerm, CompactLevel};

use crate::error::SolveError;
use crate::krylov::{lobpcg_lowest, pcg};
use crate::state::Branch;
use crate::thermo::Observables;

use super::model::Model;
use super::newton::{
    extrapolate, inverse_diagonal, minimise, product_state, NewtonCgOptions, SectorOps, Solved,
};

/// A solved symmetric state, to warm-start the next point of a sweep.
#[derive(Debug, Clone)]
pub struct SymmetricState {
    /// Temperature.
    pub t: f64,
    /// Field.
    pub h: f64,
    /// Orbit variables.
    pub x: Vec<f64>,
    /// Which branch.
    pub branch: Branch,
    /// The lowest odd-sector mode of the paramagnet (odd variables), when computed.
    mode: Option<Vec<f64>>,
}

/// Observables of a symmetric phase of `level` at (t, h); `warm` is the previous point
/// of a sweep. Builds its work buffers each call: for a sweep use [`SymmetricEngine`].
pub fn observables_symmetric(
    level: &CompactLevel,
    t: f64,
    h: f64,
    warm: Option<&SymmetricState>,
) -> Result<(Observables, SymmetricState), SolveError> {
    SymmetricEngine::new(level).observables(t, h, warm)
}

/// Work buffers of one level, reused along a sweep.
pub struct SymmetricEngine<'a> {
    model: Model<'a>,
    /// The state before the warm one, for a linear predictor along a sweep.
    previous: Option<(f64, f64, Vec<f64>)>,
    all: Vec<usize>,
    even: Vec<usize>,
    odd: Vec<usize>,
}

fn magnetisation(level: &CompactLevel, x: &[f64]) -> f64 {
    level.site_vars.iter().map(|&v| x[v]).sum::<f64>() / level.site_vars.len() as f64
}

fn flip(level: &CompactLevel, x: &mut [f64]) {
    for (k, v) in x.iter_mut().enumerate() {
        if level.is_odd(k) {
            *v = -*v;
        }
    }
}

impl<'a> SymmetricEngine<'a> {
    /// Buffers for `level`.
    pub fn new(level: &'a CompactLevel) -> SymmetricEngine<'a> {
        SymmetricEngine {
            model: Model::new(level, 1.0, 0.0),
            previous: None,
            all: (0..level.len()).collect(),
            even: (0..level.len()).filter(|&k| !level.is_odd(k)).collect(),
            odd: (0..level.len()).filter(|&k| level.is_odd(k)).collect(),
        }
    }

    fn solve(&mut self, x0: Vec<f64>, free: &[usize]) -> Result<Solved, SolveError> {
        minimise(&mut self.model, x0, free, NewtonCgOptions::default())
    }

    /// Minimise over every variable from `start`, then from product states.
    fn solve_with_restarts(&mut self, start: Vec<f64>, m: f64) -> Result<Solved, SolveError> {
        let all = self.all.clone();
        let first = match self.solve(start, &all) {
            Ok(s) => return Ok(s),
            Err(e) => e,
        };
        for m in [m, 0.99 * m.signum(), 0.5 * m, 0.0] {
            let x0 = product_state(&self.model, m);
            if let Ok(s) = self.solve(x0, &all) {
                return Ok(s);
            }
        }
        Err(first)
    }

    /// Lowest odd-sector eigenvalue (diagonal metric) at the model's current point.
    fn odd_lowest(&mut self, start: Option<&[f64]>) -> (f64, Vec<f64>) {
        let d = self.model.diagonal();
        let inv = inverse_diagonal(&d, &self.odd);
        let metric: Vec<f64> = inv.iter().map(|i| 1.0 / i).collect();
        let level = self.model.level();
        let start: Vec<f64> = match start {
            Some(s) if s.len() == self.odd.len() => s.to_vec(),
            _ => self
                .odd
                .iter()
                .map(|k| level.site_vars.iter().filter(|&&v| v == *k).count() as f64 + 1e-3)
                .collect(),
        };
        let odd = &self.odd;
        let ops = SectorOps::new(&mut self.model);
        let mut op = |v: &[f64], out: &mut [f64]| ops.product(odd, v, out);
        let mut pre = |v: &[f64], out: &mut [f64]| ops.precondition(odd, v, out);
        let e = lobpcg_lowest(&mut op, &metric, &mut pre, &start, 1e-8, 2000);
        (e.value, e.vector)
    }

    /// `vᵀ H_ss⁻¹ v` on the sector `free` by preconditioned CG (H at the model's point).
    fn inverse_form(&mut self, free: &[usize], v: &[f64]) -> Result<f64, SolveError> {
        let rhs: Vec<f64> = free.iter().map(|&k| v[k]).collect();
        let ops = SectorOps::new(&mut self.model);
        let mut op = |a: &[f64], out: &mut [f64]| ops.product(free, a, out);
        let mut pre = |a: &[f64], out: &mut [f64]| ops.precondition(free, a, out);
        // bᵀy converges as the square of the residual: 10⁻⁷ gives ~10⁻¹³ relative. The
        // products carry rounding, so CG may stall short of it: capped, then checked.
        let cg = pcg(&mut op, &mut pre, &rhs, None, 1e-7, 6000);
        drop(ops);
        let (t, h) = (self.model.temperature(), self.model.field());
        let name = self.model.level().name.clone();
        if cg.negative_curvature {
            return Err(SolveError::TcSearch {
                level: name,
                detail: format!(
                    "the Hessian is not positive definite at T = {t}, h = {h} (a critical point or an unstable state): C and χ diverge there"
                ),
            });
        }
        // bᵀy errs by about the squared residual: 10⁻⁴ still gives χ, C to ~10⁻⁸.
        if cg.relative_residual > 1e-4 {
            return Err(SolveError::LinearSolve {
                level: name,
                t,
                h,
                products: cg.iterations,
                residual: cg.relative_residual,
            });
        }
        Ok(rhs.iter().zip(&cg.x).map(|(a, b)| a * b).sum())
    }

    /// The equilibrium state at (t, h).
    fn state(
        &mut self,
        t: f64,
        h: f64,
        warm: Option<&SymmetricState>,
    ) -> Result<(Solved, Branch, Option<Vec<f64>>), SolveError> {
        let level = self.model.level();
        self.model.set(t, h);
        let warm_x = warm
            .filter(|w| w.x.len() == level.len())
            .map(|w| self.predict(w, t, h))
            .filter(|x| self.model.min_probability(x) > 0.0);
        if h != 0.0 {
            let start = warm_x.unwrap_or_else(|| product_state(&self.model, (h / t).tanh() * 0.5));
            let s = self.solve_with_restarts(start, h.signum() * 0.5)?;
            return Ok((s, Branch::Field, None));
        }
        let ordered_warm = warm_x
            .clone()
            .filter(|x| magnetisation(level, x).abs() > 1e-6);
        if let Some(mut start) = ordered_warm.clone() {
            if magnetisation(level, &start) < 0.0 {
                flip(level, &mut start);
            }
            let all = self.all.clone();
            if let Ok(s) = self.solve(start, &all) {
                if magnetisation(level, &s.x) > 1e-6 {
                    return Ok((s, Branch::Ordered, None));
                }
            }
        }
        let mut para_start = warm_x.unwrap_or_else(|| product_state(&self.model, 0.0));
        for &k in &self.odd {
            para_start[k] = 0.0;
        }
        if self.model.min_probability(&para_start) <= 0.0 {
            para_start = product_state(&self.model, 0.0);
        }
        let even = self.even.clone();
        let para = self.solve(para_start, &even);
        if let Ok(p) = &para {
            let warm_mode = warm.and_then(|w| w.mode.as_deref());
            let (lambda, mode) = self.odd_lowest(warm_mode);
            if lambda > 0.0 {
                return Ok((p.clone(), Branch::Paramagnetic, Some(mode)));
            }
        }
        let mut start = ordered_warm.unwrap_or_else(|| product_state(&self.model, 0.9));
        if magnetisation(level, &start) < 0.0 {
            flip(level, &mut start);
        }
        let mut ord = match self.solve_with_restarts(start, 0.9) {
            Ok(o) => o,
            Err(e) => return Err(para.err().unwrap_or(e)),
        };
        if magnetisation(level, &ord.x) < 0.0 {
            flip(level, &mut ord.x);
        }
        if let Ok(p) = &para {
            if ord.eval.free_energy >= p.eval.free_energy
                || magnetisation(level, &ord.x).abs() <= 1e-6
            {
                return Err(SolveError::NoStableState {
                    level: level.name.clone(),
                    t,
                    h,
                });
            }
        }
        Ok((ord, Branch::Ordered, None))
    }

    /// The warm start at (t, h): `warm` extrapolated linearly from the state solved
    /// before it, when that one lies on the same line of the sweep, on the same branch
    /// side (same sign of m) and the result stays feasible.
    fn predict(&mut self, warm: &SymmetricState, t: f64, h: f64) -> Vec<f64> {
        let level = self.model.level();
        if let Some((tp, hp, xp)) = &self.previous {
            let (dt, dh) = (warm.t - tp, warm.h - hp);
            let along = if dt != 0.0 && dh == 0.0 && h == warm.h {
                Some((t - warm.t) / dt)
            } else if dh != 0.0 && dt == 0.0 && t == warm.t {
                Some((h - warm.h) / dh)
            } else {
                None
            };
            let same_side = magnetisation(level, xp) * magnetisation(level, &warm.x) > 0.0
                || (magnetisation(level, xp) == 0.0 && magnetisation(level, &warm.x) == 0.0);
            if let Some(s) = along.filter(|s| s.abs() <= 2.0 && same_side) {
                if let Some(x) = extrapolate(&mut self.model, &warm.x, xp, s) {
                    return x;
                }
            }
        }
        warm.x.clone()
    }

    /// Observables at (t, h), warm-started from `warm`.
    pub fn observables(
        &mut self,
        t: f64,
        h: f64,
        warm: Option<&SymmetricState>,
    ) -> Result<(Observables, SymmetricState), SolveError> {
        if !(t.is_finite() && t > 0.0) {
            return Err(SolveError::BadTemperature { t });
        }
        let level = self.model.level();
        let (sol, branch, mode) = self.state(t, h, warm)?;
        self.previous = warm.map(|w| (w.t, w.h, w.x.clone()));
        let x = sol.x;
        let n = level.len();
        let mut grad_s = vec![0.0; n];
        let ev = self
            .model
            .evaluate(&x, None, Some(&mut grad_s))
            .ok_or_else(|| SolveError::InfeasibleStart {
                level: level.name.clone(),
                t,
                h,
            })?;
        let mut b = vec![0.0; n];
        for &v in &level.site_vars {
            b[v] += 1.0;
        }
        let (chi_sector, c_sector) = if branch == Branch::Paramagnetic {
            (self.odd.clone(), self.even.clone())
        } else {
            (self.all.clone(), self.all.clone())
        };
        let nb = level.sites_per_cell as f64;
        let susceptibility = self.inverse_form(&chi_sector, &b)? / nb;
        let specific_heat = t * self.inverse_form(&c_sector, &grad_s)? / nb;
        let sub: Vec<f64> = level.site_vars.iter().map(|&v| x[v]).collect();
        let energy = ev.energy / nb;
        let free_energy = ev.free_energy / nb;
        let bond_correlations = level
            .bond_terms
            .iter()
            .map(|bt| match *bt {
                BondTerm::Correlated { var, .. } => x[var],
                BondTerm::Factorised { a, b, .. } => x[a] * x[b],
            })
            .collect();
        let obs = Observables {
            temperature: t,
            field: h,
            magnetization: sub.iter().sum::<f64>() / nb,
            sublattice_magnetization: sub,
            energy,
            free_energy,
            entropy: (energy - free_energy) / t,
            specific_heat,
            susceptibility,
            bond_correlations,
        };
        Ok((
            obs,
            SymmetricState {
                t,
                h,
                x,
                branch,
                mode,
            },
        ))
    }
}

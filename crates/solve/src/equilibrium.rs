//! Equilibrium: minimise F(ξ) by damped, shifted Newton with a line search that keeps
//! every cluster probability positive and F decreasing.
//!
//! Step: `(H + μ I) d = −∇F` on the free block, μ = 0 while H is positive definite
//! (Cholesky succeeds), otherwise raised until it is; the step is halved until the new
//! point is feasible and satisfies Armijo's condition `F(x + αd) ≤ F(x) + 10⁻⁴ α ∇F·d`.
//! A failed line search raises μ, turning the step toward steepest descent, so every
//! accepted step lowers F, for any level (Kikuchi's natural iteration, 1974, lowers F at
//! every step only when the level's entropy coefficients meet a sufficient condition:
//! Pretti 2005, J. Stat. Phys., doi:10.1007/s10955-005-4426-x).

use nalgebra::DMatrix;

use crate::error::SolveError;
use crate::functional::{Block, Evaluation, Functional};
use crate::gram::StateGroups;

/// Stopping rules.
#[derive(Debug, Clone, Copy)]
pub struct NewtonOptions {
    /// Stop when `max |∂F/∂ξ| ≤ tolerance` on the free block.
    pub tolerance: f64,
    /// Give up after this many iterations.
    pub max_iterations: usize,
    /// Allow chord steps with an earlier factorisation (big levels).
    pub chord: bool,
}

impl Default for NewtonOptions {
    fn default() -> Self {
        NewtonOptions {
            tolerance: 1e-11,
            max_iterations: 200,
            chord: false,
        }
    }
}

/// A converged equilibrium point.
#[derive(Debug, Clone)]
pub struct Solution {
    /// All correlation variables.
    pub x: Vec<f64>,
    /// F, E, S, ∇F there.
    pub evaluation: Evaluation,
    /// Newton iterations used.
    pub iterations: usize,
}

/// Largest gradient accepted as converged when Newton's step is below the resolution of
/// the variables (the rounding floor of WHT-computed gradients).
const ROUNDING_FLOOR: f64 = 1e-7;

/// Largest gradient accepted as converged when three Newton steps in a row fail to
/// shrink it (the rounding floor of big clusters).
const STAGNATION_FLOOR: f64 = 1e-5;

/// The same for a state written as offsets from a reference (Walsh basis).
const PRECISE_FLOOR: f64 = 1e-10;

/// A gradient beyond this is never taken as converged, whatever the step.
const DECREMENT_GRADIENT_LIMIT: f64 = 1e3;

fn block_norm(g: &[f64], block: &Block) -> f64 {
    block.vars.iter().map(|&v| g[v].abs()).fold(0.0, f64::max)
}

/// How a Newton step is computed: assemble the Hessian on the free block, then solve
/// shifted systems `(H + μ I) d = r` (None when not positive definite).
pub trait HessianSolver {
    /// Assemble the Hessian of `f` at `x` on `block`; false if `x` is infeasible.
    fn assemble(&mut self, f: &Functional, x: &[f64], block: &Block) -> bool;
    /// Largest |diagonal entry| (the scale of shifts).
    fn scale(&self) -> f64;
    /// Solve `(H + μ I) d = rhs`, `None` if the shifted matrix is not positive definite.
    fn solve_shifted(&mut self, mu: f64, rhs: &[f64]) -> Option<Vec<f64>>;
    /// Whether an unshifted factorisation from an earlier point is at hand, so that a
    /// chord step (old factor, new gradient) can be tried without assembling.
    fn has_factor(&self) -> bool {
        false
    }
}

/// The dense nalgebra Hessian of [`Functional::hessian_block`] with Cholesky solves; the
/// unshifted factor is kept for chord steps.
#[derive(Debug, Default)]
pub struct DenseSolver<'g> {
    h: Option<DMatrix<f64>>,
    factor: Option<crate::linalg::SpdFactor>,
    /// The block's cluster states grouped for the grouped Gram form, when at hand.
    groups: Option<&'g StateGroups>,
}

impl<'g> DenseSolver<'g> {
    /// A solver that assembles plain Walsh Hessians in the grouped Gram form
    /// ([`Functional::hessian_block_grouped`]) with `groups`, built on the block it will
    /// be asked for.
    pub fn with_groups(groups: Option<&'g StateGroups>) -> DenseSolver<'g> {
        DenseSolver {
            groups,
            ..DenseSolver::default()
        }
    }
}

impl HessianSolver for DenseSolver<'_> {
    fn assemble(&mut self, f: &Functional, x: &[f64], block: &Block) -> bool {
        self.h = if f.is_precise() {
            f.hessian_block_precise(x, &block.vars, &block.pos)
        } else {
            self.groups
                .and_then(|g| f.hessian_block_grouped(x, block, g))
                .or_else(|| f.hessian_block(x, &block.vars, &block.pos))
        };
        self.factor = None;
        self.h.is_some()
    }
    fn has_factor(&self) -> bool {
        self.factor.is_some()
    }
    /// Shifts are relative to the diagonal (see [`HessianSolver::solve_shifted`] here).
    fn scale(&self) -> f64 {
        1.0
    }
    /// `(H + μ D) d = rhs` with D the diagonal of H (|·|, floored): a scale-invariant
    /// Levenberg shift. At low temperature H's diagonal spans 1/p over tens of decades,
    /// and a shift proportional to the largest entry would swamp every soft direction.
    fn solve_shifted(&mut self, mu: f64, rhs: &[f64]) -> Option<Vec<f64>> {
        if mu == 0.0 {
            if self.factor.is_none() {
                self.factor = Some(crate::linalg::SpdFactor::new(self.h.as_ref()?)?);
            }
            return self.factor.as_ref().map(|l| l.solve(rhs));
        }
        let mut m = self.h.clone()?;
        if mu != 0.0 {
            let floor = 1e-300;
            for i in 0..m.nrows() {
                let d = m[(i, i)].abs().max(floor);
                m[(i, i)] += mu * d;
            }
        }
        crate::linalg::solve_spd(&m, rhs)
    }
}

/// Minimise `f` over the variables of `block`, the others held at their values in `x0`,
/// with dense nalgebra Hessians.
pub fn minimise(
    f: &Functional,
    x0: Vec<f64>,
    block: &Block,
    options: NewtonOptions,
) -> Result<Solution, SolveError> {
    minimise_with(f, x0, block, options, &mut DenseSolver::default())
}

/// Minimise `f` over `block` with the given Hessian solver.
pub fn minimise_with(
    f: &Functional,
    x0: Vec<f64>,
    block: &Block,
    options: NewtonOptions,
    solver: &mut dyn HessianSolver,
) -> Result<Solution, SolveError> {
    let level = f.level().name.clone();
    let (t, h) = (f.temperature(), f.field());
    let flip = matches!(f.basis(), crate::functional::Basis::Flip { .. });
    let mut x = x0;
    let Some(mut ev) = f.evaluate(&x) else {
        return Err(SolveError::InfeasibleStart { level, t, h });
    };
    let mut mu = 0.0f64;
    // Stagnation at the rounding floor: the gradient stops shrinking while already
    // tiny (big clusters: WHT sums of 2^16 logarithms, summed again over orbits).
    let mut best = f64::INFINITY;
    let mut stalled = 0;
    let mut last_gn = f64::INFINITY;
    for it in 0..options.max_iterations {
        let gn = block_norm(&ev.gradient, block);
        if gn < 0.9 * best {
            best = gn;
            stalled = 0;
        } else {
            stalled += 1;
        }
        // The rounding floors below are for plain correlation functions; states written
        // as offsets from a reference, or as flip probabilities, carry small quantities
        // whose relative precision those absolute floors would give away.
        let floor = if f.is_precise() && !flip {
            PRECISE_FLOOR
        } else {
            STAGNATION_FLOOR
        };
        if stalled >= 3 && gn < floor {
            return Ok(Solution {
                x,
                evaluation: ev,
                iterations: it,
            });
        }
        let last_ratio = if last_gn.is_finite() {
            gn / last_gn
        } else {
            0.0
        };
        last_gn = gn;
        if gn <= options.tolerance {
            return Ok(Solution {
                x,
                evaluation: ev,
                iterations: it,
            });
        }
        let g: Vec<f64> = block.vars.iter().map(|&v| ev.gradient[v]).collect();
        // Chord step: keep the last factor while it shrinks the gradient fourfold per
        // step; otherwise assemble and factor afresh.
        let chord = options.chord && mu == 0.0 && solver.has_factor() && last_ratio < 0.25;
        if !chord && !solver.assemble(f, &x, block) {
            break;
        }
        let scale = solver.scale();
        let mut accepted = false;
        for _attempt in 0..40 {
            let Some(mut d) = solver.solve_shifted(mu, &g) else {
                mu = if mu == 0.0 { 1e-10 * scale } else { mu * 10.0 };
                continue;
            };
            d.iter_mut().for_each(|v| *v = -*v);
            // At the rounding floor of the gradient (big clusters at low T: ln p of tiny
            // probabilities) Newton asks for steps below the resolution of ξ: converged.
            if mu == 0.0
                && !f.is_precise()
                && d.iter().all(|v| v.abs() < 1e-13)
                && gn < ROUNDING_FLOOR
            {
                return Ok(Solution {
                    x,
                    evaluation: ev,
                    iterations: it,
                });
            }
            let slope: f64 = g.iter().zip(&d).map(|(a, b)| a * b).sum();
            // In the flip basis the variables are probabilities spanning many decades:
            // converged when Newton's step changes none of them by more than 10⁻¹⁰ of
            // itself (the gradient of a tiny probability can stay large at the rounding
            // of the state, and F cannot see its errors).
            if flip && mu <= 1e-6 * scale && gn < DECREMENT_GRADIENT_LIMIT {
                // A rare state's probability is only as precise as 10⁻¹⁶ times the
                // cancellation in it: the tolerance follows.
                let rel = if stalled >= 2 {
                    (1e-14 * f.cancellation(&x)).clamp(1e-10, 1e-2)
                } else {
                    1e-10
                };
                let relative = block
                    .vars
                    .iter()
                    .zip(&d)
                    .all(|(&v, dv)| dv.abs() <= rel * x[v].abs());
                if relative {
                    return Ok(Solution {
                        x,
                        evaluation: ev,
                        iterations: it,
                    });
                }
            }
            let mut alpha = 1.0;
            let mut xn = x.clone();
            for _ in 0..50 {
                for (k, &v) in block.vars.iter().enumerate() {
                    xn[v] = x[v] + alpha * d[k];
                }
                if let Some(evn) = f.evaluate(&xn) {
                    let armijo = evn.merit <= ev.merit + 1e-4 * alpha * slope;
                    // Near convergence F changes by less than its rounding; then accept a
                    // step that does not raise F beyond rounding and shrinks the gradient.
                    let noise = ev.rounding.max(evn.rounding);
                    let flat =
                        evn.merit <= ev.merit + noise && block_norm(&evn.gradient, block) < gn;
                    if armijo || flat {
                        x.clone_from(&xn);
                        ev = evn;
                        accepted = true;
                        break;
                    }
                }
                alpha *= 0.5;
            }
            if accepted {
                mu *= 0.1;
                if mu < 1e-12 * scale {
                    mu = 0.0;
                }
                break;
            }
            mu = if mu == 0.0 { 1e-6 * scale } else { mu * 10.0 };
        }
        if !accepted {
            return Err(SolveError::NotConverged {
                level,
                t,
                h,
                iterations: it,
                gradient_norm: gn,
                tolerance: options.tolerance,
            });
        }
    }
    let gn = block_norm(&ev.gradient, block);
    if gn <= options.tolerance {
        return Ok(Solution {
            x,
            evaluation: ev,
            iterations: options.max_iterations,
        });
    }
    Err(SolveError::NotConverged {
        level,
        t,
        h,
        iterations: options.max_iterations,
        gradient_norm: gn,
        tolerance: options.tolerance,
    })
}

/// The product state with every site magnetisation `m` (always feasible for |m| < 1):
/// `ξ_c = m^{|c|}` in the Walsh basis. The paramagnetic start is `m = 0`.
pub fn product_state(f: &Functional, m: f64) -> Vec<f64> {
    f.product_state_sites(&vec![m; f.level().sites_per_cell])
}

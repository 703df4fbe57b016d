//! Truncated (inexact) Newton for big levels: each step solves `H d = −∇F` on the free
//! variables by conjugate gradients on matrix-free products, preconditioned with
//! [`Model::precondition`], to a relative residual `η = min(0.1, √‖∇F‖∞)` (Eisenstat &
//! Walker 1996, SIAM J. Sci. Comput. 17, 16: loose far away, tight near the solution,
//! never tighter than the stopping tolerance needs);
//! negative curvature ends CG early (Steihaug 1983, SIAM J. Numer. Anal. 20, 626), and a
//! backtracking line search keeps every cluster probability positive and F decreasing
//! (Armijo's condition).

use crate::error::SolveError;
use crate::krylov::pcg;

use super::model::{Eval, Model};

/// Stopping rules of [`minimise`].
#[derive(Debug, Clone, Copy)]
pub struct NewtonCgOptions {
    /// Stop when `max |∂F/∂y| ≤ tolerance` on the free variables.
    pub tolerance: f64,
    /// Give up after this many Newton steps.
    pub max_iterations: usize,
    /// Most products with H per CG solve.
    pub max_products: usize,
}

impl Default for NewtonCgOptions {
    fn default() -> Self {
        NewtonCgOptions {
            tolerance: 1e-12,
            max_iterations: 100,
            max_products: 400,
        }
    }
}

/// A converged point.
#[derive(Debug, Clone)]
pub struct Solved {
    /// Every orbit variable.
    pub x: Vec<f64>,
    /// F, E, S there.
    pub eval: Eval,
    /// ∇F there (every variable).
    pub gradient: Vec<f64>,
    /// Newton steps taken.
    pub iterations: usize,
    /// Products with H spent (CG).
    pub products: usize,
}

/// Relative rounding of F for clusters of `n` sites: sums of 2^n terms p ln p with p
/// itself a transform, `10⁻¹⁶ · 2^{n/2+2}` (~10⁻¹³ measured for 16 sites).
fn f_noise(n: usize) -> f64 {
    1e-16 * 2f64.powf(n as f64 / 2.0 + 2.0)
}

/// Largest gradient accepted as converged when the Newton step is below the resolution
/// of F or of the variables.
const ROUNDING_FLOOR: f64 = 1e-6;

/// Largest gradient accepted when three Newton steps in a row do not shrink it (the
/// rounding floor of 2^25-term transforms).
const STAGNATION_FLOOR: f64 = 1e-7;

fn norm_inf(g: &[f64], free: &[usize]) -> f64 {
    free.iter().map(|&k| g[k].abs()).fold(0.0, f64::max)
}

/// `out_s = (A v)_s` for a full-space map `apply` restricted to the free variables
/// `free` (`full`, `full_out`: scratch of the full length).
fn sector_apply<'a>(
    model: &mut Model<'a>,
    free: &[usize],
    v: &[f64],
    out: &mut [f64],
    (full, full_out): (&mut [f64], &mut [f64]),
    apply: fn(&mut Model<'a>, &[f64], &mut [f64]),
) {
    full.iter_mut().for_each(|e| *e = 0.0);
    for (i, &k) in free.iter().enumerate() {
        full[k] = v[i];
    }
    apply(model, full, full_out);
    for (i, &k) in free.iter().enumerate() {
        out[i] = full_out[k];
    }
}

/// `out_s = H_ss v_s` on the free variables `free` (`full`, `full_out`: scratch).
pub fn sector_product<'a>(
    model: &mut Model<'a>,
    free: &[usize],
    v: &[f64],
    out: &mut [f64],
    full: &mut [f64],
    full_out: &mut [f64],
) {
    sector_apply(model, free, v, out, (full, full_out), Model::hessian_vector);
}

/// `out_s = (M⁻¹)_ss v_s`, the preconditioner of [`Model::precondition`] on `free`.
pub fn sector_precondition<'a>(
    model: &mut Model<'a>,
    free: &[usize],
    v: &[f64],
    out: &mut [f64],
    full: &mut [f64],
    full_out: &mut [f64],
) {
    sector_apply(model, free, v, out, (full, full_out), Model::precondition);
}

/// Products with H and M⁻¹ on a sector, sharing one model.
pub struct SectorOps<'m, 'a> {
    cell: std::cell::RefCell<(&'m mut Model<'a>, Vec<f64>, Vec<f64>)>,
}

impl<'m, 'a> SectorOps<'m, 'a> {
    /// Wrap `model`.
    pub fn new(model: &'m mut Model<'a>) -> SectorOps<'m, 'a> {
        let n = model.len();
        SectorOps {
            cell: std::cell::RefCell::new((model, vec![0.0; n], vec![0.0; n])),
        }
    }
    /// `out = H_ss v`.
    pub fn product(&self, free: &[usize], v: &[f64], out: &mut [f64]) {
        let mut g = self.cell.borrow_mut();
        let (m, a, b) = &mut *g;
        sector_product(m, free, v, out, a, b);
    }
    /// `out = (M⁻¹)_ss v`.
    pub fn precondition(&self, free: &[usize], v: &[f64], out: &mut [f64]) {
        let mut g = self.cell.borrow_mut();
        let (m, a, b) = &mut *g;
        sector_precondition(m, free, v, out, a, b);
    }
}

/// Inverse of a diagonal for preconditioning: non-positive entries (H not positive
/// definite there) replaced by the largest magnitude, so the preconditioner stays
/// positive.
pub fn inverse_diagonal(d: &[f64], free: &[usize]) -> Vec<f64> {
    let big = free.iter().map(|&k| d[k].abs()).fold(1e-300, f64::max);
    free.iter()
        .map(|&k| {
            if d[k] > 1e-14 * big {
                1.0 / d[k]
            } else {
                1.0 / big
            }
        })
        .collect()
}

/// Minimise F of `model` over the variables `free` (the others held at their values in
/// `x0`).
pub fn minimise(
    model: &mut Model,
    x0: Vec<f64>,
    free: &[usize],
    options: NewtonCgOptions,
) -> Result<Solved, SolveError> {
    let n = model.len();
    let (t, h) = (model.temperature(), model.field());
    let name = model.level().name.clone();
    let mut x = x0;
    let mut g = vec![0.0; n];
    let Some(mut ev) = model.evaluate(&x, Some(&mut g), None) else {
        return Err(SolveError::InfeasibleStart { level: name, t, h });
    };
    let mut full = vec![0.0; n];
    let mut full_out = vec![0.0; n];
    let mut gn_trial = vec![0.0; n];
    let mut products = 0;
    let mut best = f64::INFINITY;
    let mut stalled = 0;
    let mut gn = norm_inf(&g, free);
    let mut eta_factor = 1.0;
    let noise_rel = f_noise(model.level().max_cluster_sites);
    // The gradient of big clusters has a rounding floor ~10³ times F's relative one.
    let tolerance = options.tolerance.max(1e3 * noise_rel);
    for it in 0..options.max_iterations {
        if gn < 0.9 * best {
            best = gn;
            stalled = 0;
        } else {
            stalled += 1;
        }
        if gn <= tolerance
            || (stalled >= 3 && gn < STAGNATION_FLOOR)
            || (stalled >= 2 && gn < 10.0 * tolerance)
        {
            return Ok(Solved {
                x,
                eval: ev,
                gradient: g,
                iterations: it,
                products,
            });
        }
        let rhs: Vec<f64> = free.iter().map(|&k| -g[k]).collect();
        // Shortened steps mean the inexact direction left the feasible region (small p
        // are where an inexact solve errs most): ask for more accuracy until a full
        // step is taken again.
        let eta = (gn.sqrt().clamp(1e-10, 0.1) * eta_factor).max(1e-12);
        // Close to the tolerance the step need only take the gradient below it: a
        // residual of 0.1·tolerance/‖∇F‖ relative does (Newton's gradient after the step
        // is the CG residual, plus a term quadratic in the step); asking more of CG
        // wastes products (Dembo, Eisenstat & Steihaug 1982, SIAM J. Numer. Anal. 19, 400:
        // any forcing η_k < 1 converges; its size only sets the rate).
        let eta = if eta_factor == 1.0 {
            eta.max((0.1 * tolerance / gn).min(0.1))
        } else {
            eta
        };
        let cg = {
            let ops = SectorOps::new(model);
            let mut op = |v: &[f64], out: &mut [f64]| ops.product(free, v, out);
            let mut pre = |v: &[f64], out: &mut [f64]| ops.precondition(free, v, out);
            pcg(&mut op, &mut pre, &rhs, None, eta, options.max_products)
        };
        products += cg.iterations;
        let mut d = cg.x;
        let mut slope: f64 = d.iter().zip(&rhs).map(|(a, b)| -a * b).sum();
        if slope.is_nan() || slope >= 0.0 || d.iter().all(|v| *v == 0.0) {
            // No descent from CG (negative curvature at once): preconditioned gradient.
            d = vec![0.0; rhs.len()];
            sector_precondition(model, free, &rhs, &mut d, &mut full, &mut full_out);
            slope = d.iter().zip(&rhs).map(|(a, b)| -a * b).sum();
        }
        // At the rounding floor (big clusters: gradients are sums of 2^n logarithms)
        // Newton asks for a step below the resolution of y: converged.
        let tiny_step = d.iter().all(|v| v.abs() < 1e-13);
        if tiny_step && gn < ROUNDING_FLOOR {
            return Ok(Solved {
                x,
                eval: ev,
                gradient: g,
                iterations: it,
                products,
            });
        }
        let mut alpha = 1.0;
        let mut accepted = false;
        let mut xn = x.clone();
        for _ in 0..40 {
            for (i, &k) in free.iter().enumerate() {
                xn[k] = x[k] + alpha * d[i];
            }
            if let Some(evn) = model.evaluate(&xn, Some(&mut gn_trial), None) {
                let armijo = evn.free_energy <= ev.free_energy + 1e-4 * alpha * slope;
                // Near convergence F changes by less than its rounding (sums of 2^n
                // terms p ln p, p itself a transform: ~10⁻¹³ relative for 16 sites):
                // accept a step that does not raise F beyond that and shrinks the
                // gradient.
                let noise = noise_rel * ev.free_energy.abs().max(1.0);
                let g_trial = norm_inf(&gn_trial, free);
                let flat = evn.free_energy <= ev.free_energy + noise && g_trial < gn;
                // When the decrease Newton predicts (−slope) is below F's rounding, F
                // cannot judge the step (measured: F moves by ±5·10⁻¹³ at 16 sites where
                // 10⁻¹⁶ was predicted, and good steps were halved again and again): the
                // gradient judges it, with F kept within a few roundings.
                let unresolved = -alpha * slope < noise
                    && evn.free_energy <= ev.free_energy + 10.0 * noise
                    && g_trial < 0.5 * gn;
                let flat = flat || unresolved;
                if armijo || flat {
                    std::mem::swap(&mut x, &mut xn);
                    std::mem::swap(&mut g, &mut gn_trial);
                    ev = evn;
                    accepted = true;
                    break;
                }
            }
            alpha *= 0.5;
        }
        if !accepted {
            // Leave the model at x (its cached point) before reporting.
            let _ = model.evaluate(&x, None, None);
            if gn < STAGNATION_FLOOR {
                return Ok(Solved {
                    x,
                    eval: ev,
                    gradient: g,
                    iterations: it,
                    products,
                });
            }
            return Err(SolveError::NotConverged {
                level: name,
                t,
                h,
                iterations: it,
                gradient_norm: gn,
                tolerance: options.tolerance,
            });
        }
        gn = norm_inf(&g, free);
        // Far from the solution (‖∇F‖∞ ≥ 10⁻³) a shortened step is the nonlinearity's,
        // not CG's: tightening there cost a cold start dozens of near-exact solves (4×4
        // block at its Tc search: 2,967 → 2,557 products with this limit).
        eta_factor = if alpha < 1.0 && gn < 1e-3 {
            (eta_factor * 1e-2).max(1e-8)
        } else {
            1.0
        };
    }
    if gn <= tolerance {
        return Ok(Solved {
            x,
            eval: ev,
            gradient: g,
            iterations: options.max_iterations,
            products,
        });
    }
    Err(SolveError::NotConverged {
        level: name,
        t,
        h,
        iterations: options.max_iterations,
        gradient_norm: gn,
        tolerance: options.tolerance,
    })
}

/// The product state `y_k = m^{|c_k|}` (feasible for |m| < 1).
pub fn product_state(model: &Model, m: f64) -> Vec<f64> {
    model
        .level()
        .orbit_sites
        .iter()
        .map(|&s| m.powi(s as i32))
        .collect()
}

/// The linear predictor `x1 + s (x1 − x0)` from two solutions (`s` in units of their
/// spacing), or `None` where a cluster probability would not be positive there.
pub fn extrapolate(model: &mut Model, x1: &[f64], x0: &[f64], s: f64) -> Option<Vec<f64>> {
    let x: Vec<f64> = x1.iter().zip(x0).map(|(p, q)| p + s * (p - q)).collect();
    (model.min_probability(&x) > 0.0).then_some(x)
}

/// Temperatures, as multiples of the target, that [`approach_from_above`] solves on its
/// way down (loosely), before the target itself.
const APPROACH: [f64; 6] = [4.0, 2.0, 1.4, 1.15, 1.05, 1.015];

/// Gradient to which the temperatures of [`approach_from_above`] on the way are solved:
/// enough for the linear predictor of the next one (4×4 block, approach to T = 2.33:
/// 1,145 products at 10⁻⁴, 963 at 10⁻³, 906 at 10⁻²).
const APPROACH_TOLERANCE: f64 = 1e-2;

/// A start for the paramagnet (the variables `free`, the others zero) of `model` at its
/// temperature T, without a solution nearby: the paramagnets at `4T, 2T, 1.4T, 1.15T,
/// 1.05T, 1.015T` are solved one after the other to ‖∇F‖∞ ≤ 10⁻², the first from the
/// uncorrelated state, each later one from the linear extrapolation in β = 1/T of the
/// two before (the nearer one when that leaves the feasible region), and the same
/// extrapolation to T is returned; the model is left at T.
///
/// Newton's model is linear in p, so a step can lower a probability by about its own
/// size at most: where ln p must fall by Δ, ~Δ shortened steps are unavoidable (from the
/// uncorrelated state to the paramagnet near Tc, Δ up to the Boltzmann ratio
/// `4β n(n−1)` of an n×n block's checkerboard: ~35 for the 5×5 block). Stepping down
/// in T spends them where CG is cheap (high T, weak correlations) instead of near Tc.
/// Returns the start and the products spent on it.
pub fn approach_from_above(
    model: &mut Model,
    free: &[usize],
) -> Result<(Vec<f64>, usize), SolveError> {
    let (t, h) = (model.temperature(), model.field());
    let mut products = 0;
    let mut solved: Vec<(f64, Vec<f64>)> = Vec::new();
    let predict = |solved: &[(f64, Vec<f64>)], model: &mut Model, beta: f64| -> Vec<f64> {
        match solved {
            [.., (b0, x0), (b1, x1)] => {
                extrapolate(model, x1, x0, (beta - b1) / (b1 - b0)).unwrap_or_else(|| x1.clone())
            }
            [(_, x1)] => x1.clone(),
            [] => product_state(model, 0.0),
        }
    };
    for ratio in APPROACH {
        let beta = 1.0 / (ratio * t);
        model.set(ratio * t, h);
        let x0 = predict(&solved, model, beta);
        let options = NewtonCgOptions {
            tolerance: APPROACH_TOLERANCE,
            ..NewtonCgOptions::default()
        };
        let sol = minimise(model, x0, free, options)?;
        products += sol.products;
        solved.push((beta, sol.x));
    }
    model.set(t, h);
    Ok((predict(&solved, model, 1.0 / t), products))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::big::test_levels::square_block;

    #[test]
    fn the_approach_from_above_ends_at_the_cold_starts_paramagnet() {
        // One minimum, two starts: the paramagnet of the 3×3 block just above its Tc
        // (2.3463, this project's value) is the same from either, to the tolerance.
        let level = square_block(3);
        let even: Vec<usize> = (0..level.len()).filter(|&k| !level.is_odd(k)).collect();
        let mut model = Model::new(&level, 2.36, 0.0);
        let (start, products) = approach_from_above(&mut model, &even).expect("the approach");
        assert_eq!(model.temperature(), 2.36);
        assert!(products > 0);
        assert!(model.min_probability(&start) > 0.0);
        let approached = minimise(&mut model, start, &even, NewtonCgOptions::default())
            .expect("from the approach");
        let uncorrelated = product_state(&model, 0.0);
        let cold = minimise(&mut model, uncorrelated, &even, NewtonCgOptions::default())
            .expect("from the uncorrelated state");
        let gap = approached
            .x
            .iter()
            .zip(&cold.x)
            .map(|(a, b)| (a - b).abs())
            .fold(0.0, f64::max);
        assert!(gap < 1e-8, "{gap}");
        let df = approached.eval.free_energy - cold.eval.free_energy;
        assert!(df.abs() < 1e-12, "{df}");
        // The last temperature on the way is close: Newton finishes in a few steps.
        assert!(approached.iterations <= 8, "{}", approached.iterations);
    }
}

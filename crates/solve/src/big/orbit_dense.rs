//! The first big-level path, kept beside the matrix-free one until the two agree
//! everywhere: dense orbit-reduced Hessians (e.g. the square 4×4 block: 57,856
//! correlation variables, 7,625 orbits), assembled symmetrically and factorised.
//!
//! Three ingredients make a 16-site level fit on a laptop:
//!
//! * **orbit variables** — the paramagnet and uniform order share the lattice's point
//!   group, so the level is reduced to orbits (4×4: 3,862 even, 3,763 odd);
//! * **symmetric assembly** — the reduced Hessian of a region,
//!   `H_kl = T a 4^-n Σ_{c∈S_k} Σ_{d∈S_l} w[c ⊕ d]` with `w = W(1/p)`, is summed over one
//!   representative mask per orbit of the region's own stabiliser (weighted by the orbit
//!   size), since w and every S_k are invariant under it: ~|G_r| times fewer terms;
//! * **blocked factorisations** (faer) for the Newton steps and for the projected
//!   inverse susceptibility `g(T) = 1 / (bᵀ H_odd⁻¹ b)` (b = the field direction on
//!   orbits), which vanishes at Tc linearly and changes sign there; Tc is its root.
//!
//! The critical mode searched here is the fully symmetric one (uniform order); the
//! report says so.

use std::time::Instant;

use faer::linalg::solvers::Solve;
use faer::{Mat, Side};
use rungs_lattice::symmetry::{self, SiteMap};
use rungs_lattice::{Cluster, Lattice, Level};

use crate::equilibrium::{minimise_with, product_state, HessianSolver, NewtonOptions};
use crate::error::SolveError;
use crate::functional::{Block, Functional};
use crate::search::{refine, step_down, Bracket, StepRules};
use crate::tc::{CriticalPoint, ModeKind, TcOptions};
use crate::wht::wht;

/// Most orbit variables per sector the big-level path accepts (a 8000² matrix is 512 MB).
pub const MAX_REDUCED_VARIABLES: usize = 8000;

/// One region, prepared for symmetric assembly.
struct RegionPlan {
    n: usize,
    coefficient: f64,
    /// Orbit variable of every mask (entry 0 unused).
    vars: Vec<u32>,
    /// Stabiliser-orbit representatives: (mask, orbit size).
    reps: Vec<(u32, f64)>,
}

/// The permutation of a region's sites under `op`, if `op` maps the region onto a
/// translate of itself.
fn site_permutation(region: &Cluster, op: &SiteMap) -> Option<Vec<usize>> {
    let img: Vec<(usize, [i32; 3])> = region.sites().map(|(a, c)| op.apply(a, c)).collect();
    if op.image(region) != *region {
        return None;
    }
    // Canonical translation: the smallest (cell, basis) goes to the region's first site.
    let (a0, c0) = region.site(0);
    let &(_, cmin) = img.iter().min_by(|x, y| (x.1, x.0).cmp(&(y.1, y.0)))?;
    let shift = [c0[0] - cmin[0], c0[1] - cmin[1], c0[2] - cmin[2]];
    let _ = a0;
    let sites: Vec<(usize, [i32; 3])> = region.sites().collect();
    img.iter()
        .map(|&(a, c)| {
            let t = [c[0] + shift[0], c[1] + shift[1], c[2] + shift[2]];
            sites.iter().position(|&s| s == (a, t))
        })
        .collect()
}

/// Symmetric assembly of orbit-reduced Hessians, factorised with faer.
pub struct SymmetricSolver {
    plans: Vec<RegionPlan>,
    h: Option<Mat<f64>>,
    /// Cholesky factor of the unshifted H, kept for chord steps.
    factor: Option<faer::linalg::solvers::Llt<f64>>,
    scratch: Vec<f64>,
}

impl SymmetricSolver {
    /// Plans for the active regions of the reduced level `red` under `ops`.
    pub fn new(red: &Level, ops: &[SiteMap]) -> SymmetricSolver {
        let plans = red
            .active_regions()
            .map(|r| {
                let n = r.cluster.len();
                let perms: Vec<Vec<usize>> = ops
                    .iter()
                    .filter_map(|op| site_permutation(&r.cluster, op))
                    .collect();
                let size = 1usize << n;
                let mut seen = vec![false; size];
                let mut reps = Vec::new();
                for m in 1..size {
                    if seen[m] {
                        continue;
                    }
                    let mut count = 0.0;
                    for p in &perms {
                        let mut img = 0usize;
                        for (k, &pk) in p.iter().enumerate() {
                            if m >> k & 1 == 1 {
                                img |= 1 << pk;
                            }
                        }
                        if !seen[img] {
                            seen[img] = true;
                            count += 1.0;
                        }
                    }
                    reps.push((m as u32, count));
                }
                RegionPlan {
                    n,
                    coefficient: r.coefficient as f64,
                    vars: r.subset_vars.clone(),
                    reps,
                }
            })
            .collect();
        SymmetricSolver {
            plans,
            h: None,
            factor: None,
            scratch: Vec::new(),
        }
    }

    /// The reduced Hessian of `f` (on the reduced level) at `x`, on `block`.
    fn hessian(&mut self, f: &Functional, x: &[f64], block: &Block) -> Option<Mat<f64>> {
        let m = block.vars.len();
        let mut h = Mat::<f64>::zeros(m, m);
        let t = f.temperature();
        for plan in &self.plans {
            let size = 1usize << plan.n;
            let mut w = vec![0.0; size];
            w[0] = 1.0;
            for (slot, &v) in w.iter_mut().zip(&plan.vars).skip(1) {
                *slot = x[v as usize];
            }
            wht(&mut w);
            let inv = size as f64;
            for q in w.iter_mut() {
                let p = *q / inv;
                if p <= 0.0 {
                    return None;
                }
                *q = 1.0 / p;
            }
            wht(&mut w);
            let scale = t * plan.coefficient / (inv * inv);
            let cols: Vec<(u32, u32)> = (1..size)
                .filter_map(|d| {
                    let row = block.pos[plan.vars[d] as usize];
                    (row != usize::MAX).then_some((d as u32, row as u32))
                })
                .collect();
            self.scratch.resize(m, 0.0);
            for &(c, mult) in &plan.reps {
                let rc = block.pos[plan.vars[c as usize] as usize];
                if rc == usize::MAX {
                    continue;
                }
                self.scratch.iter_mut().for_each(|s| *s = 0.0);
                for &(d, rd) in &cols {
                    self.scratch[rd as usize] += w[(c ^ d) as usize];
                }
                let col = h.col_as_slice_mut(rc);
                let k = scale * mult;
                for (a, s) in col.iter_mut().zip(&self.scratch) {
                    *a += k * s;
                }
            }
        }
        for b in &f.level().bond_terms {
            if let rungs_lattice::BondTerm::Factorised { a, b, j } = *b {
                let (pa, pb) = (block.pos[a], block.pos[b]);
                if pa != usize::MAX && pb != usize::MAX {
                    h[(pa, pb)] -= j;
                    h[(pb, pa)] -= j;
                }
            }
        }
        // Symmetrise away the rounding of the representative sums.
        for j in 0..m {
            for i in 0..j {
                let s = 0.5 * (h[(i, j)] + h[(j, i)]);
                h[(i, j)] = s;
                h[(j, i)] = s;
            }
        }
        Some(h)
    }
}

impl HessianSolver for SymmetricSolver {
    fn assemble(&mut self, f: &Functional, x: &[f64], block: &Block) -> bool {
        self.h = self.hessian(f, x, block);
        self.factor = None;
        self.h.is_some()
    }
    fn has_factor(&self) -> bool {
        self.factor.is_some()
    }
    fn scale(&self) -> f64 {
        self.h.as_ref().map_or(1.0, |h| {
            (0..h.nrows())
                .map(|i| h[(i, i)].abs())
                .fold(1e-300, f64::max)
        })
    }
    fn solve_shifted(&mut self, mu: f64, rhs: &[f64]) -> Option<Vec<f64>> {
        let mut b = Mat::from_fn(rhs.len(), 1, |i, _| rhs[i]);
        if mu == 0.0 {
            if self.factor.is_none() {
                self.factor = Some(self.h.as_ref()?.llt(Side::Lower).ok()?);
            }
            self.factor.as_ref()?.solve_in_place(b.as_mut());
        } else {
            let mut m = self.h.clone()?;
            for i in 0..m.nrows() {
                m[(i, i)] += mu;
            }
            m.llt(Side::Lower).ok()?.solve_in_place(b.as_mut());
        }
        Some((0..rhs.len()).map(|i| b[(i, 0)]).collect())
    }
}

/// Everything the search needs about one big level.
struct BigProbe<'a> {
    f: Functional<'a>,
    even: Block,
    odd: Block,
    /// Field direction on the odd orbits: number of site variables in each.
    b: Vec<f64>,
    solver: std::cell::RefCell<SymmetricSolver>,
    warm: std::cell::RefCell<Vec<f64>>,
    /// g(T) already computed (the root finder asks for its bracket ends again).
    cache: std::cell::RefCell<Vec<(f64, f64, bool)>>,
}

impl BigProbe<'_> {
    /// `g(T) = 1/(bᵀ H_odd⁻¹ b)` at the paramagnet, and whether H_odd is positive definite.
    fn g(&self, t: f64) -> Result<(f64, bool), SolveError> {
        if let Some(&(_, g, pd)) = self.cache.borrow().iter().find(|c| c.0 == t) {
            return Ok((g, pd));
        }
        let (g, pd, _) = self.g_with_response(t)?;
        self.cache.borrow_mut().push((t, g, pd));
        Ok((g, pd))
    }

    /// `g(T)`, positive definiteness, and the response `H_odd⁻¹ b` on the orbits.
    fn g_with_response(&self, t: f64) -> Result<(f64, bool, Vec<f64>), SolveError> {
        let f = self.f.at(t, 0.0);
        let start = self.warm.borrow().clone();
        let start = if f.feasible(&start) {
            start
        } else {
            product_state(&f, 0.0)
        };
        let mut solver = self.solver.borrow_mut();
        let opts = NewtonOptions {
            tolerance: 1e-10,
            max_iterations: 100,
            chord: true,
        };
        let sol = minimise_with(&f, start, &self.even, opts, &mut *solver)?;
        let h = solver
            .hessian(&f, &sol.x, &self.odd)
            .ok_or_else(|| SolveError::TcSearch {
                level: f.level().name.clone(),
                detail: format!("paramagnetic solution at T = {t} left the feasible region"),
            })?;
        *self.warm.borrow_mut() = sol.x;
        let rhs = Mat::from_fn(self.b.len(), 1, |i, _| self.b[i]);
        let (y, pd) = match h.llt(Side::Lower) {
            Ok(llt) => {
                let mut y = rhs.clone();
                llt.solve_in_place(y.as_mut());
                (y, true)
            }
            Err(_) => {
                let lu = h.partial_piv_lu();
                let mut y = rhs.clone();
                lu.solve_in_place(y.as_mut());
                (y, false)
            }
        };
        let y: Vec<f64> = (0..self.b.len()).map(|i| y[(i, 0)]).collect();
        let s: f64 = self.b.iter().zip(&y).map(|(b, y)| b * y).sum();
        Ok((1.0 / s, pd, y))
    }
}

/// The search's view of g: the root is where g changes sign; where H_odd is not
/// positive definite although `g > 0` (a mode orthogonal to the field went soft first)
/// the paramagnet is unstable all the same.
impl crate::search::Probe for BigProbe<'_> {
    fn value(&mut self, t: f64) -> Result<f64, SolveError> {
        Ok(self.g(t)?.0)
    }
    fn unstable(&self, t: f64) -> bool {
        self.cache.borrow().iter().any(|c| c.0 == t && !c.2)
    }
    fn name(&self) -> &str {
        &self.f.level().name
    }
}

/// Tc of a level too large for the dense engine, on point-group orbits. `start_below`
/// is a temperature believed to lie above this level's Tc (e.g. the Tc of the next
/// smaller cluster); without it the search starts at the mean-field Tc.
pub fn critical_temperature_orbits_dense(
    lattice: &Lattice,
    level: &Level,
    options: TcOptions,
    start_below: Option<f64>,
) -> Result<CriticalPoint, SolveError> {
    let start = Instant::now();
    let ops = symmetry::level_group(level, &symmetry::point_group(lattice));
    let orbit_of = symmetry::variable_orbits(level, &ops);
    let red = level.reduced(&orbit_of);
    let even = Block::even(&red);
    let odd = Block::odd(&red);
    let biggest = even.vars.len().max(odd.vars.len());
    if biggest > MAX_REDUCED_VARIABLES {
        return Err(SolveError::TooLarge {
            level: level.name.clone(),
            variables: biggest,
            gib: (biggest * biggest * 8) as f64 / (1u64 << 30) as f64,
            limit: MAX_REDUCED_VARIABLES,
        });
    }
    let mut b = vec![0.0; odd.vars.len()];
    for &v in &red.site_vars {
        b[odd.pos[v]] += 1.0;
    }
    let mut probe = BigProbe {
        f: Functional::new(&red, 1.0, 0.0),
        even,
        odd,
        b,
        solver: std::cell::RefCell::new(SymmetricSolver::new(&red, &ops)),
        warm: std::cell::RefCell::new(Vec::new()),
        cache: std::cell::RefCell::new(Vec::new()),
    };
    *probe.warm.borrow_mut() = product_state(&probe.f, 0.0);
    let scale = crate::tc::mean_field_scale(lattice).max(1e-12);
    let t_start = start_below.unwrap_or(scale * 1.02);
    let t_min = scale * options.lowest_fraction;
    // Each probe is a dense factorisation: creep down as the matrix-free path does,
    // with a bolder first step.
    let rules = StepRules {
        first_ratio: 0.97,
        margin: 2e-3,
        ..StepRules::creeping()
    };
    let bracket = step_down(&mut probe, t_start, t_min, rules)?;
    let nb = level.sites_per_cell;
    let (t_lo, t_hi) = match bracket {
        Bracket::Found { lo, hi, .. } => (lo, hi),
        Bracket::Stable { down_to } | Bracket::Noise { at: down_to } => {
            return Ok(CriticalPoint {
                level: level.name.clone(),
                max_cluster_sites: level.max_cluster_sites(),
                field: 0.0,
                tc: None,
                searched_down_to: down_to,
                mode: vec![0.0; nb],
                kind: ModeKind::Hidden,
                ordering: None,
                amplitude: None,
                notes: Vec::new(),
                seconds: start.elapsed().as_secs_f64(),
            });
        }
    };
    // Brent on g over the bracket (its ends come from the cache).
    let tc = refine(&mut probe, t_lo, t_hi, options.relative_tolerance)?;
    // Amplitude: χ = bᵀH⁻¹b / N_b = 1/(N_b g), g ≈ g'(T − Tc) ⇒ χ̄ = 1/(N_b g'(Tc)).
    // Wide enough that the rounding floor of g (big clusters) is negligible, narrow
    // enough that its curvature is: g is linear to O(dt/Tc) = 10⁻³ here.
    let dt = 1e-3 * tc;
    let (g_up, _, response) = probe.g_with_response(tc + dt)?;
    let (g_down, _) = probe.g(tc - dt)?;
    let slope = (g_up - g_down) / (2.0 * dt);
    let amplitude = (slope > 0.0).then(|| 1.0 / (nb as f64 * slope));
    // Just above Tc the response H⁻¹e is dominated by the critical mode; its value on
    // a site's orbit is that site's component.
    let components: Vec<f64> = red
        .site_vars
        .iter()
        .map(|&v| response[probe.odd.pos[v]])
        .collect();
    let (mode, kind) = crate::tc::classify(&components);
    let site_mode = mode
        .iter()
        .map(|&c| nalgebra::Complex::new(c, 0.0))
        .collect();
    Ok(CriticalPoint {
        level: level.name.clone(),
        max_cluster_sites: level.max_cluster_sites(),
        field: 0.0,
        tc: Some(tc),
        searched_down_to: t_lo,
        mode,
        kind,
        ordering: Some(crate::ordering::Ordering::new(
            lattice.dimension(),
            [0.0; 3],
            site_mode,
        )),
        amplitude,
        notes: Vec::new(),
        seconds: start.elapsed().as_secs_f64(),
    })
}

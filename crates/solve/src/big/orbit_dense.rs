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
//! g needs more than doubles near Tc. Every `w[c]` carries the `1/p` of the rarest
//! cluster states (~10¹² for the 4×4 block at Tc) and H's entries are sums of hundreds
//! of them; the paramagnet's free energy scatters by ~10⁻¹² and its gradient by ~10⁻¹²;
//! and `bᵀH⁻¹b` is the difference of huge numbers where H turns singular. In plain
//! doubles g scattered by ~2·10⁻⁸ from one temperature to the next, 10⁻⁷ in Tc, and the
//! 4×4 Tc moved by that much with the thread count or a change of 3·10⁻¹² in the 3×3
//! start. So:
//!
//! * the paramagnet is solved as an offset from the last one (probabilities and
//!   gradient in double-double) to a gradient of 10⁻¹³;
//! * `H_odd` for g is summed in double-double from a double-double kernel (Newton's
//!   own Hessians stay in doubles: they only shape the steps);
//! * g comes from a bordered system, well conditioned at Tc, refined with
//!   double-double residuals (Wilkinson's iterative refinement; Higham 2002, *Accuracy
//!   and Stability of Numerical Algorithms*, ch. 12).
//!
//! g is then smooth to ~10⁻¹⁴ and the 4×4 Tc agrees with the matrix-free path's to
//! 5·10⁻¹³ (relative, both roots to 10⁻¹¹).
//!
//! The critical mode searched here is the fully symmetric one (uniform order); the
//! report says so.

use std::time::Instant;

use faer::linalg::solvers::Solve;
use faer::{Mat, Side};
use rungs_lattice::symmetry::{self, SiteMap};
use rungs_lattice::{Cluster, Lattice, Level};

use crate::dd::{two_prod, two_sum, Dd};
use crate::equilibrium::{minimise_with, product_state, HessianSolver, NewtonOptions};
use crate::error::SolveError;
use crate::functional::{Basis, Block, Functional};
use crate::search::{refine, step_down, Bracket, StepRules};
use crate::tc::{CriticalPoint, ModeKind, TcOptions};

/// Most orbit variables per sector the big-level path accepts (a 8000² matrix is 512 MB).
pub const MAX_REDUCED_VARIABLES: usize = 8000;

/// The paramagnet's gradient tolerance: its double-double gradient reaches ~10⁻¹⁵; on
/// the 4×4 block near Tc a gradient of 6·10⁻¹¹ left the state 8·10⁻¹⁰ off (soft even
/// directions) and g 2·10⁻⁹ off, so 10⁻¹³ keeps g to a few 10⁻¹².
const PARAMAGNET_TOLERANCE: f64 = 1e-13;

/// Refinement steps of the bordered system of g (each: one residual in double-double,
/// one solve with the factor at hand; one already reaches the residual's rounding).
const REFINEMENT_STEPS: usize = 2;

/// One region, prepared for symmetric assembly.
struct RegionPlan {
    /// Sites of the region (checked against the functional's kernels).
    n: usize,
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
    scratch_lo: Vec<f64>,
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
                RegionPlan { n, reps }
            })
            .collect();
        SymmetricSolver {
            plans,
            h: None,
            factor: None,
            scratch: Vec::new(),
            scratch_lo: Vec::new(),
        }
    }

    /// The reduced Hessian of `f` (on the reduced level) at `x`, on `block`, in doubles.
    fn hessian(&mut self, f: &Functional, x: &[f64], block: &Block) -> Option<Mat<f64>> {
        self.assemble_parts(f, x, block, false).map(|(h, _)| h)
    }

    /// The same in double-double, as `(hi, lo)` with `H = hi + lo`: the kernels
    /// `W(1/p)` from double-double probabilities, every sum compensated (each addition's
    /// rounding error, exact by TwoSum/TwoProd, carried in `lo`: Ogita, Rump & Oishi
    /// 2005, SIAM J. Sci. Comput. 26, 1955).
    pub fn hessian_precise(
        &mut self,
        f: &Functional,
        x: &[f64],
        block: &Block,
    ) -> Option<(Mat<f64>, Mat<f64>)> {
        self.assemble_parts(f, x, block, true)
            .and_then(|(h, lo)| Some((h, lo?)))
    }

    /// Symmetric assembly over the stabilisers' representatives; `lo` only when
    /// `precise`.
    fn assemble_parts(
        &mut self,
        f: &Functional,
        x: &[f64],
        block: &Block,
        precise: bool,
    ) -> Option<(Mat<f64>, Option<Mat<f64>>)> {
        let m = block.vars.len();
        let kernels = f.region_kernels(x, precise)?;
        debug_assert_eq!(kernels.len(), self.plans.len());
        let mut h = Mat::<f64>::zeros(m, m);
        let mut h_lo = precise.then(|| Mat::<f64>::zeros(m, m));
        self.scratch.resize(m, 0.0);
        self.scratch_lo.resize(m, 0.0);
        for (plan, k) in self.plans.iter().zip(&kernels) {
            debug_assert_eq!(plan.n, k.n);
            let cols: Vec<(u32, u32)> = (1..1usize << k.n)
                .filter_map(|d| {
                    let row = block.pos[k.vars[d] as usize];
                    (row != usize::MAX).then_some((d as u32, row as u32))
                })
                .collect();
            for &(c, mult) in &plan.reps {
                let rc = block.pos[k.vars[c as usize] as usize];
                if rc == usize::MAX {
                    continue;
                }
                let weight = k.scale * mult;
                let (sum, sum_lo) = (&mut self.scratch, &mut self.scratch_lo);
                sum.iter_mut().for_each(|s| *s = 0.0);
                match (&k.kernel_lo, h_lo.as_mut()) {
                    (Some(kernel_lo), Some(h_lo)) => {
                        sum_lo.iter_mut().for_each(|s| *s = 0.0);
                        for &(d, rd) in &cols {
                            let (j, r) = ((c ^ d) as usize, rd as usize);
                            let (s, e) = two_sum(sum[r], k.kernel[j]);
                            sum[r] = s;
                            sum_lo[r] += e + kernel_lo[j];
                        }
                        let col = h.col_as_slice_mut(rc);
                        let col_lo = h_lo.col_as_slice_mut(rc);
                        for i in 0..m {
                            let (p, pe) = two_prod(weight, sum[i]);
                            let (s, e) = two_sum(col[i], p);
                            col[i] = s;
                            col_lo[i] += e + pe + weight * sum_lo[i];
                        }
                    }
                    _ => {
                        for &(d, rd) in &cols {
                            sum[rd as usize] += k.kernel[(c ^ d) as usize];
                        }
                        let col = h.col_as_slice_mut(rc);
                        for (a, s) in col.iter_mut().zip(sum.iter()) {
                            *a += weight * s;
                        }
                    }
                }
            }
        }
        for &(a, b, c) in f.quadratic_terms() {
            let (pa, pb) = (block.pos[a], block.pos[b]);
            if pa != usize::MAX && pb != usize::MAX {
                h[(pa, pb)] += c;
                h[(pb, pa)] += c;
            }
        }
        // Symmetrise away the rounding of the representative sums.
        for j in 0..m {
            for i in 0..j {
                match h_lo.as_mut() {
                    Some(lo) => {
                        let s = (Dd {
                            hi: h[(i, j)],
                            lo: lo[(i, j)],
                        } + Dd {
                            hi: h[(j, i)],
                            lo: lo[(j, i)],
                        })
                        .mul_f64(0.5);
                        (h[(i, j)], lo[(i, j)]) = (s.hi, s.lo);
                        (h[(j, i)], lo[(j, i)]) = (s.hi, s.lo);
                    }
                    None => {
                        let s = 0.5 * (h[(i, j)] + h[(j, i)]);
                        h[(i, j)] = s;
                        h[(j, i)] = s;
                    }
                }
            }
        }
        Some((h, h_lo))
    }
}

/// `g = 1/(bᵀ H⁻¹ b)` with `H = hi + lo`, whether H is positive definite, and the
/// response `H⁻¹ b`, from the bordered system
///
/// ```text
/// [ H    s b ] [ y ]   [ 0 ]
/// [ s bᵀ  0  ] [ μ ] = [ 1 ],   μ = −1/(s² bᵀH⁻¹b) = −g/s²,   y = −s μ H⁻¹b,
/// ```
///
/// which stays well conditioned where H turns singular, as long as b is not orthogonal
/// to H's null vector (Griewank & Reddien 1984, SIAM J. Numer. Anal. 21, 176; Govaerts
/// 2000, *Numerical Methods for Bifurcations of Dynamical Equilibria*, ch. 3): solving
/// `H y = b` directly loses g near Tc, where 1/g is the difference of huge numbers. The
/// bordered matrix M is factorised once as `P M Pᵀ = L B Lᵀ` (Bunch–Kaufman) and the
/// solution refined with residuals summed in double-double (H symmetric: its rows are
/// read as columns). s, a power of two, brings b to the size of H's diagonal.
///
/// Positive definiteness from the inertia (Sylvester's law): M has that of H plus the
/// sign of its Schur complement `−s²/g`, so H is positive definite exactly when g > 0
/// and B has one negative eigenvalue. Unlike a Cholesky factorisation of H, this stays
/// right where H's smallest eigenvalue is below its rounding (at Tc).
fn bordered_g(hi: &Mat<f64>, lo: &Mat<f64>, b: &[f64]) -> (f64, bool, Vec<f64>) {
    let m = b.len();
    let diag = (0..m).map(|i| hi[(i, i)].abs()).fold(1.0, f64::max);
    let bmax = b.iter().map(|v| v.abs()).fold(1e-300, f64::max);
    let s = 2f64.powi((diag.sqrt() / bmax).log2().round() as i32);
    let lu = Mat::from_fn(m + 1, m + 1, |i, j| match (i < m, j < m) {
        (true, true) => hi[(i, j)],
        (true, false) => s * b[i],
        (false, true) => s * b[j],
        (false, false) => 0.0,
    })
    .lblt(Side::Lower);
    let negative = negative_eigenvalues(lu.B_diag(), lu.B_subdiag());
    let solve = |rhs: &[f64]| -> Vec<f64> {
        let mut z = Mat::from_fn(m + 1, 1, |i, _| rhs[i]);
        lu.solve_in_place(z.as_mut());
        (0..=m).map(|i| z[(i, 0)]).collect()
    };
    let mut rhs = vec![0.0; m + 1];
    rhs[m] = 1.0;
    let mut z = solve(&rhs);
    for _ in 0..REFINEMENT_STEPS {
        let (y, mu) = (&z[..m], z[m]);
        let mut r: Vec<f64> = (0..m)
            .map(|i| {
                let (row, row_lo) = (hi.col_as_slice(i), lo.col_as_slice(i));
                let (p, pe) = two_prod(s * b[i], mu);
                let mut acc = Dd::from_f64(-p);
                let mut small = -pe;
                for ((&a, &a_lo), &yj) in row.iter().zip(row_lo).zip(y) {
                    let (p, pe) = two_prod(a, yj);
                    acc = acc.add_f64(-p);
                    small -= pe + a_lo * yj;
                }
                acc.add_f64(small).to_f64()
            })
            .collect();
        let last = b.iter().zip(y).fold(Dd::from_f64(1.0), |acc, (bi, yi)| {
            acc + Dd::from_f64(-s * bi).mul_f64(*yi)
        });
        r.push(last.to_f64());
        let dz = solve(&r);
        z.iter_mut().zip(&dz).for_each(|(a, d)| *a += d);
    }
    let mu = z[m];
    let g = -s * s * mu;
    let response = z[..m].iter().map(|y| -y / (s * mu)).collect();
    (g, g > 0.0 && negative == 1, response)
}

/// Negative eigenvalues of the block-diagonal B of an `L B Lᵀ` factorisation (1×1
/// blocks, and 2×2 blocks where the subdiagonal is non-zero: one of each sign when the
/// determinant is negative, else both of the diagonal's sign).
fn negative_eigenvalues(
    diag: faer::diag::DiagRef<'_, f64>,
    subdiag: faer::diag::DiagRef<'_, f64>,
) -> usize {
    let (d, e) = (diag.column_vector(), subdiag.column_vector());
    let n = d.nrows();
    let (mut i, mut count) = (0, 0);
    while i < n {
        if i + 1 < n && e[i] != 0.0 {
            let det = d[i] * d[i + 1] - e[i] * e[i];
            count += if det < 0.0 {
                1
            } else if d[i] < 0.0 {
                2
            } else {
                0
            };
            i += 2;
        } else {
            count += usize::from(d[i] < 0.0);
            i += 1;
        }
    }
    count
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
        // The paramagnet as an offset from the last one (double-double probabilities);
        // once more from its own solution when the offsets grew so large that their
        // rounding limits the gradient (far from the last temperature).
        let mut solver = self.solver.borrow_mut();
        let opts = NewtonOptions {
            tolerance: PARAMAGNET_TOLERANCE,
            max_iterations: 100,
            chord: true,
        };
        let mut reference = self.warm.borrow().clone();
        let mut pass = 0;
        let (f, sol) = loop {
            let f = Functional::with_basis(self.f.level(), t, 0.0, Basis::Walsh, Some(reference));
            let sol = minimise_with(&f, vec![0.0; f.len()], &self.even, opts, &mut *solver)?;
            let gn = self
                .even
                .vars
                .iter()
                .map(|&v| sol.evaluation.gradient[v].abs())
                .fold(0.0, f64::max);
            pass += 1;
            if gn <= PARAMAGNET_TOLERANCE || pass == 2 {
                break (f, sol);
            }
            reference = f.values(&sol.x);
        };
        let (hi, lo) = solver
            .hessian_precise(&f, &sol.x, &self.odd)
            .ok_or_else(|| SolveError::TcSearch {
                level: f.level().name.clone(),
                detail: format!("paramagnetic solution at T = {t} left the feasible region"),
            })?;
        *self.warm.borrow_mut() = f.values(&sol.x);
        let (g, pd, y) = bordered_g(&hi, &lo, &self.b);
        Ok((g, pd, y))
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

//! The critical temperature of a level: where the paramagnetic solution stops being a
//! minimum.
//!
//! At h = 0 the paramagnetic solution lives in the even sector and the Hessian is
//! block-diagonal (even ⊕ odd). Tc is the temperature where the smallest eigenvalue
//! λ(T) of the odd-sector Hessian reaches zero: it is bracketed by stepping down from
//! just above the mean-field Tc (the spectral radius of the coupling matrix) and refined
//! with Brent's method to a relative 10⁻⁹. The eigenvector says which order sets in; the
//! critical amplitude of χ ≈ χ̄/(T − Tc) follows from it and dλ/dT:
//! `χ̄ = (e·u)² / (N_b dλ/dT)`, e the site-magnetisation direction, u the unit mode.

use std::cell::RefCell;
use std::time::Instant;

use argmin::core::{CostFunction, Executor};
use argmin::solver::brent::BrentRoot;
use nalgebra::{DMatrix, DVector};
use rungs_lattice::{symmetry, Lattice, Level};

use crate::equilibrium::{minimise, product_state, NewtonOptions};
use crate::error::SolveError;
use crate::functional::{Block, Functional};

/// What kind of order the critical mode describes, from its site components.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ModeKind {
    /// Every site of the cell orders the same way (ferromagnetic-like).
    Uniform,
    /// Sites of the cell order with opposite signs (e.g. Néel order in a supercell).
    Staggered,
    /// The mode has no site component (order in multi-spin correlations only).
    Hidden,
}

impl ModeKind {
    /// A lower-case word for reports.
    pub fn as_str(self) -> &'static str {
        match self {
            ModeKind::Uniform => "uniform",
            ModeKind::Staggered => "staggered",
            ModeKind::Hidden => "hidden",
        }
    }
}

/// The critical point of one level.
#[derive(Debug, Clone)]
pub struct CriticalPoint {
    /// Level name.
    pub level: String,
    /// Sites of the largest maximal cluster.
    pub max_cluster_sites: usize,
    /// Critical temperature, `None` when the paramagnetic solution stays stable down to
    /// the lowest temperature searched.
    pub tc: Option<f64>,
    /// Lowest temperature searched (where `tc` is `None`).
    pub searched_down_to: f64,
    /// Site components of the critical mode, one per basis site, largest |·| = 1.
    pub mode: Vec<f64>,
    /// Classification of `mode`.
    pub kind: ModeKind,
    /// Critical amplitude χ̄ (per site) in χ ≈ χ̄ / (T − Tc) just above Tc.
    pub amplitude: Option<f64>,
    /// Wall-clock seconds spent.
    pub seconds: f64,
}

/// Options of the search.
#[derive(Debug, Clone, Copy)]
pub struct TcOptions {
    /// Relative tolerance on Tc.
    pub relative_tolerance: f64,
    /// Give up (no Tc) below this fraction of the mean-field Tc.
    pub lowest_fraction: f64,
    /// A temperature believed to lie above this level's Tc (e.g. the Tc of the next
    /// smaller cluster): where the search of a big level starts. `None`: mean field.
    pub start_below: Option<f64>,
}

impl Default for TcOptions {
    fn default() -> Self {
        TcOptions {
            relative_tolerance: 1e-9,
            lowest_fraction: 0.02,
            start_below: None,
        }
    }
}

/// The mean-field (site-level) Tc bound used to start the search: the spectral radius of
/// the coupling matrix `J_ab` (largest |eigenvalue|).
pub fn mean_field_scale(lattice: &Lattice) -> f64 {
    let m = lattice.coupling_matrix();
    let n = m.len();
    let mat = DMatrix::from_fn(n, n, |i, j| m[i][j]);
    mat.symmetric_eigenvalues()
        .iter()
        .fold(0.0f64, |a, &b| a.max(b.abs()))
}

/// Paramagnetic solutions along T with warm starts, and the odd-sector spectrum there.
struct Probe<'a> {
    f: Functional<'a>,
    even: Block,
    odd: Block,
    /// `D^{-1/2}` per variable on an orbit-reduced level (D = orbit sizes), so that the
    /// odd Hessian `D^{-1/2} PᵀHP D^{-1/2}` has the eigenvalues of H on the symmetric
    /// subspace; all ones on a plain level.
    norm: Vec<f64>,
    warm: RefCell<Vec<f64>>,
    error: RefCell<Option<SolveError>>,
}

impl<'a> Probe<'a> {
    fn new(level: &'a Level, norm: Vec<f64>) -> Probe<'a> {
        let f = Functional::new(level, 1.0, 0.0);
        let warm = product_state(&f, 0.0);
        Probe {
            even: Block::even(level),
            odd: Block::odd(level),
            norm,
            warm: RefCell::new(warm),
            f,
            error: RefCell::new(None),
        }
    }

    /// The odd-sector Hessian at the paramagnetic solution at T.
    fn odd_hessian(&self, t: f64) -> Result<DMatrix<f64>, SolveError> {
        let f = self.f.at(t, 0.0);
        let start = self.warm.borrow().clone();
        let start = if f.feasible(&start) {
            start
        } else {
            product_state(&f, 0.0)
        };
        let sol = minimise(&f, start, &self.even, NewtonOptions::default())?;
        let mut h = f
            .hessian_block(&sol.x, &self.odd.vars, &self.odd.pos)
            .ok_or_else(|| SolveError::TcSearch {
                level: self.f.level().name.clone(),
                detail: format!("paramagnetic solution at T = {t} left the feasible region"),
            })?;
        for (j, &vj) in self.odd.vars.iter().enumerate() {
            for (i, &vi) in self.odd.vars.iter().enumerate() {
                h[(i, j)] *= self.norm[vi] * self.norm[vj];
            }
        }
        *self.warm.borrow_mut() = sol.x;
        Ok(h)
    }

    /// Smallest odd-sector eigenvalue and its unit eigenvector.
    fn lowest(&self, t: f64) -> Result<(f64, DVector<f64>), SolveError> {
        let h = self.odd_hessian(t)?;
        let eig = h.symmetric_eigen();
        let (k, &lam) = eig
            .eigenvalues
            .iter()
            .enumerate()
            .min_by(|a, b| a.1.total_cmp(b.1))
            .ok_or_else(|| SolveError::TcSearch {
                level: self.f.level().name.clone(),
                detail: "empty odd sector".into(),
            })?;
        Ok((lam, eig.eigenvectors.column(k).into_owned()))
    }
}

/// The root finder's view of a probe: T ↦ λ(T).
struct Lowest<'p, 'a>(&'p Probe<'a>);

impl CostFunction for Lowest<'_, '_> {
    type Param = f64;
    type Output = f64;
    fn cost(&self, t: &f64) -> Result<f64, argmin::core::Error> {
        match self.0.lowest(*t) {
            Ok((lam, _)) => Ok(lam),
            Err(e) => {
                let msg = e.to_string();
                *self.0.error.borrow_mut() = Some(e);
                Err(argmin::core::Error::msg(msg))
            }
        }
    }
}

/// Find the critical temperature of `level` (built from `lattice`) at h = 0.
///
/// The search first runs on the orbit-reduced level (point-group symmetric states and
/// modes only: small and fast), then checks with one Cholesky factorisation that the
/// full odd sector is still positive definite just above the Tc found, i.e. that no
/// less symmetric mode went critical first. If one did, or the symmetric sector never
/// orders, the search is repeated on the unreduced variables.
pub fn critical_temperature(
    lattice: &Lattice,
    level: &Level,
    options: TcOptions,
) -> Result<CriticalPoint, SolveError> {
    if crate::functional::check_size(level).is_err() {
        return crate::big::critical_temperature_big(lattice, level, options, options.start_below);
    }
    let start = Instant::now();
    let scale = mean_field_scale(lattice).max(1e-12);
    let ops = symmetry::level_group(level, &symmetry::point_group(lattice));
    if ops.len() > 1 {
        let orbit_of = symmetry::variable_orbits(level, &ops);
        let reduced = level.reduced(&orbit_of);
        let mut size = vec![0usize; reduced.variables.len()];
        for &o in &orbit_of {
            size[o] += 1;
        }
        let norm: Vec<f64> = size.iter().map(|&d| 1.0 / (d as f64).sqrt()).collect();
        // Any failure of the symmetric search (no Tc, or a paramagnet that cannot be
        // followed because a less symmetric order sets in first) defers to the full one.
        if let Ok((sym @ CriticalPoint { tc: Some(tc), .. }, y)) =
            search(scale, &reduced, norm, options)
        {
            let t_check = tc * (1.0 + 1e-6);
            let x: Vec<f64> = orbit_of.iter().map(|&o| y[o]).collect();
            let f = Functional::new(level, t_check, 0.0);
            // Re-solve the paramagnet at t_check so that the check is exact there.
            let para = minimise(&f, x, &Block::even(level), NewtonOptions::default());
            if para.is_ok_and(|p| crate::state::odd_sector_stable(&f, &p.x)) {
                return Ok(CriticalPoint {
                    seconds: start.elapsed().as_secs_f64(),
                    ..sym
                });
            }
        }
    }
    let (cp, _) = search(scale, level, vec![1.0; level.variables.len()], options)?;
    Ok(CriticalPoint {
        seconds: start.elapsed().as_secs_f64(),
        ..cp
    })
}

/// The search proper on one (plain or orbit-reduced) level; also returns the
/// paramagnetic solution at the last temperature probed (at Tc when one was found).
fn search(
    scale: f64,
    level: &Level,
    norm: Vec<f64>,
    options: TcOptions,
) -> Result<(CriticalPoint, Vec<f64>), SolveError> {
    let start = Instant::now();
    let probe = Probe::new(level, norm);
    let name = level.name.clone();
    let mut t_hi = scale * 1.02;
    let (mut lam_hi, _) = probe.lowest(t_hi)?;
    let mut grow = 0;
    while lam_hi <= 0.0 && grow < 20 {
        t_hi *= 1.5;
        lam_hi = probe.lowest(t_hi)?.0;
        grow += 1;
    }
    if lam_hi <= 0.0 {
        return Err(SolveError::TcSearch {
            level: name,
            detail: format!("the paramagnetic solution is unstable even at T = {t_hi}"),
        });
    }
    let t_min = scale * options.lowest_fraction;
    let mut t_lo = t_hi;
    let mut found = false;
    // Step down, guided by the secant of λ(T) (nearly linear near Tc): aim a little
    // below the predicted zero, never more than halving T or less than a 2% step.
    let mut prev: Option<(f64, f64)> = None;
    let mut lam_cur = lam_hi;
    while t_lo > t_min {
        let mut t_next = t_lo * 0.9;
        if let Some((tp, lp)) = prev {
            let slope = (lp - lam_cur) / (tp - t_lo);
            if slope > 0.0 {
                let zero = t_lo - lam_cur / slope;
                t_next = (zero - 0.01 * t_lo).clamp(0.5 * t_lo, 0.98 * t_lo);
            }
        }
        let t_next = t_next.max(t_min);
        let (lam, noise) = match probe.odd_hessian(t_next) {
            Ok(h) => {
                let noise = probe
                    .f
                    .at(t_next, 0.0)
                    .hessian_rounding(&probe.warm.borrow());
                match h.symmetric_eigenvalues().iter().copied().reduce(f64::min) {
                    Some(l) => (l, noise),
                    None => break,
                }
            }
            Err(e) => {
                return Err(SolveError::TcSearch {
                    level: level.name.clone(),
                    detail: format!(
                        "stable down to T = {t_lo}, but the paramagnetic solution could not be followed below it ({e}); no Tc can be claimed either way"
                    ),
                })
            }
        };
        // An eigenvalue within rounding of zero (e.g. the chain, where it vanishes only
        // as e^{-2J/T}) cannot say which side of Tc we are on: stop searching there.
        if lam.abs() < noise {
            t_lo = t_next;
            break;
        }
        if lam <= 0.0 {
            found = true;
            t_lo = t_next;
            break;
        }
        prev = Some((t_lo, lam_cur));
        lam_cur = lam;
        t_hi = t_next;
        t_lo = t_next;
        if t_next <= t_min {
            break;
        }
    }
    let nb = level.sites_per_cell;
    if !found {
        return Ok((
            CriticalPoint {
                level: name,
                max_cluster_sites: level.max_cluster_sites(),
                tc: None,
                searched_down_to: t_lo,
                mode: vec![0.0; nb],
                kind: ModeKind::Hidden,
                amplitude: None,
                seconds: start.elapsed().as_secs_f64(),
            },
            probe.warm.borrow().clone(),
        ));
    }
    // Warm start from the upper end for the root finder.
    probe.odd_hessian(t_hi)?;
    let solver = BrentRoot::new(t_lo, t_hi, options.relative_tolerance * t_hi);
    let result = Executor::new(Lowest(&probe), solver)
        .configure(|s| s.max_iters(200))
        .run();
    let tc = match result {
        Ok(r) => r.state.best_param.unwrap_or(0.5 * (t_lo + t_hi)),
        Err(e) => {
            return Err(probe
                .error
                .borrow_mut()
                .take()
                .unwrap_or(SolveError::TcSearch {
                    level: name,
                    detail: e.to_string(),
                }));
        }
    };
    // The critical mode and the amplitude χ̄ = (e·u)² / (N_b dλ/dT).
    let (_, u) = probe.lowest(tc)?;
    let delta = 1e-4 * tc;
    let rayleigh = |t: f64| -> Result<f64, SolveError> {
        let h = probe.odd_hessian(t)?;
        Ok(u.dot(&(&h * &u)))
    };
    let slope = (rayleigh(tc + delta)? - rayleigh(tc - delta)?) / (2.0 * delta);
    // Back at Tc (the paramagnet returned is the one there). Site components of the
    // mode in the full variables: u_k D_k^{-1/2} for the orbit k of each site's
    // variable (plain level: D = 1).
    probe.odd_hessian(tc)?;
    let site_components: Vec<f64> = level
        .site_vars
        .iter()
        .map(|&v| u[probe.odd.pos[v]] * probe.norm[v])
        .collect();
    let e_dot_u: f64 = site_components.iter().sum();
    let amplitude = (slope > 0.0).then(|| e_dot_u * e_dot_u / (nb as f64 * slope));
    let (mode, kind) = classify(&site_components);
    let warm = probe.warm.borrow().clone();
    Ok((
        CriticalPoint {
            level: name,
            max_cluster_sites: level.max_cluster_sites(),
            tc: Some(tc),
            searched_down_to: t_lo,
            mode,
            kind,
            amplitude,
            seconds: start.elapsed().as_secs_f64(),
        },
        warm,
    ))
}

/// Normalise site components (largest |·| = 1, first non-zero positive) and classify.
pub(crate) fn classify(components: &[f64]) -> (Vec<f64>, ModeKind) {
    let big = components.iter().fold(0.0f64, |a, &b| a.max(b.abs()));
    if big < 1e-8 {
        return (vec![0.0; components.len()], ModeKind::Hidden);
    }
    let sign = components
        .iter()
        .find(|c| c.abs() > 1e-6 * big)
        .map_or(1.0, |c| c.signum());
    let mode: Vec<f64> = components.iter().map(|c| sign * c / big).collect();
    let kind = if mode.iter().all(|&c| c > -1e-9) {
        ModeKind::Uniform
    } else {
        ModeKind::Staggered
    };
    (mode, kind)
}

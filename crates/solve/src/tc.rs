//! The critical temperature of a level and the order that sets in there, at any
//! wavevector and in any uniform field.
//!
//! The disordered state ([`crate::disordered`]) is stable while the Hessian `H(q)` of
//! [`crate::qspace`] is positive definite at every wavevector q. Tc is the highest
//! temperature where `λ(T) = min_q λ_min(H(q))` reaches zero; the q there is the
//! ordering wavevector and the eigenvector the ordering pattern. At h = 0 only the odd
//! sector can go soft; in a field (the Néel line of an antiferromagnet) every variable
//! counts.
//!
//! The minimum over q is taken over candidates: the points with every component 0 or 1/2
//! (the zone centre and the zone-boundary points where Néel and layered orders live), and
//! the maxima of the mean-field coupling `J(q)`, one per star of the level's point group
//! (wavevectors of one star have the same spectrum). The step-down and Brent root of
//! [`crate::search`] find Tc for the candidates; then the wavevector is refined locally
//! at Tc, and the stability of every wavevector of a grid over the zone is checked just
//! above Tc. A wavevector found unstable there joins the candidates and the search runs
//! again, so a less obvious order is never missed by more than the grid's resolution.
//!
//! The critical amplitude of `χ ≈ χ̄ / (T − Tc)` is that of the ordering mode: with u
//! the unit critical eigenvector, ŝ its site pattern (largest |·| = 1) and
//! `λ(T) ≈ λ'(Tc)(T − Tc)`, `χ̄ = |ŝ†u|² / (Σ_a |ŝ_a|² λ'(Tc))` (for a ferromagnet the
//! uniform susceptibility, for Néel order the staggered one).

use std::cell::RefCell;
use std::time::Instant;

use nalgebra::Complex;
use rungs_lattice::{symmetry, Lattice, Level};

use crate::disordered::Disordered;
use crate::error::SolveError;
pub use crate::ordering::ModeKind;
use crate::ordering::Ordering;
use crate::qspace::{
    coupling_top, is_real, sends_q, LowestMode, Projection, QHessian, RealForms, Wavevector,
};
use crate::search::{refine_known, step_down, Bracket, Probe, StepRules};
use rayon::prelude::*;

/// The critical point of one level.
#[derive(Debug, Clone)]
pub struct CriticalPoint {
    /// Level name.
    pub level: String,
    /// Sites of the largest maximal cluster.
    pub max_cluster_sites: usize,
    /// The uniform field the search ran in.
    pub field: f64,
    /// Critical temperature, `None` when the disordered state stays stable down to the
    /// lowest temperature searched.
    pub tc: Option<f64>,
    /// Lowest temperature searched (where `tc` is `None`).
    pub searched_down_to: f64,
    /// Real site components of the critical mode, one per basis site, largest |·| = 1
    /// (`Re(u_a)` after the global phase that makes the largest one real).
    pub mode: Vec<f64>,
    /// Classification of the mode's pattern.
    pub kind: ModeKind,
    /// The ordering: wavevector, site mode, supercell (None without a Tc).
    pub ordering: Option<Ordering>,
    /// Critical amplitude χ̄ (per site) in χ ≈ χ̄ / (T − Tc) just above Tc, of the
    /// ordering mode.
    pub amplitude: Option<f64>,
    /// Cautions about this result (degenerate wavevectors, possible first-order
    /// transition above this Tc, incommensurate q approximated, ...).
    pub notes: Vec<String>,
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
    /// The uniform field h.
    pub field: f64,
}

impl Default for TcOptions {
    fn default() -> Self {
        TcOptions {
            relative_tolerance: 1e-9,
            lowest_fraction: 0.02,
            start_below: None,
            field: 0.0,
        }
    }
}

/// The mean-field (site-level, h = 0) Tc: the largest eigenvalue of the coupling matrix
/// `J(q)` over the zone, `max_q λ_max(J(q))`.
pub fn mean_field_scale(lattice: &Lattice) -> f64 {
    mean_field_maxima(lattice)
        .first()
        .map_or(0.0, |&(_, v)| v)
        .max(0.0)
}

/// Wavevectors with every component 0 or 1/2 on the lattice's dimensions.
pub fn special_points(dimension: usize) -> Vec<Wavevector> {
    (0..1usize << dimension)
        .map(|bits| {
            let mut q = [0.0; 3];
            for (k, c) in q.iter_mut().enumerate().take(dimension) {
                *c = if bits >> k & 1 == 1 { 0.5 } else { 0.0 };
            }
            q
        })
        .collect()
}

/// A grid of `n` points per axis over the zone, one of each pair {q, −q}.
pub fn zone_grid(dimension: usize, n: usize) -> Vec<Wavevector> {
    let total = n.pow(dimension as u32);
    let mut out: Vec<Wavevector> = Vec::new();
    for code in 0..total {
        let mut q = [0.0; 3];
        // The code of −q: each digit c becomes (n − c) mod n. The first of each pair in
        // code order is kept.
        let (mut c, mut neg, mut place) = (code, 0, 1);
        for comp in q.iter_mut().take(dimension) {
            *comp = (c % n) as f64 / n as f64;
            neg += (n - c % n) % n * place;
            place *= n;
            c /= n;
        }
        if neg >= code {
            out.push(q);
        }
    }
    out
}

/// q with components reduced to [0, 1).
fn canonical(q: &Wavevector, dimension: usize) -> Wavevector {
    let mut out = [0.0; 3];
    for k in 0..dimension {
        let mut c = q[k].rem_euclid(1.0);
        if c > 1.0 - 1e-12 {
            c = 0.0;
        }
        out[k] = c;
    }
    out
}

/// Whether p and q are the same point of the zone, up to q → −q.
fn same_q(p: &Wavevector, q: &Wavevector, dimension: usize) -> bool {
    let eq = |a: &Wavevector, b: &Wavevector| {
        (0..dimension).all(|k| crate::qspace::near_integer(a[k] - b[k]))
    };
    eq(p, q) || eq(p, &q.map(|v| -v))
}

/// The maxima of the mean-field coupling's top eigenvalue, best first: the points of a
/// grid that beat their neighbours, refined by a pattern search, with every special
/// point as good as the best (within 10⁻⁹) put first.
pub fn mean_field_maxima(lattice: &Lattice) -> Vec<(Wavevector, f64)> {
    let d = lattice.dimension();
    let n = match d {
        1 => 48,
        2 => 24,
        _ => 12,
    };
    let grid = full_grid(d, n);
    let values: Vec<f64> = if lattice.sites_per_cell() == 1 {
        // One site per cell on the grid q = k/n: J(q) = Σ_bonds 2J cos(2π (k·δ)/n) takes
        // its cosines from a table of n values (exact symmetry between grid points, and
        // none of the 3·n³ cosines a direct sum costs on the simple cubic lattice).
        let table: Vec<f64> = (0..n)
            .map(|k| (std::f64::consts::TAU * k as f64 / n as f64).cos())
            .collect();
        let n_i = n as i64;
        grid.iter()
            .map(|q| {
                let k = q.map(|c| (c * n as f64).round() as i64);
                lattice
                    .bonds()
                    .iter()
                    .map(|b| {
                        let dot: i64 = (0..3).map(|i| k[i] * i64::from(b.cell[i])).sum();
                        2.0 * b.j * table[dot.rem_euclid(n_i) as usize]
                    })
                    .sum()
            })
            .collect()
    } else {
        grid.iter().map(|q| coupling_top(lattice, q)).collect()
    };
    let mut found: Vec<(Wavevector, f64)> = Vec::new();
    let best = values.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let index = |code: &[usize]| -> usize { code.iter().rev().fold(0, |acc, &c| acc * n + c) };
    for (i, q) in grid.iter().enumerate() {
        if values[i] < best - 0.05 * best.abs().max(1e-12) {
            continue;
        }
        // A local maximum of the grid (ties allowed): no neighbour strictly higher.
        let mut code = [0usize; 3];
        let mut c = i;
        for k in code.iter_mut().take(d) {
            *k = c % n;
            c /= n;
        }
        let higher = (0..d).any(|k| {
            [1, n - 1].iter().any(|&step| {
                let mut nb = code;
                nb[k] = (nb[k] + step) % n;
                values[index(&nb[..d])] > values[i] + 1e-12 * values[i].abs().max(1.0)
            })
        });
        if higher {
            continue;
        }
        let (qr, v) = pattern_search(q, d, 1.0 / n as f64, |p| -coupling_top(lattice, p));
        let v = -v;
        let qr = canonical(&qr, d);
        if !found.iter().any(|(p, _)| same_q(p, &qr, d)) {
            found.push((qr, v));
        }
        if found.len() >= 24 {
            break;
        }
    }
    let top = found.iter().map(|f| f.1).fold(best, f64::max);
    let mut out: Vec<(Wavevector, f64)> = special_points(d)
        .into_iter()
        .map(|q| (q, coupling_top(lattice, &q)))
        .filter(|&(_, v)| v >= top - 1e-9 * top.abs().max(1.0))
        .collect();
    found.sort_by(|a, b| b.1.total_cmp(&a.1));
    for f in found {
        if !out.iter().any(|(p, _)| same_q(p, &f.0, d)) {
            out.push(f);
        }
    }
    out.truncate(6);
    out
}

fn full_grid(d: usize, n: usize) -> Vec<Wavevector> {
    (0..n.pow(d as u32))
        .map(|code| {
            let mut q = [0.0; 3];
            let mut c = code;
            for comp in q.iter_mut().take(d) {
                *comp = (c % n) as f64 / n as f64;
                c /= n;
            }
            q
        })
        .collect()
}

/// Minimise `f` over q from `q0` by a compass search: try ± steps along the axes and the
/// face diagonals, move while it improves, halve the step down to 10⁻⁶.
pub fn pattern_search(
    q0: &Wavevector,
    d: usize,
    step: f64,
    mut f: impl FnMut(&Wavevector) -> f64,
) -> (Wavevector, f64) {
    let mut dirs: Vec<Wavevector> = Vec::new();
    for i in 0..d {
        let mut e = [0.0; 3];
        e[i] = 1.0;
        dirs.push(e);
        for j in i + 1..d {
            let mut p = e;
            p[j] = 1.0;
            dirs.push(p);
            let mut m = e;
            m[j] = -1.0;
            dirs.push(m);
        }
    }
    let mut q = *q0;
    let mut best = f(&q);
    let mut s = step;
    while s > 1e-6 {
        let mut moved = false;
        for dir in &dirs {
            for sign in [1.0, -1.0] {
                let mut p = q;
                for k in 0..d {
                    p[k] += sign * s * dir[k];
                }
                let v = f(&p);
                if v < best - 1e-13 * best.abs().max(1.0) {
                    best = v;
                    q = p;
                    moved = true;
                }
            }
        }
        if !moved {
            s *= 0.5;
        }
    }
    (q, best)
}

/// A wavevector the search watches, with the symmetric subspace its instability is
/// first sought in (`None`: the whole block).
struct Candidate {
    q: Wavevector,
    projection: Option<Projection>,
}

impl Candidate {
    fn value(&self, qh: &QHessian) -> f64 {
        match &self.projection {
            Some(p) => qh.projected_lowest_value(&self.q, p),
            None => qh.lowest_value(&self.q),
        }
    }
    /// [`Candidate::value`], or NaN where one factorisation shows every eigenvalue of
    /// the watched matrix above `s` (on a symmetric subspace at a real q; elsewhere the
    /// value is always computed).
    fn value_unless_above(&self, qh: &QHessian, s: f64) -> f64 {
        match &self.projection {
            Some(p) if is_real(&self.q) => qh
                .projected_lowest_value_below(&self.q, p, s)
                .unwrap_or(f64::NAN),
            _ => self.value(qh),
        }
    }

    fn mode(&self, qh: &QHessian) -> LowestMode {
        match &self.projection {
            Some(p) => qh.projected_lowest(&self.q, p),
            None => qh.lowest(&self.q),
        }
    }
}

/// One candidate's value at a probed temperature: (candidate, value, watched on its
/// symmetric subspace).
type Probed = (usize, f64, bool);

/// A probe's answer while refining: (T, the one candidate followed, (value, lowest
/// candidate, noise)).
type Memo = (f64, Option<usize>, (f64, usize, f64));

/// The stability probe of the dense path: the smallest eigenvalue of `H(q)` over the
/// candidate wavevectors at the disordered state.
struct QProbe<'a, 'l> {
    lattice: &'l Lattice,
    follower: &'l Disordered<'a>,
    /// Real forms of the block's `H(q)` at complex wavevectors.
    forms: &'l RealForms,
    candidates: RefCell<Vec<Candidate>>,
    name: String,
    /// The last temperature probed (successfully), its noise scale and the candidate
    /// that was lowest.
    last: RefCell<(f64, f64, usize)>,
    /// Where the search is (for the observer).
    phase: RefCell<&'static str>,
    /// While refining a root, the one candidate that went soft at the bracket's lower
    /// end (`None`: every candidate).
    only: std::cell::Cell<Option<usize>>,
    /// Every candidate's value at each temperature the step-down probed: (T, [(candidate,
    /// value, watched on its subspace)]), so that the root's search need not probe the
    /// bracket's upper end again for the one candidate it follows.
    probed: RefCell<Vec<(f64, Vec<Probed>)>>,
    /// The values found while refining: (T, the candidate followed, (value, lowest
    /// candidate, noise)); cleared when a round starts again with other candidates.
    memo: RefCell<Vec<Memo>>,
    observe: &'l (dyn Fn(&str) + Sync),
}

impl QProbe<'_, '_> {
    fn evaluate(&self, t: f64) -> Result<(f64, usize, f64), SolveError> {
        let (f, x) = self.follower.solve_for_stability(t)?;
        let qh = QHessian::scaled(&f, self.lattice, &x, self.follower.sector(), false)
            .ok_or_else(|| infeasible(&self.name, t))?
            .with_real_forms(self.forms);
        let noise = SCALED_NOISE;
        let (mut best, mut arg) = (f64::INFINITY, 0);
        // While stepping down, whether a less symmetric mode went soft first is checked
        // at every probe (the instability of a less symmetric mode may be confined to a
        // window of temperatures that a later check would miss); inside the bracket only
        // the candidate soft at its lower end is followed, and every candidate and full
        // block is checked once just above the root found.
        let full_check = *self.phase.borrow() == STEPPING_DOWN;
        let only = self.only.get();
        let mut seen = Vec::new();
        for (i, c) in self.candidates.borrow_mut().iter_mut().enumerate() {
            if only.is_some_and(|o| o != i) {
                continue;
            }
            // A candidate that one factorisation shows above the lowest value so far
            // (less the tie margin) cannot be the lowest: its eigenvalue is not needed
            // (NaN: not computed), unless it may be negative.
            let floor = best - TIE.max(1e-15 * best.abs());
            let mut v = if floor > 0.0 {
                c.value_unless_above(&qh, floor)
            } else {
                c.value(&qh)
            };
            // The symmetric subspace is an accelerator: when the full H(q) is not positive
            // definite although the subspace says stable, a less symmetric mode is the
            // soft one, and this candidate is watched on the full block from now.
            if full_check
                && c.projection.is_some()
                && (v > 0.0 || v.is_nan())
                && !qh.is_positive_definite(&c.q)
            {
                c.projection = None;
                v = c.value(&qh);
            }
            seen.push((i, v, c.projection.is_some()));
            // Earlier candidates (points of high symmetry) win ties.
            if v < best - TIE.max(1e-15 * v.abs()) {
                best = v;
                arg = i;
            }
        }
        if full_check {
            let mut probed = self.probed.borrow_mut();
            probed.retain(|(tp, _)| *tp != t);
            probed.push((t, seen));
        }
        Ok((best, arg, noise))
    }

    /// The value of candidate `i` at a temperature the step-down probed, if it was
    /// watched there as it is now (on its symmetric subspace or on the full block).
    fn probed_value(&self, t: f64, i: usize) -> Option<f64> {
        let whole = self.candidates.borrow().get(i)?.projection.is_none();
        self.probed
            .borrow()
            .iter()
            .filter(|(tp, _)| *tp == t)
            .flat_map(|(_, seen)| seen.iter())
            .find(|&&(j, _, projected)| j == i && projected != whole)
            .map(|&(_, v, _)| v)
    }
}

impl Probe for QProbe<'_, '_> {
    fn value(&mut self, t: f64) -> Result<f64, SolveError> {
        (self.observe)(&format!(
            "{}: T = {}",
            self.phase.borrow(),
            crate::report_num(t)
        ));
        // Brent may ask for a temperature again (its last steps): while refining, the
        // answer for the same temperature and candidates is kept.
        let only = self.only.get();
        let refining = *self.phase.borrow() != STEPPING_DOWN;
        let known = self
            .memo
            .borrow()
            .iter()
            .find(|m| refining && m.0 == t && m.1 == only)
            .map(|m| m.2);
        let (v, arg, noise) = match known {
            Some(r) => r,
            None => self.evaluate(t)?,
        };
        if refining && known.is_none() {
            self.memo.borrow_mut().push((t, only, (v, arg, noise)));
        }
        *self.last.borrow_mut() = (t, noise, arg);
        Ok(v)
    }
    fn noise(&self, t: f64) -> f64 {
        let last = *self.last.borrow();
        if last.0 == t {
            last.1
        } else {
            0.0
        }
    }
    fn name(&self) -> &str {
        &self.name
    }
}

/// Blocks from this many variables factorise `H(q)` at complex wavevectors in its real
/// form ([`RealForms`]).
const REAL_FORMS_FROM: usize = 256;

/// The phase of the search in which every probe checks the full blocks.
const STEPPING_DOWN: &str = "stepping down";

/// Rounding scale of the eigenvalues of the scaled `H(q)` (entries O(1)): below it the
/// sign of the smallest one cannot be trusted.
const SCALED_NOISE: f64 = 1e-12;

/// Differences of scaled eigenvalues below this are ties.
const TIE: f64 = 1e-9;

fn infeasible(level: &str, t: f64) -> SolveError {
    SolveError::TcSearch {
        level: level.to_string(),
        detail: format!("the disordered state at T = {t} left the feasible region"),
    }
}

/// Find the critical temperature of `level` (built from `lattice`) in the field
/// `options.field`, and the order that sets in.
///
/// ```
/// use rungs_lattice::{Lattice, Level};
/// use rungs_solve::{critical_temperature, TcOptions};
/// // The square antiferromagnet: no supercell is needed for its Néel order.
/// let text = "name: af\ndimension: 2\nvectors: [[1.0, 0.0], [0.0, 1.0]]\n\
///             basis: [{name: a}]\ncouplings: {J: -1.0}\nbonds:\n\
///             - {from: a, to: a, cell: [1, 0], coupling: J}\n\
///             - {from: a, to: a, cell: [0, 1], coupling: J}\n";
/// let lattice = Lattice::from_yaml_str(text, "af.yaml").unwrap();
/// let pair = Level::build(&lattice, "pair").unwrap();
/// let cp = critical_temperature(&lattice, &pair, TcOptions::default()).unwrap();
/// // Bethe (1935): Tc = 2|J| / ln(z/(z − 2)) = 2/ln 2, at q = (1/2, 1/2).
/// assert!((cp.tc.unwrap() - 2.0 / 2f64.ln()).abs() < 1e-7);
/// assert_eq!(cp.ordering.unwrap().wavevector, [0.5, 0.5, 0.0]);
/// ```
pub fn critical_temperature(
    lattice: &Lattice,
    level: &Level,
    options: TcOptions,
) -> Result<CriticalPoint, SolveError> {
    critical_temperature_observed(lattice, level, options, &|_| {})
}

/// [`critical_temperature`], telling `observe` where the search is (a short stage
/// description: stepping down, root, wavevector check) for progress displays.
pub fn critical_temperature_observed(
    lattice: &Lattice,
    level: &Level,
    options: TcOptions,
    observe: &(dyn Fn(&str) + Sync),
) -> Result<CriticalPoint, SolveError> {
    if crate::functional::check_size(level).is_err() {
        observe("big level: search on point-group orbits");
        return big_level(lattice, level, options);
    }
    let start = Instant::now();
    let d = lattice.dimension();
    let h = options.field;
    let maxima = mean_field_maxima(lattice);
    let scale = maxima.first().map_or(0.0, |&(_, v)| v).max(1e-12);
    let ops = symmetry::level_group(level, &symmetry::point_group(lattice));
    let follower = Disordered::with_group(level, h, &ops, scale);
    let sector = follower.sector();
    // Real forms pay where factorisations dominate: at a hundred variables the complex
    // factorisation is as fast as forming the real matrix (measured, docs/benchmarks.md).
    let forms = if sector.vars.len() >= REAL_FORMS_FROM {
        RealForms::new(level, &ops, &sector)
    } else {
        RealForms::default()
    };
    let watch = |q: Wavevector| Candidate {
        q,
        projection: Some(Projection::new(level, &ops, &q, &sector)),
    };
    // One candidate per star of the level's group (the others have the same spectrum):
    // on a cubic level the eight special points are four (Γ, X, M, R).
    let mut qs: Vec<Wavevector> = Vec::new();
    // The candidates' stars (with −q), each found once.
    let mut stars: Vec<Vec<Wavevector>> = Vec::new();
    for q in special_points(d)
        .into_iter()
        .chain(maxima.into_iter().map(|(q, _)| q))
    {
        if !stars.iter().any(|s| in_star(s, &q, d)) {
            stars.push(star_under(&ops, &q, d));
            qs.push(q);
        }
    }
    let candidates: Vec<Candidate> = qs.iter().copied().map(watch).collect();
    let mut probe = QProbe {
        lattice,
        follower: &follower,
        forms: &forms,
        candidates: RefCell::new(candidates),
        name: level.name.clone(),
        last: RefCell::new((f64::NAN, 0.0, 0)),
        only: std::cell::Cell::new(None),
        probed: RefCell::new(Vec::new()),
        memo: RefCell::new(Vec::new()),
        phase: RefCell::new(STEPPING_DOWN),
        observe,
    };
    let t_min = scale * options.lowest_fraction;
    // Started just above this level's Tc (a smaller cluster's Tc), the first step is
    // short: a long one would land far inside the ordered region.
    let rules = match options.start_below {
        Some(_) => StepRules {
            first_ratio: 0.98,
            ..StepRules::default()
        },
        None => StepRules::default(),
    };
    // The grid's stars less those of the candidates, whose full H(q) is checked anyway.
    let verify: Vec<Wavevector> = irreducible(
        &ops,
        d,
        zone_grid(d, verification_grid(d)),
        verification_grid(d),
    )
    .into_iter()
    .filter(|g| !stars.iter().any(|s| in_star(s, g, d)))
    .collect();
    let mut t_start = options.start_below.unwrap_or(scale * 1.02);
    let mut notes = Vec::new();
    for _round in 0..4 {
        *probe.phase.borrow_mut() = STEPPING_DOWN;
        probe.memo.borrow_mut().clear();
        let bracket = step_down(&mut probe, t_start, t_min, rules)?;
        let (lo, hi, values) = match bracket {
            Bracket::Found { lo, hi, values } => (lo, hi, values),
            Bracket::Stable { down_to } | Bracket::Noise { at: down_to } => {
                return Ok(no_transition(
                    level,
                    h,
                    down_to,
                    matches!(bracket, Bracket::Noise { .. }),
                    start,
                ));
            }
        };
        *probe.phase.borrow_mut() = "root";
        // Brent follows the candidate that is soft at the lower end; if another one is
        // already unstable at the root it finds, that one went soft first and the
        // bracket is refined again on every candidate.
        let soft = probe.last.borrow().2;
        probe.only.set(Some(soft));
        let hi_value = probe.probed_value(hi, soft).unwrap_or(f64::NAN);
        let mut tc = refine_known(
            &mut probe,
            lo,
            hi,
            (values.0, hi_value),
            options.relative_tolerance,
        )?;
        probe.only.set(None);
        if probe.value(tc)? < -SCALED_NOISE && probe.last.borrow().2 != soft {
            // Another candidate is unstable at this root: it went soft first.
            tc = refine_known(&mut probe, lo, hi, values, options.relative_tolerance)?;
        }
        observe(&format!(
            "checking every wavevector near Tc = {}",
            crate::report_num(tc)
        ));
        // Refine the wavevector at Tc; check every grid wavevector just above Tc.
        let (f, x) = follower.solve_for_stability(tc)?;
        let qh = QHessian::scaled(&f, lattice, &x, follower.sector(), false)
            .ok_or_else(|| infeasible(&level.name, tc))?
            .with_real_forms(&forms);
        let (value_star, arg) =
            {
                let c = probe.candidates.borrow();
                c.iter().enumerate().map(|(i, c)| (c.value(&qh), i)).fold(
                    (f64::INFINITY, 0),
                    |a, b| if b.0 < a.0 - TIE { b } else { a },
                )
            };
        let q_star = probe.candidates.borrow()[arg].q;
        let tol = TIE;
        // The lowest eigenvalue of the full H(q*): the candidate's own value (within the
        // tolerance) unless one factorisation says the full block goes lower, and only
        // then an eigensolve.
        let watched_whole = probe.candidates.borrow()[arg].projection.is_none();
        let lam_star = if watched_whole || qh.is_positive_definite_above(&q_star, value_star - tol)
        {
            value_star
        } else {
            qh.lowest_value(&q_star)
        };
        // A local minimum over q is kept as it is (points of high symmetry stay exact);
        // otherwise the compass search moves it.
        let step = 1.0 / 64.0;
        let neighbours = distinct_neighbours(&ops, &q_star, d, step);
        let lower = |p: &Wavevector| !qh.is_positive_definite_above(p, lam_star - tol);
        let neighbour_lower = if worth_threads(&qh, lam_star - tol) {
            neighbours.par_iter().any(lower)
        } else {
            neighbours.iter().any(lower)
        };
        let (q_ref, lam_ref) =
            if neighbour_lower || !is_real(&q_star) && !exact_fraction(&q_star, d) {
                pattern_search(&q_star, d, step, |q| qh.lowest_value(q))
            } else {
                (q_star, lam_star)
            };
        let mut new_q: Vec<Candidate> = Vec::new();
        if lam_ref < lam_star - tol {
            new_q.push(watch(canonical(&q_ref, d)));
        }
        // The symmetric subspace may have missed a less symmetric mode at q*.
        if lam_star < value_star - tol {
            new_q.push(Candidate {
                q: q_star,
                projection: None,
            });
        }
        let t_check = tc * (1.0 + 1e-6);
        let (fc, xc) = follower.solve_for_stability(t_check)?;
        let qc = QHessian::scaled(&fc, lattice, &xc, follower.sector(), false)
            .ok_or_else(|| infeasible(&level.name, t_check))?
            .with_real_forms(&forms);
        new_q.extend(soft_elsewhere(&qc, &probe.candidates.borrow(), &verify, d));
        if new_q.is_empty() {
            observe("ordering pattern and critical amplitude");
            let chosen = &probe.candidates.borrow()[arg];
            let cp = finish(
                lattice, level, &ops, &forms, &follower, tc, chosen, &mut notes, start,
            )?;
            return Ok(cp);
        }
        watch_also(&mut probe.candidates.borrow_mut(), new_q, d);
        // A wavevector more unstable than the candidates: Tc is higher; search again
        // from above.
        t_start = hi.max(tc) * 1.05;
    }
    Err(SolveError::TcSearch {
        level: level.name.clone(),
        detail: "the ordering wavevector did not settle after four refinements".into(),
    })
}

/// One wavevector of each star among `grid` (the others have the same spectrum): a
/// grid of `n` points per axis, which the point group maps onto itself; each point is
/// keyed by its integer coordinates `n·q mod n`, and a point is kept when neither it nor
/// −it was reached from a point kept before.
fn irreducible(
    ops: &[symmetry::SiteMap],
    d: usize,
    grid: Vec<Wavevector>,
    n: usize,
) -> Vec<Wavevector> {
    let key = |q: &Wavevector| -> [i64; 3] {
        let mut k = [0i64; 3];
        for i in 0..d {
            k[i] = ((q[i] * n as f64).round() as i64).rem_euclid(n as i64);
        }
        k
    };
    let inverses: Vec<[[i32; 3]; 3]> = ops.iter().filter_map(|op| inverse3(&op.rot)).collect();
    let mut seen = foldhash::HashSet::default();
    let mut out: Vec<Wavevector> = Vec::new();
    for q in grid {
        if seen.contains(&key(&q)) {
            continue;
        }
        for inv in &inverses {
            // q' = (R⁻¹)ᵀ q, and −q'.
            let p = act_on_q(inv, &q);
            seen.insert(key(&p));
            seen.insert(key(&p.map(|v| -v)));
        }
        seen.insert(key(&q));
        seen.insert(key(&q.map(|v| -v)));
        out.push(q);
    }
    out
}

fn exact_fraction(q: &Wavevector, d: usize) -> bool {
    q[..d]
        .iter()
        .all(|&c| crate::ordering::best_fraction(c.rem_euclid(1.0)).2 < 1e-9)
}

/// A level too large for the dense engine: the big-level path searches point-group
/// symmetric (uniform) order only, at h = 0. When the lattice's mean-field order is a
/// ±1 pattern at a wavevector with components 0 or 1/2 (Néel order, layered orders,
/// a staggered cell), the level is searched as its gauge-equivalent lattice
/// (`s_i → ε_i s_i`, couplings `J_ij ε_i ε_j`), where that order is uniform: exact at
/// h = 0, and as cheap as the ferromagnet.
fn big_level(
    lattice: &Lattice,
    level: &Level,
    options: TcOptions,
) -> Result<CriticalPoint, SolveError> {
    big_level_search(lattice, &level.name, options, &mut |l: &Lattice| {
        crate::big::critical_temperature_big(l, level, options, options.start_below)
    })
}

/// The h = 0 Tc of big level `name` (clusters over the dense engine's limits), with
/// `search` running the uniform-order search on a lattice: `lattice` itself, or its
/// gauge-equivalent lattice where the mean-field order is a ±1 pattern at a wavevector
/// with components 0 or 1/2 (see [`big_level`]). In a field there is no such search:
/// [`SolveError::FieldUnsupported`], before any work.
pub(crate) fn big_level_search(
    lattice: &Lattice,
    name: &str,
    options: TcOptions,
    search: &mut dyn FnMut(&Lattice) -> Result<CriticalPoint, SolveError>,
) -> Result<CriticalPoint, SolveError> {
    let d = lattice.dimension();
    if options.field != 0.0 {
        return Err(SolveError::FieldUnsupported {
            level: name.to_string(),
            h: options.field,
        });
    }
    let Some((q, v)) = mean_field_maxima(lattice).first().map(|&(q, _)| {
        let m = crate::qspace::coupling_matrix(lattice, &q);
        let eig = m.symmetric_eigen();
        let k = (0..eig.eigenvalues.len())
            .max_by(|&a, &b| eig.eigenvalues[a].total_cmp(&eig.eigenvalues[b]))
            .unwrap_or(0);
        (q, eig.eigenvectors.column(k).into_owned())
    }) else {
        return search(lattice);
    };
    let ordering = Ordering::new(d, q, v.iter().copied().collect());
    let pattern = ordering.pattern();
    let half = (0..d).all(|k| ordering.fractions[k].1 <= 2) && ordering.exact;
    let unit = pattern.iter().all(|p| (p.abs() - 1.0).abs() < 1e-6);
    if ordering.kind() == ModeKind::Uniform || !(half && unit) {
        let mut cp = search(lattice)?;
        if ordering.kind() != ModeKind::Uniform {
            cp.notes.push(format!(
                "levels too large for the dense engine search uniform order only; this lattice's mean-field order is at q = ({}), which cannot be searched at this size: the result says nothing about it",
                fmt_vec(&ordering.wavevector, d)
            ));
        }
        return Ok(cp);
    }
    // ε per site of the cell and per cell parity: J'_b = J_b ε_from ε_to (−1)^{2q·cell}.
    let signs: Vec<f64> = ordering.site_mode.iter().map(|c| c.re.signum()).collect();
    let factors: Vec<f64> = lattice
        .bonds()
        .iter()
        .map(|b| {
            let parity: i64 = (0..d)
                .map(|k| (2.0 * ordering.wavevector[k]).round() as i64 * b.cell[k] as i64)
                .sum();
            let s = signs[b.from] * signs[b.to];
            if parity.rem_euclid(2) == 0 {
                s
            } else {
                -s
            }
        })
        .collect();
    let gauged = lattice.with_scaled_couplings(&factors);
    let mut cp = search(&gauged)?;
    if cp.tc.is_some() {
        let kind = ordering.kind();
        cp.mode = ordering.site_mode.iter().map(|c| c.re).collect();
        cp.kind = kind;
        cp.ordering = Some(ordering);
    }
    cp.notes.push(
        "solved as its gauge-equivalent lattice (s_i → ε_i s_i with the ordering's signs), where this order is uniform: exact at h = 0"
            .into(),
    );
    Ok(cp)
}

/// The wavevectors soft in `qh` that the candidates' symmetric subspaces do not see: a
/// candidate whose full `H(q)` is not positive definite (a less symmetric mode there is
/// the soft one; it is watched on the full block from now), and the first wavevector of
/// the grid `verify` that is unstable, moved to its local minimum by a compass search.
fn soft_elsewhere(
    qh: &QHessian,
    candidates: &[Candidate],
    verify: &[Wavevector],
    d: usize,
) -> Vec<Candidate> {
    let mut new_q: Vec<Candidate> = candidates
        .iter()
        .filter(|c| c.projection.is_some() && !qh.is_positive_definite(&c.q))
        .map(|c| Candidate {
            q: c.q,
            projection: None,
        })
        .collect();
    // The grid's factorisations are independent: spread over the threads (the first
    // unstable wavevector in grid order is kept, as a sequential scan would).
    let soft = |q: &Wavevector| !qh.is_positive_definite(q);
    let unstable = if worth_threads(qh, 0.0) {
        verify.par_iter().position_first(soft)
    } else {
        verify.iter().position(soft)
    };
    if let Some(i) = unstable {
        let (qr, _) = pattern_search(&verify[i], d, 0.5 / verification_grid(d) as f64, |p| {
            qh.lowest_value(p)
        });
        new_q.push(Candidate {
            q: canonical(&qr, d),
            projection: None,
        });
    }
    new_q
}

/// Add `new_q` to the candidates: a wavevector already watched on its symmetric subspace
/// is watched on the full block instead.
fn watch_also(candidates: &mut Vec<Candidate>, new_q: Vec<Candidate>, d: usize) {
    for q in new_q {
        match candidates
            .iter_mut()
            .find(|p| same_q(&p.q, &q.q, d) && p.projection.is_some())
        {
            Some(p) if q.projection.is_none() => p.projection = None,
            Some(_) => {}
            None => candidates.push(q),
        }
    }
}

/// Whether factorisations of `H(q)` (shifted by `shift`) are worth spreading over
/// threads: below order 48 one takes microseconds, less than waking the pool. The order
/// is the one factorised, after the private variables are eliminated (the cube's 109
/// variables leave 13).
fn worth_threads(qh: &QHessian, shift: f64) -> bool {
    qh.factorised_order_above(shift) >= 48
}

/// Points per axis of the verification grid.
fn verification_grid(d: usize) -> usize {
    match d {
        1 => 32,
        2 => 8,
        _ => 6,
    }
}

fn no_transition(
    level: &Level,
    h: f64,
    down_to: f64,
    noise: bool,
    start: Instant,
) -> CriticalPoint {
    let mut notes = Vec::new();
    if noise {
        notes.push(format!(
            "the stability of the disordered state fell within rounding at T = {}: no transition can be resolved below it",
            crate::report_num(down_to)
        ));
    }
    CriticalPoint {
        level: level.name.clone(),
        max_cluster_sites: level.max_cluster_sites(),
        field: h,
        tc: None,
        searched_down_to: down_to,
        mode: vec![0.0; level.sites_per_cell],
        kind: ModeKind::Hidden,
        ordering: None,
        amplitude: None,
        notes,
        seconds: start.elapsed().as_secs_f64(),
    }
}

/// The ordering, amplitude and notes at a found Tc and wavevector.
#[allow(clippy::too_many_arguments)]
fn finish(
    lattice: &Lattice,
    level: &Level,
    ops: &[symmetry::SiteMap],
    forms: &RealForms,
    follower: &Disordered,
    tc: f64,
    chosen: &Candidate,
    notes: &mut Vec<String>,
    start: Instant,
) -> Result<CriticalPoint, SolveError> {
    let d = lattice.dimension();
    let (f, x) = follower.solve_for_stability(tc)?;
    let sector = follower.sector();
    let qh = QHessian::scaled(&f, lattice, &x, sector.clone(), false)
        .ok_or_else(|| infeasible(&level.name, tc))?
        .with_real_forms(forms);
    let q = chosen.q;
    let mode = chosen.mode(&qh);
    let u = &mode.vector;
    // The mode of H(q) itself is D^{-1/2} times that of the scaled matrix.
    let rs = qh.row_scale();
    let site_u: Vec<Complex<f64>> = level
        .site_vars
        .iter()
        .map(|&v| match sector.pos[v] {
            usize::MAX => Complex::new(0.0, 0.0),
            p => u[p] * rs[p],
        })
        .collect();
    let ordering = Ordering::new(d, q, site_u.clone());
    // λ'(Tc) from the Rayleigh quotient of the critical vector at Tc ± δ; with
    // ẽ = D^{-1/2} e, χ = ẽ† H̃⁻¹ ẽ ≈ |ẽ†ũ|² / λ̃, and ẽ†ũ = e†u for u = D^{-1/2} ũ.
    let delta = 2e-4 * tc;
    let rayleigh = |t: f64| -> Result<f64, SolveError> {
        let (f, x) = follower.solve_for_stability(t)?;
        let qh = QHessian::scaled(&f, lattice, &x, follower.sector(), false)
            .ok_or_else(|| infeasible(&level.name, t))?;
        Ok(qh.quadratic_form(&q, u))
    };
    // Central difference: truncation error (δ/T)²·O(1) ~ 10⁻⁸ relative, rounding of the
    // scaled eigenvalue (~10⁻¹⁵) over 2δ·λ' at most ~10⁻⁶ relative for the largest
    // clusters (whose scaled λ' is ~10⁻⁵); two solves, each a step from Tc's state.
    let slope = (rayleigh(tc + delta)? - rayleigh(tc - delta)?) / (2.0 * delta);
    follower.solve(tc)?;
    let s = &ordering.site_mode;
    let norm: f64 = s.iter().map(|c| c.norm_sqr()).sum();
    let proj: Complex<f64> = s.iter().zip(&site_u).map(|(a, b)| a.conj() * b).sum();
    let amplitude = (slope > 0.0 && norm > 0.0).then(|| proj.norm_sqr() / (norm * slope));
    // Degeneracy: the instability as low over the whole zone, or along a line through q.
    let mut ordering = ordering;
    // |λ(p) − λ*| < tol, by two Cholesky factorisations (cheaper than an eigensolve).
    // The upper test first: it fails for almost every p, and one factorisation decides.
    // At q* itself λ = λ* (the checks before ensured that no less symmetric mode there is
    // lower), and no factorisation is needed.
    let level_with = |p: &Wavevector| {
        same_q(p, &q, d)
            || !qh.is_positive_definite_above(p, mode.value + 1e-7)
                && qh.is_positive_definite_above(p, mode.value - 1e-7)
    };
    let zone_flat = d > 0 && zone_grid(d, 4).iter().all(level_with);
    if zone_flat {
        notes.push(
            "the instability is degenerate over the whole zone (a flat band: every wavevector goes soft at this Tc, as for strongly frustrated couplings); the wavevector and pattern reported are one choice among many, and the ordered phase, if any, is not determined by this level".to_string(),
        );
    }
    // One direction of each class under the operations that keep the spectrum about q.
    let line_dirs = one_per_class(&keeping_spectrum(ops, &q), directions(d), 1.0);
    for dir in line_dirs.into_iter().filter(|_| !zone_flat) {
        let flat = [0.05, 0.1, 0.2].iter().all(|&s| {
            let mut p = q;
            for k in 0..d {
                p[k] += s * dir[k];
            }
            level_with(&p)
        });
        if flat {
            ordering.flat_direction = Some(dir);
            notes.push(format!(
                "the instability is degenerate along the line q + s·({}) through the ordering wavevector: every q on it goes soft at this Tc; the commensurate point q = ({}) is reported",
                fmt_vec(&dir, d),
                fmt_vec(&ordering.wavevector, d)
            ));
            break;
        }
    }
    if !ordering.exact {
        notes.push(format!(
            "incommensurate ordering wavevector ({}), approximated by ({}) for the supercell",
            fmt_vec(&q, d),
            fmt_vec(&ordering.rational_wavevector(), d)
        ));
    }
    if ordering.supercell_sites(level.sites_per_cell) > crate::ordering::MAX_SUPERCELL_SITES {
        notes.push(format!(
            "the commensurate supercell {} holds more than {} sites: the ordered phase cannot be followed on it",
            fmt_cell(&ordering.supercell(), d),
            crate::ordering::MAX_SUPERCELL_SITES
        ));
    }
    let star = star_under(ops, &ordering.rational_wavevector(), d);
    if star.len() >= 3 || (follower.field() != 0.0 && has_cubic_invariant(&star, d)) {
        notes.push(format!(
            "this Tc is where the disordered phase becomes unstable (a spinodal); the ordering wavevector has {} symmetry-equivalent partners{}, so the ordered phase may appear by a first-order jump above this Tc — compare free energies with `rungs phases`",
            star.len(),
            if has_cubic_invariant(&star, d) {
                " and admits a cubic invariant"
            } else {
                ""
            }
        ));
    }
    let kind = ordering.kind();
    let mode_real: Vec<f64> = ordering.site_mode.iter().map(|c| c.re).collect();
    Ok(CriticalPoint {
        level: level.name.clone(),
        max_cluster_sites: level.max_cluster_sites(),
        field: follower.field(),
        tc: Some(tc),
        searched_down_to: tc,
        mode: mode_real,
        kind,
        ordering: Some(ordering),
        amplitude,
        notes: std::mem::take(notes),
        seconds: start.elapsed().as_secs_f64(),
    })
}

/// Axes and face diagonals of reciprocal space.
fn directions(d: usize) -> Vec<Wavevector> {
    let mut out = Vec::new();
    for i in 0..d {
        let mut e = [0.0; 3];
        e[i] = 1.0;
        out.push(e);
    }
    for i in 0..d {
        for j in i + 1..d {
            let mut p = [0.0; 3];
            p[i] = 1.0;
            p[j] = 1.0;
            out.push(p);
            p[j] = -1.0;
            out.push(p);
        }
    }
    out
}

/// The compass neighbours `q* ± step·dir` of q* whose spectra may differ: one of each
/// class under [`keeping_spectrum`]. At q* = 0 on a cubic level the 18 neighbours are
/// two classes.
fn distinct_neighbours(
    ops: &[symmetry::SiteMap],
    q_star: &Wavevector,
    d: usize,
    step: f64,
) -> Vec<Wavevector> {
    let deltas: Vec<Wavevector> = directions(d)
        .iter()
        .flat_map(|dir| [1.0, -1.0].map(|sgn| dir.map(|c| sgn * step * c)))
        .collect();
    one_per_class(&keeping_spectrum(ops, q_star), deltas, step)
        .into_iter()
        .map(|delta| {
            let mut p = *q_star;
            for k in 0..d {
                p[k] += delta[k];
            }
            p
        })
        .collect()
}

/// The maps of displacements δ from q* that keep the spectrum of `H(q* + δ)`:
/// `δ ↦ R⁻ᵀδ` for the operations of `ops` that fix q*, and `δ ↦ −R⁻ᵀδ` for those that
/// map q* to −q* (`H(−q) = H(q)*` has the spectrum of H(q)); as (R⁻¹, sign).
fn keeping_spectrum(ops: &[symmetry::SiteMap], q_star: &Wavevector) -> Vec<([[i32; 3]; 3], f64)> {
    ops.iter()
        .filter_map(|op| {
            let sign = if sends_q(&op.rot, q_star, 1) {
                1.0
            } else if sends_q(&op.rot, q_star, -1) {
                -1.0
            } else {
                return None;
            };
            Some((inverse3(&op.rot)?, sign))
        })
        .collect()
}

/// `(R⁻¹)ᵀ v` for `inv` = R⁻¹: the image of a wavevector (or a displacement of one).
fn act_on_q(inv: &[[i32; 3]; 3], v: &Wavevector) -> Wavevector {
    let mut p = [0.0; 3];
    for (i, pi) in p.iter_mut().enumerate() {
        *pi = (0..3).map(|k| f64::from(inv[k][i]) * v[k]).sum();
    }
    p
}

/// One displacement of each class under `maps` (see [`keeping_spectrum`]), in the order
/// given; displacements are compared on a grid of spacing `unit`.
fn one_per_class(
    maps: &[([[i32; 3]; 3], f64)],
    deltas: Vec<Wavevector>,
    unit: f64,
) -> Vec<Wavevector> {
    let key = |v: &Wavevector| v.map(|c| (c / unit).round() as i64);
    let mut seen = foldhash::HashSet::default();
    let mut out = Vec::new();
    for delta in deltas {
        if !seen.insert(key(&delta)) {
            continue;
        }
        for (inv, sign) in maps {
            seen.insert(key(&act_on_q(inv, &delta).map(|c| sign * c)));
        }
        out.push(delta);
    }
    out
}

/// Whether q or −q is in `star` (a star from [`star_under`]).
fn in_star(star: &[Wavevector], q: &Wavevector, d: usize) -> bool {
    star.iter().any(|s| same_q(s, q, d))
}

/// The distinct images of q under the lattice's point group (q ↦ R⁻ᵀ q for cell maps R).
pub fn star_of(lattice: &Lattice, q: &Wavevector) -> Vec<Wavevector> {
    star_under(&symmetry::point_group(lattice), q, lattice.dimension())
}

/// The distinct images of q under `ops`.
fn star_under(ops: &[symmetry::SiteMap], q: &Wavevector, d: usize) -> Vec<Wavevector> {
    let mut out: Vec<Wavevector> = Vec::new();
    for op in ops {
        let Some(inv) = inverse3(&op.rot) else {
            continue;
        };
        let p = canonical(&act_on_q(&inv, q), d);
        let eq = |a: &Wavevector, b: &Wavevector| {
            (0..d).all(|k| crate::qspace::near_integer(a[k] - b[k]))
        };
        if !out.iter().any(|o| eq(o, &p)) {
            out.push(p);
        }
    }
    out
}

/// Whether three members of the star (or their negatives) sum to a reciprocal lattice
/// vector (Landau's condition for a cubic invariant).
fn has_cubic_invariant(star: &[Wavevector], d: usize) -> bool {
    let mut all: Vec<Wavevector> = star.to_vec();
    all.extend(star.iter().map(|q| q.map(|v| -v)));
    for a in &all {
        for b in &all {
            for c in &all {
                if (0..d).all(|k| crate::qspace::near_integer(a[k] + b[k] + c[k]))
                    && !(0..d).all(|k| a[k].abs() < 1e-12)
                {
                    return true;
                }
            }
        }
    }
    false
}

fn inverse3(m: &[[i32; 3]; 3]) -> Option<[[i32; 3]; 3]> {
    let det = m[0][0] * (m[1][1] * m[2][2] - m[1][2] * m[2][1])
        - m[0][1] * (m[1][0] * m[2][2] - m[1][2] * m[2][0])
        + m[0][2] * (m[1][0] * m[2][1] - m[1][1] * m[2][0]);
    if det.abs() != 1 {
        return None;
    }
    let mut inv = [[0i32; 3]; 3];
    for (i, row) in inv.iter_mut().enumerate() {
        for (j, v) in row.iter_mut().enumerate() {
            // cofactor of (j, i)
            let (r1, r2) = ((j + 1) % 3, (j + 2) % 3);
            let (c1, c2) = ((i + 1) % 3, (i + 2) % 3);
            *v = (m[r1][c1] * m[r2][c2] - m[r1][c2] * m[r2][c1]) * det;
        }
    }
    Some(inv)
}

/// `a, b, c` with 6 significant digits, first `d` components.
pub fn fmt_vec(q: &Wavevector, d: usize) -> String {
    q[..d]
        .iter()
        .map(|v| crate::report_num(*v))
        .collect::<Vec<_>>()
        .join(", ")
}

fn fmt_cell(n: &[usize; 3], d: usize) -> String {
    n[..d]
        .iter()
        .map(usize::to_string)
        .collect::<Vec<_>>()
        .join("x")
}

/// Normalise site components (largest |·| = 1, first non-zero positive) and classify
/// (used by the big-level path, which searches q = 0 only).
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn inverse_of_cell_maps() {
        let m = [[0, 1, 0], [-1, 0, 0], [0, 0, 1]];
        let inv = inverse3(&m).unwrap();
        // (M M⁻¹)_ij = Σ_k M_ik M⁻¹_kj
        let product: Vec<i32> = (0..9)
            .map(|ij| (0..3).map(|k| m[ij / 3][k] * inv[k][ij % 3]).sum())
            .collect();
        assert_eq!(product, vec![1, 0, 0, 0, 1, 0, 0, 0, 1]);
    }

    #[test]
    fn compass_neighbours_one_per_class() {
        // The cube's point group Oh: the 18 neighbours of q = 0 along ⟨100⟩ and ⟨110⟩
        // are two classes; at a general point of the zone no operation fixes q or maps it
        // to −q, and all 18 stay (common practice: stars of the cubic group).
        let cubic = "name: sc\ndimension: 3\nvectors: [[1, 0, 0], [0, 1, 0], [0, 0, 1]]\n\
                     basis: [{name: a}]\ncouplings: {J: 1.0}\nbonds:\n\
                     - {from: a, to: a, cell: [1, 0, 0], coupling: J}\n\
                     - {from: a, to: a, cell: [0, 1, 0], coupling: J}\n\
                     - {from: a, to: a, cell: [0, 0, 1], coupling: J}\n";
        let l = Lattice::from_yaml_str(cubic, "sc.yaml").expect("a valid lattice");
        let ops = symmetry::point_group(&l);
        assert_eq!(ops.len(), 48);
        let step = 1.0 / 64.0;
        assert_eq!(distinct_neighbours(&ops, &[0.0; 3], 3, step).len(), 2);
        // At R = (½, ½, ½) as at Γ; at X = (½, 0, 0) the little group D4h splits
        // ⟨100⟩ into the axis and the plane, ⟨110⟩ into those with and those without a
        // component along the axis: four classes.
        assert_eq!(distinct_neighbours(&ops, &[0.5; 3], 3, step).len(), 2);
        assert_eq!(
            distinct_neighbours(&ops, &[0.5, 0.0, 0.0], 3, step).len(),
            4
        );
        assert_eq!(
            distinct_neighbours(&ops, &[0.1, 0.2, 0.3], 3, step).len(),
            18
        );
        // The eight special points are four stars, Γ, X, M and R.
        let x = [0.5, 0.0, 0.0];
        let star_x = star_under(&ops, &x, 3);
        assert!(in_star(&star_x, &[0.0, 0.0, 0.5], 3));
        assert!(!in_star(&star_x, &[0.5, 0.5, 0.0], 3));
        let specials = special_points(3);
        let stars = specials
            .iter()
            .enumerate()
            .filter(|&(i, q)| {
                !specials[..i]
                    .iter()
                    .any(|p| in_star(&star_under(&ops, p, 3), q, 3))
            })
            .count();
        assert_eq!(stars, 4);
        // The lines through Γ: ⟨100⟩ and ⟨110⟩, two classes of the nine directions.
        let maps = keeping_spectrum(&ops, &[0.0; 3]);
        assert_eq!(one_per_class(&maps, directions(3), 1.0).len(), 2);
    }

    /// The square antiferromagnet (J = −1), nearest neighbours only.
    fn square_antiferromagnet() -> Lattice {
        let text = "name: af\ndimension: 2\nvectors: [[1.0, 0.0], [0.0, 1.0]]\n\
                    basis: [{name: a}]\ncouplings: {J: -1.0}\nbonds:\n\
                    - {from: a, to: a, cell: [1, 0], coupling: J}\n\
                    - {from: a, to: a, cell: [0, 1], coupling: J}\n";
        Lattice::from_yaml_str(text, "af.yaml").expect("a valid lattice")
    }

    /// A stand-in for the big-level search: its lattice's couplings, and a fixed Tc.
    fn recording(
        seen: &RefCell<Vec<f64>>,
    ) -> impl FnMut(&Lattice) -> Result<CriticalPoint, SolveError> + '_ {
        move |l: &Lattice| {
            seen.borrow_mut().extend(l.bonds().iter().map(|b| b.j));
            Ok(CriticalPoint {
                level: "big".into(),
                max_cluster_sites: 25,
                field: 0.0,
                tc: Some(2.0),
                searched_down_to: 2.0,
                mode: vec![1.0],
                kind: ModeKind::Uniform,
                ordering: None,
                amplitude: None,
                notes: Vec::new(),
                seconds: 0.0,
            })
        }
    }

    #[test]
    fn a_big_antiferromagnet_is_searched_as_its_gauged_ferromagnet() {
        // Néel order on the square lattice is uniform after s_i → (−1)^(x+y) s_i, which
        // turns every J = −1 into +1 (common practice: the bipartite gauge).
        let seen = RefCell::new(Vec::new());
        let cp = big_level_search(
            &square_antiferromagnet(),
            "big",
            TcOptions::default(),
            &mut recording(&seen),
        )
        .expect("a search");
        assert_eq!(*seen.borrow(), vec![1.0, 1.0]);
        assert_eq!(cp.tc, Some(2.0));
        assert_eq!(cp.kind, ModeKind::Staggered);
        let ordering = cp.ordering.expect("the Néel ordering");
        assert_eq!(ordering.wavevector, [0.5, 0.5, 0.0]);
        assert!(cp.notes.iter().any(|n| n.contains("gauge-equivalent")));
    }

    #[test]
    fn a_big_level_in_a_field_is_refused_before_any_search() {
        let seen = RefCell::new(Vec::new());
        let options = TcOptions {
            field: 0.5,
            ..TcOptions::default()
        };
        let result = big_level_search(
            &square_antiferromagnet(),
            "big",
            options,
            &mut recording(&seen),
        );
        assert!(matches!(
            result,
            Err(SolveError::FieldUnsupported { h, .. }) if h == 0.5
        ));
        assert!(seen.borrow().is_empty(), "no search may run in a field");
    }

    #[test]
    fn grid_keeps_one_of_each_pair() {
        let g = zone_grid(2, 4);
        // 16 points, of which (0,0), (0,½), (½,0), (½,½) are their own negatives.
        assert_eq!(g.len(), (16 - 4) / 2 + 4);
    }
}

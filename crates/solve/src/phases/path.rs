//! One path of a diagram: every phase's branches over the path's grid, the equilibrium
//! at each grid point, the transitions between grid points and the branch ends.
//!
//! 1. The disordered state is solved at every grid point (from the top down along T);
//!    its runs are the stretches where it is stable. Its instability temperature on the
//!    path is where cold starts of the ordered phases begin.
//! 2. Each ordered phase is started cold at a few grid points (the ends first, then the
//!    middle, then the quarters, ...: a phase whose stability window spans more than an
//!    eighth of the path is found) and followed from there both ways until it ends.
//! 3. The equilibrium at a grid point is every branch within 10⁻¹⁰ (relative) of the
//!    lowest free energy. Between two grid points whose equilibria share no branch lies
//!    a transition: branch `a` (below) gives way to branch `b` (above).
//!    * Where both exist, the crossing of `F_a − F_b` is a **first-order** transition.
//!    * Where `a` ends continuously (its order parameter → 0) before `b` exists, or `b`
//!      begins so, it is **second order**, at the zero of the disordered state's
//!      stability over the ordered cell's wavevectors.
//!    * A grid point where two distinct states tie for the lowest F, one shared with the
//!      point below and the other with the point above, is a first-order transition
//!      exactly there (h = 0 of a ferromagnet below Tc).
//! 4. Branch ends that are not transitions are spinodals: the limits of metastability.

use std::cell::RefCell;

use super::candidates::Origin;
use super::follow::{DisorderedWalker, OrderedWalker, Sol, Stop};
use super::locate::{last_good, root};
use super::setup::PhaseDiagramSetup;
use super::{Along, GridPoint, Kind, PathResult, Side, Spinodal, Transition};

/// Most cold starts tried per ordered phase and path.
const MAX_STARTS: usize = 7;

/// Relative tolerance of every located point (first-order crossings, second-order
/// zeros, branch ends).
pub const TOLERANCE: f64 = 1e-10;

/// An order parameter below this at a branch's last point: the branch ended
/// continuously.
const CONTINUOUS: f64 = 1e-3;

/// Whether two states meeting at a crossing of free energies are one state (their
/// order parameters and magnetisations within [`CONTINUOUS`]): the crossing is then a
/// branch merging continuously with another, found within rounding of a second-order
/// point.
fn continuous_meeting(a: &Sol, b: &Sol) -> bool {
    (a.psi - b.psi).abs() < CONTINUOUS && (a.magnetization - b.magnetization).abs() < CONTINUOUS
}

/// A stretch of one phase's branch over consecutive grid points.
struct Run {
    /// 0 for the disordered phase, k + 1 for ordered phase k.
    cand: usize,
    /// First grid index.
    first: usize,
    /// States at grid points `first ..`.
    sols: Vec<Sol>,
    /// States found between grid points (warm starts).
    extra: RefCell<Vec<Sol>>,
    /// Located ends: lower, upper.
    ends: RefCell<[Option<End>; 2]>,
    /// Whether an end is not a branch end but a cut of the disordered runs at h = 0
    /// (ferromagnet below Tc along h): lower, upper.
    cut: [bool; 2],
}

impl Run {
    fn last(&self) -> usize {
        self.first + self.sols.len() - 1
    }
    fn has(&self, i: usize) -> bool {
        i >= self.first && i <= self.last()
    }
    fn at(&self, i: usize) -> &Sol {
        &self.sols[i - self.first]
    }
}

/// A located branch end.
#[derive(Debug, Clone)]
struct End {
    x: f64,
    /// The state there (the last one on the branch).
    sol: Sol,
    /// Whether the order parameter went to zero there.
    continuous: bool,
    /// Whether it is the path's end, not the branch's.
    boundary: bool,
}

/// Where one of two meeting branches ends with its order parameter going to zero (the
/// lower branch's end first): the point of a second-order transition between them.
fn continuous_end(a_end: &Option<End>, b_end: &Option<End>) -> Option<f64> {
    [a_end, b_end]
        .into_iter()
        .flatten()
        .find(|e| e.continuous)
        .map(|e| e.x)
}

/// The work of one path.
struct PathWork<'s> {
    setup: &'s PhaseDiagramSetup<'s>,
    along: Along,
    fixed: f64,
    xs: Vec<f64>,
    dis: DisorderedWalker<'s>,
    walkers: Vec<OrderedWalker<'s>>,
    notes: Vec<String>,
}

/// Compute path `index` of the diagram.
pub fn run(setup: &PhaseDiagramSetup, index: usize) -> PathResult {
    let along = setup.spec.along;
    let fixed = setup.spec.fixed(index);
    let xs = setup.spec.path_values().to_vec();
    let dis = DisorderedWalker::new(setup, along, fixed);
    let mut work = PathWork {
        setup,
        along,
        fixed,
        xs,
        dis,
        walkers: Vec::new(),
        notes: Vec::new(),
    };
    let d_sols = work.disordered_states();
    let hint = work.hint(&d_sols);
    work.walkers = (0..setup.cells.len())
        .map(|k| OrderedWalker::new(setup, k, along, fixed, hint))
        .collect();
    let mut runs = work.disordered_runs(&d_sols);
    for k in 0..setup.cells.len() {
        let found = work.ordered_runs(k);
        runs.extend(found);
    }
    let eq = work.equilibria(&runs);
    let grid = work.grid(&runs, &eq);
    let mut used: Vec<(usize, usize)> = Vec::new();
    let transitions = work.transitions(&runs, &eq, &mut used);
    let mut spinodals = work.spinodals(&runs, &used, &d_sols);
    // Below a second-order transition out of the disordered phase (along T) that phase
    // is unstable, not metastable: an end of a disordered stretch found there (a state
    // judged stable only within rounding, deep in the ordered region) is no spinodal.
    if along == Along::Temperature {
        let lowest_second = transitions
            .iter()
            .filter(|t| t.kind == Kind::Second && t.above == "disordered")
            .map(|t| t.temperature)
            .fold(f64::NEG_INFINITY, f64::max);
        spinodals.retain(|s| !(s.phase == "disordered" && s.temperature < lowest_second));
    }
    let lost: Vec<f64> = grid
        .iter()
        .filter(|g| g.phase.is_none())
        .map(|g| match along {
            Along::Temperature => g.temperature,
            Along::Field => g.field,
        })
        .collect();
    if let Some(first) = lost.first() {
        work.notes.push(format!(
            "no phase could be followed at {} of this path's points ({} = {}{}): the disordered state is unstable, unsolved or of unresolved stability there and no candidate ordered phase converged, so the diagram says nothing about them",
            lost.len(),
            work.variable(),
            crate::report_num(*first),
            if lost.len() > 1 { ", ..." } else { "" }
        ));
    }
    let mut result = PathResult {
        index,
        fixed,
        transitions,
        spinodals,
        grid,
        notes: work.notes,
    };
    drop_non_finite(&mut result);
    result
}

/// Drops every transition, spinodal or grid value that is not a finite number (a
/// branch evaluated where it does not exist), with a note: reports never print NaN.
fn drop_non_finite(r: &mut PathResult) {
    let before = (r.transitions.len(), r.spinodals.len());
    r.transitions.retain(|t| {
        [
            t.temperature,
            t.field,
            t.latent_heat,
            t.magnetization_below,
            t.magnetization_above,
            t.order_parameter_below,
            t.order_parameter_above,
        ]
        .iter()
        .all(|v| v.is_finite())
    });
    r.spinodals
        .retain(|s| s.temperature.is_finite() && s.field.is_finite());
    let mut blanked = 0;
    for g in &mut r.grid {
        let finite =
            g.free_energy.is_none_or(f64::is_finite) && g.magnetization.is_none_or(f64::is_finite);
        if !finite {
            g.phase = None;
            g.free_energy = None;
            g.magnetization = None;
            blanked += 1;
        }
    }
    let dropped = before.0 - r.transitions.len() + before.1 - r.spinodals.len();
    if dropped + blanked > 0 {
        r.notes.push(format!(
            "{dropped} transition(s) or branch end(s) and {blanked} grid point(s) gave a value that is not a finite number and are left out"
        ));
    }
}

impl<'s> PathWork<'s> {
    fn n(&self) -> usize {
        self.xs.len()
    }

    /// Absolute tolerance at x.
    fn tol(&self, x: f64) -> f64 {
        match self.along {
            Along::Temperature => TOLERANCE * x.abs(),
            Along::Field => TOLERANCE * x.abs().max(self.setup.scale),
        }
    }

    /// The disordered state at every grid point (top down).
    fn disordered_states(&mut self) -> Vec<Option<Sol>> {
        let n = self.n();
        let mut out = vec![None; n];
        let mut failed = Vec::new();
        for i in (0..n).rev() {
            out[i] = self.dis.solve(self.xs[i], None);
            if out[i].is_none() {
                failed.push(self.xs[i]);
            }
        }
        if !failed.is_empty() {
            self.notes.push(format!(
                "the disordered state could not be solved at {} of this path's points ({} = {}{})",
                failed.len(),
                self.variable(),
                crate::report_num(failed[failed.len() - 1]),
                if failed.len() > 1 { ", ..." } else { "" }
            ));
        }
        out
    }

    fn variable(&self) -> &'static str {
        match self.along {
            Along::Temperature => "T",
            Along::Field => "h",
        }
    }

    /// Where cold starts of ordered phases far below it begin: along T, the highest
    /// grid temperature above an instability of the disordered state; else the level's
    /// Tc at h = 0.
    fn hint(&self, d_sols: &[Option<Sol>]) -> Option<f64> {
        if self.along == Along::Field {
            return self.setup.tc0;
        }
        let unstable = |s: &Option<Sol>| s.as_ref().is_some_and(|s| !DisorderedWalker::stable(s));
        let n = self.n();
        if n > 0 && unstable(&d_sols[n - 1]) {
            let top = self.xs[n - 1];
            return Some(self.setup.tc0.map_or(top, |t| t.max(top)));
        }
        (0..n.saturating_sub(1))
            .rev()
            .find(|&i| unstable(&d_sols[i]) && !unstable(&d_sols[i + 1]))
            .map(|i| self.xs[i + 1])
            .or(self.setup.tc0)
    }

    /// The disordered runs: stretches of stable states; for a ferromagnet along h below
    /// Tc, cut where h changes sign (the state polarised along −h and the one along +h
    /// are different branches there).
    fn disordered_runs(&self, d_sols: &[Option<Sol>]) -> Vec<Run> {
        let cut_at_zero = self.setup.uniform_order && self.along == Along::Field && {
            let zero = self.dis.solve(0.0, Some(&[[0.0; 3]]));
            zero.is_some_and(|s| !DisorderedWalker::stable(&s))
        };
        let mut runs: Vec<Run> = Vec::new();
        let mut current: Option<Run> = None;
        for (i, s) in d_sols.iter().enumerate() {
            let stable = s.as_ref().filter(|s| DisorderedWalker::stable(s));
            let cut = cut_at_zero && i > 0 && self.xs[i - 1] < 0.0 && self.xs[i] > 0.0;
            match (stable, current.as_mut()) {
                (Some(s), Some(r)) if !cut => r.sols.push(s.clone()),
                (Some(s), _) => {
                    if let Some(mut r) = current.take() {
                        r.cut[1] = cut;
                        runs.push(r);
                    }
                    current = Some(Run {
                        cand: 0,
                        first: i,
                        sols: vec![s.clone()],
                        extra: RefCell::new(Vec::new()),
                        ends: RefCell::new([None, None]),
                        cut: [cut, false],
                    });
                }
                (None, _) => {
                    if let Some(r) = current.take() {
                        runs.push(r);
                    }
                }
            }
        }
        if let Some(r) = current {
            runs.push(r);
        }
        runs
    }

    /// Grid indices in the order cold starts are tried: the ends, the middle, the
    /// quarters, the eighths.
    fn attempts(&self) -> Vec<usize> {
        let n = self.n();
        let mut order: Vec<usize> = Vec::new();
        if n == 0 {
            return order;
        }
        let mut push = |i: usize| {
            if !order.contains(&i) {
                order.push(i);
            }
        };
        push(0);
        push(n - 1);
        for denom in [2usize, 4, 8] {
            for num in (1..denom).step_by(2) {
                push(num * (n - 1) / denom);
            }
        }
        order.truncate(MAX_STARTS);
        order
    }

    /// The runs of ordered phase k.
    fn ordered_runs(&mut self, k: usize) -> Vec<Run> {
        let n = self.n();
        let mut covered = vec![false; n];
        let mut runs = Vec::new();
        for i in self.attempts() {
            if covered[i] {
                continue;
            }
            let Some(start) = self.walkers[k].start(self.xs[i]) else {
                continue;
            };
            let walker = &self.walkers[k];
            let mut up = Vec::new();
            let mut cur = start.clone();
            for j in i + 1..n {
                match walker.walk(&cur, self.xs[j]) {
                    Ok(s) => {
                        up.push(s.clone());
                        cur = s;
                    }
                    Err(_) => break,
                }
            }
            let mut down = Vec::new();
            let mut cur = start.clone();
            for j in (0..i).rev() {
                match walker.walk(&cur, self.xs[j]) {
                    Ok(s) => {
                        down.push(s.clone());
                        cur = s;
                    }
                    Err(_) => break,
                }
            }
            let first = i - down.len();
            down.reverse();
            let mut sols = down;
            sols.push(start);
            sols.extend(up);
            for c in covered.iter_mut().skip(first).take(sols.len()) {
                *c = true;
            }
            runs.push(Run {
                cand: k + 1,
                first,
                sols,
                extra: RefCell::new(Vec::new()),
                ends: RefCell::new([None, None]),
                cut: [false, false],
            });
        }
        runs
    }

    /// Per grid point: the runs within the tie tolerance of the lowest free energy.
    fn equilibria(&self, runs: &[Run]) -> Vec<Vec<usize>> {
        (0..self.n())
            .map(|i| {
                let fmin = runs
                    .iter()
                    .filter(|r| r.has(i))
                    .map(|r| r.at(i).free_energy)
                    .fold(f64::INFINITY, f64::min);
                let tie = 1e-10 * fmin.abs().max(1.0);
                (0..runs.len())
                    .filter(|&r| runs[r].has(i) && runs[r].at(i).free_energy <= fmin + tie)
                    .collect()
            })
            .collect()
    }

    /// The phase name of a state of a run: uniform order and the disordered state of a
    /// uniformly ordering level by the sign of m, others by the phase's name.
    fn class(&self, run: &Run, s: &Sol) -> String {
        let by_sign = || {
            if s.magnetization > 1e-9 {
                "up"
            } else if s.magnetization < -1e-9 {
                "down"
            } else {
                "disordered"
            }
            .to_string()
        };
        let p = &self.setup.phases[run.cand];
        match p.origin {
            Origin::Disordered if self.setup.uniform_order => by_sign(),
            Origin::Ordering if p.pattern.is_uniform() => by_sign(),
            _ => p.name.clone(),
        }
    }

    fn grid(&self, runs: &[Run], eq: &[Vec<usize>]) -> Vec<GridPoint> {
        (0..self.n())
            .map(|i| {
                let (t, h) = self.setup.spec.point(self.fixed, self.xs[i]);
                match eq[i].first() {
                    Some(&r) => {
                        let s = runs[r].at(i);
                        GridPoint {
                            temperature: t,
                            field: h,
                            phase: Some(self.class(&runs[r], s)),
                            free_energy: Some(s.free_energy),
                            magnetization: Some(s.magnetization),
                        }
                    }
                    None => GridPoint {
                        temperature: t,
                        field: h,
                        phase: None,
                        free_energy: None,
                        magnetization: None,
                    },
                }
            })
            .collect()
    }

    /// The state of run `r` at x (continued from its nearest known state).
    fn eval(&self, run: &Run, x: f64) -> Result<Sol, Stop> {
        if run.cand == 0 {
            let s = self.dis.solve(x, None).ok_or(Stop::Fold)?;
            return if DisorderedWalker::stable(&s) {
                Ok(s)
            } else {
                Err(Stop::Fold)
            };
        }
        let from = {
            let extra = run.extra.borrow();
            run.sols
                .iter()
                .chain(extra.iter())
                .min_by(|a, b| (a.x - x).abs().total_cmp(&(b.x - x).abs()))
                .cloned()
        };
        let from = from.ok_or(Stop::Fold)?;
        if from.x == x {
            return Ok(from);
        }
        let r = self.walkers[run.cand - 1].walk(&from, x);
        if let Ok(s) = &r {
            run.extra.borrow_mut().push(s.clone());
        }
        r
    }

    /// The end of run `r` on `side`, located once.
    fn end(&self, run: &Run, side: Side) -> End {
        let slot = match side {
            Side::Lower => 0,
            Side::Upper => 1,
        };
        if let Some(e) = &run.ends.borrow()[slot] {
            return e.clone();
        }
        let (good, bad) = match side {
            Side::Lower => (run.first, run.first.checked_sub(1)),
            Side::Upper => (run.last(), Some(run.last() + 1).filter(|&j| j < self.n())),
        };
        let good_sol = run.at(good).clone();
        let end = match bad {
            None => End {
                x: self.xs[good],
                sol: good_sol,
                continuous: false,
                boundary: true,
            },
            Some(_) if run.cut[slot] => End {
                x: self.xs[good],
                sol: good_sol,
                continuous: false,
                boundary: true,
            },
            Some(b) if run.cand == 0 => {
                // The zero of the disordered state's stability.
                let xb = self.xs[b];
                let f = |x: f64| self.dis.solve(x, None).map(|s| s.stability);
                let x = match f(xb) {
                    Some(fb) => root(
                        &f,
                        self.xs[good].min(xb),
                        self.xs[good].max(xb),
                        if xb > self.xs[good] {
                            good_sol.stability
                        } else {
                            fb
                        },
                        if xb > self.xs[good] {
                            fb
                        } else {
                            good_sol.stability
                        },
                        self.tol(xb),
                    )
                    .unwrap_or(self.xs[good]),
                    None => self.xs[good],
                };
                let sol = self.dis.solve(x, None).unwrap_or(good_sol);
                End {
                    x,
                    sol,
                    continuous: false,
                    boundary: false,
                }
            }
            Some(b) => {
                let walker = &self.walkers[run.cand - 1];
                let first_stop = walker
                    .walk(&good_sol, self.xs[b])
                    .err()
                    .unwrap_or(Stop::Fold);
                let exists = |s: &Sol, x: f64| walker.walk(s, x);
                let ((x, sol), _) = last_good(
                    (self.xs[good], good_sol),
                    (self.xs[b], first_stop),
                    self.tol(self.xs[b]),
                    &exists,
                );
                End {
                    x,
                    continuous: sol.psi < CONTINUOUS,
                    sol,
                    boundary: false,
                }
            }
        };
        run.ends.borrow_mut()[slot] = Some(end.clone());
        end
    }

    /// Whether two states are the same (same phase name, m and F).
    fn same(&self, ra: &Run, a: &Sol, rb: &Run, b: &Sol) -> bool {
        self.class(ra, a) == self.class(rb, b)
            && (a.magnetization - b.magnetization).abs() <= 1e-7
            && (a.free_energy - b.free_energy).abs() <= 1e-10 * a.free_energy.abs().max(1.0)
    }

    /// Every transition of the path, in ascending order; `used` collects the run ends
    /// that are transitions (not spinodals).
    fn transitions(
        &self,
        runs: &[Run],
        eq: &[Vec<usize>],
        used: &mut Vec<(usize, usize)>,
    ) -> Vec<Transition> {
        let n = self.n();
        let mut out: Vec<Transition> = Vec::new();
        for i in 0..n.saturating_sub(1) {
            // A tie at grid point i between the branch shared with i − 1 and the one
            // shared with i + 1.
            if i > 0 {
                if let Some(t) = self.tie_at(runs, eq, i, used) {
                    out.push(t);
                }
            }
            let (sa, sb) = (&eq[i], &eq[i + 1]);
            if sa.is_empty() || sb.is_empty() || sa.iter().any(|r| sb.contains(r)) {
                continue;
            }
            let a = *sa.iter().find(|&&r| runs[r].has(i + 1)).unwrap_or(&sa[0]);
            let b = *sb.iter().find(|&&r| runs[r].has(i)).unwrap_or(&sb[0]);
            out.push(self.between(runs, a, b, i, used));
        }
        out
    }

    /// A first-order transition exactly at grid point i, if the branches shared with
    /// its neighbours are distinct states tying there.
    fn tie_at(
        &self,
        runs: &[Run],
        eq: &[Vec<usize>],
        i: usize,
        used: &mut Vec<(usize, usize)>,
    ) -> Option<Transition> {
        let below: Vec<usize> = eq[i]
            .iter()
            .copied()
            .filter(|r| eq[i - 1].contains(r))
            .collect();
        let above: Vec<usize> = eq[i]
            .iter()
            .copied()
            .filter(|r| eq[i + 1].contains(r))
            .collect();
        if below.is_empty() || above.is_empty() || below.iter().any(|r| above.contains(r)) {
            return None;
        }
        let (ra, rb) = (&runs[below[0]], &runs[above[0]]);
        let (a, b) = (ra.at(i), rb.at(i));
        if self.same(ra, a, rb, b) {
            return None;
        }
        if continuous_meeting(a, b) {
            // A second-order point on (within rounding of) the grid point.
            used.push((below[0], 1));
            used.push((above[0], 0));
            let (lo, hi) = (self.xs[i - 1], self.xs[i + 1]);
            return Some(self.second_order(runs, below[0], above[0], lo, hi, self.xs[i]));
        }
        Some(self.first_order(ra, a, rb, b, None))
    }

    /// The state of run r at x: its located end or a grid state when x is one, else
    /// continued there.
    fn state_at(&self, run: &Run, x: f64, end: Option<&End>) -> Option<Sol> {
        if let Some(e) = end.filter(|e| e.x == x) {
            return Some(e.sol.clone());
        }
        if let Some(s) = run.sols.iter().find(|s| s.x == x) {
            return Some(s.clone());
        }
        self.eval(run, x).ok()
    }

    /// The transition between grid points i and i + 1 from run a (below) to run b.
    fn between(
        &self,
        runs: &[Run],
        a: usize,
        b: usize,
        i: usize,
        used: &mut Vec<(usize, usize)>,
    ) -> Transition {
        let (ra, rb) = (&runs[a], &runs[b]);
        let (x_lo, x_hi) = (self.xs[i], self.xs[i + 1]);
        let a_end = (!ra.has(i + 1)).then(|| self.end(ra, Side::Upper));
        let b_end = (!rb.has(i)).then(|| self.end(rb, Side::Lower));
        let a_top = a_end.as_ref().map_or(x_hi, |e| e.x);
        let b_bot = b_end.as_ref().map_or(x_lo, |e| e.x);
        if b_bot < a_top - self.tol(a_top) {
            // Both exist on [b_bot, a_top]: look for the crossing of F_a − F_b.
            let pair = |x: f64| -> Option<(Sol, Sol)> {
                Some((
                    self.state_at(ra, x, a_end.as_ref())?,
                    self.state_at(rb, x, b_end.as_ref())?,
                ))
            };
            if let (Some((la, lb)), Some((ha, hb))) = (pair(b_bot), pair(a_top)) {
                let g_lo = la.free_energy - lb.free_energy;
                let g_hi = ha.free_energy - hb.free_energy;
                if (g_lo <= 0.0) != (g_hi < 0.0) || g_lo == 0.0 {
                    let g = |x: f64| pair(x).map(|(p, q)| p.free_energy - q.free_energy);
                    if let Some(x) = root(&g, b_bot, a_top, g_lo, g_hi, self.tol(a_top)) {
                        if let Some((sa, sb)) = pair(x) {
                            if continuous_meeting(&sa, &sb) {
                                // The ordered branch merges with the other one at the
                                // crossing: a continuous transition, not a jump.
                                used.push((a, 1));
                                used.push((b, 0));
                                return self.second_order(runs, a, b, x_lo, x_hi, x);
                            }
                            if !self.same(ra, &sa, rb, &sb) {
                                let scale = la.free_energy.abs().max(1.0);
                                let flat = g_lo.abs().max(g_hi.abs()) <= 1e-9 * scale;
                                let note = flat.then(|| {
                                    "the two branches' free energies agree within 10⁻⁹ (relative) across the whole bracket: where they cross is decided by rounding, so this transition's position and even its existence are not determined by this level".to_string()
                                });
                                return self.first_order(ra, &sa, rb, &sb, note);
                            }
                        }
                    }
                } else if let Some(at) = continuous_end(&a_end, &b_end) {
                    // One branch vanishes continuously where the other begins, the
                    // free energies equal within rounding there: second order.
                    used.push((a, 1));
                    used.push((b, 0));
                    return self.second_order(runs, a, b, x_lo, x_hi, at);
                } else if g_lo < 0.0 {
                    // a stays lower until it ends.
                    if let Some(e) = &a_end {
                        used.push((a, 1));
                        if e.continuous {
                            used.push((b, 0));
                            return self.second_order(runs, a, b, x_lo, x_hi, e.x);
                        }
                        return self.fold_jump(ra, &e.sol, rb, e.x, Side::Upper);
                    }
                } else if let Some(e) = &b_end {
                    // b is already lower where it begins.
                    used.push((b, 0));
                    if e.continuous {
                        used.push((a, 1));
                        return self.second_order(runs, a, b, x_lo, x_hi, e.x);
                    }
                    return self.fold_jump(rb, &e.sol, ra, e.x, Side::Lower);
                }
            }
        }
        // No overlap: a ends before b begins.
        if let Some(at) = continuous_end(&a_end, &b_end) {
            used.push((a, 1));
            used.push((b, 0));
            return self.second_order(runs, a, b, x_lo, x_hi, at);
        }
        let sa = a_end
            .as_ref()
            .map_or_else(|| ra.at(i).clone(), |e| e.sol.clone());
        let sb = b_end
            .as_ref()
            .map_or_else(|| rb.at(i + 1).clone(), |e| e.sol.clone());
        let mut t = self.first_order(ra, &sa, rb, &sb, None);
        let (tt, hh) = self.setup.spec.point(self.fixed, 0.5 * (a_top + b_bot));
        t.temperature = tt;
        t.field = hh;
        t.note = Some(format!(
            "no phase compared is stable between {v} = {} and {v} = {}: the transition is placed between them, and a phase may be missing from the candidates",
            crate::report_num(a_top),
            crate::report_num(b_bot),
            v = self.variable()
        ));
        t
    }

    /// A first-order transition between states a (below) and b (above) at one point.
    fn first_order(
        &self,
        ra: &Run,
        a: &Sol,
        rb: &Run,
        b: &Sol,
        note: Option<String>,
    ) -> Transition {
        Transition {
            temperature: a.t,
            field: a.h,
            kind: Kind::First,
            below: self.class(ra, a),
            above: self.class(rb, b),
            latent_heat: a.t * (b.entropy - a.entropy),
            magnetization_below: a.magnetization,
            magnetization_above: b.magnetization,
            order_parameter_below: a.psi,
            order_parameter_above: b.psi,
            note,
        }
    }

    /// A jump at the end x of a branch that is still the lowest there (`side`: which
    /// end): from its last state `e` onto the other run.
    fn fold_jump(&self, r_end: &Run, e: &Sol, r_other: &Run, x: f64, side: Side) -> Transition {
        let other = self.eval(r_other, x).ok().unwrap_or_else(|| e.clone());
        let mut t = match side {
            Side::Upper => self.first_order(r_end, e, r_other, &other, None),
            Side::Lower => self.first_order(r_other, &other, r_end, e, None),
        };
        let (tt, hh) = self.setup.spec.point(self.fixed, x);
        t.temperature = tt;
        t.field = hh;
        t.note = Some(format!(
            "the {} branch ends here (a limit of metastability, or where it could no longer be solved) while its free energy is the lowest found: the jump is placed at its end and may be an artefact of a branch lost",
            self.class(r_end, e)
        ));
        t
    }

    /// A second-order transition between runs a and b in (x_lo, x_hi): at the zero of
    /// the disordered state's stability over the ordered cell's wavevectors, or at the
    /// continuous end `at` when no disordered run is involved.
    fn second_order(
        &self,
        runs: &[Run],
        a: usize,
        b: usize,
        x_lo: f64,
        x_hi: f64,
        at: f64,
    ) -> Transition {
        let (ra, rb) = (&runs[a], &runs[b]);
        let ordered = if ra.cand != 0 { ra } else { rb };
        let mut x = at;
        if ra.cand == 0 || rb.cand == 0 {
            let qs = &self.setup.cells[ordered.cand - 1].wavevectors;
            let f = |x: f64| self.dis.solve(x, Some(qs)).map(|s| s.stability);
            if let (Some(f_lo), Some(f_hi)) = (f(x_lo), f(x_hi)) {
                if let Some(r) = root(&f, x_lo, x_hi, f_lo, f_hi, self.tol(x_hi)) {
                    x = r;
                }
            }
        }
        let (t, h) = self.setup.spec.point(self.fixed, x);
        let dis = self.dis.solve(x, None);
        let m = dis
            .as_ref()
            .map_or_else(|| ordered.sols[0].magnetization, |s| s.magnetization);
        let name = |r: &Run, fallback: &Sol| match (&dis, r.cand) {
            (Some(s), 0) => self.class(r, s),
            _ => self.class(r, fallback),
        };
        Transition {
            temperature: t,
            field: h,
            kind: Kind::Second,
            below: name(ra, ra.sols.last().unwrap_or(&ra.sols[0])),
            above: name(rb, &rb.sols[0]),
            latent_heat: 0.0,
            magnetization_below: m,
            magnetization_above: m,
            order_parameter_below: 0.0,
            order_parameter_above: 0.0,
            note: None,
        }
    }

    /// Branch ends that are neither the path's ends nor transitions.
    fn spinodals(
        &mut self,
        runs: &[Run],
        used: &[(usize, usize)],
        d_sols: &[Option<Sol>],
    ) -> Vec<Spinodal> {
        let mut out = Vec::new();
        let mut precision_ends = Vec::new();
        for (r, run) in runs.iter().enumerate() {
            // A ferromagnet's disordered runs along h duplicate its polarised branches.
            if run.cand == 0 && self.setup.uniform_order && self.along == Along::Field {
                continue;
            }
            for (slot, side) in [(0usize, Side::Lower), (1, Side::Upper)] {
                if used.contains(&(r, slot)) {
                    continue;
                }
                let at_path_end = match side {
                    Side::Lower => run.first == 0,
                    Side::Upper => run.last() + 1 == self.n(),
                };
                if at_path_end || run.cut[slot] {
                    continue;
                }
                let e = self.end(run, side);
                // A branch whose order parameter vanishes merges with the disordered
                // state there: a bifurcation, not a limit of metastability.
                if e.boundary || e.continuous {
                    continue;
                }
                // Past an ordered branch's end the disordered state's stability is not
                // resolved either: the arithmetic, not metastability, ended the branch.
                let beyond = match side {
                    Side::Lower => run.first.checked_sub(1),
                    Side::Upper => Some(run.last() + 1),
                };
                let unresolved = run.cand > 0
                    && beyond
                        .and_then(|i| d_sols.get(i))
                        .is_some_and(|d| d.as_ref().is_some_and(|d| d.unresolved));
                if unresolved {
                    precision_ends.push((self.class(run, &e.sol), e.x));
                    continue;
                }
                let (t, h) = self.setup.spec.point(self.fixed, e.x);
                out.push(Spinodal {
                    temperature: t,
                    field: h,
                    phase: self.class(run, &e.sol),
                    side,
                });
            }
        }
        for (phase, x) in precision_ends {
            self.notes.push(format!(
                "the {phase} branch could not be followed beyond {} = {}, where the disordered state's stability is below double-precision resolution too: the cluster probabilities there span more decades than doubles resolve, so this end is a limit of the arithmetic, not of metastability, and the grid points past it have no phase",
                self.variable(),
                crate::report_num(x)
            ));
        }
        out.sort_by(|a, b| {
            let key = |s: &Spinodal| match self.along {
                Along::Temperature => s.temperature,
                Along::Field => s.field,
            };
            key(a).total_cmp(&key(b))
        });
        out
    }
}

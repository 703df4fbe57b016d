//! Following the equilibrium along a temperature path, in the phase that continues from
//! the point before: the disordered state, or the ordered phase of the level's
//! ordering pattern on the cell that holds it.
//!
//! * The **disordered** state is solved on the primitive level ([`Disordered`]) and is
//!   kept while `H(q)` is positive definite at every wavevector the cell can hold.
//! * Where it is unstable, the **ordered** phase starts from product states of the
//!   ordering pattern on the cell and is followed by warm starts, in the flip basis of
//!   its own sign pattern (so that at low temperature every cluster probability keeps
//!   its relative precision). It ends where its order parameter vanishes (a continuous
//!   transition) or where Newton from the warm start falls onto the disordered state
//!   (the end of a metastable branch).
//! * A temperature too far from the last one is reached in geometric sub-steps.
//!
//! Because each point continues the branch before it, a path that cools through a
//! first-order transition stays disordered until the disordered state's own
//! instability, and one that heats stays ordered until the ordered branch ends: the
//! hysteresis loop of the approximation.

use std::sync::OnceLock;

use rungs_lattice::{Lattice, Level};

use crate::disordered::Disordered;
use crate::equilibrium::{minimise, NewtonOptions};
use crate::error::SolveError;
use crate::functional::{Basis, Block, Functional};
use crate::ordering::{amplitude, Ordering};
use crate::qspace::{QHessian, Wavevector};
use crate::supercell::{expand, variable_map};
use crate::thermo::{observables_at, Observables};

/// Order parameters below this are zero: the branch has reached the disordered state.
pub const ORDER_EPSILON: f64 = 1e-7;

/// Rounding scale of the scaled Hessian's eigenvalues (entries O(1)).
pub(crate) const STABILITY_NOISE: f64 = 1e-12;

/// Whether a stability `lowest` (scaled, see [`STABILITY_NOISE`]) found at `x` stays
/// unresolved: within rounding of zero here and at x ± 10⁻⁶ max(|x|, 1) (`at` gives it
/// there). A point where λ merely crosses zero (a grid point on a second-order line) is
/// resolved a millionth away; at low T in a field a cluster approximation's symmetric
/// state (a mixture of ordered domains) keeps λ at rounding over a whole range.
pub(crate) fn unresolved_stability(lowest: f64, x: f64, at: impl Fn(f64) -> Option<f64>) -> bool {
    let dx = 1e-6 * x.abs().max(1.0);
    lowest.abs() <= STABILITY_NOISE
        && ![x + dx, x - dx]
            .iter()
            .any(|&y| at(y).is_some_and(|l| l > STABILITY_NOISE))
}

/// Which branch a point is on.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Branch {
    /// Translation-invariant (paramagnet at h = 0, field-polarised in a field).
    Disordered,
    /// The ordered phase of the cell's pattern.
    Ordered,
}

impl Branch {
    /// A lower-case word for reports.
    pub fn as_str(self) -> &'static str {
        match self {
            Branch::Disordered => "disordered",
            Branch::Ordered => "ordered",
        }
    }
}

/// The cell a path is followed on: the primitive cell or the supercell of the ordering.
#[derive(Debug, Clone)]
pub struct PhaseCell {
    /// Cells along each axis.
    pub n: [usize; 3],
    /// The lattice seen with that cell (the primitive lattice when n = 1).
    pub lattice: Lattice,
    /// The level on it.
    pub level: Level,
    /// For each variable of `level`, the primitive variable it is a translate of.
    pub map: Vec<usize>,
    /// The ordering pattern on the cell's sites (largest |·| = 1).
    pub pattern: Vec<f64>,
    /// The ordering followed, if any.
    pub ordering: Option<Ordering>,
    /// The wavevectors commensurate with the cell (where its disordered state can go
    /// unstable to order the cell can hold).
    pub wavevectors: Vec<Wavevector>,
    /// Cautions that hold for the whole path.
    pub notes: Vec<String>,
    /// Whether some maximal cluster holds a site together with all its neighbours (the
    /// centre of a 3×3 block): at low temperature that site's flip is nearly forced
    /// when its neighbours are flipped, and the cluster probabilities span more
    /// decades than doubles resolve.
    pub interior_sites: bool,
}

impl PhaseCell {
    /// The cell of `n` primitive cells for the level `name` of `lattice` with the given
    /// ordering (its pattern evaluated on the cell); without an ordering the pattern is
    /// uniform.
    pub fn new(
        lattice: &Lattice,
        primitive: &Level,
        ordering: Option<&Ordering>,
        n: [usize; 3],
    ) -> Result<PhaseCell, SolveError> {
        let d = lattice.dimension();
        let (cell_lattice, level) = if n == [1, 1, 1] {
            (lattice.clone(), primitive.clone())
        } else {
            let l = lattice.supercell(n).map_err(|e| SolveError::TcSearch {
                level: primitive.name.clone(),
                detail: e.to_string(),
            })?;
            let lv = Level::build(&l, &primitive.name).map_err(|e| SolveError::TcSearch {
                level: primitive.name.clone(),
                detail: e.to_string(),
            })?;
            (l, lv)
        };
        let map = variable_map(primitive, &level, n).ok_or_else(|| SolveError::TcSearch {
            level: primitive.name.clone(),
            detail: "the supercell level does not correspond to the primitive one".into(),
        })?;
        let nb = lattice.sites_per_cell();
        let mut notes = Vec::new();
        let pattern = match ordering {
            Some(o) if fits(o, n, d) => pattern_on(o, n, nb),
            Some(o) => {
                notes.push(format!(
                    "the level's ordering wavevector ({}) does not fit the {} cell: only order that fits it is followed, and the order parameter is that of uniform order",
                    crate::tc::fmt_vec(&o.wavevector, d),
                    cell_name(n, d)
                ));
                vec![1.0; level.sites_per_cell]
            }
            None => vec![1.0; level.sites_per_cell],
        };
        let mut wavevectors = Vec::new();
        for k in 0..n[2] {
            for j in 0..n[1] {
                for i in 0..n[0] {
                    wavevectors.push([
                        i as f64 / n[0] as f64,
                        j as f64 / n[1] as f64,
                        k as f64 / n[2] as f64,
                    ]);
                }
            }
        }
        let interior_sites = has_interior_site(lattice, primitive);
        Ok(PhaseCell {
            n,
            lattice: cell_lattice,
            level,
            map,
            pattern,
            ordering: ordering.cloned(),
            wavevectors,
            notes,
            interior_sites,
        })
    }

    /// Sites of the cell.
    pub fn sites(&self) -> usize {
        self.level.sites_per_cell
    }
}

/// Whether a maximal cluster of `level` holds some site together with more than half of
/// its coupling weight Σ|J| (the centre of a 3×3 block, of a star, any site of a
/// honeycomb hexagon): given its cluster neighbours flipped, that site's own flip is
/// nearly forced at low temperature, and the cluster probabilities then cancel by the
/// exponential of that energy.
fn has_interior_site(lattice: &Lattice, level: &Level) -> bool {
    level.maximal.iter().any(|c| {
        c.sites().any(|(a, cell)| {
            let (mut inside, mut total) = (0.0, 0.0);
            for &(b, off, j) in &lattice.neighbours(a) {
                total += j.abs();
                if c.contains(b, [cell[0] + off[0], cell[1] + off[1], cell[2] + off[2]]) {
                    inside += j.abs();
                }
            }
            inside > 0.5 * total + 1e-12
        })
    })
}

/// Whether the ordering's wavevector is commensurate with a cell of n cells.
fn fits(o: &Ordering, n: [usize; 3], d: usize) -> bool {
    (0..d).all(|k| n[k].is_multiple_of(o.fractions[k].1))
}

/// The ordering's pattern on a cell of n primitive cells (n a multiple of its own).
fn pattern_on(o: &Ordering, n: [usize; 3], nb: usize) -> Vec<f64> {
    let own = o.supercell();
    let p = o.pattern();
    let mut out = Vec::with_capacity(nb * n.iter().product::<usize>());
    for k in 0..n[2] {
        for j in 0..n[1] {
            for i in 0..n[0] {
                let (ii, jj, kk) = (i % own[0], j % own[1], k % own[2]);
                let base = nb * (ii + own[0] * (jj + own[1] * kk));
                out.extend_from_slice(&p[base..base + nb]);
            }
        }
    }
    out
}

/// `2x2`-style name of a cell.
pub fn cell_name(n: [usize; 3], d: usize) -> String {
    n[..d.max(1)]
        .iter()
        .map(usize::to_string)
        .collect::<Vec<_>>()
        .join("x")
}

/// One solved point of a path.
#[derive(Debug, Clone)]
pub struct PhasePoint {
    /// The branch.
    pub branch: Branch,
    /// Observables per site; sublattice magnetisations and bond correlations on the
    /// path's cell.
    pub observables: Observables,
    /// Amplitude of the cell's pattern in the sublattice magnetisations (|m| for
    /// uniform order, the staggered magnetisation for Néel order; 0 when disordered).
    pub order_parameter: f64,
    /// Cautions about this point (negative entropy, instability the cell cannot hold).
    pub notes: Vec<String>,
}

/// A solved disordered state, before its observables are computed (they do not exist
/// where it is unstable).
struct DisorderedState<'c> {
    f: Functional<'c>,
    x: Vec<f64>,
    free_energy: f64,
    m_cell: Vec<f64>,
    stable: bool,
    /// Its stability is within rounding (|λ| ≤ [`STABILITY_NOISE`]): the sign is not
    /// resolved.
    at_rounding: bool,
    notes: Vec<String>,
}

/// Why a path's ordered branch could not be followed below some temperature.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Floor {
    /// The cell has sites held by most of their neighbours (flips nearly forced).
    InteriorSites,
    /// Neither the ordered branch nor the disordered state's stability is resolved.
    Unresolved,
}

/// A Tc computed on demand (see [`PhaseFollower::cold_start_below`]).
type ColdTc<'c> = Box<dyn Fn() -> Option<f64> + Send + Sync + 'c>;

/// The last state of a path.
#[derive(Debug, Clone)]
enum Last {
    Disordered,
    Ordered {
        t: f64,
        signs: Vec<f64>,
        x: Vec<f64>,
    },
}

/// Follows one level along temperatures at a fixed field.
pub struct PhaseFollower<'c> {
    primitive_lattice: &'c Lattice,
    cell: &'c PhaseCell,
    field: f64,
    disordered: Disordered<'c>,
    last: Option<Last>,
    /// A temperature near where the order sets in (a sweep: the level's Tc at h = 0),
    /// where known: below about it an ordered phase may coexist with the disordered one
    /// (first points compare both).
    tc_hint: Option<f64>,
    /// Where a cold ordered start far below the order begins (the level's Tc at this
    /// field when known, else `tc_hint`), computed when first needed: see
    /// [`PhaseFollower::cold_start_below`].
    cold_tc: Option<ColdTc<'c>>,
    /// `cold_tc`'s value once computed.
    cold_hint: OnceLock<Option<f64>>,
    /// The lowest temperature the ordered branch was followed to, when it could not be
    /// followed further (double precision exhausted), with the reason.
    floor: Option<(f64, Floor)>,
}

impl<'c> PhaseFollower<'c> {
    /// A follower of `primitive` (of `primitive_lattice`) on `cell` at field `field`.
    pub fn new(
        primitive_lattice: &'c Lattice,
        primitive: &'c Level,
        cell: &'c PhaseCell,
        field: f64,
        tc_hint: Option<f64>,
    ) -> PhaseFollower<'c> {
        PhaseFollower {
            primitive_lattice,
            cell,
            field,
            disordered: Disordered::new(primitive_lattice, primitive, field),
            last: None,
            tc_hint,
            cold_tc: None,
            cold_hint: OnceLock::new(),
            floor: None,
        }
    }

    /// Cold ordered starts far below the order begin just below the Tc that `tc` gives
    /// (the level's Tc at this field, which a field can lower far below the h = 0 value: a
    /// start at 0.8 Tc(0) would lie above the ordered region and find nothing); `tc` runs
    /// only when an ordered state is first started, at most once. `None` from it keeps
    /// the h = 0 Tc.
    pub fn cold_start_below(
        mut self,
        tc: impl Fn() -> Option<f64> + Send + Sync + 'c,
    ) -> PhaseFollower<'c> {
        self.cold_tc = Some(Box::new(tc));
        self.cold_hint = OnceLock::new();
        self
    }

    /// The Tc below which cold ordered starts begin near it (see
    /// [`PhaseFollower::cold_start_below`]).
    fn cold_hint(&self) -> Option<f64> {
        match &self.cold_tc {
            None => self.tc_hint,
            Some(tc) => *self.cold_hint.get_or_init(|| tc().or(self.tc_hint)),
        }
    }

    /// The equilibrium at `t`, continuing the branch of the point before.
    pub fn next(&mut self, t: f64) -> Result<PhasePoint, SolveError> {
        if !(t.is_finite() && t > 0.0) {
            return Err(SolveError::BadTemperature { t });
        }
        if let Some((floor, why)) = self.floor {
            if t < floor {
                return Err(match why {
                    Floor::InteriorSites => self.precision_limit(floor, t),
                    Floor::Unresolved => self.rounding_limit(Some(floor), t),
                });
            }
        }
        // The ordered branch was lost on cooling below this temperature.
        let mut lost_below = None;
        if let Some(Last::Ordered { t: tw, signs, x }) = self.last.clone() {
            match self.continue_ordered(tw, &signs, &x, t) {
                Ok((signs, x)) => {
                    if let Some(p) = self.ordered_point(t, &signs, &x)? {
                        self.last = Some(Last::Ordered { t, signs, x });
                        return Ok(p);
                    }
                }
                Err(_) if t < tw && self.cell.interior_sites => {
                    self.floor = Some((tw, Floor::InteriorSites));
                    return Err(self.precision_limit(tw, t));
                }
                Err(_) => lost_below = (t < tw).then_some(tw),
            }
        }
        let cold = self.last.is_none();
        let dis = match self.disordered_state(t) {
            Ok(d) => d,
            // Deep in an ordered phase (below the level's Tc) the disordered state may
            // not be reachable; the ordered phase is then the answer if it exists.
            // Without a Tc below t an ordered state could not be checked against the
            // disordered one, and is not reported.
            Err(e) if !self.tc_hint.is_some_and(|tc| t < tc) => return Err(e),
            Err(e) => {
                return match self.start_ordered(t, None)? {
                    Some((signs, x, p)) => {
                        self.last = Some(Last::Ordered { t, signs, x });
                        Ok(p)
                    }
                    None => Err(e),
                }
            }
        };
        if let Some(tw) = lost_below.filter(|_| dis.stable && dis.at_rounding) {
            // Neither state is resolved: the ordered branch could not be followed down
            // to t and the disordered state is stable only within rounding. Its C and χ
            // (solves with a Hessian singular to double precision) would be noise, so no
            // state is reported here or below.
            self.floor = Some((tw, Floor::Unresolved));
            return Err(self.rounding_limit(Some(tw), t));
        }
        if dis.stable {
            // A first point: the ordered phase may coexist (first order) near and
            // somewhat above the level's Tc (the disordered state's spinodal); well above
            // it no ordered state survives and the search is not tried.
            let near = self.tc_hint.is_some_and(|tc| t < 1.25 * tc);
            if cold && near && self.cell.ordering.is_some() {
                // A first point: the ordered phase may coexist (first order); the
                // lower free energy is the equilibrium. Where the disordered state's
                // stability is not resolved, a tie goes to the ordered state (at low T a
                // cluster approximation's symmetric state can be a mixture of the ordered
                // domains, equal in F to rounding), and without an ordered state neither
                // is reported.
                let tie = if dis.at_rounding { 1e-12 } else { -1e-12 };
                match self.start_ordered(t, Some(&dis))? {
                    Some((signs, x, p)) if p.observables.free_energy < dis.free_energy + tie => {
                        self.last = Some(Last::Ordered { t, signs, x });
                        return Ok(p);
                    }
                    None if dis.at_rounding => return Err(self.rounding_limit(None, t)),
                    _ => {}
                }
            }
            let p = self.disordered_point(&dis)?;
            self.last = Some(Last::Disordered);
            return Ok(p);
        }
        match self.start_ordered(t, Some(&dis))? {
            Some((signs, x, p)) => {
                self.last = Some(Last::Ordered { t, signs, x });
                Ok(p)
            }
            None => Err(SolveError::NoStableState {
                level: self.cell.level.name.clone(),
                t,
                h: self.field,
            }),
        }
    }

    /// The error of a level whose ordered branch, started near Tc, cannot be followed
    /// down to t.
    fn precision_limit_from(&self, tc: f64, t: f64) -> SolveError {
        SolveError::PrecisionLimit {
            level: self.cell.level.name.clone(),
            t,
            h: self.field,
            detail: format!(
                "the ordered state could not be followed from near Tc = {} down to this temperature: this level's clusters hold some sites together with most of their neighbours, whose flips are then nearly forced at low temperature, and its cluster probabilities span more decades than double precision resolves; levels without such sites (pair, plaquette, ...) reach any temperature; a path that cools step by step gets as far as the precision allows",
                crate::report_num(tc)
            ),
        }
    }

    /// The error where no ordered state is resolved (lost on cooling below `tw`, or not
    /// found by a cold start) and the disordered state's stability is not resolved
    /// either.
    fn rounding_limit(&self, tw: Option<f64>, t: f64) -> SolveError {
        let ordered = match tw {
            Some(tw) => format!(
                "the ordered state could not be followed below T = {}",
                crate::report_num(tw)
            ),
            None => "no ordered state could be started here".to_string(),
        };
        SolveError::PrecisionLimit {
            level: self.cell.level.name.clone(),
            t,
            h: self.field,
            detail: format!(
                "{ordered}, and the disordered state's stability is below double-precision resolution, so neither is reported: the cluster probabilities span more decades than double precision resolves (in a field the two sublattices' excitations differ in energy, and the ratio of their Boltzmann factors falls below 10⁻¹⁶), and this level's free energy barely tells a single ordered domain from a mixture of domains at low temperature; a path that cools from the ordered phase gets as far as the precision allows"
            ),
        }
    }

    /// The error of a level whose ordered branch cannot be followed below `tw`.
    fn precision_limit(&self, tw: f64, t: f64) -> SolveError {
        SolveError::PrecisionLimit {
            level: self.cell.level.name.clone(),
            t,
            h: self.field,
            detail: format!(
                "the ordered state could not be followed below T = {}: this level's clusters hold some sites together with most of their neighbours, whose flips are then nearly forced at low temperature, and its cluster probabilities span more decades than double precision resolves; levels without such sites (pair, plaquette, ...) reach any temperature",
                crate::report_num(tw)
            ),
        }
    }

    /// The disordered state at t, its free energy per site, its sublattice
    /// magnetisations on the cell, and whether it is stable at every wavevector the cell
    /// holds.
    fn disordered_state(&mut self, t: f64) -> Result<DisorderedState<'c>, SolveError> {
        let (f, x) = self.disordered.solve(t)?;
        let sector = self.disordered.sector();
        // Stability in correlations where the field's flip basis would press the scaled
        // spectrum below its rounding (`Disordered::solve_for_stability`).
        let view = self.disordered.in_correlations(&f, &x);
        let (fq, xq) = view.as_ref().map_or((&f, &x[..]), |(g, y)| (g, &y[..]));
        let qh = QHessian::scaled(fq, self.primitive_lattice, xq, sector, fq.is_precise())
            .ok_or_else(|| SolveError::InfeasibleStart {
                level: self.cell.level.name.clone(),
                t,
                h: self.field,
            })?;
        // The smallest scaled eigenvalue over the cell's wavevectors decides; within its
        // rounding the sign says nothing, and the disordered state stands unless an
        // ordered state is clearly lower in F.
        let lowest = qh.lowest_over(&self.cell.wavevectors);
        let stable = lowest >= -STABILITY_NOISE || lowest.is_nan();
        let mut notes = Vec::new();
        let at_rounding = unresolved_stability(lowest, t, |tt| {
            self.disordered
                .lowest_stability(self.primitive_lattice, tt, &self.cell.wavevectors)
        });
        if at_rounding {
            notes.push(format!(
                "the stability of the disordered state is below double-precision resolution here (smallest scaled Hessian eigenvalue {lowest:.1e}): it is taken as stable unless an ordered state has a clearly lower free energy"
            ));
        }
        if let Some(o) = &self.cell.ordering {
            let d = self.primitive_lattice.dimension();
            if !fits(o, self.cell.n, d) && !qh.is_positive_definite(&o.wavevector) {
                notes.push(format!(
                    "this disordered state is unstable to the level's order at q = ({}), which the {} cell cannot hold: it is not the equilibrium",
                    crate::tc::fmt_vec(&o.wavevector, d),
                    cell_name(self.cell.n, d)
                ));
            }
        }
        let ev = f.evaluate(&x).ok_or_else(|| SolveError::InfeasibleStart {
            level: self.cell.level.name.clone(),
            t,
            h: self.field,
        })?;
        let nb = f.level().sites_per_cell as f64;
        let copies = self.cell.n.iter().product::<usize>();
        let m = f.site_magnetizations(&x);
        let m_cell = m.iter().copied().cycle().take(m.len() * copies).collect();
        Ok(DisorderedState {
            free_energy: ev.free_energy / nb,
            m_cell,
            stable,
            at_rounding,
            notes,
            f,
            x,
        })
    }

    /// The reportable point of a disordered state.
    fn disordered_point(&self, dis: &DisorderedState) -> Result<PhasePoint, SolveError> {
        let prim = observables_at(&dis.f, &dis.x)?;
        let observables = self.on_cell(prim);
        let mut p = PhasePoint {
            branch: Branch::Disordered,
            order_parameter: amplitude(&self.cell.pattern, &observables.sublattice_magnetization)
                .abs(),
            observables,
            notes: dis.notes.clone(),
        };
        if self.cell.pattern.iter().sum::<f64>().abs() < 1e-9 {
            // A pattern orthogonal to uniform magnetisation: exactly zero here.
            p.order_parameter = 0.0;
        }
        check_entropy(&mut p);
        Ok(p)
    }

    /// Primitive observables written on the cell's sites and bonds.
    fn on_cell(&self, prim: Observables) -> Observables {
        let copies = self.cell.n.iter().product::<usize>();
        let mut o = prim;
        o.sublattice_magnetization = o
            .sublattice_magnetization
            .iter()
            .copied()
            .cycle()
            .take(o.sublattice_magnetization.len() * copies)
            .collect();
        o.bond_correlations = o
            .bond_correlations
            .iter()
            .copied()
            .cycle()
            .take(o.bond_correlations.len() * copies)
            .collect();
        o
    }

    /// The flip-basis functional of the cell at (t, h) for sign pattern `signs`.
    fn cell_functional(&self, t: f64, signs: &[f64]) -> Functional<'c> {
        Functional::with_basis(
            &self.cell.level,
            t,
            self.field,
            Basis::Flip {
                pattern: signs.to_vec(),
            },
            None,
        )
    }

    /// The observables of an ordered state, or `None` when it has reached the disordered
    /// state (order parameter below [`ORDER_EPSILON`]).
    fn ordered_point(
        &self,
        t: f64,
        signs: &[f64],
        x: &[f64],
    ) -> Result<Option<PhasePoint>, SolveError> {
        let f = self.cell_functional(t, signs);
        let m = f.site_magnetizations(x);
        let op = amplitude(&self.cell.pattern, &m);
        if op < ORDER_EPSILON {
            return Ok(None);
        }
        let observables = observables_at(&f, x)?;
        let mut p = PhasePoint {
            branch: Branch::Ordered,
            observables,
            order_parameter: op,
            notes: Vec::new(),
        };
        check_entropy(&mut p);
        Ok(Some(p))
    }

    /// Newton on the cell from `x0`, then out of any saddle: Newton converges to
    /// stationary points, and a start with the pattern's symmetry keeps it, so a
    /// stationary point whose Hessian has a negative eigenvalue is left along that
    /// eigenvector and minimised again.
    fn solve_ordered(&self, t: f64, signs: &[f64], x0: Vec<f64>) -> Result<Vec<f64>, SolveError> {
        let f = self.cell_functional(t, signs);
        if !f.feasible(&x0) {
            return Err(SolveError::InfeasibleStart {
                level: self.cell.level.name.clone(),
                t,
                h: self.field,
            });
        }
        let all = Block::all(&self.cell.level);
        let opts = NewtonOptions {
            max_iterations: 80,
            ..NewtonOptions::default()
        };
        let mut sol = minimise(&f, x0, &all, opts)?;
        for _ in 0..4 {
            let h = if f.is_precise() {
                f.hessian_block_precise(&sol.x, &all.vars, &all.pos)
            } else {
                f.hessian_block(&sol.x, &all.vars, &all.pos)
            };
            let Some(h) = h else {
                break;
            };
            // A minimum: the Hessian Newton factorised is positive definite.
            if crate::linalg::positive_definite_real(&h) {
                return Ok(sol.x);
            }
            let Some((lam, v)) = crate::linalg::lowest_real(&h) else {
                break;
            };
            if lam >= 0.0 {
                return Ok(sol.x);
            }
            // Within rounding of a minimum: at low T in a field a cluster approximation's
            // Néel state can have a curvature (relative to the Hessian's own scale) far
            // below double precision, e.g. the plaquette level's nearly free mixing of the
            // two Néel domains (its entropy S_plaq − 2 S_pair + S_site vanishes along it
            // at T = 0). The sign is then not resolved; the branch is kept, as the
            // disordered state is kept when its stability is at rounding.
            if crate::linalg::lowest_scaled_real(&h).is_some_and(|l| l >= -STABILITY_NOISE) {
                return Ok(sol.x);
            }
            // Step along the negative curvature, as far as stays feasible and lowers F.
            let mut moved = None;
            let mut alpha = 0.5;
            for _ in 0..40 {
                let x: Vec<f64> = sol
                    .x
                    .iter()
                    .zip(v.iter())
                    .map(|(a, b)| a + alpha * b)
                    .collect();
                if let Some(ev) = f.evaluate(&x) {
                    if ev.merit < sol.evaluation.merit {
                        moved = Some(x);
                        break;
                    }
                }
                alpha *= 0.5;
            }
            let Some(x) = moved else { break };
            sol = minimise(&f, x, &all, opts)?;
        }
        Err(SolveError::NoStableState {
            level: self.cell.level.name.clone(),
            t,
            h: self.field,
        })
    }

    /// One continuation step of the ordered branch from `tw` to `t`. Flip probabilities
    /// go as e^{−ΔE/T}, so `ζ(t) ≈ ζ(tw)^{tw/t}` predicts the new state far better than
    /// ζ(tw) itself when T is low; Newton starts there.
    fn step_ordered(
        &self,
        tw: f64,
        signs: &[f64],
        x: &[f64],
        t: f64,
    ) -> Result<Vec<f64>, SolveError> {
        let predicted: Vec<f64> = x
            .iter()
            .map(|&z| {
                if z > 0.0 && z < 0.5 {
                    z.powf(tw / t)
                } else {
                    z
                }
            })
            .collect();
        let f = self.cell_functional(t, signs);
        if f.feasible(&predicted) {
            if let Ok(y) = self.solve_ordered(t, signs, predicted) {
                return Ok(y);
            }
        }
        self.solve_ordered(t, signs, x.to_vec())
    }

    /// The ordered branch from its state at `tw` to `t`, directly or in sub-steps evenly
    /// spaced in 1/T; the sign pattern is renewed from the result.
    fn continue_ordered(
        &self,
        tw: f64,
        signs: &[f64],
        x: &[f64],
        t: f64,
    ) -> Result<(Vec<f64>, Vec<f64>), SolveError> {
        let solved = match self.step_ordered(tw, signs, x, t) {
            Ok(y) => y,
            Err(e) => {
                let mut result = Err(e);
                for steps in [8usize, 32] {
                    let (bw, b) = (1.0 / tw, 1.0 / t);
                    let mut cur = x.to_vec();
                    let mut t_cur = tw;
                    let mut ok = true;
                    for k in 1..=steps {
                        let tk = 1.0 / (bw + (b - bw) * k as f64 / steps as f64);
                        match self.step_ordered(t_cur, signs, &cur, tk) {
                            Ok(y) => {
                                cur = y;
                                t_cur = tk;
                            }
                            Err(e) => {
                                result = Err(e);
                                ok = false;
                                break;
                            }
                        }
                    }
                    if ok {
                        result = Ok(cur);
                        break;
                    }
                }
                result?
            }
        };
        Ok(self.resign(t, signs, solved))
    }

    /// Keep the flip basis's signs those of the sublattice magnetisations (a site whose
    /// magnetisation changed sign gets its sign flipped; the state is converted).
    fn resign(&self, t: f64, signs: &[f64], x: Vec<f64>) -> (Vec<f64>, Vec<f64>) {
        let f = self.cell_functional(t, signs);
        let m = f.site_magnetizations(&x);
        let new: Vec<f64> = m
            .iter()
            .zip(signs)
            .map(|(&mi, &s)| if mi.abs() > 1e-3 { mi.signum() } else { s })
            .collect();
        if new == signs {
            return (signs.to_vec(), x);
        }
        let basis = Basis::Flip {
            pattern: new.clone(),
        };
        match f.convert(&x, &basis) {
            Some(y) => (new, y),
            None => (signs.to_vec(), x),
        }
    }

    /// Start the ordered branch at t from product states of the pattern around the
    /// disordered state; if none converges, continue down from the level's Tc. `None`
    /// when no ordered state below the disordered one's free energy exists.
    #[allow(clippy::type_complexity)]
    fn start_ordered(
        &self,
        t: f64,
        disordered: Option<&DisorderedState>,
    ) -> Result<Option<(Vec<f64>, Vec<f64>, PhasePoint)>, SolveError> {
        let pattern = &self.cell.pattern;
        let zeros = vec![0.0; pattern.len()];
        let base = disordered.map_or(&zeros, |d| &d.m_cell);
        let f_dis = disordered.map_or(f64::INFINITY, |d| d.free_energy);
        let signs: Vec<f64> = pattern
            .iter()
            .zip(base)
            .map(|(&p, &m)| {
                if p.abs() > 0.1 {
                    p.signum()
                } else if m != 0.0 {
                    m.signum()
                } else {
                    1.0
                }
            })
            .collect();
        let f = self.cell_functional(t, &signs);
        let mut best: Option<(Vec<f64>, Vec<f64>, PhasePoint)> = None;
        // Far below Tc a product state is a poor start (its flip probabilities are off by
        // tens of decades): continuation from near Tc is faster and surer.
        let far_below = self.cold_hint().is_some_and(|tc| t < 0.5 * tc);
        let amplitudes: &[f64] = if far_below {
            &[]
        } else {
            &[0.5, 0.9, 0.99, 0.2]
        };
        for &amp in amplitudes {
            // A slight, fixed asymmetry keeps Newton off the pattern's symmetric saddles.
            let m: Vec<f64> = pattern
                .iter()
                .zip(base)
                .enumerate()
                .map(|(i, (&p, &m0))| {
                    (m0 + amp * p + 1e-3 * (i as f64 * 1.7).sin()).clamp(-0.995, 0.995)
                })
                .collect();
            let x0 = f.product_state_sites(&m);
            let Ok(x) = self.solve_ordered(t, &signs, x0) else {
                continue;
            };
            let (s, x) = self.resign(t, &signs, x);
            if let Some(p) = self.ordered_point(t, &s, &x)? {
                if p.observables.free_energy < f_dis + 1e-12
                    && best
                        .as_ref()
                        .is_none_or(|b| p.observables.free_energy < b.2.observables.free_energy)
                {
                    best = Some((s, x, p));
                }
            }
            if best.is_some() {
                break;
            }
        }
        if best.is_none() {
            if let Some(tc) = self.cold_hint().filter(|&tc| t < 0.8 * tc) {
                let _ = &f;
                // Cold start far below Tc: start near Tc and cool down to t.
                let t0 = 0.8 * tc;
                if let Some((s0, x0, _)) = self.start_ordered(t0, None)? {
                    match self.continue_ordered(t0, &s0, &x0, t) {
                        Ok((s, x)) => {
                            if let Some(p) = self.ordered_point(t, &s, &x)? {
                                best = Some((s, x, p));
                            }
                        }
                        Err(_) if self.cell.interior_sites => {
                            return Err(self.precision_limit_from(tc, t));
                        }
                        Err(_) => {}
                    }
                }
            }
        }
        Ok(best)
    }
}

/// Negative entropy: the approximation's over-counting of cluster entropies has made
/// S < 0, which no probability distribution has.
fn check_entropy(p: &mut PhasePoint) {
    let s = p.observables.entropy;
    if s < -1e-10 {
        p.notes.push(format!(
            "negative entropy S = {} per site: the approximation has broken down here (its cluster entropies over-count the correlations; the exact S is ≥ 0)",
            crate::report_num(s)
        ));
    }
}

/// The primitive state's values on the cell's variables.
pub fn expand_values(values: &[f64], cell: &PhaseCell) -> Vec<f64> {
    expand(values, &cell.map)
}

/// A state on an ordered branch of a [`PhaseFollower`]'s cell, for callers that follow
/// branches themselves (phase diagrams): the flip basis's signs and the state in it.
#[derive(Debug, Clone, PartialEq)]
pub struct OrderedState {
    /// The sign per cell site of the flip basis the state is written in.
    pub signs: Vec<f64>,
    /// The state (flip probabilities relative to `signs`).
    pub x: Vec<f64>,
}

impl<'c> PhaseFollower<'c> {
    /// The field this follower works in.
    pub fn field(&self) -> f64 {
        self.field
    }

    /// A follower of the same cell in another field, sharing the disordered state's
    /// symmetry reduction; it remembers no previous point.
    pub fn at_field(&self, field: f64) -> PhaseFollower<'c> {
        PhaseFollower {
            primitive_lattice: self.primitive_lattice,
            cell: self.cell,
            field,
            disordered: self.disordered.at_field(field),
            last: None,
            tc_hint: self.tc_hint,
            // The Tc at this follower's field does not hold at another.
            cold_tc: None,
            cold_hint: OnceLock::new(),
            floor: None,
        }
    }

    /// A cold start of the ordered branch at `t` (product states of the cell's pattern
    /// around the disordered state, or continuation down from the Tc hint): the state,
    /// when one exists whose free energy is below the disordered state's (any ordered
    /// state when the disordered one cannot be solved) and whose order parameter is not
    /// zero.
    pub fn start_ordered_state(&mut self, t: f64) -> Result<Option<OrderedState>, SolveError> {
        if !(t.is_finite() && t > 0.0) {
            return Err(SolveError::BadTemperature { t });
        }
        let dis = self.disordered_state(t).ok();
        Ok(self
            .start_ordered(t, dis.as_ref())?
            .map(|(signs, x, _)| OrderedState { signs, x }))
    }

    /// The ordered state `from` (at temperature `tw`, this follower's field) continued to
    /// `t`: directly, or in sub-steps even in 1/T with the Boltzmann predictor; its signs
    /// renewed from the result.
    pub fn continue_ordered_state(
        &self,
        tw: f64,
        from: &OrderedState,
        t: f64,
    ) -> Result<OrderedState, SolveError> {
        let (signs, x) = self.continue_ordered(tw, &from.signs, &from.x, t)?;
        Ok(OrderedState { signs, x })
    }

    /// The minimum reached by Newton (with the escape from saddles) from `from` at `t` in
    /// this follower's field: the step of a path in h at fixed temperature.
    pub fn resolve_ordered_state(
        &self,
        from: &OrderedState,
        t: f64,
    ) -> Result<OrderedState, SolveError> {
        let x = self.solve_ordered(t, &from.signs, from.x.clone())?;
        let (signs, x) = self.resign(t, &from.signs, x);
        Ok(OrderedState { signs, x })
    }
}

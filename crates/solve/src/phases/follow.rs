//! Each phase as a branch of local minima followed along a path.
//!
//! * The **disordered** phase is the translation-invariant, point-group symmetric state
//!   ([`Disordered`]); it is a phase where it is stable at every wavevector the ordered
//!   phases' cells hold: `λ(x) = min_q λ_min(H(q)) ≥ 0` (scaled `H(q)`, see
//!   [`QHessian::scaled`]). Along T one follower is warm-started point to point; along
//!   h the state is solved afresh at each field (it is unique there, except for a
//!   ferromagnet below Tc, whose two field-polarised branches the path separates).
//! * An **ordered** phase is followed on its cell in the flip basis of its own signs
//!   ([`PhaseFollower`]): along T by continuation in 1/T with the Boltzmann predictor,
//!   along h by Newton from the state at the neighbouring field (in sub-steps when a
//!   step fails). A state belongs to the phase while it is a local minimum (the shifted
//!   Hessian factorises), its sites of one symmetry class keep equal magnetisations
//!   (else it has left the phase's symmetry), and its order parameter is not zero (else
//!   it has collapsed onto the disordered state). A step whose state changes by more
//!   than [`SMOOTH`], or lands on the pattern's reversed state (ψ < 0, a predictor's
//!   overshoot where the order falls steeply), is halved until every piece changes by
//!   less: a jump that survives eight halvings is a discontinuity — the branch ended at
//!   a fold and Newton fell onto another one (or, reversed, the order went through zero).

use rungs_lattice::{Lattice, Level};

use super::setup::PhaseDiagramSetup;
use super::Along;
use crate::disordered::Disordered;
use crate::functional::{Basis, Block, Functional};
use crate::linalg::positive_definite_real;
use crate::ordering::amplitude;
use crate::phase::{
    unresolved_stability, OrderedState, PhaseFollower, ORDER_EPSILON, STABILITY_NOISE,
};
use crate::qspace::{QHessian, Wavevector};

/// Largest change of a sublattice magnetisation accepted in one step without halving.
pub const SMOOTH: f64 = 0.05;

/// Halvings of a step before a change that does not shrink is called a jump.
const MAX_HALVINGS: usize = 8;

/// One solved point of a branch (values per site).
#[derive(Debug, Clone)]
pub struct Sol {
    /// The path coordinate.
    pub x: f64,
    /// Temperature.
    pub t: f64,
    /// Field.
    pub h: f64,
    /// Free energy per site.
    pub free_energy: f64,
    /// Entropy per site.
    pub entropy: f64,
    /// Magnetisation per site.
    pub magnetization: f64,
    /// Magnetisation of each site of the branch's cell.
    pub sublattice: Vec<f64>,
    /// Order parameter: amplitude of the phase's pattern (|m| for uniform order, the
    /// pattern's non-uniform part otherwise; 0 for the disordered phase).
    pub psi: f64,
    /// The ordered state (none for the disordered phase).
    pub state: Option<OrderedState>,
    /// For the disordered phase: `λ` over every ordered cell's wavevectors.
    pub stability: f64,
    /// For the disordered phase: `λ` is within rounding of zero here and a millionth
    /// away on both sides (not a crossing), so its sign is not resolved.
    pub unresolved: bool,
}

/// Why a branch does not reach a point.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Stop {
    /// The order parameter vanished: the state is the disordered one.
    Collapse,
    /// Newton failed, the state jumped, left the phase's symmetry or is not a minimum.
    Fold,
}

/// The disordered phase along one path.
pub struct DisorderedWalker<'s> {
    lattice: &'s Lattice,
    base: Disordered<'s>,
    along: Along,
    fixed: f64,
    wavevectors: &'s [Wavevector],
}

impl<'s> DisorderedWalker<'s> {
    /// The walker of the path with fixed value `fixed`.
    pub fn new(setup: &'s PhaseDiagramSetup<'s>, along: Along, fixed: f64) -> Self {
        let field = match along {
            Along::Temperature => fixed,
            Along::Field => 0.0,
        };
        DisorderedWalker {
            lattice: setup.lattice,
            base: Disordered::new(setup.lattice, setup.level, field),
            along,
            fixed,
            wavevectors: &setup.wavevectors,
        }
    }

    /// The level.
    pub fn level(&self) -> &'s Level {
        self.base.level()
    }

    /// The state at x and `λ` over `qs` (every ordered cell's wavevectors when `None`);
    /// `None` when it cannot be solved.
    pub fn solve(&self, x: f64, qs: Option<&[Wavevector]>) -> Option<Sol> {
        let (t, h) = match self.along {
            Along::Temperature => (x, self.fixed),
            Along::Field => (self.fixed, x),
        };
        let fresh;
        let dis = match self.along {
            Along::Temperature => &self.base,
            Along::Field => {
                fresh = self.base.at_field(h);
                &fresh
            }
        };
        // In correlations where the field's flip basis would press the scaled spectrum
        // below its rounding (`Disordered::solve_for_stability`), as the sweep does.
        let (f, xs) = dis.solve_for_stability(t).ok()?;
        let qs = qs.unwrap_or(self.wavevectors);
        let stability =
            QHessian::scaled(&f, self.lattice, &xs, dis.sector(), f.is_precise())?.lowest_over(qs);
        let unresolved = unresolved_stability(stability, x, |y| match self.along {
            Along::Temperature => dis.lowest_stability(self.lattice, y, qs),
            Along::Field => self
                .base
                .at_field(y)
                .lowest_stability(self.lattice, self.fixed, qs),
        });
        let ev = f.evaluate(&xs)?;
        let nb = f.level().sites_per_cell as f64;
        let m = f.site_magnetizations(&xs);
        Some(Sol {
            x,
            t,
            h,
            free_energy: ev.energy / nb - t * ev.entropy / nb,
            entropy: ev.entropy / nb,
            magnetization: m.iter().sum::<f64>() / nb,
            sublattice: m,
            psi: 0.0,
            state: None,
            stability: if stability.is_nan() { 0.0 } else { stability },
            unresolved,
        })
    }

    /// Whether a solved state is a phase: stable within rounding, and resolved. A
    /// stability that stays within rounding of zero (|λ| ≤ 10⁻¹² here and a millionth
    /// away) does not count: at low T in a field a cluster approximation's symmetric
    /// state can be a mixture of ordered domains, equal in F to the ordered state to
    /// rounding and with a Hessian singular to double precision, and taking it for a
    /// phase put a spurious first-order transition where the ordered branch's precision
    /// ran out. A grid point on a second-order line (λ crosses zero there) counts.
    pub fn stable(sol: &Sol) -> bool {
        sol.stability >= -STABILITY_NOISE && !sol.unresolved
    }
}

/// One ordered phase along one path.
pub struct OrderedWalker<'s> {
    setup: &'s PhaseDiagramSetup<'s>,
    k: usize,
    along: Along,
    fixed: f64,
    base: PhaseFollower<'s>,
}

impl<'s> OrderedWalker<'s> {
    /// The walker of ordered phase `k` (cell `setup.cells[k]`) on the path with fixed
    /// value `fixed`; `hint` is a temperature near where the order sets in (where cold
    /// starts far below it begin).
    pub fn new(
        setup: &'s PhaseDiagramSetup<'s>,
        k: usize,
        along: Along,
        fixed: f64,
        hint: Option<f64>,
    ) -> Self {
        let field = match along {
            Along::Temperature => fixed,
            Along::Field => 0.0,
        };
        OrderedWalker {
            setup,
            k,
            along,
            fixed,
            base: PhaseFollower::new(setup.lattice, setup.level, &setup.cells[k], field, hint),
        }
    }

    fn point(&self, x: f64) -> (f64, f64) {
        match self.along {
            Along::Temperature => (x, self.fixed),
            Along::Field => (self.fixed, x),
        }
    }

    /// A cold start at x.
    pub fn start(&mut self, x: f64) -> Option<Sol> {
        let (t, h) = self.point(x);
        let state = match self.along {
            Along::Temperature => self.base.start_ordered_state(t),
            Along::Field => self.base.at_field(h).start_ordered_state(t),
        }
        .ok()??;
        self.evaluate(x, state).ok().filter(|s| s.psi > 0.0)
    }

    /// The branch continued from `from` to x, with the jump test of the module
    /// documentation.
    pub fn walk(&self, from: &Sol, x: f64) -> Result<Sol, Stop> {
        self.walk_depth(from, x, 0)
    }

    fn walk_depth(&self, from: &Sol, x: f64, depth: usize) -> Result<Sol, Stop> {
        let to = self.raw_step(from, x)?;
        let change = from
            .sublattice
            .iter()
            .zip(&to.sublattice)
            .map(|(a, b)| (a - b).abs())
            .fold(0.0, f64::max);
        // A long step's predictor can overshoot through zero order and Newton then lands
        // on the pattern's reversed state (ψ < 0): a jump to be halved like any other.
        let reversed = to.psi < 0.0;
        if change <= SMOOTH && !reversed {
            return Ok(to);
        }
        if depth >= MAX_HALVINGS {
            // Reversed within the smallest step: the order went through zero.
            return Err(if reversed { Stop::Collapse } else { Stop::Fold });
        }
        let mid = self.walk_depth(from, 0.5 * (from.x + x), depth + 1)?;
        self.walk_depth(&mid, x, depth + 1)
    }

    /// One continuation step without the jump test.
    fn raw_step(&self, from: &Sol, x: f64) -> Result<Sol, Stop> {
        let state = from.state.as_ref().ok_or(Stop::Fold)?;
        let (t, h) = self.point(x);
        let next = match self.along {
            Along::Temperature => self
                .base
                .continue_ordered_state(from.t, state, t)
                .map_err(|_| Stop::Fold)?,
            Along::Field => self.field_step(from.h, state, t, h)?,
        };
        self.evaluate(x, next)
    }

    /// From the state at field `hw` to field `h` at temperature `t`: directly, else in
    /// 4 or 16 equal sub-steps.
    fn field_step(
        &self,
        hw: f64,
        state: &OrderedState,
        t: f64,
        h: f64,
    ) -> Result<OrderedState, Stop> {
        for steps in [1usize, 4, 16] {
            let mut cur = state.clone();
            let mut ok = true;
            for k in 1..=steps {
                let hk = hw + (h - hw) * k as f64 / steps as f64;
                match self.base.at_field(hk).resolve_ordered_state(&cur, t) {
                    Ok(s) => cur = s,
                    Err(_) => {
                        ok = false;
                        break;
                    }
                }
            }
            if ok {
                return Ok(cur);
            }
        }
        Err(Stop::Fold)
    }

    /// The point of a state, if it belongs to the phase.
    fn evaluate(&self, x: f64, state: OrderedState) -> Result<Sol, Stop> {
        let (t, h) = self.point(x);
        let cell = &self.setup.cells[self.k];
        let f = Functional::with_basis(
            &cell.level,
            t,
            h,
            Basis::Flip {
                pattern: state.signs.clone(),
            },
            None,
        );
        let ev = f.evaluate(&state.x).ok_or(Stop::Fold)?;
        let m = f.site_magnetizations(&state.x);
        let pattern = &cell.pattern;
        let uniform = pattern.iter().all(|&p| (p - pattern[0]).abs() < 1e-9);
        let psi = if uniform {
            amplitude(pattern, &m)
        } else {
            centred_amplitude(pattern, &m)
        };
        // ψ < 0 (the reversed pattern) is judged by the caller: a jump when walking.
        if psi.abs() < ORDER_EPSILON {
            return Err(Stop::Collapse);
        }
        // Sites of one class keep equal magnetisations.
        let classes = &self.setup.classes[self.k];
        for (i, &ci) in classes.iter().enumerate() {
            if (m[i] - m[ci]).abs() > 1e-6 {
                return Err(Stop::Fold);
            }
        }
        // A local minimum: the Hessian, shifted by 10⁻⁹ of its largest diagonal entry,
        // factorises.
        let all = Block::all(&cell.level);
        let mut hm = f
            .hessian_block(&state.x, &all.vars, &all.pos)
            .ok_or(Stop::Fold)?;
        let scale = hm.diagonal().amax().max(1e-300);
        for i in 0..hm.nrows() {
            hm[(i, i)] += 1e-9 * scale;
        }
        if !positive_definite_real(&hm) {
            return Err(Stop::Fold);
        }
        let nb = cell.level.sites_per_cell as f64;
        Ok(Sol {
            x,
            t,
            h,
            free_energy: ev.energy / nb - t * ev.entropy / nb,
            entropy: ev.entropy / nb,
            magnetization: m.iter().sum::<f64>() / nb,
            sublattice: m,
            psi,
            state: Some(state),
            stability: 0.0,
            unresolved: false,
        })
    }
}

/// The amplitude of a pattern's non-uniform part `P − P̄` in the magnetisations m:
/// `Σ (P_i − P̄) m_i / Σ (P_i − P̄)²` (1 for the perfectly ordered state m = P, 0 for any
/// uniform m).
pub fn centred_amplitude(pattern: &[f64], m: &[f64]) -> f64 {
    let mean = pattern.iter().sum::<f64>() / pattern.len().max(1) as f64;
    let centred: Vec<f64> = pattern.iter().map(|p| p - mean).collect();
    amplitude(&centred, m)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn centred_amplitude_ignores_the_uniform_part() {
        // Three-to-one pattern: perfect order gives 1, a uniform state 0.
        let p = [1.0, -1.0, -1.0, -1.0];
        assert!((centred_amplitude(&p, &p) - 1.0).abs() < 1e-15);
        assert!(centred_amplitude(&p, &[0.3; 4]).abs() < 1e-15);
        assert!((centred_amplitude(&p, &[0.8, 0.2, 0.2, 0.2]) - 0.3).abs() < 1e-15);
    }
}

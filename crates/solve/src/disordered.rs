//! The disordered (translation-invariant, point-group symmetric) state of a level at
//! (T, h), followed along temperature with warm starts: the paramagnet at h = 0, the
//! field-polarised state in a field. Its stability at every wavevector decides Tc.
//!
//! The state shares every symmetry of the lattice, so it is solved on point-group
//! orbits (the reduced level, [`rungs_lattice::Level::reduced`]) and written back on
//! every variable. At h = 0 only the even sector is free (odd correlations vanish) and
//! the Walsh basis is used, where the Hessian splits into even and odd blocks; in a field
//! every variable is free and the flip basis relative to the field's direction keeps
//! the rare cluster states precise at low temperature.

use std::cell::{OnceCell, RefCell};

use rungs_lattice::{symmetry, Lattice, Level};

use crate::equilibrium::{minimise_with, DenseSolver, NewtonOptions};
use crate::error::SolveError;
use crate::functional::{Basis, Block, Functional};
use crate::gram::StateGroups;
use crate::qspace::{QHessian, Wavevector};

/// Largest cancellation ([`Functional::cancellation`]) at which the disordered state is
/// solved in plain doubles rather than as an offset from a reference: probabilities to
/// ~10⁻¹² relative.
const PLAIN_CANCELLATION: f64 = 1e4;

/// Follows the disordered state of one level in temperature.
///
/// Where plain doubles would lose the small cluster probabilities (cancellation over
/// 10⁴), each solve is written as an offset from the last solved state
/// (the reference of [`Functional::with_basis`]), whose cluster probabilities are exact: a paramagnet at
/// low temperature (the chain's bond correlation 1 − 4·10⁻⁹ at T = 0.1 J, a frustrated
/// lattice's rare all-equal triangles) keeps its small probabilities to full relative
/// precision. A temperature too far from the last one for Newton is reached in
/// geometric sub-steps (continuation).
pub struct Disordered<'a> {
    level: &'a Level,
    field: f64,
    basis: Basis,
    /// The orbit-reduced level and the orbit of every variable, when the lattice has
    /// symmetries.
    reduced: Option<(Level, Vec<usize>)>,
    /// The states solved so far (reduced level), at most [`HISTORY`].
    history: RefCell<Vec<(f64, Solved)>>,
    /// A temperature where a cold start is easy (well above any Tc).
    t_high: f64,
    /// The reduced level's cluster states grouped for its even-sector Newton Hessians in
    /// correlations (h = 0; built on first use, `None` where grouping does not pay).
    groups: OnceCell<Option<StateGroups>>,
}

/// A state as a reference and an offset, `r + δ` (reduced level).
#[derive(Debug, Clone)]
struct Warm {
    reference: Vec<f64>,
    offset: Vec<f64>,
}

impl Warm {
    /// The same state with the reference moved onto it: `r' = fl(r + δ)`,
    /// `δ' = (r + δ) − r'` exactly (TwoSum), so no digit of the state is lost.
    fn rebased(reference: &[f64], offset: &[f64]) -> Warm {
        let (reference, offset) = reference
            .iter()
            .zip(offset)
            .map(|(&r, &d)| crate::dd::two_sum(r, d))
            .unzip();
        Warm { reference, offset }
    }
}

/// The smallest cluster probability for which [`Disordered::solve_for_stability`] reads
/// a state in a field in correlations: a probability of a 2^n-state cluster is
/// `2^-n Σ_c ξ_c χ_c(σ)`, whose rounding is ~10⁻¹⁶·2^(−n/2) absolute, so ~10⁻⁶ relative
/// or better here up to 16 sites — the precision the h = 0 search has in correlations
/// at every level (common practice: random rounding errors add as a square root).
pub const WALSH_VIEW_MIN_PROBABILITY: f64 = 1e-12;

/// How many solved states a follower keeps for warm starts and repeated temperatures.
const HISTORY: usize = 8;

/// A solved disordered state on the reduced level: the reference and the offsets.
#[derive(Debug, Clone)]
struct Solved {
    reference: Option<Vec<f64>>,
    x: Vec<f64>,
}

impl Solved {
    fn warm(&self) -> Warm {
        match &self.reference {
            Some(r) => Warm::rebased(r, &self.x),
            None => Warm::rebased(&vec![0.0; self.x.len()], &self.x),
        }
    }
}

impl<'a> Disordered<'a> {
    /// The follower of `level` (of `lattice`) in field `field`.
    pub fn new(lattice: &Lattice, level: &'a Level, field: f64) -> Disordered<'a> {
        let ops = symmetry::level_group(level, &symmetry::point_group(lattice));
        Disordered::with_group(level, field, &ops, crate::tc::mean_field_scale(lattice))
    }

    /// [`Disordered::new`] with the level's point group `ops` and the lattice's
    /// mean-field Tc already at hand (the Tc search has both).
    pub fn with_group(
        level: &'a Level,
        field: f64,
        ops: &[symmetry::SiteMap],
        mean_field_tc: f64,
    ) -> Disordered<'a> {
        let reduced = (ops.len() > 1).then(|| {
            let orbit_of = symmetry::variable_orbits(level, ops);
            (level.reduced(&orbit_of), orbit_of)
        });
        let t_high = 1.5 * mean_field_tc + field.abs() + 1e-3;
        Disordered {
            level,
            field,
            basis: disordered_basis(level.sites_per_cell, field),
            reduced,
            history: RefCell::new(Vec::new()),
            t_high,
            groups: OnceCell::new(),
        }
    }

    /// The coordinates of the states returned.
    pub fn basis(&self) -> &Basis {
        &self.basis
    }

    /// The field.
    pub fn field(&self) -> f64 {
        self.field
    }

    /// The level.
    pub fn level(&self) -> &'a Level {
        self.level
    }

    /// The block where the instability is sought: the odd sector at h = 0, every
    /// variable in a field.
    pub fn sector(&self) -> Block {
        if self.field == 0.0 {
            Block::odd(self.level)
        } else {
            Block::all(self.level)
        }
    }

    /// The disordered state at `t`: the functional of the full level (in the
    /// follower's basis, with the reference the state is an offset from) and the state.
    pub fn solve(&self, t: f64) -> Result<(Functional<'a>, Vec<f64>), SolveError> {
        let known = {
            let history = self.history.borrow();
            match history.iter().find(|(tk, _)| *tk == t) {
                // Asked again (the Tc search's root and its checks): the same state.
                Some((_, s)) => Ok(s.clone()),
                None => self.solve_new(t, &history),
            }
        };
        let solved = known?;
        self.remember(t, &solved);
        let expand = |v: &[f64]| -> Vec<f64> {
            match &self.reduced {
                Some((_, o)) => o.iter().map(|&k| v[k]).collect(),
                None => v.to_vec(),
            }
        };
        let reference = solved.reference.as_deref().map(expand);
        let f = Functional::with_basis(self.level, t, self.field, self.basis.clone(), reference);
        Ok((f, expand(&solved.x)))
    }

    /// The disordered state at `t` for its stability matrix: [`Disordered::solve`]'s
    /// state, in a field carried to the Walsh basis (correlations) when every cluster
    /// probability is at least [`WALSH_VIEW_MIN_PROBABILITY`]. The inertia of H(q), which
    /// decides stability, is the same in both bases, but the flip basis a field uses is far
    /// from orthogonal for big clusters: its diagonally scaled H(q) has every eigenvalue
    /// compressed toward zero (~10⁻⁸ for 10-site blocks near the Néel line, against
    /// 10⁻³–10⁻⁶ in correlations), below the rounding and degeneracy tolerances of the Tc
    /// search. Near-disordered states keep their probabilities' precision in correlations;
    /// strongly polarised ones (a probability below the threshold) stay in flip
    /// probabilities.
    pub fn solve_for_stability(&self, t: f64) -> Result<(Functional<'a>, Vec<f64>), SolveError> {
        let (f, x) = self.solve(t)?;
        Ok(self.in_correlations(&f, &x).unwrap_or((f, x)))
    }

    /// `min_q λ_min(H(q))` over `qs` of the scaled stability matrix of the state at t,
    /// taken as [`Disordered::solve_for_stability`] gives it (`None` where the state or
    /// its matrix cannot be had).
    pub fn lowest_stability(&self, lattice: &Lattice, t: f64, qs: &[Wavevector]) -> Option<f64> {
        let (f, x) = self.solve_for_stability(t).ok()?;
        let qh = QHessian::scaled(&f, lattice, &x, self.sector(), f.is_precise())?;
        Some(qh.lowest_over(qs))
    }

    /// Solve at a temperature not solved before: from the states solved nearest in
    /// temperature (see [`Disordered::predicted`]), else cold, else by continuation.
    fn solve_new(&self, t: f64, history: &[(f64, Solved)]) -> Result<Solved, SolveError> {
        let nearest = history
            .iter()
            .min_by(|a, b| (a.0 - t).abs().total_cmp(&(b.0 - t).abs()))
            .map(|(tk, s)| (*tk, s.warm()));
        let start = self
            .predicted(history, t)
            .or_else(|| nearest.as_ref().map(|n| n.1.clone()));
        match self.solve_reduced(t, start.as_ref()) {
            // A cold solution is polished once as an offset from itself, which gives
            // its small cluster probabilities their full relative precision.
            Ok(s) if start.is_none() => Ok(self.solve_reduced(t, Some(&s.warm())).unwrap_or(s)),
            Ok(s) => Ok(s),
            Err(e) => match &nearest {
                Some((tw, w)) => self.continue_from(*tw, w, t).map_err(|_| e),
                None if t < self.t_high => {
                    let high = self
                        .solve_reduced(self.t_high, None)
                        .map_err(|_| e.clone())?;
                    self.continue_from(self.t_high, &high.warm(), t)
                        .map_err(|_| e)
                }
                None => Err(e),
            },
        }
    }

    /// The start for a solve at `t` interpolated (or extrapolated by at most twice their
    /// distance) along the line through the two states solved nearest to `t`:
    /// `y = y₁ + (t − t₁)/(t₂ − t₁)·(y₂ − y₁)`, off by O((t − t₁)(t − t₂)) where the
    /// nearest alone is off by O(t − t₁), which saves Newton steps along every search
    /// and path. At h = 0 only, where the paramagnet is the one symmetric state: in a
    /// field at low temperature the symmetric solutions include mixtures of ordered
    /// domains, equal in F to rounding, and which one Newton lands on would depend on
    /// the start (those follow the nearest state, as they always have). `None` with
    /// fewer than two states, too far, or outside the feasible region.
    fn predicted(&self, history: &[(f64, Solved)], t: f64) -> Option<Warm> {
        if self.basis != Basis::Walsh {
            return None;
        }
        let mut by_distance: Vec<&(f64, Solved)> = history.iter().collect();
        by_distance.sort_by(|a, b| (a.0 - t).abs().total_cmp(&(b.0 - t).abs()));
        let [(t1, s1), (t2, s2), ..] = by_distance.as_slice() else {
            return None;
        };
        let alpha = (t - t1) / (t2 - t1);
        if alpha.is_nan() || alpha.abs() > 2.0 || s1.x.len() != s2.x.len() {
            return None;
        }
        let (w1, w2) = (s1.warm(), s2.warm());
        let offset: Vec<f64> = (0..w1.offset.len())
            .map(|k| {
                let dy = (w2.reference[k] - w1.reference[k]) + (w2.offset[k] - w1.offset[k]);
                w1.offset[k] + alpha * dy
            })
            .collect();
        let lv = match &self.reduced {
            Some((lv, _)) => lv,
            None => self.level,
        };
        let y: Vec<f64> = w1
            .reference
            .iter()
            .zip(&offset)
            .map(|(r, d)| r + d)
            .collect();
        let feasible = Functional::with_basis(lv, t, self.field, Basis::Walsh, None).feasible(&y);
        feasible.then_some(Warm {
            reference: w1.reference,
            offset,
        })
    }

    /// Keep the state solved at `t` (at most [`HISTORY`] states: the one farthest from
    /// `t` goes first).
    fn remember(&self, t: f64, solved: &Solved) {
        let mut history = self.history.borrow_mut();
        if history.iter().any(|(tk, _)| *tk == t) {
            return;
        }
        if history.len() >= HISTORY {
            if let Some(far) = (0..history.len()).max_by(|&a, &b| {
                (history[a].0 - t)
                    .abs()
                    .total_cmp(&(history[b].0 - t).abs())
            }) {
                history.swap_remove(far);
            }
        }
        history.push((t, solved.clone()));
    }

    /// A state `x` of functional `f` (as [`Disordered::solve`] returns them) in the
    /// Walsh basis, for its stability matrix (see [`Disordered::solve_for_stability`]);
    /// `None` where it is better kept as it is (h = 0, where it already is in
    /// correlations, or a probability below [`WALSH_VIEW_MIN_PROBABILITY`]).
    pub fn in_correlations(
        &self,
        f: &Functional<'a>,
        x: &[f64],
    ) -> Option<(Functional<'a>, Vec<f64>)> {
        if matches!(self.basis, Basis::Walsh)
            || f.smallest_probability(x)? < WALSH_VIEW_MIN_PROBABILITY
        {
            return None;
        }
        let y = f.convert(x, &Basis::Walsh)?;
        let walsh =
            Functional::with_basis(self.level, f.temperature(), self.field, Basis::Walsh, None);
        Some((walsh, y))
    }

    /// Reach `t` from the state at `tw` in geometric sub-steps.
    fn continue_from(&self, tw: f64, warm: &Warm, t: f64) -> Result<Solved, SolveError> {
        let mut last = Err(SolveError::BadTemperature { t });
        for steps in [4usize, 16, 64] {
            let mut current = warm.clone();
            let mut ok = true;
            for k in 1..=steps {
                let tk = tw * (t / tw).powf(k as f64 / steps as f64);
                match self.solve_reduced(tk, Some(&current)) {
                    Ok(s) => {
                        current = s.warm();
                        if k == steps {
                            return Ok(s);
                        }
                    }
                    Err(e) => {
                        last = Err(e);
                        ok = false;
                        break;
                    }
                }
            }
            if ok {
                break;
            }
        }
        last
    }

    fn solve_reduced(&self, t: f64, warm: Option<&Warm>) -> Result<Solved, SolveError> {
        let lv = match &self.reduced {
            Some((lv, _)) => lv,
            None => self.level,
        };
        let block = if self.field == 0.0 {
            Block::even(lv)
        } else {
            Block::all(lv)
        };
        let opts = NewtonOptions::default();
        // Plain Walsh functionals (h = 0) assemble their Newton Hessians in the grouped
        // Gram form; the groups depend on the reduced level and the block alone.
        let groups = if self.basis == Basis::Walsh {
            self.groups
                .get_or_init(|| {
                    Functional::with_basis(lv, t, 0.0, Basis::Walsh, None).state_groups(&block)
                })
                .as_ref()
        } else {
            None
        };
        let newton = |f: &Functional, x0: Vec<f64>| {
            minimise_with(f, x0, &block, opts, &mut DenseSolver::with_groups(groups))
        };
        let cold = || -> Result<Solved, SolveError> {
            let f = Functional::with_basis(lv, t, self.field, self.basis.clone(), None);
            let m = if self.field == 0.0 {
                0.0
            } else {
                (self.field / t).tanh()
            };
            let start = f.product_state_sites(&vec![0.9 * m; lv.sites_per_cell]);
            let sol = newton(&f, start)?;
            Ok(Solved {
                reference: None,
                x: sol.x,
            })
        };
        let Some(w) = warm.filter(|w| w.reference.len() == lv.variables.len()) else {
            return cold();
        };
        // Double-double arithmetic (a reference) only where plain doubles would lose
        // digits: while the warm state's cluster probabilities carry at most ~10⁻¹²
        // relative rounding (cancellation below 10⁴), plain Walsh coordinates give the
        // same state several times faster (the precise Hessians dominate the Tc search).
        if self.basis == Basis::Walsh {
            let plain = Functional::with_basis(lv, t, self.field, Basis::Walsh, None);
            let x: Vec<f64> = w
                .reference
                .iter()
                .zip(&w.offset)
                .map(|(r, d)| r + d)
                .collect();
            // (The cancellation is infinite where x is infeasible.)
            if plain.cancellation(&x) < PLAIN_CANCELLATION {
                if let Ok(sol) = newton(&plain, x) {
                    if plain.cancellation(&sol.x) < PLAIN_CANCELLATION {
                        return Ok(Solved {
                            reference: None,
                            x: sol.x,
                        });
                    }
                }
            }
        }
        let f = Functional::with_basis(
            lv,
            t,
            self.field,
            self.basis.clone(),
            Some(w.reference.clone()),
        );
        if !f.feasible(&w.offset) {
            return cold();
        }
        match newton(&f, w.offset.clone()) {
            Ok(sol) => Ok(Solved {
                reference: Some(w.reference.clone()),
                x: sol.x,
            }),
            Err(e) => cold().map_err(|_| e),
        }
    }
}

/// The basis of the disordered state in field `h`: Walsh at h = 0, else the flip basis
/// relative to the field's direction on every site.
pub fn disordered_basis(sites: usize, h: f64) -> Basis {
    if h == 0.0 {
        Basis::Walsh
    } else {
        Basis::Flip {
            pattern: vec![h.signum(); sites],
        }
    }
}

impl<'a> Disordered<'a> {
    /// The follower of the same level in another field `field`, sharing the point-group
    /// reduction already built (no warm start: its first solve starts cold). Used to
    /// follow the disordered state along a path in h at fixed temperature.
    pub fn at_field(&self, field: f64) -> Disordered<'a> {
        Disordered {
            level: self.level,
            field,
            basis: disordered_basis(self.level.sites_per_cell, field),
            reduced: self.reduced.clone(),
            history: RefCell::new(Vec::new()),
            t_high: self.t_high - self.field.abs() + field.abs(),
            groups: OnceCell::new(),
        }
    }
}

//! Thermodynamics along a path: for each field, the temperatures in the order given
//! (ascending, descending or any), each point continuing the branch of the one before
//! ([`crate::phase`]), on the cell that holds the level's ordering.
//!
//! The ordering comes from the level's own instability at h = 0 ([`crate::tc`]): its
//! wavevector fixes the smallest diagonal supercell and the pattern whose amplitude is
//! the order parameter. A point the engine cannot solve, or whose response functions do
//! not exist (the Hessian is singular at a critical point), is reported as omitted with
//! the reason; the path goes on from the last point solved.

use rungs_lattice::{Lattice, Level};

use crate::error::SolveError;
use crate::functional::check_size;
use crate::ordering::{Ordering, MAX_SUPERCELL_SITES};
use crate::phase::{cell_name, PhaseCell, PhaseFollower, PhasePoint};
use crate::tc::{critical_temperature, TcOptions};

/// How to sweep.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct SweepOptions {
    /// Follow the path on this supercell instead of the one the ordering chooses.
    pub supercell: Option<[usize; 3]>,
}

/// One point of a sweep: solved, or left out with the reason.
#[derive(Debug, Clone)]
pub enum SweepPoint {
    /// A solved point.
    Solved(Box<PhasePoint>),
    /// A point left out.
    Omitted {
        /// Temperature.
        temperature: f64,
        /// Field.
        field: f64,
        /// Why.
        reason: String,
    },
}

/// One level's sweep.
#[derive(Debug, Clone)]
pub struct LevelSweep {
    /// Level name.
    pub level: String,
    /// Sites of the largest maximal cluster.
    pub max_cluster_sites: usize,
    /// The cell the path was followed on (cells along each axis).
    pub cell: [usize; 3],
    /// Sites of that cell.
    pub cell_sites: usize,
    /// The ordering whose pattern defines the order parameter, if the level has one.
    pub ordering: Option<Ordering>,
    /// The pattern on the cell's sites.
    pub pattern: Vec<f64>,
    /// The level's Tc at h = 0, when it has one.
    pub tc: Option<f64>,
    /// Points, fields outermost, temperatures in the order given.
    pub points: Vec<SweepPoint>,
    /// Cautions for the whole level.
    pub notes: Vec<String>,
}

/// Sweep `level` (of `lattice`) over every (field, temperature); `tick` is called once
/// per finished point (progress; the engine never prints).
pub fn sweep_level(
    lattice: &Lattice,
    level: &Level,
    temps: &[f64],
    fields: &[f64],
    options: SweepOptions,
    tick: &(dyn Fn() + Sync),
) -> Result<LevelSweep, SolveError> {
    if let Some(&t) = temps.iter().find(|t| !(t.is_finite() && **t > 0.0)) {
        return Err(SolveError::BadTemperature { t });
    }
    if check_size(level).is_err() {
        return sweep_big(lattice, level, temps, fields, options, tick);
    }
    let d = lattice.dimension();
    let mut notes = Vec::new();
    let cp = critical_temperature(lattice, level, TcOptions::default());
    let (ordering, tc) = match cp {
        Ok(cp) => {
            notes.extend(cp.notes.iter().cloned());
            (cp.ordering.clone(), cp.tc)
        }
        Err(e) => {
            notes.push(format!(
                "the level's ordering could not be determined ({e}); only uniform order is followed"
            ));
            (None, None)
        }
    };
    let nb = lattice.sites_per_cell();
    let n = match (options.supercell, &ordering) {
        (Some(n), _) => n,
        (None, Some(o)) if o.supercell_sites(nb) <= MAX_SUPERCELL_SITES => o.supercell(),
        (None, Some(o)) => {
            notes.push(format!(
                "the ordered phase needs a {} cell (more than {MAX_SUPERCELL_SITES} sites): followed on the primitive cell, where that order cannot form",
                cell_name(o.supercell(), d)
            ));
            [1, 1, 1]
        }
        (None, None) => [1, 1, 1],
    };
    let cell = PhaseCell::new(lattice, level, ordering.as_ref(), n)?;
    notes.extend(cell.notes.iter().cloned());
    let mut points = Vec::with_capacity(temps.len() * fields.len());
    for &h in fields {
        let mut follower = PhaseFollower::new(lattice, level, &cell, h, tc)
            .cold_start_below(move || tc_at(lattice, level, tc, h));
        for &t in temps {
            points.push(match follower.next(t) {
                Ok(p) => SweepPoint::Solved(Box::new(p)),
                Err(e) => SweepPoint::Omitted {
                    temperature: t,
                    field: h,
                    reason: e.to_string(),
                },
            });
            tick();
        }
    }
    Ok(LevelSweep {
        level: level.name.clone(),
        max_cluster_sites: level.max_cluster_sites(),
        cell: n,
        cell_sites: cell.sites(),
        pattern: cell.pattern.clone(),
        ordering,
        tc,
        points,
        notes,
    })
}

/// Where a path at field `h` may find the ordered phase: the level's Tc at h (the Néel
/// line of an antiferromagnet, an alloy's order–disorder line), which in a field lies
/// below the h = 0 value `tc0`. A cold ordered start far below it begins by cooling from
/// just below it, so `tc0` would start it above the ordered phase. `None` where the
/// level has no instability at h (a ferromagnet in a field, or order that sets in only
/// by a first-order transition): the follower then keeps `tc0`. A search of its own at
/// h ≠ 0 (seconds to minutes on big blocks), so the follower runs it only when it first
/// starts an ordered state.
fn tc_at(lattice: &Lattice, level: &Level, tc0: Option<f64>, h: f64) -> Option<f64> {
    if h == 0.0 || tc0.is_none() {
        return tc0;
    }
    let options = TcOptions {
        field: h,
        ..TcOptions::default()
    };
    critical_temperature(lattice, level, options)
        .ok()
        .and_then(|cp| cp.tc)
}

/// A level too large for the dense engine, swept matrix-free on point-group orbits
/// ([`crate::big::SymmetricEngine`]): point-group-symmetric phases only (the paramagnet,
/// uniform order, a uniform field), on the primitive cell. Refused when the lattice's
/// order is not uniform (its mean-field ordering wavevector is not 0), since the ordered
/// phase could not be formed.
fn sweep_big(
    lattice: &Lattice,
    level: &Level,
    temps: &[f64],
    fields: &[f64],
    options: SweepOptions,
    tick: &(dyn Fn() + Sync),
) -> Result<LevelSweep, SolveError> {
    let d = lattice.dimension();
    let refuse = |why: String| SolveError::TcSearch {
        level: level.name.clone(),
        detail: why,
    };
    if options.supercell.is_some_and(|n| n != [1, 1, 1]) {
        return Err(refuse(
            "levels too large for the dense engine are swept on the primitive cell only (no --supercell)".into(),
        ));
    }
    if let Some((q, _)) = crate::tc::mean_field_maxima(lattice).first() {
        if q.iter().any(|c| *c != 0.0) {
            return Err(refuse(format!(
                "levels too large for the dense engine follow point-group-symmetric phases only, and this lattice orders at q = ({}): sweep a smaller level",
                crate::tc::fmt_vec(q, d)
            )));
        }
    }
    let compact = crate::big::compact_level(lattice, &level.name)?;
    let mut engine = crate::big::SymmetricEngine::new(&compact);
    let note = crate::big::SYMMETRIC_ONLY.to_string();
    let mut points = Vec::with_capacity(temps.len() * fields.len());
    for &h in fields {
        let mut warm: Option<crate::big::SymmetricState> = None;
        for &t in temps {
            points.push(match engine.observables(t, h, warm.as_ref()) {
                Ok((observables, state)) => {
                    let branch = match state.branch {
                        crate::state::Branch::Ordered => crate::phase::Branch::Ordered,
                        _ => crate::phase::Branch::Disordered,
                    };
                    let order_parameter = if branch == crate::phase::Branch::Ordered || h != 0.0 {
                        observables.magnetization.abs()
                    } else {
                        0.0
                    };
                    warm = Some(state);
                    SweepPoint::Solved(Box::new(PhasePoint {
                        branch,
                        observables,
                        order_parameter,
                        notes: Vec::new(),
                    }))
                }
                Err(e) => SweepPoint::Omitted {
                    temperature: t,
                    field: h,
                    reason: e.to_string(),
                },
            });
            tick();
        }
    }
    Ok(LevelSweep {
        level: level.name.clone(),
        max_cluster_sites: level.max_cluster_sites(),
        cell: [1, 1, 1],
        cell_sites: lattice.sites_per_cell(),
        ordering: None,
        pattern: vec![1.0; lattice.sites_per_cell()],
        tc: None,
        points,
        notes: vec![note],
    })
}

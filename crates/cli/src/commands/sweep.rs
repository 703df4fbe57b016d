//! `rungs sweep LATTICE --levels a,b --temps T0:T1:dT [--field h | --fields ...]
//! [--plot FILE.svg|png [--panels ...]]`: equilibrium thermodynamics per site along a temperature path,
//! one row per (level, temperature, field).
//!
//! Each level is swept by the engine (`rungs_solve::sweep`: fields outermost, the
//! temperatures in the order given, every point warm-started from the one before, so at
//! h = 0 below Tc the m > 0 branch is followed); levels run in parallel (rayon) with one
//! progress bar ticking per point. A point whose response functions do not exist — the
//! Hessian is singular or not positive definite (C or χ negative) at, within rounding, a
//! level's critical point, or a value is not finite — is left out with a note saying
//! where, never printed as NaN or inf; when the engine stops at such a point the level is
//! re-run point by point so the other points survive. Any other engine failure (no
//! convergence, a level too large) stops the command with exit status 1.
//!
//! With `--plot FILE.svg` (or `.png`) the sweep is also drawn ([`crate::plot::sweep`]),
//! with each level's Tc marked when the sweep includes h = 0 and the exact curves of a
//! closed form recognised from the lattice's bonds.

use rayon::prelude::*;
use rungs_lattice::{Lattice, LatticeError, Level};
use rungs_solve::{
    critical_temperature, observables, solve_equilibrium, Observables, SolveError, TcOptions,
};

use super::tc::solve_error;
use crate::args::SweepArgs;
use crate::error::CliError;
use crate::output::Output;
use crate::progress::Progress;

mod report;
pub use report::SweepReport;

/// CSV columns (the command contract).
pub const COLUMNS: [&str; 9] = [
    "level",
    "temperature",
    "field",
    "magnetization",
    "energy",
    "free_energy",
    "entropy",
    "specific_heat",
    "susceptibility",
];

/// Run `rungs sweep`.
pub fn run(args: &SweepArgs, out: &mut Output) -> Result<(), CliError> {
    let lattice = super::load_lattice(&args.common.lattice)?;
    let names = super::select_levels(&lattice, Some(&args.levels))?;
    let fields = fields(args, lattice.field());
    let temps = &args.temps.0;
    let want_tc = args.plot.is_some() && fields.contains(&0.0);
    let progress = Progress::new((names.len() * temps.len() * fields.len()) as u64, "sweep");
    let levels = names
        .par_iter()
        .map(|name| sweep_level(&lattice, name, temps, &fields, want_tc, &progress))
        .collect::<Result<Vec<_>, _>>()?;
    progress.finish();
    let panels = args.panels.clone().unwrap_or_default();
    let plotted = args.plot.as_ref().map(|_| panels.0.as_slice());
    let report = SweepReport::new(&lattice, fields, levels, plotted);
    if let (Some(path), Some(panels)) = (&args.plot, plotted) {
        crate::plot::file::write(path, &report.figure(panels))?;
    }
    out.emit(&report)
}

/// The fields to sweep: `--fields`, else `--field`, else the file's `field`.
pub fn fields(args: &SweepArgs, file_field: f64) -> Vec<f64> {
    match (&args.fields, args.field) {
        (Some(list), _) => list.0.clone(),
        (None, Some(h)) => vec![h],
        (None, None) => vec![file_field],
    }
}

/// A point left out of the output, and why.
#[derive(Debug, Clone, PartialEq)]
pub struct Omitted {
    /// Temperature.
    pub temperature: f64,
    /// Field.
    pub field: f64,
    /// What went wrong there.
    pub reason: String,
}

/// One level's sweep.
#[derive(Debug, Clone)]
pub struct LevelSweep {
    /// Level name.
    pub level: String,
    /// Sites of the largest maximal cluster.
    pub max_cluster_sites: usize,
    /// Points with every observable finite, fields outermost, temperatures as given.
    pub points: Vec<Observables>,
    /// Points left out.
    pub omitted: Vec<Omitted>,
    /// The level's Tc at h = 0, when it was asked for (plots) and found.
    pub tc: Option<f64>,
}

/// Sweep one level: build it, run the engine, keep the reportable points; with `want_tc`
/// also find its Tc (for the plot's markers; a failure there only drops the marker).
pub fn sweep_level(
    lattice: &Lattice,
    name: &str,
    temps: &[f64],
    fields: &[f64],
    want_tc: bool,
    progress: &Progress,
) -> Result<LevelSweep, CliError> {
    let line = progress.line(&format!("level `{name}`"));
    line.stage("building clusters");
    let level = match Level::build(lattice, name) {
        Ok(level) => level,
        Err(e @ LatticeError::ClusterTooLarge { .. }) => {
            return Err(CliError::NotConverged(format!(
                "cannot sweep level `{name}`: {e}"
            )))
        }
        Err(e) => return Err(e.into()),
    };
    line.stage("sweeping");
    let tick = || progress.inc(1);
    let results: Vec<Result<Observables, Omitted>> =
        match rungs_solve::sweep(&level, temps, fields, &tick) {
            Ok(points) => points.into_iter().map(Ok).collect(),
            Err(e) if is_point_error(&e) => point_by_point(&level, temps, fields)?,
            Err(e) => return Err(too_large_or(e, name)),
        };
    let mut points = Vec::with_capacity(results.len());
    let mut omitted = Vec::new();
    for r in results {
        match r.and_then(|p| match defect(&p) {
            None => Ok(p),
            Some(reason) => Err(Omitted {
                temperature: p.temperature,
                field: p.field,
                reason: reason.into(),
            }),
        }) {
            Ok(p) => points.push(p),
            Err(o) => omitted.push(o),
        }
    }
    let tc = if want_tc {
        line.stage("Tc (for the plot)");
        critical_temperature(lattice, &level, TcOptions::default())
            .ok()
            .and_then(|cp| cp.tc)
    } else {
        None
    };
    line.finish();
    Ok(LevelSweep {
        level: name.to_string(),
        max_cluster_sites: level.max_cluster_sites(),
        points,
        omitted,
        tc,
    })
}

/// An engine error that concerns one point only: the Hessian is singular there (the
/// level's critical point), so C and χ do not exist.
fn is_point_error(e: &SolveError) -> bool {
    matches!(e, SolveError::TcSearch { .. })
}

/// A fatal engine error, saying which level a refusal concerns.
fn too_large_or(e: SolveError, name: &str) -> CliError {
    match e {
        SolveError::TooLarge { .. } => {
            CliError::NotConverged(format!("cannot sweep level `{name}`: {e}"))
        }
        e => solve_error(e),
    }
}

/// The same path as `rungs_solve::sweep`, one point at a time, so that a point without
/// response functions is left out instead of ending the level.
fn point_by_point(
    level: &Level,
    temps: &[f64],
    fields: &[f64],
) -> Result<Vec<Result<Observables, Omitted>>, CliError> {
    let mut out = Vec::with_capacity(temps.len() * fields.len());
    for &h in fields {
        let mut warm: Option<Vec<f64>> = None;
        for &t in temps {
            let state = solve_equilibrium(level, t, h, warm.as_deref())
                .map_err(|e| too_large_or(e, &level.name))?;
            match observables(level, &state) {
                Ok(p) => out.push(Ok(p)),
                Err(e) if is_point_error(&e) => out.push(Err(Omitted {
                    temperature: t,
                    field: h,
                    reason: e.to_string(),
                })),
                Err(e) => return Err(solve_error(e)),
            }
            warm = Some(state.solution.x);
        }
    }
    Ok(out)
}

/// Why a point cannot be reported, if it cannot: a number that is not finite, or a
/// negative susceptibility or specific heat — the Hessian is not positive definite
/// there, which happens at (within rounding of) the level's critical point, where C and
/// χ do not exist.
fn defect(p: &Observables) -> Option<&'static str> {
    let all_finite = [
        p.magnetization,
        p.energy,
        p.free_energy,
        p.entropy,
        p.specific_heat,
        p.susceptibility,
    ]
    .iter()
    .chain(&p.sublattice_magnetization)
    .chain(&p.bond_correlations)
    .all(|x| x.is_finite());
    if !all_finite {
        Some("an observable is not finite there (a critical point of this level?)")
    } else if p.susceptibility < 0.0 || p.specific_heat < -1e-9 {
        Some("C or χ comes out negative: the state is not a strict minimum there (within rounding of this level's critical point, where C and χ do not exist)")
    } else {
        None
    }
}

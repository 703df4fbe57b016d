//! `rungs sweep LATTICE --levels a,b --temps T0:T1:dT [--field h | --fields ...]
//! [--plot FILE.svg|png [--panels ...]]`: equilibrium thermodynamics per site along a temperature path,
//! one row per (level, temperature, field).
//!
//! Each level is swept by the engine (`rungs_solve::sweep_level`: fields outermost, the
//! temperatures in the order given — descending paths too —, every point continuing the
//! branch of the one before, on the cell that holds the level's ordering wavevector or
//! on `--supercell`); levels run in parallel (rayon) with one progress bar ticking per
//! point. A point the engine cannot solve, or whose response functions do not exist
//! (the Hessian is singular at a critical point, C or χ negative, a value not finite),
//! is left out with a note saying where, never printed as NaN or inf; the path goes on.
//! A level too large for the engine stops the command with exit status 1.
//!
//! With `--plot FILE.svg` (or `.png`) the sweep is also drawn ([`crate::plot::sweep`]),
//! with each level's Tc marked when the sweep includes h = 0 and the exact curves of a
//! closed form recognised from the lattice's bonds.

use rayon::prelude::*;
use rungs_lattice::{Lattice, LatticeError, Level};
use rungs_solve::ordering::Ordering;
use rungs_solve::phase::Branch;
use rungs_solve::{sweep_level, Observables, SolveError, SweepOptions, SweepPoint};

use super::tc::solve_error;
use crate::args::SweepArgs;
use crate::error::CliError;
use crate::output::Output;
use crate::progress::Progress;

mod report;
pub use report::SweepReport;

/// CSV columns (the command contract).
pub const COLUMNS: [&str; 10] = [
    "level",
    "temperature",
    "field",
    "magnetization",
    "energy",
    "free_energy",
    "entropy",
    "specific_heat",
    "susceptibility",
    "order_parameter",
];

/// Run `rungs sweep`.
pub fn run(args: &SweepArgs, out: &mut Output) -> Result<(), CliError> {
    let lattice = super::load_lattice(&args.common.lattice)?;
    let names = super::select_levels(&lattice, Some(&args.levels))?;
    let fields = fields(args, lattice.field());
    if let Some(h) = fields.iter().find(|h| !h.is_finite()) {
        return Err(CliError::Usage(format!("field {h} is not a finite number")));
    }
    let supercell = match args.supercell {
        Some(sc) if sc.given != lattice.dimension() => {
            return Err(CliError::Usage(format!(
                "--supercell: {} factor(s) given but `{}` is {}-dimensional; give one factor per dimension, e.g. {}",
                sc.given,
                lattice.name(),
                lattice.dimension(),
                vec!["2"; lattice.dimension()].join("x"),
            )))
        }
        Some(sc) => Some(sc.factors),
        None => None,
    };
    let temps = &args.temps.0;
    let progress = Progress::new((names.len() * temps.len() * fields.len()) as u64, "sweep");
    let levels = names
        .par_iter()
        .map(|name| sweep_one(&lattice, name, temps, &fields, supercell, &progress))
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

/// What a reported point carries beyond its observables.
#[derive(Debug, Clone, PartialEq)]
pub struct PointInfo {
    /// Amplitude of the level's ordering pattern.
    pub order_parameter: f64,
    /// Disordered or ordered.
    pub branch: Branch,
    /// Cautions (negative entropy, ...); empty when none.
    pub notes: Vec<String>,
}

/// A bond of the cell as reported beside its correlation.
#[derive(Debug, Clone)]
pub struct BondLabel {
    /// First site's name.
    pub from: String,
    /// Second site's name.
    pub to: String,
    /// Cell offset of the second site.
    pub cell: Vec<i32>,
    /// Coupling name.
    pub coupling: String,
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
    /// Per point of `points`: order parameter, branch, notes.
    pub info: Vec<PointInfo>,
    /// Points left out.
    pub omitted: Vec<Omitted>,
    /// The level's Tc at h = 0, when it has one.
    pub tc: Option<f64>,
    /// The cell followed (cells along each axis) and its site names.
    pub cell: [usize; 3],
    /// Names of the cell's sites (`a@i,j,k` on a supercell).
    pub site_names: Vec<String>,
    /// The cell's bonds.
    pub bonds: Vec<BondLabel>,
    /// The ordering whose pattern is the order parameter.
    pub ordering: Option<Ordering>,
    /// Cautions for the whole level.
    pub notes: Vec<String>,
}

/// Sweep one level: build it, run the engine, keep the reportable points.
pub fn sweep_one(
    lattice: &Lattice,
    name: &str,
    temps: &[f64],
    fields: &[f64],
    supercell: Option<[usize; 3]>,
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
    line.stage("ordering wavevector, then the path");
    let tick = || progress.inc(1);
    let options = SweepOptions { supercell };
    let swept = sweep_level(lattice, &level, temps, fields, options, &tick)
        .map_err(|e| too_large_or(e, name))?;
    let cell_lattice = if swept.cell == [1, 1, 1] {
        lattice.clone()
    } else {
        lattice.supercell(swept.cell)?
    };
    let site_names: Vec<String> = cell_lattice
        .basis()
        .iter()
        .map(|s| s.name.clone())
        .collect();
    let bonds = cell_lattice
        .bonds()
        .iter()
        .map(|b| BondLabel {
            from: site_names[b.from].clone(),
            to: site_names[b.to].clone(),
            cell: b.cell[..lattice.dimension()].to_vec(),
            coupling: b.coupling.clone(),
        })
        .collect();
    let mut points = Vec::with_capacity(swept.points.len());
    let mut info = Vec::with_capacity(swept.points.len());
    let mut omitted = Vec::new();
    for p in swept.points {
        match p {
            SweepPoint::Solved(p) => match defect(&p.observables) {
                None => {
                    info.push(PointInfo {
                        order_parameter: p.order_parameter,
                        branch: p.branch,
                        notes: p.notes.clone(),
                    });
                    points.push(p.observables);
                }
                Some(reason) => omitted.push(Omitted {
                    temperature: p.observables.temperature,
                    field: p.observables.field,
                    reason: reason.into(),
                }),
            },
            SweepPoint::Omitted {
                temperature,
                field,
                reason,
            } => omitted.push(Omitted {
                temperature,
                field,
                reason,
            }),
        }
    }
    line.finish();
    Ok(LevelSweep {
        level: name.to_string(),
        max_cluster_sites: level.max_cluster_sites(),
        points,
        info,
        omitted,
        tc: swept.tc,
        cell: swept.cell,
        site_names,
        bonds,
        ordering: swept.ordering,
        notes: swept.notes,
    })
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

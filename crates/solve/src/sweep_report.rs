//! Sweeps of several levels as one reportable result: the points that can be shown, the
//! points left out and why, and the notes — what `rungs sweep` prints and the Python
//! package returns, in one place. Its JSON ([`serde::Serialize`]) has the keys of the
//! `sweep --format json` contract; [`COLUMNS`] are the CSV columns.
//!
//! Each level is swept by [`crate::sweep_level`] (fields outermost, temperatures in the
//! order given, each point continuing the branch of the one before, on the cell that
//! holds the level's ordering or on the supercell asked for); levels run in parallel
//! (rayon). A point the engine cannot solve, or whose response functions do not exist
//! (the Hessian is singular at a critical point, C or χ negative, a value not finite),
//! is left out with its reason, never reported as NaN; the path goes on.

use std::collections::BTreeMap;

use rayon::prelude::*;
use rungs_lattice::{Lattice, LatticeError, Level};
use serde::{Serialize, Serializer};
use thiserror::Error;

use crate::cautions::{order_note, NOT_BOUNDS_NOTE, ONE_D_NOTE};
use crate::levels::LevelEvent;
use crate::ordering::Ordering;
use crate::phase::Branch;
use crate::{sweep_level, Observables, SolveError, SweepOptions, SweepPoint};

/// CSV columns of a sweep (the command contract), one row per (level, temperature,
/// field); each is also a key of every JSON point.
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

/// What the specific heat and the susceptibility of a sweep are (JSON `definitions`).
pub const DEFINITIONS: [(&str, &str); 2] = [
    ("specific_heat", "dU/dT at fixed h, per site"),
    (
        "susceptibility",
        "dm/dh at fixed T, per site (the response to the field); not mc's N(<m^2> - <|m|>^2)/T",
    ),
];

/// Why a sweep could not be made.
#[derive(Debug, Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum SweepError {
    /// A level or the lattice's supercell could not be built: bad input.
    #[error(transparent)]
    Lattice(Box<LatticeError>),
    /// A request that cannot be computed (a temperature or field that is not a finite
    /// number, no level): bad input.
    #[error("{0}")]
    BadInput(String),
    /// A level the engine cannot sweep (too large).
    #[error("cannot sweep level `{level}`: {reason}")]
    CannotSweep {
        /// Level name.
        level: String,
        /// Why.
        reason: String,
    },
    /// The engine failed for a whole level.
    #[error(transparent)]
    Solve(SolveError),
}

impl From<LatticeError> for SweepError {
    fn from(e: LatticeError) -> SweepError {
        SweepError::Lattice(Box::new(e))
    }
}

impl SweepError {
    /// Whether the request was at fault (bad input), rather than the computation.
    pub fn is_bad_input(&self) -> bool {
        matches!(
            self,
            SweepError::Lattice(_)
                | SweepError::BadInput(_)
                | SweepError::Solve(SolveError::BadTemperature { .. })
        )
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

/// A bond of the cell, as reported beside its correlation.
#[derive(Debug, Clone, PartialEq, Serialize)]
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

/// One level's sweep, as reported.
#[derive(Debug, Clone)]
pub struct SweptLevel {
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
    /// The cell followed (cells along each axis).
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

/// Sweeps of several levels of one lattice: what `rungs sweep` reports.
#[derive(Debug, Clone)]
pub struct SweepReport {
    /// Lattice name.
    pub lattice: String,
    /// Spatial dimension.
    pub dimension: usize,
    /// The fields swept.
    pub fields: Vec<f64>,
    /// One entry per level, in the order asked for.
    pub levels: Vec<SweptLevel>,
    /// Conventions and cautions; a front end may add its own (e.g. about a figure).
    pub notes: Vec<String>,
}

/// One row of the sweep: the CSV columns ([`COLUMNS`]) and the JSON point's keys.
#[derive(Debug, Clone, Serialize)]
pub struct SweepRow<'a> {
    /// Level name.
    pub level: &'a str,
    /// Temperature.
    pub temperature: f64,
    /// Field.
    pub field: f64,
    /// Magnetisation per site.
    pub magnetization: f64,
    /// Energy per site.
    pub energy: f64,
    /// Free energy per site.
    pub free_energy: f64,
    /// Entropy per site.
    pub entropy: f64,
    /// Specific heat dU/dT per site.
    pub specific_heat: f64,
    /// Susceptibility dm/dh per site.
    pub susceptibility: f64,
    /// Amplitude of the level's ordering pattern.
    pub order_parameter: f64,
    /// `disordered` or `ordered`.
    #[serde(serialize_with = "branch_str")]
    pub branch: Branch,
    /// Magnetisation of each site of the cell followed.
    pub sublattice_magnetizations: &'a [f64],
    /// The same, keyed by site name.
    pub sublattice_magnetization: BTreeMap<&'a str, f64>,
    /// The level's ordering wavevector (zeros when uniform or unknown).
    pub wavevector: Vec<f64>,
    /// The cell followed, cells along each axis.
    pub cell: &'a [usize],
    /// Every bond of the cell with its correlation ⟨s_i s_j⟩.
    pub bond_correlations: Vec<BondCorrelation<'a>>,
    /// Cautions at this point, joined; `None` when none.
    pub note: Option<String>,
    /// Whether the entropy came out negative (an artefact of the approximation).
    pub negative_entropy: bool,
}

/// A bond of the cell and its correlation, in a JSON point.
#[derive(Debug, Clone, Serialize)]
pub struct BondCorrelation<'a> {
    /// The bond.
    #[serde(flatten)]
    pub bond: &'a BondLabel,
    /// ⟨s_i s_j⟩.
    pub correlation: f64,
}

/// `branch` as its word.
fn branch_str<S: Serializer>(b: &Branch, s: S) -> Result<S::Ok, S::Error> {
    s.serialize_str(b.as_str())
}

/// A point left out, in JSON.
#[derive(Debug, Clone, Serialize)]
struct OmittedRow<'a> {
    level: &'a str,
    temperature: f64,
    field: f64,
    reason: &'a str,
}

/// The JSON document of a sweep.
#[derive(Serialize)]
struct SweepJson<'a> {
    lattice: &'a str,
    fields: &'a [f64],
    points: Vec<SweepRow<'a>>,
    omitted: Vec<OmittedRow<'a>>,
    notes: &'a [String],
    definitions: BTreeMap<&'a str, &'a str>,
}

impl Serialize for SweepReport {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        SweepJson {
            lattice: &self.lattice,
            fields: &self.fields,
            points: self.rows(),
            omitted: self
                .levels
                .iter()
                .flat_map(|l| {
                    l.omitted.iter().map(|o| OmittedRow {
                        level: &l.level,
                        temperature: o.temperature,
                        field: o.field,
                        reason: &o.reason,
                    })
                })
                .collect(),
            notes: &self.notes,
            definitions: DEFINITIONS.into_iter().collect(),
        }
        .serialize(s)
    }
}

impl SweepReport {
    /// Every reported point, level by level: the CSV rows and JSON points.
    pub fn rows(&self) -> Vec<SweepRow<'_>> {
        let d = self.dimension;
        self.levels
            .iter()
            .flat_map(|l| {
                l.points.iter().zip(&l.info).map(move |(p, i)| SweepRow {
                    level: &l.level,
                    temperature: p.temperature,
                    field: p.field,
                    magnetization: p.magnetization,
                    energy: p.energy,
                    free_energy: p.free_energy,
                    entropy: p.entropy,
                    specific_heat: p.specific_heat,
                    susceptibility: p.susceptibility,
                    order_parameter: i.order_parameter,
                    branch: i.branch,
                    sublattice_magnetizations: &p.sublattice_magnetization,
                    sublattice_magnetization: l
                        .site_names
                        .iter()
                        .map(String::as_str)
                        .zip(p.sublattice_magnetization.iter().copied())
                        .collect(),
                    wavevector: l
                        .ordering
                        .as_ref()
                        .map_or_else(|| vec![0.0; d], |o| o.wavevector[..d].to_vec()),
                    cell: &l.cell[..d],
                    bond_correlations: l
                        .bonds
                        .iter()
                        .zip(&p.bond_correlations)
                        .map(|(bond, &correlation)| BondCorrelation { bond, correlation })
                        .collect(),
                    note: (!i.notes.is_empty()).then(|| i.notes.join("; ")),
                    negative_entropy: p.entropy < -1e-10,
                })
            })
            .collect()
    }
}

/// Sweep every level in `names` of `lattice` over every (field, temperature) — fields
/// outermost, temperatures in the order given — on the cell of each level's ordering,
/// or on `supercell` when given. `observe` hears each level's stages and points.
///
/// # Errors
/// [`SweepError::BadInput`] for no level, no temperature or field, a temperature that
/// is not positive or a field that is not finite; [`SweepError::Lattice`] for an unknown
/// level or a bad supercell; [`SweepError::CannotSweep`] for a level too large.
///
/// ```
/// use rungs_solve::sweep_report::sweep_levels;
/// let chain = rungs_lattice::Lattice::from_yaml_str(
///     "name: chain\ndimension: 1\nvectors: [[1]]\nbasis: [{name: a}]\n\
///      couplings: {J: 1}\nbonds: [{from: a, to: a, cell: [1], coupling: J}]\n",
///     "chain.yaml",
/// )?;
/// let report = sweep_levels(&chain, &["pair".into()], &[1.0, 2.0], &[0.0], None, &|_| {})?;
/// let rows = report.rows();
/// // The pair level is exact on a chain: U = −J tanh(J/T) (Ising 1925, Z. Phys. 31, 253).
/// assert!((rows[0].energy + 1f64.tanh()).abs() < 1e-8);
/// assert!((rows[1].energy + 0.5f64.tanh()).abs() < 1e-8);
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
pub fn sweep_levels(
    lattice: &Lattice,
    names: &[String],
    temps: &[f64],
    fields: &[f64],
    supercell: Option<[usize; 3]>,
    observe: &(dyn Fn(LevelEvent<'_>) + Sync),
) -> Result<SweepReport, SweepError> {
    if names.is_empty() || temps.is_empty() || fields.is_empty() {
        return Err(SweepError::BadInput(
            "a sweep needs at least one level, one temperature and one field".into(),
        ));
    }
    if let Some(h) = fields.iter().find(|h| !h.is_finite()) {
        return Err(SweepError::BadInput(format!(
            "field {h} is not a finite number"
        )));
    }
    let levels = names
        .par_iter()
        .enumerate()
        .map(|(index, name)| sweep_one(lattice, index, name, temps, fields, supercell, observe))
        .collect::<Result<Vec<_>, _>>()?;
    let mut report = SweepReport {
        lattice: lattice.name().to_string(),
        dimension: lattice.dimension(),
        fields: fields.to_vec(),
        levels,
        notes: Vec::new(),
    };
    report.notes = notes(&report, lattice);
    Ok(report)
}

/// Sweep one level: build it, run the engine, keep the reportable points.
fn sweep_one(
    lattice: &Lattice,
    index: usize,
    name: &str,
    temps: &[f64],
    fields: &[f64],
    supercell: Option<[usize; 3]>,
    observe: &(dyn Fn(LevelEvent<'_>) + Sync),
) -> Result<SweptLevel, SweepError> {
    observe(LevelEvent::Stage {
        index,
        stage: "building clusters",
    });
    let level = match Level::build(lattice, name) {
        Ok(level) => level,
        Err(e @ LatticeError::ClusterTooLarge { .. }) => {
            return Err(SweepError::CannotSweep {
                level: name.to_string(),
                reason: e.to_string(),
            })
        }
        Err(e) => return Err(e.into()),
    };
    observe(LevelEvent::Stage {
        index,
        stage: "ordering wavevector, then the path",
    });
    let tick = || observe(LevelEvent::Point { index });
    let options = SweepOptions { supercell };
    let swept =
        sweep_level(lattice, &level, temps, fields, options, &tick).map_err(|e| match e {
            SolveError::TooLarge { .. } => SweepError::CannotSweep {
                level: name.to_string(),
                reason: e.to_string(),
            },
            e => SweepError::Solve(e),
        })?;
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
    observe(LevelEvent::Finished {
        index,
        outcome: "done",
    });
    Ok(SweptLevel {
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

/// A number for notes.
fn num(x: f64) -> String {
    format!("{x}")
}

/// The notes of a sweep: conventions, hysteresis, the order searched, bounds, the cell
/// each level was followed on, cautions grouped by kind, the 1D caution, and the points
/// left out grouped by reason.
fn notes(report: &SweepReport, lattice: &Lattice) -> Vec<String> {
    let mut notes = vec![
        "per site, k_B = 1: T in units of J/k_B; m magnetisation, U energy, F free energy (J), \
         S entropy (k_B), C specific heat (k_B), χ = ∂m/∂h (the response to the field; not `mc`'s \
         χ′ = N(⟨m²⟩ − ⟨|m|⟩²)/T, which is about 0.36 χ above Tc), order parameter = amplitude \
         of the level's ordering pattern in the sublattice magnetisations (|m| for uniform order, \
         the staggered magnetisation for Néel order, 0 in the disordered phase)."
            .to_string(),
        "each point continues the branch of the point before it (warm start), in the order the \
         temperatures are given: a path that cools through a first-order transition stays in the \
         disordered phase until it becomes unstable, one that heats stays ordered until that \
         branch ends (hysteresis); the first point takes the lower free energy."
            .to_string(),
        order_note(lattice),
        NOT_BOUNDS_NOTE.to_string(),
    ];
    let d = report.dimension;
    for l in &report.levels {
        if l.cell != [1, 1, 1] {
            let cell: Vec<String> = l.cell[..d].iter().map(usize::to_string).collect();
            notes.push(format!(
                "level `{}` is followed on the {} cell ({} sites){}.",
                l.level,
                cell.join("x"),
                l.site_names.len(),
                l.ordering.as_ref().map_or(String::new(), |o| format!(
                    ", which holds its ordering wavevector q = ({})",
                    o.wavevector[..d]
                        .iter()
                        .map(|v| num(*v))
                        .collect::<Vec<_>>()
                        .join(", ")
                ))
            ));
        }
        for n in &l.notes {
            notes.push(format!("level `{}`: {n}", l.level));
        }
        // One note per kind of caution, with the points it concerns.
        let mut kinds: Vec<(String, Vec<String>, String)> = Vec::new();
        for (p, i) in l.points.iter().zip(&l.info) {
            for n in &i.notes {
                let kind = n.split(['=', ':']).next().unwrap_or(n).trim().to_string();
                let at = format!("T = {}, h = {}", num(p.temperature), num(p.field));
                match kinds.iter_mut().find(|k| k.0 == kind) {
                    Some(k) => k.1.push(at),
                    None => kinds.push((kind, vec![at], n.clone())),
                }
            }
        }
        for (_, at, first) in kinds {
            let shown = if at.len() > 6 {
                format!("{} … {} ({} points)", at[0], at[at.len() - 1], at.len())
            } else {
                at.join("; ")
            };
            notes.push(format!("level `{}` at {shown}: {first}", l.level));
        }
    }
    let ordering: Vec<&str> = report
        .levels
        .iter()
        .filter(|l| {
            l.points
                .iter()
                .any(|p| p.field == 0.0 && p.magnetization.abs() > 1e-6)
        })
        .map(|l| l.level.as_str())
        .collect();
    if d == 1 && !ordering.is_empty() {
        notes.push(format!(
            "level(s) `{}` order spontaneously (m ≠ 0 at h = 0) on this 1D lattice — {ONE_D_NOTE}",
            ordering.join("`, `")
        ));
    }
    for l in &report.levels {
        // One note per reason (the engine's message without its own T and h), with the
        // points it concerns.
        let mut reasons: Vec<(String, Vec<String>)> = Vec::new();
        for o in &l.omitted {
            let at = format!("T = {}, h = {}", num(o.temperature), num(o.field));
            let reason = o
                .reason
                .split_once(&format!("{at}: "))
                .map_or(o.reason.clone(), |(_, r)| r.to_string());
            match reasons.iter_mut().find(|r| r.0 == reason) {
                Some(r) => r.1.push(at),
                None => reasons.push((reason, vec![at])),
            }
        }
        for (reason, at) in reasons {
            let shown = if at.len() > 4 {
                format!("{} … {} ({} points)", at[0], at[at.len() - 1], at.len())
            } else {
                at.join("; ")
            };
            notes.push(format!("omitted: level `{}` at {shown}: {reason}", l.level));
        }
    }
    notes
}

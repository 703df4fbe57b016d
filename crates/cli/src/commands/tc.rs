//! `rungs tc LATTICE [--levels a,b] [--supercell 2x2]`: the critical temperature at each
//! level (default: all levels), beside a reference Tc.
//!
//! Levels are sorted by cluster size (`site`, `pair`, then the file's levels by their
//! largest cluster) and computed in parallel (rayon); levels too large for the dense
//! engine are searched afterwards on point-group orbits (uniform order only), one by one,
//! each starting just above the lowest Tc of the smaller rungs. At each level Tc is where the
//! paramagnetic solution stops being a minimum of the level's free energy (the smallest
//! odd-sector Hessian eigenvalue reaches zero, see `rungs_solve::tc`); the critical mode
//! says which order sets in. A level the engine refuses as too large is reported with
//! its reason instead of failing the command, unless it is the only level asked for.
//!
//! The reference is the file's `reference:`, else the exact Tc of a closed form
//! recognised from the bond structure (`rungs_reference::closed::ClosedForm`); it is
//! taken from the lattice as written, before `--supercell`, since enlarging the cell does
//! not change the model. `deviation = tc / reference − 1`.
//!
//! The caution notes shared with `rungs sweep` (what order is searched; levels beyond
//! `site` are approximations, not bounds; finite Tc on a 1D lattice is an artefact) are
//! here too: [`order_note`], [`NOT_BOUNDS_NOTE`], [`ONE_D_NOTE`].

use std::time::Instant;

use rayon::prelude::*;
use rungs_lattice::{CompactLevel, Lattice, LatticeError, Level, MAX_MATERIALISED_SITES};
use rungs_reference::closed::ClosedForm;
use rungs_solve::functional::check_size;
use rungs_solve::{critical_temperature_observed, CriticalPoint, SolveError, TcOptions};

use crate::args::TcArgs;
use crate::error::CliError;
use crate::output::Output;
use crate::progress::{Progress, StageLine};

mod report;
pub use report::TcReport;

/// Footer note: which levels are variational bounds.
pub const NOT_BOUNDS_NOTE: &str =
    "bounds: `site` gives F_site ≥ F_exact for any couplings and field (Bogoliubov inequality) \
     and, for ferromagnets (all J ≥ 0, or unfrustrated couplings at h = 0, which a change of \
     spin signs makes ferromagnetic), Tc_site ≥ Tc_exact (Griffiths 1967, Commun. Math. Phys. \
     6, 121); `pair` gives, for ferromagnets, F_pair ≥ F_exact in any field (Ruozzi 2012, NIPS \
     25, 117) and Tc_pair ≥ Tc_exact (correlations bounded by non-backtracking walks: Fisher \
     1967; Saade, Krzakala & Zdeborová 2016, arXiv:1609.08269). Larger clusters are \
     approximations, not bounds: their Tc and F may lie on either side of the exact values.";

/// Footer note for one-dimensional lattices.
pub const ONE_D_NOTE: &str = "1D lattice: the exact model has no order at any T > 0 (Ising 1925, \
     Z. Phys. 31, 253), so any finite Tc or spontaneous magnetisation here is an artefact of the \
     approximation.";

/// Row note for a level that orders on a 1D lattice.
pub const ONE_D_ROW: &str = "artefact: no order at T > 0 in 1D";

/// Row note for a level searched on point-group orbits.
pub const ORBIT_ROW: &str = "big level, solved on point-group orbits: uniform order only";

/// Run `rungs tc`.
pub fn run(args: &TcArgs, out: &mut Output) -> Result<(), CliError> {
    let primitive = super::load_lattice(&args.common.lattice)?;
    let lattice = super::apply_supercell(primitive.clone(), args.supercell)?;
    let field = args.field.unwrap_or(primitive.field());
    if !field.is_finite() {
        return Err(CliError::Usage(format!(
            "--field {field} is not a finite number"
        )));
    }
    let names = sort_levels(
        &lattice,
        super::select_levels(&lattice, args.levels.as_deref())?,
    )?;
    let progress = Progress::levels(names.len() as u64, "tc: levels done");
    let lines: Vec<StageLine> = names
        .iter()
        .map(|n| progress.line(&format!("level `{n}`")))
        .collect();
    // Build every level, search the dense ones in parallel, then the big ones (solved on
    // point-group orbits, slow) one by one, each starting just above the lowest Tc of
    // the smaller cluster rungs (cluster Tc's of a ferromagnet fall as clusters grow).
    let prepared = names
        .par_iter()
        .zip(&lines)
        .map(|(name, line)| {
            line.stage("building clusters");
            let p = prepare(&lattice, name);
            line.wait();
            p
        })
        .collect::<Result<Vec<_>, _>>()?;
    let mut rows = prepared
        .par_iter()
        .zip(&lines)
        .map(|(p, line)| {
            if p.big {
                return None;
            }
            line.stage("Tc search");
            let row = search(&lattice, p, None, field, &line.observer());
            line.finish();
            progress.inc(1);
            Some(row)
        })
        .collect::<Vec<_>>();
    for (i, p) in prepared.iter().enumerate().filter(|(_, p)| p.big) {
        let start_below = rows
            .iter()
            .flatten()
            .filter(|r| r.max_cluster_sites >= 2 && r.max_cluster_sites < p.max_cluster_sites)
            .filter_map(LevelTc::tc)
            .reduce(f64::min)
            .map(|t| 1.01 * t);
        lines[i].stage("Tc search on point-group orbits");
        rows[i] = Some(search(
            &lattice,
            p,
            start_below,
            field,
            &lines[i].observer(),
        ));
        lines[i].finish();
        progress.inc(1);
    }
    let levels: Vec<LevelTc> = rows.into_iter().flatten().collect();
    progress.finish();
    // A level that fails is reported in its row; the command fails only when none
    // gave a result.
    if levels
        .iter()
        .all(|r| matches!(r.outcome, TcOutcome::Refused(_) | TcOutcome::Failed(_)))
    {
        let reasons: Vec<String> = levels
            .iter()
            .filter_map(|r| match &r.outcome {
                TcOutcome::Refused(e) | TcOutcome::Failed(e) => Some(e.clone()),
                TcOutcome::Searched(_) => None,
            })
            .collect();
        return Err(CliError::NotConverged(reasons.join("; ")));
    }
    out.emit(&TcReport::new(
        &primitive,
        &lattice,
        args.supercell,
        field,
        levels,
    ))
}

/// Levels in ladder order: `site`, `pair`, then the others by their largest cluster
/// (ties keep the order given).
pub fn sort_levels(lattice: &Lattice, names: Vec<String>) -> Result<Vec<String>, CliError> {
    let mut keyed = names
        .into_iter()
        .map(|n| {
            let rank = match n.as_str() {
                "site" => 0,
                "pair" => 1,
                _ => 2,
            };
            Level::max_cluster_sites_of(lattice, &n).map(|sites| ((rank, sites), n))
        })
        .collect::<Result<Vec<_>, _>>()?;
    keyed.sort_by_key(|(key, _)| *key);
    Ok(keyed.into_iter().map(|(_, n)| n).collect())
}

/// What the Tc search gave at one level.
#[derive(Debug, Clone)]
pub enum TcOutcome {
    /// The search ran; `tc` is `None` when no transition was found.
    Searched(Box<CriticalPoint>),
    /// The engine refused the level (too large); the reason says why.
    Refused(String),
    /// The search failed (no convergence); the reason says where.
    Failed(String),
}

/// One level's row.
#[derive(Debug, Clone)]
pub struct LevelTc {
    /// Level name.
    pub level: String,
    /// Sites of the largest maximal cluster.
    pub max_cluster_sites: usize,
    /// Wall-clock seconds: building the level and searching Tc.
    pub seconds: f64,
    /// Searched on point-group orbits (a big level): uniform order only.
    pub orbit_reduced: bool,
    /// The result.
    pub outcome: TcOutcome,
}

impl LevelTc {
    /// The critical temperature, when one was found.
    pub fn tc(&self) -> Option<f64> {
        match &self.outcome {
            TcOutcome::Searched(cp) => cp.tc.filter(|t| t.is_finite()),
            TcOutcome::Refused(_) | TcOutcome::Failed(_) => None,
        }
    }
}

/// A level built and ready for the Tc search.
pub struct Prepared {
    /// Level name.
    pub name: String,
    /// Sites of the largest maximal cluster.
    pub max_cluster_sites: usize,
    /// Seconds spent building it.
    pub seconds: f64,
    /// The level, or why it cannot be built (cluster over the site limit).
    pub level: Result<Level, String>,
    /// Levels whose clusters exceed `MAX_MATERIALISED_SITES` (e.g. the 5×5 block),
    /// built only on point-group orbits.
    pub compact: Option<CompactLevel>,
    /// Whether it is too large for the dense engine, so that its Tc is searched on
    /// point-group orbits (uniform order only, slow).
    pub big: bool,
}

/// Build level `name` of `lattice`.
pub fn prepare(lattice: &Lattice, name: &str) -> Result<Prepared, CliError> {
    let start = Instant::now();
    let max_cluster_sites = Level::max_cluster_sites_of(lattice, name)?;
    if max_cluster_sites > MAX_MATERIALISED_SITES {
        let (level, compact) = match CompactLevel::build(lattice, name) {
            Ok(c) => (Err("built on point-group orbits only".to_string()), Some(c)),
            Err(e @ LatticeError::CompactLimit { .. }) => (Err(e.to_string()), None),
            Err(e) => return Err(e.into()),
        };
        return Ok(Prepared {
            name: name.to_string(),
            max_cluster_sites,
            seconds: start.elapsed().as_secs_f64(),
            level,
            compact,
            big: true,
        });
    }
    let level = match Level::build(lattice, name) {
        Ok(level) => Ok(level),
        Err(e @ LatticeError::ClusterTooLarge { .. }) => Err(e.to_string()),
        Err(e) => return Err(e.into()),
    };
    let big = level.as_ref().is_ok_and(|l| check_size(l).is_err());
    Ok(Prepared {
        name: name.to_string(),
        max_cluster_sites,
        seconds: start.elapsed().as_secs_f64(),
        level,
        compact: None,
        big,
    })
}

/// Find the Tc of a prepared level in field `field`; `start_below` is where the search
/// of a big level starts (`TcOptions::start_below`). A level the engine refuses as too
/// large is a [`TcOutcome::Refused`], one whose search fails a [`TcOutcome::Failed`]:
/// the other levels still print.
pub fn search(
    lattice: &Lattice,
    p: &Prepared,
    start_below: Option<f64>,
    field: f64,
    observe: &(dyn Fn(&str) + Sync),
) -> LevelTc {
    let start = Instant::now();
    let options = TcOptions {
        start_below,
        field,
        ..TcOptions::default()
    };
    let outcome = match (&p.level, &p.compact) {
        (_, Some(compact)) => {
            match rungs_solve::big::critical_temperature_compact(lattice, compact, options) {
                Ok(cp) => TcOutcome::Searched(Box::new(cp)),
                Err(e) => TcOutcome::Failed(e.to_string()),
            }
        }
        (Err(reason), None) => TcOutcome::Refused(reason.clone()),
        (Ok(level), None) => {
            match critical_temperature_observed(lattice, level, options, observe) {
                Ok(cp) => TcOutcome::Searched(Box::new(cp)),
                Err(e @ SolveError::TooLarge { .. }) => TcOutcome::Refused(e.to_string()),
                Err(e) => TcOutcome::Failed(e.to_string()),
            }
        }
    };
    LevelTc {
        level: p.name.clone(),
        max_cluster_sites: p.max_cluster_sites,
        seconds: p.seconds + start.elapsed().as_secs_f64(),
        orbit_reduced: p.big,
        outcome,
    }
}

/// An engine error as a command error: a bad temperature is bad input (exit status 2),
/// everything else a computation that did not succeed (exit status 1).
pub fn solve_error(e: SolveError) -> CliError {
    match e {
        SolveError::BadTemperature { .. } => CliError::Usage(e.to_string()),
        e => CliError::NotConverged(e.to_string()),
    }
}

/// The reference Tc of a lattice as written in its file: its `reference:`, else the exact
/// Tc of the closed form recognised from its bonds; `(tc, source)`.
pub fn reference_tc(lattice: &Lattice) -> Option<(f64, String)> {
    if let Some(r) = lattice.reference() {
        return Some((r.tc, r.source.clone()));
    }
    let form = ClosedForm::recognise(lattice)?;
    let tc = form.tc().filter(|t| t.is_finite())?;
    Some((
        tc,
        format!("exact Tc of the {} lattice: {}", form.name(), form.source()),
    ))
}

/// The note saying which order a level can find. Every level's instability is sought
/// at every wavevector of the zone (see `rungs_solve::tc`), so order that breaks the
/// cell's translations is found without a supercell; frustrated lattices are flagged,
/// where a cluster approximation may order although the exact model does not.
pub fn order_note(lattice: &Lattice) -> String {
    let frustrated = lattice.is_frustrated();
    let base = "each level's instability is sought at every wavevector q, so order that breaks the \
                cell's translations (Néel order, superstructures) is found without a supercell; q is in \
                units of the reciprocal primitive vectors, and `supercell` is the smallest diagonal cell \
                that holds the order (`rungs sweep` follows the ordered phase on it)."
        .to_string();
    if frustrated {
        format!(
            "IMPORTANT: frustrated couplings (no change of spin signs makes every bond ferromagnetic). Cluster \
             approximations may predict order where the exact model has none (the triangular and kagome \
             antiferromagnets have no transition at any T > 0: Wannier 1950, Phys. Rev. 79, 357; Kanô & \
             Naya 1953, Prog. Theor. Phys. 10, 158). {}",
            capitalised(&base)
        )
    } else {
        base
    }
}

/// `text` with its first letter upper-case.
fn capitalised(text: &str) -> String {
    let mut c = text.chars();
    c.next()
        .map_or_else(String::new, |f| f.to_uppercase().chain(c).collect())
}

/// The note for a field: what Tc means there, and why a ferromagnet has none.
pub fn field_note(lattice: &Lattice, field: f64) -> Option<String> {
    if field == 0.0 {
        return None;
    }
    let ferro = lattice.bonds().iter().all(|b| b.j >= 0.0);
    Some(if ferro {
        format!(
            "h = {field}: a uniform field breaks the up–down symmetry of a ferromagnet, so there is \
             no phase transition in a field (common practice); any row without Tc says so. The \
             zero-field reference is not used."
        )
    } else {
        format!(
            "h = {field}: Tc is where the field-polarised phase becomes unstable to order (e.g. the \
             Néel line T_N(h) of an antiferromagnet); the zero-field reference is not used."
        )
    })
}

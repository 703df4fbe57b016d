//! `rungs phases LATTICE --levels L --temps ... --fields ... [--along temperature|field]
//! [--alloy] [--plot FILE.svg|png] [--shard k/n]`: the phase diagram of each level.
//!
//! Per level the engine prepares the diagram once (`rungs_solve::phases::
//! PhaseDiagramSetup`: the level's ordering at h = 0 and the candidate phases), then
//! computes its paths — one per field (paths in T) or per temperature (`--along field`)
//! — in parallel (rayon), one progress step per path. The paths are assembled into the
//! diagram (tricritical points between neighbouring paths) and reported
//! ([`PhasesReport`]).
//!
//! With `--shard k/n` only the paths whose index is `k − 1` modulo n are computed, and
//! the output is a partial result ([`part`]) that `rungs merge` joins with the other
//! parts into exactly the report of the unsharded run: both go through
//! [`PhasesReport::new`] with the same diagrams.

use rayon::prelude::*;
use rungs_lattice::{Lattice, LatticeError, Level};
use rungs_solve::phases::{
    assemble, Along, DiagramHeader, DiagramSpec, PathResult, PhaseDiagramSetup,
};
use rungs_solve::SolveError;

use super::tc::solve_error;
use crate::args::{AlongArg, PhasesArgs, Shard};
use crate::error::CliError;
use crate::output::write::{write_atomic, write_stdout};
use crate::output::Output;
use crate::progress::Progress;

pub mod part;
mod report;
pub use report::PhasesReport;

/// Run `rungs phases`.
pub fn run(args: &PhasesArgs, out: &mut Output) -> Result<(), CliError> {
    let lattice = super::load_lattice(&args.common.lattice)?;
    let names = super::select_levels(&lattice, Some(&args.levels))?;
    let fields = args
        .fields
        .as_ref()
        .map_or_else(|| vec![lattice.field()], |l| l.0.clone());
    if let Some(h) = fields.iter().find(|h| !h.is_finite()) {
        return Err(CliError::Usage(format!("field {h} is not a finite number")));
    }
    let along = match args.along {
        AlongArg::Temperature => Along::Temperature,
        AlongArg::Field => Along::Field,
    };
    let spec = DiagramSpec::new(&args.temps.0, &fields, along);
    if spec.path_values().len() < 2 {
        return Err(CliError::Usage(format!(
            "a path in {} needs at least two values: give a list or a range to {}",
            along.as_str(),
            match along {
                Along::Temperature => "--temps",
                Along::Field => "--fields",
            }
        )));
    }
    let progress = Progress::new((names.len() * spec.paths()) as u64, "phases");
    let mut computed = Vec::with_capacity(names.len());
    for name in &names {
        computed.push(level_paths(&lattice, name, &spec, args.shard, &progress)?);
    }
    progress.finish();
    if let Some(shard) = args.shard {
        let text = part::encode(lattice.name(), shard, args.alloy, &computed)?;
        return match &args.common.output {
            Some(path) => write_atomic(path, text.as_bytes()),
            None => write_stdout(text.as_bytes()),
        };
    }
    let diagrams = computed
        .into_iter()
        .map(|(header, paths)| {
            assemble(header, paths).map_err(|e| CliError::NotConverged(e.to_string()))
        })
        .collect::<Result<Vec<_>, _>>()?;
    let report = PhasesReport::new(lattice.name(), args.alloy, diagrams);
    if let Some(path) = &args.plot {
        crate::plot::file::write(path, &report.figure())?;
    }
    out.emit(&report)
}

/// The header of level `name`'s diagram and the paths of it this run computes (every
/// path, or those of `shard`).
pub fn level_paths(
    lattice: &Lattice,
    name: &str,
    spec: &DiagramSpec,
    shard: Option<Shard>,
    progress: &Progress,
) -> Result<(DiagramHeader, Vec<PathResult>), CliError> {
    let line = progress.line(&format!("level `{name}`"));
    line.stage("building clusters");
    let level = match Level::build(lattice, name) {
        Ok(level) => level,
        Err(e @ LatticeError::ClusterTooLarge { .. }) => {
            return Err(CliError::NotConverged(format!(
                "cannot compute the phase diagram of level `{name}`: {e}"
            )))
        }
        Err(e) => return Err(e.into()),
    };
    line.stage("ordering wavevector and candidate phases");
    let setup = PhaseDiagramSetup::new(lattice, &level, spec.clone()).map_err(|e| match e {
        SolveError::TooLarge { .. } => CliError::NotConverged(format!(
            "cannot compute the phase diagram of level `{name}`: {e}"
        )),
        e => solve_error(e),
    })?;
    line.stage("following the phases along each path");
    let mine: Vec<usize> = (0..setup.paths())
        .filter(|&i| shard.is_none_or(|s| s.holds(i)))
        .collect();
    let paths: Vec<PathResult> = mine
        .par_iter()
        .map(|&i| {
            let p = setup.path(i);
            progress.inc(1);
            p
        })
        .collect();
    if shard.is_some() {
        progress.inc((setup.paths() - mine.len()) as u64);
    }
    line.finish();
    Ok((DiagramHeader::of(&setup), paths))
}

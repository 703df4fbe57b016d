//! `rungs merge PART... [--format ...] [--output FILE] [--plot FILE]`: join the partial
//! results of `rungs phases --shard k/n` runs into the report of the unsharded run.
//!
//! The parts must come from the same command (same lattice, levels, grid, alloy view,
//! number of parts) and together hold every path exactly once; they may be given in
//! any order. The paths are assembled per level (tricritical points between
//! neighbouring paths are found only now, when every path is there) and reported by the
//! same code as `rungs phases`, so the output is the unsharded run's, byte for byte.

use rungs_solve::phases::{assemble, PathResult};

use crate::args::MergeArgs;
use crate::commands::phases::part::{self, Part};
use crate::commands::phases::PhasesReport;
use crate::error::CliError;
use crate::output::Output;

/// Run `rungs merge`.
pub fn run(args: &MergeArgs, out: &mut Output) -> Result<(), CliError> {
    let mut parts: Vec<(String, Part)> = Vec::with_capacity(args.parts.len());
    for path in &args.parts {
        parts.push((path.display().to_string(), part::read(path)?));
    }
    let (first_name, first) = &parts[0];
    let mut seen = vec![false; first.shard.n];
    for (name, p) in &parts {
        let same = p.lattice == first.lattice
            && p.alloy == first.alloy
            && p.shard.n == first.shard.n
            && p.diagrams.len() == first.diagrams.len()
            && p.diagrams
                .iter()
                .zip(&first.diagrams)
                .all(|(a, b)| a.header == b.header);
        if !same {
            return Err(CliError::Usage(format!(
                "`{name}` is not a part of the same run as `{first_name}` (lattice, levels, grid, --alloy and the number of parts must agree)"
            )));
        }
        if p.shard.k == 0 || p.shard.k > p.shard.n {
            return Err(CliError::Usage(format!(
                "`{name}` says it is part {} of {}",
                p.shard.k, p.shard.n
            )));
        }
        if std::mem::replace(&mut seen[p.shard.k - 1], true) {
            return Err(CliError::Usage(format!(
                "part {}/{} is given twice (`{name}`)",
                p.shard.k, p.shard.n
            )));
        }
    }
    if let Some(k) = seen.iter().position(|s| !s) {
        return Err(CliError::Usage(format!(
            "part {}/{} is missing: give every part of the run",
            k + 1,
            first.shard.n
        )));
    }
    let mut diagrams = Vec::with_capacity(first.diagrams.len());
    for (d, head) in first.diagrams.iter().enumerate() {
        let paths: Vec<PathResult> = parts
            .iter()
            .flat_map(|(_, p)| p.diagrams[d].paths.iter().cloned())
            .collect();
        let diagram = assemble(head.header.clone(), paths).map_err(|e| {
            CliError::Usage(format!(
                "the parts do not make up the diagram of level `{}`: {e}",
                head.header.level
            ))
        })?;
        diagrams.push(diagram);
    }
    let report = PhasesReport::new(&first.lattice, first.alloy, diagrams);
    if let Some(path) = &args.plot {
        crate::plot::file::write(path, &report.figure())?;
    }
    out.emit(&report)
}

//! `rungs tc LATTICE [--levels a,b] [--supercell 2x2]`: the critical temperature at each
//! level (default: all levels), beside a reference Tc.
//!
//! The computation is the library's (`rungs_reference::tc_report`, over
//! `rungs_solve::levels`): levels sorted by cluster size, the dense ones searched in
//! parallel, the big ones on point-group orbits afterwards, a level the engine refuses
//! kept as a row with its reason. This command parses, draws one progress line per level,
//! and formats the result (`report.rs`).

use rungs_reference::tc_report::tc_report;
use rungs_solve::levels::{sort_levels, LevelEvent};
use rungs_solve::SolveError;

use crate::args::TcArgs;
use crate::error::CliError;
use crate::output::Output;
use crate::progress::{Progress, StageLine};

mod report;

// The caution notes and level steps moved to the library; re-exported for the commands
// that used them from here.
pub use rungs_solve::cautions::{field_note, order_note, NOT_BOUNDS_NOTE, ONE_D_NOTE, ONE_D_ROW};
pub use rungs_solve::levels::{prepare, search, LevelTc, Prepared, TcOutcome};

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
    let observe = |e: LevelEvent<'_>| level_event(&progress, &lines, e);
    let supercell = args.supercell.map(|sc| sc.factors[..sc.given].to_vec());
    let report = tc_report(&primitive, &lattice, supercell, &names, field, &observe)?;
    progress.finish();
    out.emit(&report)
}

/// Show one level event on its line; a finished level moves the overall bar.
pub fn level_event(progress: &Progress, lines: &[StageLine], event: LevelEvent<'_>) {
    match event {
        LevelEvent::Stage { index, stage } => {
            if let Some(line) = lines.get(index) {
                line.stage(stage);
            }
        }
        LevelEvent::Waiting { index } => {
            if let Some(line) = lines.get(index) {
                line.wait();
            }
        }
        LevelEvent::Point { .. } => progress.inc(1),
        LevelEvent::Finished { index, outcome } => {
            if let Some(line) = lines.get(index) {
                line.finish_with(outcome);
            }
            progress.inc(1);
        }
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

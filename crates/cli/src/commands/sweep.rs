//! `rungs sweep LATTICE --levels a,b --temps T0:T1:dT [--field h | --fields ...]
//! [--plot FILE.svg|png [--panels ...]]`: equilibrium thermodynamics per site along a temperature path,
//! one row per (level, temperature, field).
//!
//! The computation is the library's (`rungs_solve::sweep_report::sweep_levels`: each
//! level swept by the engine, fields outermost, the temperatures in the order given —
//! descending paths too —, every point continuing the branch of the one before, on the
//! cell that holds the level's ordering wavevector or on `--supercell`; levels in
//! parallel; points that cannot be reported left out with a note saying where). This
//! command parses, shows one progress bar ticking per point with a line per level, and
//! formats the result (`report.rs`). A level too large for the engine stops the command
//! with exit status 1.
//!
//! With `--plot FILE.svg` (or `.png`) the sweep is also drawn ([`crate::plot::sweep`]),
//! with each level's Tc marked when the sweep includes h = 0 and the exact curves of a
//! closed form recognised from the lattice's bonds.

use rungs_solve::levels::LevelEvent;
use rungs_solve::sweep_report::sweep_levels;

use crate::args::SweepArgs;
use crate::error::CliError;
use crate::output::Output;
use crate::progress::{Progress, StageLine};

mod report;
pub use report::SweepReport;
pub use rungs_solve::sweep_report::COLUMNS;

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
    let lines: Vec<StageLine> = names
        .iter()
        .map(|n| progress.line(&format!("level `{n}`")))
        .collect();
    let observe = |e: LevelEvent<'_>| match e {
        LevelEvent::Stage { index, stage } => lines.get(index).map_or((), |l| l.stage(stage)),
        LevelEvent::Waiting { index } => lines.get(index).map_or((), StageLine::wait),
        LevelEvent::Point { .. } => progress.inc(1),
        LevelEvent::Finished { index, outcome } => {
            lines.get(index).map_or((), |l| l.finish_with(outcome))
        }
    };
    let swept = sweep_levels(&lattice, &names, temps, &fields, supercell, &observe)?;
    progress.finish();
    let panels = args.panels.clone().unwrap_or_default();
    let plotted = args.plot.as_ref().map(|_| panels.0.as_slice());
    let report = SweepReport::new(&lattice, swept, plotted);
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

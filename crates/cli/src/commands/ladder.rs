//! `rungs ladder LATTICE [--up-to N] [--mc] [--plot FILE.svg|png]`: how Tc converges as the
//! clusters grow, each rung against the reference, with extrapolations.
//!
//! The computation is the library's (`rungs_reference::ladder`: the levels and the
//! blocks of `--up-to`, their Tc, the reference choice, the extrapolations and the
//! notes). This command parses, shows progress — one line per level, a bar per Monte
//! Carlo pass — and formats the result: [`report`] (table and CSV; the JSON is the
//! library result's own serialization), and the figure of `--plot`
//! ([`crate::plot::ladder`]).

pub mod report;

use std::sync::Mutex;

use rungs_reference::ladder::{Ladder, LadderEvent, LadderOptions};

use crate::args::LadderArgs;
use crate::error::CliError;
use crate::output::Output;
use crate::progress::{Progress, StageLine};

pub use rungs_reference::ladder::{Extrapolated, ReferenceKind, ReferenceTc, RungResult};

/// Run `rungs ladder`.
pub fn run(args: &LadderArgs, out: &mut Output) -> Result<(), CliError> {
    let lattice = super::load_lattice(&args.common.lattice)?;
    let field = args.field.unwrap_or(lattice.field());
    if !field.is_finite() {
        return Err(CliError::Usage(format!(
            "--field {field} is not a finite number"
        )));
    }
    let options = LadderOptions {
        up_to: args.up_to,
        monte_carlo: args.mc,
        field,
    };
    let display = Display::default();
    let ladder = Ladder::compute(&lattice, options, &|e| display.show(e))?;
    display.finish();
    if let Some(path) = &args.plot {
        crate::plot::file::write(path, &ladder)?;
    }
    out.emit(&ladder)
}

/// The progress display of a ladder: a bar over the levels with a line each, then a bar
/// per Monte Carlo pass. Built as the events arrive (the levels are known only once the
/// ladder has chosen them).
#[derive(Debug, Default)]
struct Display {
    state: Mutex<State>,
}

#[derive(Debug, Default)]
struct State {
    levels: Option<(Progress, Vec<StageLine>)>,
    /// The Monte Carlo pass shown and its bar.
    monte_carlo: Option<(String, Progress)>,
}

impl Display {
    fn show(&self, event: LadderEvent<'_>) {
        let Ok(mut state) = self.state.lock() else {
            return;
        };
        match event {
            LadderEvent::Levels(names) => {
                let bar = Progress::levels(names.len() as u64, "ladder: levels done");
                let lines = names
                    .iter()
                    .map(|n| bar.line(&format!("level `{n}`")))
                    .collect();
                state.levels = Some((bar, lines));
            }
            LadderEvent::Level(e) => {
                if let Some((bar, lines)) = &state.levels {
                    super::tc::level_event(bar, lines, e);
                }
            }
            LadderEvent::MonteCarlo { pass, done, total } => {
                if let Some((bar, _)) = state.levels.take() {
                    bar.finish();
                }
                if state.monte_carlo.as_ref().is_none_or(|(p, _)| p != pass) {
                    if let Some((_, bar)) = state.monte_carlo.take() {
                        bar.finish();
                    }
                    let label = match pass {
                        "scan" => "Monte Carlo reference (scan)",
                        _ => "Monte Carlo reference",
                    };
                    state.monte_carlo = Some((pass.to_string(), Progress::new(1, label)));
                }
                if let Some((_, bar)) = &state.monte_carlo {
                    bar.set(done as u64, total as u64);
                }
            }
        }
    }

    fn finish(&self) {
        if let Ok(mut state) = self.state.lock() {
            if let Some((bar, _)) = state.levels.take() {
                bar.finish();
            }
            if let Some((_, bar)) = state.monte_carlo.take() {
                bar.finish();
            }
        }
    }
}

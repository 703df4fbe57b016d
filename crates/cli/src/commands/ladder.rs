//! `rungs ladder LATTICE [--up-to N] [--mc] [--plot FILE.svg|png]`: how Tc converges as the
//! clusters grow, each rung against the reference, with extrapolations.
//!
//! The steps, one file each:
//! * [`blocks`]: with `--up-to N`, square-ish blocks of cells up to N sites added as
//!   extra levels (the file's levels larger than N are left out);
//! * [`climb`]: every level of the file (site, pair, then the named clusters), sorted by
//!   the size of its largest cluster; per level Tc, the critical amplitude χ̄ and the
//!   time, or why it was skipped; then the coherent-anomaly (Suzuki 1986) and
//!   inverse-size (Kikuchi & Brush 1967) extrapolations over the cluster rungs;
//! * [`reference`]: what the rungs are judged against — a recognised closed form's exact
//!   Tc, else the file's `reference:`, else (with `--mc`) a Binder-crossing Monte Carlo
//!   estimate computed on the spot;
//! * [`report`]: the table, CSV and JSON views (JSON keys per the command contract).
//!
//! The figure (`--plot`) is drawn by [`crate::plot::ladder`]. The computation is public
//! ([`Ladder::compute`]) so that `examples/validation.rs` regenerates
//! `docs/validation.md` from the very numbers this command prints.

pub mod blocks;
pub mod climb;
pub mod reference;
pub mod report;

use rungs_lattice::Lattice;

use crate::args::LadderArgs;
use crate::error::CliError;
use crate::output::Output;
use crate::progress::Progress;

pub use climb::{Extrapolated, RungResult};
pub use reference::{ReferenceKind, ReferenceTc};

/// How to climb the ladder.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct LadderOptions {
    /// Climb up to this many sites: the file's levels with at most this many sites plus
    /// square-ish blocks of cells up to it (only the file's levels when `None`).
    pub up_to: Option<u32>,
    /// Run a Monte Carlo estimate when no exact or file reference exists.
    pub monte_carlo: bool,
    /// Draw progress bars (on an interactive terminal only; see [`Progress`]).
    pub progress: bool,
    /// Uniform field h (every rung's Tc is that of the field-polarised phase).
    pub field: f64,
}

/// A computed ladder: every rung, the reference, the extrapolations and the notes that
/// explain what is missing.
#[derive(Debug, Clone, PartialEq)]
pub struct Ladder {
    /// Lattice name.
    pub lattice: String,
    /// Spatial dimension.
    pub dimension: usize,
    /// The reference Tc, if any is known or was computed.
    pub reference: Option<ReferenceTc>,
    /// One entry per level, sorted by the size of its largest cluster (file order among
    /// equal sizes).
    pub rungs: Vec<RungResult>,
    /// Extrapolations that could be made (coherent-anomaly first).
    pub extrapolations: Vec<Extrapolated>,
    /// Explanations: skipped levels, extrapolations that could not be made, cautions.
    pub notes: Vec<String>,
}

impl Ladder {
    /// Climb every level of `lattice`, choose the reference, extrapolate.
    ///
    /// Levels the engine cannot do (too large, no convergence) are kept as skipped rungs
    /// with the reason; the ladder fails (exit status 1) only when no level at all gives a
    /// result.
    pub fn compute(lattice: &Lattice, options: LadderOptions) -> Result<Ladder, CliError> {
        let mut notes = Vec::new();
        let extended;
        let lattice = match options.up_to {
            Some(n) => {
                extended = blocks::with_blocks(lattice, n as usize, &mut notes)?;
                &extended
            }
            None => lattice,
        };
        let names = climb::rung_names(lattice, options.up_to, &mut notes)?;
        let bar = if options.progress {
            Progress::levels(names.len() as u64, "ladder: levels done")
        } else {
            Progress::hidden()
        };
        let rungs = climb::climb(lattice, &names, options.field, &bar)?;
        bar.finish();
        let extrapolations = climb::extrapolate(&rungs, &mut notes);
        let reference = reference::choose(lattice, &rungs, &extrapolations, options, &mut notes);
        notes.extend(climb::rung_notes(lattice, &rungs));
        notes.extend(reference::cautions(
            lattice,
            &extrapolations,
            reference.as_ref(),
        ));
        Ok(Ladder {
            lattice: lattice.name().to_string(),
            dimension: lattice.dimension(),
            reference,
            rungs,
            extrapolations,
            notes,
        })
    }

    /// `tc / reference − 1`, when both are known.
    pub fn deviation(&self, tc: Option<f64>) -> Option<f64> {
        let reference = self.reference.as_ref()?.tc;
        tc.filter(|t| t.is_finite())
            .map(|t| t / reference - 1.0)
            .filter(|d| d.is_finite())
    }
}

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
        progress: true,
        field,
    };
    let ladder = Ladder::compute(&lattice, options)?;
    if let Some(path) = &args.plot {
        crate::plot::file::write(path, &ladder)?;
    }
    out.emit(&ladder)
}

//! The subcommands (the "build, then run" steps), one file each, plus the steps they
//! share: loading the lattice file, choosing levels, enlarging the cell.
//!
//! Each command has the shape `run(&XArgs, &mut Output) -> Result<(), CliError>`: it
//! builds what it needs from the arguments, computes, and hands one [`Report`] to
//! [`Output::emit`]. It never prints to standard output itself.
//!
//! [`Report`]: crate::output::Report

pub mod inspect;
pub mod ladder;
pub mod mc;
pub mod merge;
pub mod phases;
pub mod sweep;
pub mod tc;

use std::path::Path;

use rungs_lattice::{Lattice, Level};

use crate::args::{Command, Supercell};
use crate::error::CliError;
use crate::output::Output;

/// Run one parsed command.
pub fn run(command: &Command) -> Result<(), CliError> {
    match command {
        Command::Inspect(a) => inspect::run(a, &mut Output::from_args(&a.common)),
        Command::Tc(a) => tc::run(a, &mut Output::from_args(&a.common)),
        Command::Sweep(a) => sweep::run(a, &mut Output::from_args(&a.common)),
        Command::Ladder(a) => ladder::run(a, &mut Output::from_args(&a.common)),
        Command::Phases(a) => phases::run(a, &mut Output::from_args(&a.common)),
        Command::Merge(a) => merge::run(a, &mut Output::new(a.format, a.output.clone())),
        Command::Mc(a) => mc::run(a, &mut Output::from_args(&a.common)),
    }
}

/// Read and validate the lattice file at `path` (bad file or YAML: exit status 2).
pub fn load_lattice(path: &Path) -> Result<Lattice, CliError> {
    Ok(Lattice::from_file(path)?)
}

/// The levels to compute: `requested` in the order given (duplicates dropped), or every
/// level of the lattice when `None` (`rungs_solve::levels::select_levels`). An unknown
/// name is an error listing the known ones; an empty list says what to name.
pub fn select_levels(
    lattice: &Lattice,
    requested: Option<&[String]>,
) -> Result<Vec<String>, CliError> {
    let chosen = rungs_solve::levels::select_levels(lattice, requested)?;
    if chosen.is_empty() {
        return Err(CliError::Usage(format!(
            "--levels is empty: name at least one of {}",
            Level::names(lattice).join(", ")
        )));
    }
    Ok(chosen)
}

/// The lattice seen with the enlarged cell of `--supercell`, or unchanged when `None`.
/// The number of factors must match the lattice's dimension.
pub fn apply_supercell(
    lattice: Lattice,
    supercell: Option<Supercell>,
) -> Result<Lattice, CliError> {
    let Some(sc) = supercell else {
        return Ok(lattice);
    };
    if sc.given != lattice.dimension() {
        return Err(CliError::Usage(format!(
            "--supercell: {} factor(s) given but `{}` is {}-dimensional; give one factor per dimension, e.g. {}",
            sc.given,
            lattice.name(),
            lattice.dimension(),
            vec!["2"; lattice.dimension()].join("x"),
        )));
    }
    Ok(lattice.supercell(sc.factors)?)
}

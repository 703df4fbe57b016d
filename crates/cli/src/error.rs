//! Errors of the `rungs` command and the exit status each one maps to.
//!
//! Exit status (CLI contract): 0 success; 2 bad input — the lattice file, its YAML,
//! an argument — with a message naming what to fix; 1 a computation that did not
//! converge (or a command this build does not have yet). [`crate::main`] prints every
//! error once, on standard error, as `rungs: error: <message>`.

use std::path::PathBuf;

use rungs_lattice::LatticeError;
use rungs_reference::ladder::LadderError;
use rungs_solve::levels::LevelsError;
use rungs_solve::sweep_report::SweepError;
use thiserror::Error;

/// Exit status for bad input (file, YAML, arguments).
pub const EXIT_BAD_INPUT: u8 = 2;
/// Exit status for a computation that did not converge.
pub const EXIT_NOT_CONVERGED: u8 = 1;

/// Everything that can stop a `rungs` command.
#[derive(Debug, Error)]
#[non_exhaustive]
pub enum CliError {
    /// The lattice file could not be read or is not a valid lattice (the lattice
    /// crate's message already names the file and what to fix). Boxed: lattice errors
    /// carry file positions and suggestions and would bloat every `Result`.
    #[error(transparent)]
    Lattice(Box<LatticeError>),
    /// An argument that is well-formed but does not fit the lattice or the other
    /// arguments.
    #[error("{0}")]
    Usage(String),
    /// A file could not be written (the report, a plot).
    #[error("cannot write `{}`: {source}; check that the directory exists and is writable", path.display())]
    Write {
        /// The file we tried to write.
        path: PathBuf,
        /// What the operating system said.
        source: std::io::Error,
    },
    /// A computation that did not converge; the message says where.
    #[error("{0}")]
    NotConverged(String),
    /// A command this build does not have yet.
    #[error("`rungs {command}` is not available in this build yet")]
    NotAvailable {
        /// The subcommand name.
        command: &'static str,
    },
    /// A result that could not be turned into JSON (a bug, not a user error).
    #[error("cannot encode the report as JSON: {0}")]
    Json(#[from] serde_json::Error),
}

impl From<LatticeError> for CliError {
    fn from(e: LatticeError) -> CliError {
        CliError::Lattice(Box::new(e))
    }
}

impl From<LevelsError> for CliError {
    fn from(e: LevelsError) -> CliError {
        match e {
            LevelsError::Lattice(e) => CliError::Lattice(e),
            e => CliError::NotConverged(e.to_string()),
        }
    }
}

impl From<LadderError> for CliError {
    fn from(e: LadderError) -> CliError {
        match e {
            LadderError::Lattice(e) => CliError::Lattice(e),
            e if e.is_bad_input() => CliError::Usage(e.to_string()),
            e => CliError::NotConverged(e.to_string()),
        }
    }
}

impl From<SweepError> for CliError {
    fn from(e: SweepError) -> CliError {
        match e {
            SweepError::Lattice(e) => CliError::Lattice(e),
            e if e.is_bad_input() => CliError::Usage(e.to_string()),
            e => CliError::NotConverged(e.to_string()),
        }
    }
}

impl CliError {
    /// The process exit status for this error: 2 for bad input, 1 otherwise.
    pub fn exit_code(&self) -> u8 {
        match self {
            CliError::Lattice(_) | CliError::Usage(_) | CliError::Write { .. } => EXIT_BAD_INPUT,
            CliError::NotConverged(_) | CliError::NotAvailable { .. } | CliError::Json(_) => {
                EXIT_NOT_CONVERGED
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bad_input_exits_two_and_non_convergence_one() {
        let unknown = LatticeError::unknown_level("x", &["site".into(), "pair".into()]);
        assert_eq!(CliError::from(unknown).exit_code(), 2);
        assert_eq!(CliError::Usage("bad".into()).exit_code(), 2);
        assert_eq!(
            CliError::NotConverged("tc of level pair".into()).exit_code(),
            1
        );
        let na = CliError::NotAvailable { command: "tc" };
        assert_eq!(na.exit_code(), 1);
        assert_eq!(
            na.to_string(),
            "`rungs tc` is not available in this build yet"
        );
    }
}

//! rungs-cli: the `rungs` command.
//!
//! Parse, then build, then run: [`args`] holds the typed, validated arguments (clap);
//! [`commands`] turns them into lattices and levels and runs one subcommand, handing its
//! result to [`output`] (one exporter per format: table, CSV, JSON; atomic `--output`
//! files); [`plot`] draws SVG and PNG figures; [`progress`] draws bars and per-level lines on interactive
//! terminals. [`main`] has the one error exit: every failure becomes
//! `rungs: error: <what to fix>` on standard error and the exit status of
//! [`error::CliError::exit_code`] (2 bad input, 1 no convergence).
//! Library crates below never print; this crate owns all output.

pub mod args;
pub mod commands;
pub mod error;
pub mod list;
pub mod output;
pub mod plot;
pub mod progress;

use std::io::Write;
use std::process::ExitCode;

use clap::Parser;

use crate::args::Cli;
use crate::error::EXIT_BAD_INPUT;

/// Entry point of the `rungs` binary: parse the arguments, run the command, map any
/// error to its message and exit status.
pub fn main() -> ExitCode {
    let cli = match Cli::try_parse() {
        Ok(cli) => cli,
        Err(e) => {
            // Usage errors exit 2; `--help` and `--version` print and exit 0.
            let _ = e.print();
            return ExitCode::from(u8::try_from(e.exit_code()).unwrap_or(EXIT_BAD_INPUT));
        }
    };
    match commands::run(&cli.command) {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            let _ = writeln!(std::io::stderr(), "rungs: error: {e}");
            ExitCode::from(e.exit_code())
        }
    }
}

//! rungs-cli: the `rungs` command.
use std::process::ExitCode;
/// Entry point of the `rungs` binary.
pub fn main() -> ExitCode {
    ExitCode::SUCCESS
}

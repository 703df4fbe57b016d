//! The `rungs` binary: all work lives in `rungs-cli`.
fn main() -> std::process::ExitCode {
    rungs_cli::main()
}

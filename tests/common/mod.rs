//! Helpers shared by the end-to-end tests of the `rungs` command.
#![allow(dead_code)]

use assert_cmd::Command;

/// The `rungs` binary, run from the workspace root with progress bars off.
pub fn rungs() -> Command {
    let mut cmd = Command::new(env!("CARGO_BIN_EXE_rungs"));
    cmd.current_dir(env!("CARGO_MANIFEST_DIR"))
        .env("CI", "true");
    cmd
}

/// Run `args`, expect success, return standard output (checked for NaN/inf/panics).
pub fn ok(args: &[&str]) -> String {
    let out = rungs().args(args).output().unwrap();
    let stdout = String::from_utf8_lossy(&out.stdout).to_string();
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(
        out.status.success(),
        "{args:?}: exit {:?}, stderr: {stderr}",
        out.status.code()
    );
    assert!(!stderr.contains("panicked"), "{stderr}");
    for bad in ["NaN", "nan", "inf"] {
        assert!(!stdout.contains(bad), "{args:?} printed `{bad}`: {stdout}");
    }
    stdout
}

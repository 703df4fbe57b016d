//! Helpers shared by the end-to-end tests of the `rungs` command.
#![allow(dead_code)]

use assert_cmd::Command;

mod with_j;
pub use with_j::with_j_text;

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

/// A shipped lattice written to a temporary file with `J: 1.0` → `J: j` and without its
/// (ferromagnetic) reference; the file's path.
pub fn with_j(dir: &tempfile::TempDir, stem: &str, j: f64) -> String {
    let text = std::fs::read_to_string(format!("lattices/{stem}.yaml")).unwrap();
    let path = dir.path().join(format!("{stem}_{j}.yaml"));
    std::fs::write(&path, with_j_text(&text, j)).unwrap();
    path.to_str().unwrap().to_string()
}

//! The `rungs` command on bad input: every mistake exits with status 2 and a message on
//! standard error naming what to fix, never a panic; `--output` writes its file
//! atomically.

use std::path::Path;

use assert_cmd::Command;

fn rungs() -> Command {
    let mut cmd = Command::new(env!("CARGO_BIN_EXE_rungs"));
    cmd.current_dir(env!("CARGO_MANIFEST_DIR"))
        .env("CI", "true");
    cmd
}

/// Run `args`, expect exit status 2, a message on stderr containing every string of
/// `mentions`, nothing on stdout and no panic anywhere.
fn fails_with_2(args: &[&str], mentions: &[&str]) {
    let out = rungs().args(args).output().unwrap();
    let stdout = String::from_utf8_lossy(&out.stdout);
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{args:?}: stderr: {stderr}");
    assert!(
        !stderr.contains("panicked") && !stdout.contains("panicked"),
        "{args:?} panicked: {stderr}"
    );
    assert!(
        stdout.is_empty(),
        "{args:?}: stdout should be empty, got {stdout}"
    );
    for m in mentions {
        assert!(
            stderr.contains(m),
            "{args:?}: stderr should mention `{m}`: {stderr}"
        );
    }
}

fn write(dir: &Path, name: &str, text: &str) -> String {
    let path = dir.join(name);
    std::fs::write(&path, text).unwrap();
    path.to_str().unwrap().to_string()
}

#[test]
fn missing_file() {
    fails_with_2(
        &["inspect", "no/such/lattice.yaml"],
        &["rungs: error:", "no/such/lattice.yaml"],
    );
    fails_with_2(
        &["tc", "no/such/lattice.yaml"],
        &["rungs: error:", "no/such/lattice.yaml"],
    );
}

#[test]
fn malformed_yaml() {
    let dir = tempfile::tempdir().unwrap();
    let file = write(
        dir.path(),
        "broken.yaml",
        "name: square\ndimension: [2\nvectors: {\n",
    );
    fails_with_2(&["inspect", &file], &["rungs: error:", "broken.yaml"]);
}

#[test]
fn invalid_lattice() {
    let dir = tempfile::tempdir().unwrap();
    let text = "name: bad\ndimension: 2\nvectors: [[1.0, 0.0], [0.0, 1.0]]\nbasis: [{name: a}]\n\
                couplings: {J: 1.0}\nbonds:\n  - {from: a, to: qq, cell: [1, 0], coupling: J}\n";
    let file = write(dir.path(), "bad.yaml", text);
    fails_with_2(&["inspect", &file], &["rungs: error:", "bad.yaml", "qq"]);
    let text = "name: bad\ndimension: 2\nvectors: [[1.0, 0.0], [0.0, 1.0]]\nbasis: [{name: a}]\n\
                couplings: {J: 1.0}\nbonds:\n  - {from: a, to: a, cell: [1, 0], coupling: K}\n";
    let file = write(dir.path(), "bad2.yaml", text);
    fails_with_2(
        &["inspect", &file, "--format", "json"],
        &["rungs: error:", "K"],
    );
}

#[test]
fn bad_temperature_lists() {
    for temps in [
        "1:3:-0.1",
        "1:2:0",
        "1:2:-0.5",
        "abc",
        "1,,2",
        "nan",
        "1:2",
        "0:10:1e-6",
        "-1",
        "",
    ] {
        fails_with_2(
            &[
                "sweep",
                "lattices/square.yaml",
                "--levels",
                "pair",
                "--temps",
                temps,
            ],
            &["--temps"],
        );
        fails_with_2(
            &[
                "mc",
                "lattices/square.yaml",
                "--sizes",
                "8",
                "--temps",
                temps,
            ],
            &["--temps"],
        );
    }
    fails_with_2(
        &[
            "sweep",
            "lattices/square.yaml",
            "--levels",
            "pair",
            "--temps",
            "-1:2:0.5",
        ],
        &["not positive"],
    );
    fails_with_2(
        &[
            "sweep",
            "lattices/square.yaml",
            "--levels",
            "pair",
            "--temps",
            "1:3:-0.1",
        ],
        &["points away from stop"],
    );
    fails_with_2(
        &[
            "sweep",
            "lattices/square.yaml",
            "--levels",
            "pair",
            "--temps",
            "1:2:0",
        ],
        &["must not be zero"],
    );
    fails_with_2(
        &[
            "sweep",
            "lattices/square.yaml",
            "--levels",
            "pair",
            "--temps",
            "0:10:1e-6",
        ],
        &["more than 100000"],
    );
    fails_with_2(
        &[
            "mc",
            "lattices/square.yaml",
            "--sizes",
            "8.5",
            "--temps",
            "2",
        ],
        &["--sizes", "whole number"],
    );
}

#[test]
fn unknown_level() {
    fails_with_2(
        &["tc", "lattices/square.yaml", "--levels", "pair,hexagon"],
        &["rungs: error:", "hexagon", "plaquette"],
    );
    fails_with_2(
        &[
            "sweep",
            "lattices/square.yaml",
            "--levels",
            "nope",
            "--temps",
            "2",
        ],
        &["nope"],
    );
}

#[test]
fn misspelt_level_gets_a_suggestion() {
    fails_with_2(
        &["tc", "lattices/square.yaml", "--levels", "plaquete"],
        &["no level named `plaquete`", "did you mean `plaquette`?"],
    );
}

#[test]
fn figure_files_other_than_svg_and_png_are_refused_up_front() {
    let dir = tempfile::tempdir().unwrap();
    let pdf = dir.path().join("out.pdf");
    let pdf = pdf.to_str().unwrap();
    fails_with_2(
        &["ladder", "lattices/square.yaml", "--plot", pdf],
        &["out.pdf", ".svg, .png"],
    );
    let sweep = |extra: &[&'static str], plot: &str, mentions: &[&str]| {
        let mut args = vec![
            "sweep",
            "lattices/square.yaml",
            "--levels",
            "pair",
            "--temps",
            "2",
            "--plot",
            plot,
        ];
        args.extend_from_slice(extra);
        fails_with_2(&args, mentions);
    };
    sweep(&[], pdf, &[".svg, .png"]);
    sweep(&["--panels", "m,q"], "x.svg", &["`q` is not a panel"]);
    assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 0);
}

#[test]
fn bad_arguments() {
    fails_with_2(
        &["inspect", "lattices/square.yaml", "--format", "xml"],
        &["--format"],
    );
    fails_with_2(&["inspect"], &["LATTICE"]);
    fails_with_2(&[], &["Usage"]);
    fails_with_2(&["frobnicate", "lattices/square.yaml"], &["frobnicate"]);
    fails_with_2(
        &["tc", "lattices/square.yaml", "--supercell", "2x2x2"],
        &["supercell"],
    );
    fails_with_2(
        &["tc", "lattices/square.yaml", "--supercell", "0x2"],
        &["--supercell"],
    );
}

#[test]
fn output_file_is_written_whole_and_atomically() {
    let dir = tempfile::tempdir().unwrap();
    let target = dir.path().join("square.json");
    std::fs::write(&target, "stale").unwrap();
    let out = rungs()
        .args([
            "inspect",
            "lattices/square.yaml",
            "--format",
            "json",
            "--output",
        ])
        .arg(&target)
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(
        out.stdout.is_empty(),
        "the report went to the file, not stdout"
    );
    let written = std::fs::read_to_string(&target).unwrap();
    let doc: serde_json::Value = serde_json::from_str(&written).unwrap();
    assert_eq!(doc["name"], "square");
    let direct = rungs()
        .args(["inspect", "lattices/square.yaml", "--format", "json"])
        .output()
        .unwrap();
    assert_eq!(
        written.as_bytes(),
        direct.stdout.as_slice(),
        "file and stdout reports differ"
    );
    // No temporary file is left beside it.
    let names: Vec<_> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name())
        .collect();
    assert_eq!(names, vec![std::ffi::OsString::from("square.json")]);
    // A directory that does not exist is bad input, and names the file.
    let missing = dir.path().join("nowhere").join("x.csv");
    fails_with_2(
        &[
            "inspect",
            "lattices/square.yaml",
            "--output",
            missing.to_str().unwrap(),
        ],
        &["rungs: error:", "nowhere"],
    );
}

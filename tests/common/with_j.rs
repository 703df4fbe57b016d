//! One text transform shared by the end-to-end tests and the engine tests
//! (`crates/solve/tests/common.rs` includes this file by path): a lattice file with its
//! coupling reversed, e.g. the antiferromagnet of a shipped ferromagnet.

/// A lattice file's text with its couplings `J: 1.0` replaced by `J: j` and its
/// `reference:` block dropped (the reference is the ferromagnet's).
pub fn with_j_text(text: &str, j: f64) -> String {
    let mut out = String::new();
    let mut skip = false;
    for line in text.lines() {
        if line.starts_with("reference:") {
            skip = true;
            continue;
        }
        if skip && line.starts_with("  ") {
            continue;
        }
        skip = false;
        out.push_str(&line.replace("J: 1.0", &format!("J: {j}")));
        out.push('\n');
    }
    out
}

//! Shared helpers for the engine tests: lattices from the shipped files or inline YAML.
#![allow(dead_code)]

use std::path::PathBuf;

use rungs_lattice::{Lattice, Level};

#[path = "../../../tests/common/with_j.rs"]
mod with_j;
pub use with_j::with_j_text;

/// A shipped lattice file by stem, e.g. `square`.
pub fn shipped(stem: &str) -> Lattice {
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("../../lattices")
        .join(format!("{stem}.yaml"));
    Lattice::from_file(&path).unwrap()
}

/// A lattice from inline YAML.
pub fn inline(text: &str) -> Lattice {
    Lattice::from_yaml_str(text, "inline.yaml").unwrap()
}

/// A level of a lattice.
pub fn level(l: &Lattice, name: &str) -> Level {
    Level::build(l, name).unwrap()
}

/// The chain with coupling J.
pub fn chain(j: f64) -> Lattice {
    inline(&format!(
        "name: chain\ndimension: 1\nvectors: [[1.0]]\nbasis: [{{name: a}}]\ncouplings: {{J: {j}}}\n\
         bonds: [{{from: a, to: a, cell: [1], coupling: J}}]\n"
    ))
}

/// Exact Tc of the square lattice, 2/ln(1+√2) (Onsager 1944, Phys. Rev. 65, 117).
pub fn onsager_tc() -> f64 {
    2.0 / (1.0 + 2f64.sqrt()).ln()
}

/// A shipped lattice file with its couplings `J: 1.0` replaced by `J: j` and no reference.
pub fn with_j(stem: &str, j: f64) -> Lattice {
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("../../lattices")
        .join(format!("{stem}.yaml"));
    inline(&with_j_text(&std::fs::read_to_string(path).unwrap(), j))
}

//! The lattice-file loader against its contract (`docs/lattice-format.md`): one bad file
//! per rule in `tests/bad_lattices/`, each checked for its error variant and for the
//! parts of the message a user needs (file, line, offending value, fix); good files; and
//! a property test that mutated files never make the loader panic.

use std::path::{Path, PathBuf};

use proptest::prelude::*;
use rungs_lattice::{Lattice, LatticeError, MAX_CLUSTER_SITES};

fn bad_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests")
        .join("bad_lattices")
}

/// Load `tests/bad_lattices/<file>`, which must be refused.
fn load_bad(file: &str) -> LatticeError {
    match Lattice::from_file(&bad_dir().join(file)) {
        Ok(_) => panic!("{file} was accepted but breaks a rule"),
        Err(e) => e,
    }
}

/// The message names the file with `:line:`, and contains every part.
fn check_message(e: &LatticeError, file: &str, line: u64, parts: &[&str]) {
    let msg = e.to_string();
    let located = format!("{file}:{line}:");
    assert!(
        msg.contains(&located),
        "{file}: message lacks `{located}`: {msg}"
    );
    for p in parts {
        assert!(msg.contains(p), "{file}: message lacks `{p}`: {msg}");
    }
}

/// One test per bad file: `bad!(test_name, "file.yaml", Variant pattern, line, [parts])`.
macro_rules! bad {
    ($test:ident, $file:literal, $pat:pat $(if $guard:expr)?, $line:expr, [$($part:literal),* $(,)?]) => {
        #[test]
        fn $test() {
            let e = load_bad($file);
            assert!(matches!(e, $pat $(if $guard)?), "{}: wrong error variant: {e:?}\n{e}", $file);
            check_message(&e, $file, $line, &[$($part),*]);
        }
    };
}

// ---- reading the file ---------------------------------------------------------------------
bad!(
    syntax,
    "syntax.yaml",
    LatticeError::Syntax { .. },
    3,
    [
        "not valid YAML",
        "`[` opened here is never closed: add the missing `]`",
        "the parser only noticed at line 4"
    ]
);
bad!(
    two_documents,
    "two_documents.yaml",
    LatticeError::Syntax { .. },
    8,
    ["more than one YAML document", "one lattice per file"]
);
bad!(
    empty_file,
    "empty.yaml",
    LatticeError::WrongType { .. },
    1,
    ["the file is empty", "name, dimension, vectors"]
);
bad!(missing_key, "missing_key.yaml", LatticeError::MissingKey { ref key, .. } if key == "vectors", 1,
    ["missing required key `vectors`", "add it, e.g. `vectors: [[1.0, 0.0], [0.0, 1.0]]`"]);
bad!(unknown_key, "unknown_key.yaml", LatticeError::UnknownKey { ref key, .. } if key == "couplng", 8,
    ["bonds[1]", "unknown key `couplng`", "did you mean `coupling`?", "allowed here are: from, to, cell, coupling"]);
bad!(
    duplicate_key,
    "duplicate_key.yaml",
    LatticeError::DuplicateKey { first_line: 6, .. },
    7,
    [
        "couplings",
        "key `J` appears twice",
        "first on line 6",
        "keep only one"
    ]
);
bad!(
    wrong_type,
    "wrong_type.yaml",
    LatticeError::WrongType { .. },
    2,
    ["dimension: expected", "1, 2 or 3", "found text `two`"]
);
bad!(
    quoted_number,
    "quoted_number.yaml",
    LatticeError::WrongType { .. },
    5,
    ["couplings.J", "text `1.0`", "remove the quotes"]
);
bad!(
    unwrapped_shape,
    "unwrapped_shape.yaml",
    LatticeError::WrongType { .. },
    10,
    [
        "clusters.plaquette[0]",
        "a list of [site, cell] pairs",
        "wrap it in one more list"
    ]
);

// ---- geometry -------------------------------------------------------------------------------
bad!(
    bad_dimension,
    "bad_dimension.yaml",
    LatticeError::BadDimension { .. },
    2,
    ["dimension 4", "give 1, 2 or 3"]
);
bad!(
    vector_count,
    "vector_count.yaml",
    LatticeError::WrongVectorCount {
        count: 3,
        dimension: 2,
        ..
    },
    4,
    ["vectors", "3 vector(s)", "dimension is 2", "give exactly 2"]
);
bad!(
    vector_length,
    "vector_length.yaml",
    LatticeError::WrongLength {
        len: 3,
        dimension: 2,
        ..
    },
    5,
    [
        "vectors[1]",
        "vector has 3 component(s)",
        "give exactly 2, e.g. [1.0, 0.0]"
    ]
);
bad!(
    position_length,
    "position_length.yaml",
    LatticeError::WrongLength {
        len: 1,
        dimension: 2,
        ..
    },
    6,
    [
        "basis[1].position",
        "position has 1 component(s)",
        "give exactly 2"
    ]
);
bad!(
    cell_length,
    "cell_length.yaml",
    LatticeError::WrongLength {
        len: 3,
        dimension: 2,
        ..
    },
    8,
    [
        "bonds[1].cell",
        "cell offset has 3 component(s)",
        "e.g. [1, 0]"
    ]
);
bad!(
    dependent_vectors,
    "dependent_vectors.yaml",
    LatticeError::DependentVectors { dimension: 2, .. },
    4,
    [
        "vectors",
        "linearly dependent",
        "give 2 independent vectors"
    ]
);
bad!(
    cell_out_of_range,
    "cell_out_of_range.yaml",
    LatticeError::CellOutOfRange { .. },
    7,
    ["bonds[0].cell[0]", "100000", "-1000..=1000"]
);

// ---- basis, couplings, numbers --------------------------------------------------------------
bad!(
    empty_basis,
    "empty_basis.yaml",
    LatticeError::EmptyBasis { .. },
    4,
    ["basis", "no site", "basis: [{name: a}]"]
);
bad!(
    duplicate_site,
    "duplicate_site.yaml",
    LatticeError::DuplicateSite { first_line: 5, .. },
    6,
    [
        "basis[1].name",
        "`a` is used twice",
        "first on line 5",
        "its own name"
    ]
);
bad!(
    unknown_site,
    "unknown_site.yaml",
    LatticeError::UnknownSite { .. },
    10,
    ["unknown_site.yaml:10:19: bonds[3].to: no basis site named `qq` (known: a, b)"]
);
bad!(
    unknown_coupling,
    "unknown_coupling.yaml",
    LatticeError::UnknownCoupling { .. },
    8,
    [
        "bonds[1].coupling",
        "no coupling named `K`",
        "(known: J, J2)",
        "bare number"
    ]
);
bad!(
    nan_coupling,
    "nan_coupling.yaml",
    LatticeError::NonFinite { .. },
    6,
    ["couplings.J", ".nan", "not a finite number"]
);
bad!(
    infinite_field,
    "infinite_field.yaml",
    LatticeError::NonFinite { .. },
    6,
    ["field", "-.inf", "give a finite value"]
);
bad!(
    bad_reference,
    "bad_reference.yaml",
    LatticeError::BadReference { .. },
    10,
    ["reference.tc", "-2.269", "> 0"]
);

// ---- bonds ----------------------------------------------------------------------------------
bad!(
    self_bond,
    "self_bond.yaml",
    LatticeError::SelfBond { .. },
    8,
    ["bonds[1]", "site `a` to itself", "non-zero `cell`"]
);
bad!(
    duplicate_bond,
    "duplicate_bond.yaml",
    LatticeError::DuplicateBond { first: 0, .. },
    9,
    ["bonds[2]", "bonds[0] (line 7)", "list each bond once"]
);
bad!(
    reversed_bond,
    "reversed_bond.yaml",
    LatticeError::DuplicateBond { first: 1, .. },
    12,
    [
        "bonds[3]",
        "bonds[1] (line 10)",
        "opposite direction",
        "list each bond once"
    ]
);

// ---- cluster levels -------------------------------------------------------------------------
bad!(
    reserved_level,
    "reserved_level.yaml",
    LatticeError::ReservedLevel { .. },
    10,
    ["`pair` is reserved", "choose another name"]
);
bad!(
    duplicate_level,
    "duplicate_level.yaml",
    LatticeError::DuplicateLevel { first_line: 10, .. },
    12,
    ["`plaquette` is defined twice", "first on line 10"]
);
bad!(
    empty_level,
    "empty_level.yaml",
    LatticeError::EmptyLevel { .. },
    10,
    ["clusters.plaquette", "no cluster shape", "block: [2, 2]"]
);
bad!(
    cluster_too_small,
    "cluster_too_small.yaml",
    LatticeError::ClusterTooSmall { sites: 1, .. },
    11,
    ["clusters.lonely[0]", "1 site(s)", "at least 2"]
);
bad!(
    cluster_repeated_site,
    "cluster_repeated_site.yaml",
    LatticeError::RepeatedClusterSite { .. },
    11,
    [
        "clusters.plaquette[0][3][0]",
        "site `a` in cell [1, 0] is listed twice",
        "list each site once"
    ]
);
bad!(
    cluster_disconnected,
    "cluster_disconnected.yaml",
    LatticeError::DisconnectedCluster { .. },
    11,
    [
        "clusters.diagonal[0]",
        "not connected through bonds",
        "`a` [1, 1] cannot be reached from `a` [0, 0]"
    ]
);
bad!(
    cluster_unknown_site,
    "cluster_unknown_site.yaml",
    LatticeError::UnknownSite { .. },
    11,
    [
        "clusters.plaquette[0][2][0]",
        "no basis site named `b` (known: a)"
    ]
);
// The file's shape has 26 sites, one more than MAX_CLUSTER_SITES = 25.
bad!(
    cluster_over_limit,
    "cluster_over_limit.yaml",
    LatticeError::ClusterOverLimit {
        sites: 26,
        limit: MAX_CLUSTER_SITES,
        ..
    },
    10,
    ["clusters.long[0]", "26 sites", "limit of 25"]
);
bad!(
    block_huge,
    "block_huge.yaml",
    LatticeError::ClusterOverLimit {
        sites: 10000,
        limit: MAX_CLUSTER_SITES,
        ..
    },
    11,
    [
        "clusters.enormous.block",
        "10000 sites",
        "limit of 25",
        "smaller shape or block"
    ]
);
bad!(
    block_length,
    "block_length.yaml",
    LatticeError::WrongLength {
        len: 3,
        dimension: 2,
        ..
    },
    11,
    [
        "clusters.cube.block",
        "block has 3 component(s)",
        "e.g. [2, 2]"
    ]
);
bad!(
    block_zero,
    "block_zero.yaml",
    LatticeError::BadBlock { .. },
    11,
    ["clusters.flat.block[1]", "block size 0", "≥ 1"]
);
bad!(
    block_too_small,
    "block_too_small.yaml",
    LatticeError::ClusterTooSmall { sites: 1, .. },
    11,
    ["clusters.one.block", "1 site(s)", "at least 2"]
);

#[test]
fn unreadable_file_names_its_path() {
    let path = bad_dir().join("no_such_file.yaml");
    let e = Lattice::from_file(&path).unwrap_err();
    assert!(matches!(e, LatticeError::Unreadable { .. }), "{e:?}");
    let msg = e.to_string();
    assert!(
        msg.contains("no_such_file.yaml") && msg.contains("cannot read the lattice file"),
        "{msg}"
    );
}

#[test]
fn every_bad_file_is_covered_by_a_test() {
    let src = include_str!("lattice_loader.rs");
    for entry in std::fs::read_dir(bad_dir()).unwrap() {
        let name = entry.unwrap().file_name().into_string().unwrap();
        assert!(
            src.contains(&format!("\"{name}\"")),
            "tests/bad_lattices/{name} has no test"
        );
    }
}

// ---- good files -----------------------------------------------------------------------------

/// A kagome lattice (three sites per cell) with a two-shape triangle level, a block level,
/// a field, literal couplings and a reference; everything resolves as written.
const KAGOME: &str = r#"name: kagome
description: Kagome lattice, nearest neighbours.
dimension: 2
vectors:
  - [2.0, 0.0]
  - [1.0, 1.7320508075688772]
basis:
  - {name: a, position: [0.0, 0.0]}
  - {name: b, position: [1.0, 0.0]}
  - {name: c, position: [0.5, 0.8660254037844386]}
couplings:
  J: 1.0
field: 0.25
bonds:
  - {from: a, to: b, cell: [0, 0], coupling: J}
  - {from: a, to: c, cell: [0, 0], coupling: J}
  - {from: b, to: c, cell: [0, 0], coupling: J}
  - {from: b, to: a, cell: [1, 0], coupling: J}
  - {from: c, to: a, cell: [0, 1], coupling: J}
  - {from: c, to: b, cell: [-1, 1], coupling: 1.0}
clusters:
  triangles:
    - [[a, [0, 0]], [b, [0, 0]], [c, [0, 0]]]
    - [[b, [0, 0]], [a, [1, 0]], [c, [1, -1]]]
  cell:
    block: [1, 1]
reference:
  tc: 2.143319440105504
  source: "Syozi (1951), Prog. Theor. Phys. 6, 306 (volume and page from memory): 4 / ln(3 + 2 sqrt 3)"
"#;

#[test]
fn good_file_loads_with_everything_resolved() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("kagome.yaml");
    std::fs::write(&path, KAGOME).unwrap();
    let l = Lattice::from_file(&path).unwrap();
    assert_eq!(l.name(), "kagome");
    assert_eq!(l.description(), Some("Kagome lattice, nearest neighbours."));
    assert_eq!(l.dimension(), 2);
    assert_eq!(l.sites_per_cell(), 3);
    assert_eq!(l.basis()[2].position, [0.5, 0.8660254037844386, 0.0]);
    assert_eq!(l.field(), 0.25);
    assert_eq!(l.bonds().len(), 6);
    // Kagome: every site has four neighbours (common practice).
    assert_eq!(l.coordination(), vec![4, 4, 4]);
    assert_eq!(l.bonds()[5].coupling, "1.0");
    let names: Vec<&str> = l.level_specs().iter().map(|s| s.name.as_str()).collect();
    assert_eq!(names, ["triangles", "cell"]);
    assert_eq!(
        l.level_specs()[0].shapes[1],
        vec![(1, [0, 0, 0]), (0, [1, 0, 0]), (2, [1, -1, 0])]
    );
    assert_eq!(
        l.level_specs()[1].shapes[0],
        vec![(0, [0, 0, 0]), (1, [0, 0, 0]), (2, [0, 0, 0])]
    );
    assert!(l.reference().is_some());
    assert!(!l.is_bipartite());
}

#[test]
fn shipped_lattice_files_all_load() {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("lattices");
    let Ok(entries) = std::fs::read_dir(&dir) else {
        return;
    };
    for entry in entries {
        let path = entry.unwrap().path();
        if path.extension().is_some_and(|e| e == "yaml" || e == "yml") {
            if let Err(e) = Lattice::from_file(&path) {
                panic!("shipped lattice {} is refused: {e}", path.display());
            }
        }
    }
}

// ---- robustness -----------------------------------------------------------------------------

/// One edit of a file's bytes.
#[derive(Debug, Clone)]
enum Mutation {
    /// XOR the byte at (position mod length) with a non-zero mask.
    Flip(usize, u8),
    /// Delete up to `n` bytes from a position.
    Delete(usize, usize),
    /// Insert a YAML-significant token at a position.
    Insert(usize, &'static str),
    /// Swap two lines.
    SwapLines(usize, usize),
    /// Delete one line.
    DeleteLine(usize),
    /// Repeat one line right after itself.
    DuplicateLine(usize),
    /// Replace one character (not byte) by another.
    ChangeChar(usize, char),
    /// Cut the text at a position.
    Truncate(usize),
}

const TOKENS: &[&str] = &[
    ":",
    "-",
    "- ",
    "[",
    "]",
    "{",
    "}",
    ",",
    "\n",
    " ",
    "  ",
    "\t",
    "#",
    "&a ",
    "*a",
    "!!str ",
    "!!int ",
    ".nan",
    "-.inf",
    "1e999",
    "0",
    "-1",
    "99999999999999999999999",
    "\"",
    "'",
    "? ",
    "<<: *a\n",
    "block: [100, 100]",
    "~",
    "é",
    "---\n",
    "...\n",
    "%YAML 1.2\n",
    "|\n",
    ">-\n",
    "site",
    "pair",
    "a",
    "[[a, [0, 0]]]",
];

fn mutation() -> impl Strategy<Value = Mutation> {
    prop_oneof![
        (any::<usize>(), 1u8..=255).prop_map(|(p, m)| Mutation::Flip(p, m)),
        (any::<usize>(), 1usize..12).prop_map(|(p, n)| Mutation::Delete(p, n)),
        (any::<usize>(), prop::sample::select(TOKENS)).prop_map(|(p, t)| Mutation::Insert(p, t)),
        (any::<usize>(), any::<usize>()).prop_map(|(a, b)| Mutation::SwapLines(a, b)),
        any::<usize>().prop_map(Mutation::DeleteLine),
        any::<usize>().prop_map(Mutation::DuplicateLine),
        (any::<usize>(), prop::sample::select(CHARS)).prop_map(|(p, c)| Mutation::ChangeChar(p, c)),
        any::<usize>().prop_map(Mutation::Truncate),
    ]
}

/// Replacement characters: YAML indicators, digits, signs, letters, space, newline.
const CHARS: &[char] = &[
    ':', '-', '[', ']', '{', '}', ',', '#', '\'', '"', ' ', '\n', '0', '1', '9', '.', 'e', 'a',
    'b', 'x',
];

/// Apply `f` to the lines of `bytes` (split on `\n`), joined back.
fn edit_lines(bytes: &[u8], f: impl FnOnce(&mut Vec<String>)) -> Vec<u8> {
    let s = String::from_utf8_lossy(bytes).into_owned();
    let mut lines: Vec<String> = s.split('\n').map(str::to_string).collect();
    f(&mut lines);
    lines.join("\n").into_bytes()
}

fn apply(text: &str, mutations: &[Mutation]) -> String {
    let mut bytes = text.as_bytes().to_vec();
    for m in mutations {
        let len = bytes.len().max(1);
        match *m {
            Mutation::Flip(p, mask) => {
                if !bytes.is_empty() {
                    bytes[p % len] ^= mask;
                }
            }
            Mutation::Delete(p, n) => {
                let start = p % len;
                let end = (start + n).min(bytes.len());
                if start < end {
                    bytes.drain(start..end);
                }
            }
            Mutation::Insert(p, t) => {
                let at = p % (bytes.len() + 1);
                bytes.splice(at..at, t.bytes());
            }
            Mutation::SwapLines(a, b) => {
                bytes = edit_lines(&bytes, |lines| {
                    let n = lines.len();
                    lines.swap(a % n, b % n);
                });
            }
            Mutation::DeleteLine(a) => {
                bytes = edit_lines(&bytes, |lines| {
                    let n = lines.len();
                    lines.remove(a % n);
                });
            }
            Mutation::DuplicateLine(a) => {
                bytes = edit_lines(&bytes, |lines| {
                    let k = a % lines.len();
                    lines.insert(k, lines[k].clone());
                });
            }
            Mutation::ChangeChar(p, c) => {
                let s = String::from_utf8_lossy(&bytes).into_owned();
                let n = s.chars().count().max(1);
                let k = p % n;
                bytes = s
                    .chars()
                    .enumerate()
                    .map(|(i, x)| if i == k { c } else { x })
                    .collect::<String>()
                    .into_bytes();
            }
            Mutation::Truncate(p) => {
                bytes.truncate(p % len);
            }
        }
    }
    String::from_utf8_lossy(&bytes).into_owned()
}

/// The shipped lattice files (`lattices/*.yaml`), sorted by name, as mutation bases.
fn shipped_texts() -> Vec<String> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("lattices");
    let mut paths: Vec<PathBuf> = std::fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|x| x == "yaml"))
        .collect();
    paths.sort();
    paths
        .iter()
        .map(|p| std::fs::read_to_string(p).unwrap())
        .collect()
}

/// Mutation base `k`: a shipped file, the inline kagome file, or a bad file.
fn base_text(k: usize) -> String {
    let mut bases = shipped_texts();
    bases.push(KAGOME.to_string());
    bases.push(include_str!("bad_lattices/reversed_bond.yaml").to_string());
    bases.swap_remove(k % bases.len())
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 400, ..ProptestConfig::default() })]

    /// Whatever the edits (bytes flipped, deleted or inserted; lines swapped, deleted or
    /// duplicated; characters changed; text cut short), on any shipped file, the loader
    /// returns Ok or a located error naming the file, and never panics.
    #[test]
    fn mutated_files_never_panic(base in 0usize..64, mutations in prop::collection::vec(mutation(), 1..6)) {
        let text = apply(&base_text(base), &mutations);
        match Lattice::from_yaml_str(&text, "fuzz.yaml") {
            Ok(l) => {
                prop_assert!(!l.basis().is_empty());
                let _ = (l.coordination(), l.is_bipartite());
            }
            Err(e) => {
                let msg = e.to_string();
                prop_assert!(msg.starts_with("fuzz.yaml"), "error without the file name: {}", msg);
            }
        }
    }
}

proptest! {
    // Each case spawns the binary: fewer cases than the library-level test above.
    #![proptest_config(ProptestConfig { cases: 40, ..ProptestConfig::default() })]

    /// End to end: `rungs inspect` on a mutated shipped file exits 0 (it is still a
    /// lattice) or 2 (bad input, with a message), never anything else, never a panic.
    #[test]
    fn mutated_files_exit_0_or_2_end_to_end(base in 0usize..64, mutations in prop::collection::vec(mutation(), 1..4)) {
        let text = apply(&base_text(base), &mutations);
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("fuzz.yaml");
        std::fs::write(&path, &text).unwrap();
        let out = std::process::Command::new(env!("CARGO_BIN_EXE_rungs"))
            .arg("inspect")
            .arg(&path)
            .args(["--format", "json"])
            .env("CI", "true")
            .output()
            .unwrap();
        let stderr = String::from_utf8_lossy(&out.stderr);
        prop_assert!(!stderr.contains("panicked"), "panic on\n{}\n{}", text, stderr);
        match out.status.code() {
            Some(0) => prop_assert!(serde_json::from_slice::<serde_json::Value>(&out.stdout).is_ok()),
            Some(2) => prop_assert!(stderr.contains("fuzz.yaml"), "error without the file: {}", stderr),
            other => prop_assert!(false, "exit {:?} on\n{}\n{}", other, text, stderr),
        }
    }
}

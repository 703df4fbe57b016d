//! Unit tests of the loader: what a good file turns into, and rules whose errors the
//! root test `tests/lattice_loader.rs` does not already cover file by file.

use crate::error::LatticeError;
use crate::model::Lattice;

/// The example of the lattice-file contract (`LATTICE-FORMAT.md`), verbatim.
const CONTRACT_EXAMPLE: &str = r#"name: square                      # required, free text used in reports
description: Square lattice, nearest-neighbour ferromagnet.   # optional
dimension: 2                      # 1, 2 or 3
vectors:                          # primitive translation vectors, Cartesian, one per dimension
  - [1.0, 0.0]
  - [0.0, 1.0]
basis:                            # the sites of one unit cell (names unique)
  - {name: a, position: [0.0, 0.0]}   # position: Cartesian, optional (default: origin)
couplings:                        # named exchange constants; J > 0 ferromagnetic
  J: 1.0
field: 0.0                        # optional uniform field h (default 0)
bonds:                            # each bond once; `cell` = lattice-vector offset of `to`'s cell
  - {from: a, to: a, cell: [1, 0], coupling: J}
  - {from: a, to: a, cell: [0, 1], coupling: J}
clusters:                         # optional named levels for the Kikuchi method
  plaquette:                      # a level = one or more cluster shapes, each a list
    - [[a, [0, 0]], [a, [1, 0]], [a, [0, 1]], [a, [1, 1]]]    #   of [basis site, cell offset]
  block3:                         # shorthand: every basis site of an n1 x n2 (x n3) block of cells
    block: [3, 3]
reference:                        # optional: a known critical temperature to compare against
  tc: 2.269185314213022
  source: "Onsager (1944), Phys. Rev. 65, 117 — exact"
"#;

fn load(text: &str) -> Result<Lattice, LatticeError> {
    Lattice::from_yaml_str(text, "t.yaml")
}

fn err(text: &str) -> LatticeError {
    load(text).expect_err("the file should be refused")
}

#[test]
fn contract_example_loads_with_everything_resolved() {
    let l = load(CONTRACT_EXAMPLE).unwrap();
    assert_eq!(l.name(), "square");
    assert_eq!(
        l.description(),
        Some("Square lattice, nearest-neighbour ferromagnet.")
    );
    assert_eq!(l.dimension(), 2);
    assert_eq!(l.vectors(), &[[1.0, 0.0, 0.0], [0.0, 1.0, 0.0]]);
    assert_eq!(l.basis().len(), 1);
    assert_eq!(l.couplings(), &[("J".to_string(), 1.0)]);
    assert_eq!(l.field(), 0.0);
    assert_eq!(l.bonds().len(), 2);
    assert_eq!(l.bonds()[1].cell, [0, 1, 0]);
    assert_eq!(l.bonds()[1].coupling, "J");
    assert_eq!(l.coordination(), vec![4]);
    let levels = l.level_specs();
    assert_eq!(levels.len(), 2);
    assert_eq!(levels[0].name, "plaquette");
    assert_eq!(
        levels[0].shapes,
        vec![vec![
            (0, [0, 0, 0]),
            (0, [1, 0, 0]),
            (0, [0, 1, 0]),
            (0, [1, 1, 0])
        ]]
    );
    assert_eq!(levels[1].name, "block3");
    assert_eq!(levels[1].shapes.len(), 1);
    assert_eq!(levels[1].shapes[0].len(), 9);
    assert!(levels[1].shapes[0].contains(&(0, [2, 2, 0])));
    let r = l.reference().unwrap();
    // Onsager (1944), Phys. Rev. 65, 117: Tc = 2 / ln(1 + √2) for the square lattice.
    assert!((r.tc - 2.0 / (1.0 + 2f64.sqrt()).ln()).abs() < 1e-12);
    assert!(r.source.starts_with("Onsager (1944)"));
}

const HONEYCOMB: &str = "name: honeycomb
dimension: 2
vectors: [[1.5, 0.8660254037844386], [1.5, -0.8660254037844386]]
basis:
  - {name: a}
  - {name: b, position: [1.0, 0.0]}
couplings: {J2: -0.25, J: 1.0}
field: 0.5
bonds:
  - {from: a, to: b, cell: [0, 0], coupling: J}
  - {from: a, to: b, cell: [-1, 0], coupling: 1.50}
  - {from: b, to: a, cell: [0, 1], coupling: J}
";

#[test]
fn defaults_order_padding_and_literal_couplings() {
    let l = load(HONEYCOMB).unwrap();
    // position omitted → origin; given → zero-padded to three components.
    assert_eq!(l.basis()[0].position, [0.0; 3]);
    assert_eq!(l.basis()[1].position, [1.0, 0.0, 0.0]);
    // couplings keep file order, not sorted.
    assert_eq!(l.couplings()[0].0, "J2");
    assert_eq!(l.couplings()[1].0, "J");
    assert_eq!(l.field(), 0.5);
    // A bare number is a literal coupling, kept as written.
    assert_eq!(l.bonds()[1].coupling, "1.50");
    assert_eq!(l.bonds()[1].j, 1.5);
    assert_eq!(l.bonds()[2].from, 1);
    assert_eq!(l.bonds()[2].cell, [0, 1, 0]);
    assert_eq!(l.coordination(), vec![3, 3]);
    assert!(l.is_bipartite());
}

#[test]
fn triangular_level_with_two_shapes_and_three_d_block() {
    let tri = "name: triangular\ndimension: 2\nvectors: [[1, 0], [0.5, 0.8660254037844386]]\n\
               basis: [{name: a}]\ncouplings: {J: 1}\nbonds:\n\
               - {from: a, to: a, cell: [1, 0], coupling: J}\n\
               - {from: a, to: a, cell: [0, 1], coupling: J}\n\
               - {from: a, to: a, cell: [1, -1], coupling: J}\n\
               clusters:\n  triangles:\n\
               \x20   - [[a, [0, 0]], [a, [1, 0]], [a, [0, 1]]]\n\
               \x20   - [[a, [1, 0]], [a, [0, 1]], [a, [1, 1]]]\n";
    let l = load(tri).unwrap();
    assert_eq!(l.level_specs()[0].shapes.len(), 2);
    assert!(!l.is_bipartite());

    let cubic = "name: cubic-2\ndimension: 3\nvectors: [[1, 0, 0], [0, 1, 0], [0, 0, 1]]\n\
                 basis: [{name: a}, {name: b, position: [0.5, 0.5, 0.5]}]\ncouplings: {J: 1}\nbonds:\n\
                 - {from: a, to: b, cell: [0, 0, 0], coupling: J}\n\
                 - {from: a, to: a, cell: [1, 0, 0], coupling: J}\n\
                 - {from: a, to: a, cell: [0, 1, 0], coupling: J}\n\
                 - {from: b, to: b, cell: [0, 0, 1], coupling: J}\n\
                 - {from: a, to: b, cell: [0, 0, -1], coupling: J}\n\
                 clusters: {cell: {block: [1, 1, 2]}}\n";
    let l = load(cubic).unwrap();
    let shape = &l.level_specs()[0].shapes[0];
    assert_eq!(shape.len(), 4);
    assert_eq!(
        shape,
        &vec![
            (0, [0, 0, 0]),
            (1, [0, 0, 0]),
            (0, [0, 0, 1]),
            (1, [0, 0, 1])
        ]
    );
}

#[test]
fn numeric_and_yaml11_boolean_words_are_names() {
    // YAML 1.2 booleans only: `no` and `on` stay text; a whole number is a name as written.
    let t = "name: 1\ndimension: 1\nvectors: [[1]]\nbasis: [{name: no}, {name: 2}]\n\
             couplings: {J: 1}\nbonds:\n- {from: no, to: 2, cell: [0], coupling: J}\n\
             - {from: 2, to: no, cell: [1], coupling: J}\n";
    let l = load(t).unwrap();
    assert_eq!(l.name(), "1");
    assert_eq!(l.basis()[0].name, "no");
    assert_eq!(l.site_index("2"), Some(1));
}

#[test]
fn anchors_and_aliases_are_expanded() {
    let t = "name: square\ndimension: 2\nvectors: [&x [1, 0], [0, 1]]\nbasis: [{name: a}]\n\
             couplings: {J: &j 1.0, K: *j}\nbonds:\n- {from: a, to: a, cell: *x, coupling: J}\n\
             - {from: a, to: a, cell: [0, 1], coupling: K}\n";
    let l = load(t).unwrap();
    assert_eq!(l.couplings()[1], ("K".to_string(), 1.0));
    assert_eq!(l.bonds()[0].cell, [1, 0, 0]);
}

#[test]
fn empty_couplings_with_numeric_bonds_and_no_bonds_are_fine() {
    let t = "name: c\ndimension: 1\nvectors: [[1]]\nbasis: [{name: a}]\ncouplings: {}\n\
             bonds: [{from: a, to: a, cell: [1], coupling: -1}]\n";
    assert_eq!(load(t).unwrap().bonds()[0].j, -1.0);
    let t = "name: free spins\ndimension: 1\nvectors: [[1]]\nbasis: [{name: a}]\ncouplings:\nbonds: []\n";
    assert!(load(t).unwrap().bonds().is_empty());
}

#[test]
fn place_carries_file_line_column_and_path() {
    let t = "name: c\ndimension: 1\nvectors: [[1]]\nbasis: [{name: a}]\ncouplings: {J: 1}\n\
             bonds:\n  - {from: a, to: b, cell: [1], coupling: J}\n";
    match err(t) {
        LatticeError::UnknownSite { at, name, known } => {
            assert_eq!(
                (at.file.as_str(), at.line, at.column, at.path.as_str()),
                ("t.yaml", 7, 19, "bonds[0].to")
            );
            assert_eq!((name.as_str(), known.as_str()), ("b", "a"));
        }
        e => panic!("wrong error: {e}"),
    }
}

#[test]
fn misspelt_top_level_key_is_named_with_a_suggestion() {
    let t =
        "name: c\ndimension: 1\nvector: [[1]]\nbasis: [{name: a}]\ncouplings: {J: 1}\nbonds: []\n";
    let e = err(t);
    let msg = e.to_string();
    assert!(
        matches!(e, LatticeError::UnknownKey { ref key, .. } if key == "vector"),
        "{msg}"
    );
    assert!(
        msg.starts_with("t.yaml:3:1: unknown key `vector` (did you mean `vectors`?)"),
        "{msg}"
    );
    assert!(
        msg.contains("name, description, dimension, vectors"),
        "{msg}"
    );
}

#[test]
fn repeated_top_level_key_and_missing_nested_key() {
    let t = "name: c\nname: d\ndimension: 1\nvectors: [[1]]\nbasis: [{name: a}]\ncouplings: {}\nbonds: []\n";
    assert!(matches!(
        err(t),
        LatticeError::DuplicateKey { first_line: 1, .. }
    ));
    let t = "name: c\ndimension: 1\nvectors: [[1]]\nbasis: [{name: a}]\ncouplings: {J: 1}\n\
             bonds: [{from: a, cell: [1], coupling: J}]\n";
    let e = err(t);
    assert!(
        matches!(e, LatticeError::MissingKey { ref key, .. } if key == "to"),
        "{e}"
    );
    assert!(
        e.to_string()
            .contains("bonds[0]: missing required key `to`"),
        "{e}"
    );
}

#[test]
fn reference_needs_a_source_and_a_finite_tc() {
    let base =
        "name: c\ndimension: 1\nvectors: [[1]]\nbasis: [{name: a}]\ncouplings: {}\nbonds: []\n";
    let e = err(&format!("{base}reference: {{tc: 1.0}}\n"));
    assert!(
        matches!(e, LatticeError::MissingKey { ref key, .. } if key == "source"),
        "{e}"
    );
    let e = err(&format!("{base}reference: {{tc: .nan, source: x}}\n"));
    assert!(
        matches!(e, LatticeError::BadReference { ref value, .. } if value == ".nan"),
        "{e}"
    );
    let e = err(&format!("{base}reference: {{tc: 0, source: x}}\n"));
    assert!(matches!(e, LatticeError::BadReference { .. }), "{e}");
}

#[test]
fn vector_independence_uses_a_relative_tolerance() {
    let file = |v: &str| {
        format!("name: c\ndimension: 3\nvectors: {v}\nbasis: [{{name: a}}]\ncouplings: {{}}\nbonds: []\n")
    };
    // Coplanar: third = first + second.
    let e = err(&file("[[1, 0, 0], [0, 1, 0], [1, 1, 0]]"));
    assert!(
        matches!(e, LatticeError::DependentVectors { dimension: 3, .. }),
        "{e}"
    );
    // A zero vector.
    assert!(matches!(
        err(&file("[[1, 0, 0], [0, 0, 0], [0, 0, 1]]")),
        LatticeError::DependentVectors { .. }
    ));
    // Tiny but independent vectors are fine: the test is scale-free.
    assert!(load(&file("[[1e-6, 0, 0], [0, 1e-6, 0], [0, 0, 1e-6]]")).is_ok());
    // A skewed but independent cell (fcc primitive vectors).
    assert!(load(&file("[[0, 0.5, 0.5], [0.5, 0, 0.5], [0.5, 0.5, 0]]")).is_ok());
    // One dimension: only a zero vector is dependent.
    let chain =
        "name: c\ndimension: 1\nvectors: [[0.0]]\nbasis: [{name: a}]\ncouplings: {}\nbonds: []\n";
    assert!(matches!(err(chain), LatticeError::DependentVectors { .. }));
}

#[test]
fn block_on_a_lattice_without_nearest_neighbour_bonds_is_disconnected() {
    // Only diagonal bonds: the 2×2 block splits into two sublattices.
    let t = "name: d\ndimension: 2\nvectors: [[1, 0], [0, 1]]\nbasis: [{name: a}]\ncouplings: {J: 1}\n\
             bonds:\n- {from: a, to: a, cell: [1, 1], coupling: J}\n- {from: a, to: a, cell: [1, -1], coupling: J}\n\
             clusters: {b: {block: [2, 2]}}\n";
    let e = err(t);
    assert!(matches!(e, LatticeError::DisconnectedCluster { .. }), "{e}");
    assert!(
        e.to_string()
            .contains("`a` [1, 0], `a` [0, 1] cannot be reached from `a` [0, 0]"),
        "{e}"
    );
}

#[test]
fn absurd_block_sizes_are_refused_without_expansion() {
    let t =
        "name: s\ndimension: 2\nvectors: [[1, 0], [0, 1]]\nbasis: [{name: a}]\ncouplings: {J: 1}\n\
             bonds: [{from: a, to: a, cell: [1, 0], coupling: J}]\n\
             clusters: {huge: {block: [1000000000000, 1000000000000]}}\n";
    match err(t) {
        LatticeError::ClusterOverLimit { sites, limit, .. } => {
            assert_eq!(sites, 1_000_000_000_000_000_000_000_000);
            assert_eq!(limit, crate::level::MAX_CLUSTER_SITES);
        }
        e => panic!("wrong error: {e}"),
    }
}

#[test]
fn wrong_kinds_say_what_belongs_there() {
    let base = |extra: &str| {
        format!("name: c\ndimension: 1\nvectors: [[1]]\nbasis: [{{name: a}}]\ncouplings: {{J: 1}}\nbonds: []\n{extra}")
    };
    let e = err(&base("field: strong\n"));
    assert!(
        e.to_string()
            .contains("field: expected a number, e.g. 1.0, found text `strong`"),
        "{e}"
    );
    let e = err(&base("clusters: [a]\n"));
    assert!(matches!(e, LatticeError::WrongType { .. }), "{e}");
    let e = err("- just\n- a list\n");
    assert!(
        e.to_string().contains("expected a lattice: a mapping"),
        "{e}"
    );
    let e = err(&base("clusters: {p: [[[a, [0]], [a]]]}\n"));
    assert!(
        e.to_string()
            .contains("clusters.p[0][1]: expected a [site, cell] pair"),
        "{e}"
    );
    let e = err(
        "name: c\ndimension: 1\nvectors: [[1]]\nbasis: [{name: a}]\ncouplings: {J: 1}\n\
                 bonds: [{from: a, to: a, cell: [1.5], coupling: J}]\n",
    );
    assert!(
        e.to_string()
            .contains("bonds[0].cell[0]: expected a whole number"),
        "{e}"
    );
    let e = err(
        "name: c\ndimension: 1\nvectors: [[1]]\nbasis: [{name: a}]\ncouplings: {J: 1}\n\
                 bonds: [{from: a, to: a, cell: [1], coupling: [J]}]\n",
    );
    assert!(
        e.to_string()
            .contains("a key of `couplings` (e.g. J) or a bare number"),
        "{e}"
    );
}

#[test]
fn non_utf8_and_missing_files_are_unreadable() {
    let dir = std::env::temp_dir().join(format!("rungs-lattice-spec-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let bad = dir.join("latin1.yaml");
    std::fs::write(&bad, b"name: caf\xe9\n").unwrap();
    let e = Lattice::from_file(&bad).unwrap_err();
    assert!(matches!(e, LatticeError::Unreadable { .. }), "{e}");
    assert!(
        e.to_string().contains("latin1.yaml") && e.to_string().contains("not UTF-8"),
        "{e}"
    );
    let missing = dir.join("missing.yaml");
    let e = Lattice::from_file(&missing).unwrap_err();
    assert!(
        matches!(e, LatticeError::Unreadable { ref path, .. } if path.ends_with("missing.yaml")),
        "{e}"
    );
    std::fs::remove_dir_all(&dir).unwrap();
}

/// Frustration is a property of the signs of the couplings around closed loops (Toulouse
/// 1977, Commun. Phys. 2, 115): the triangular antiferromagnet and the square lattice with
/// antiferromagnetic nearest and next-nearest neighbours are frustrated; the triangular
/// ferromagnet, the square antiferromagnet and a bcc antiferromagnet with ferromagnetic
/// second neighbours (the B2-type ordering alloy) are not.
#[test]
fn frustration_follows_the_signs_around_loops() {
    let tri = |j: f64| {
        format!(
            "name: tri\ndimension: 2\nvectors: [[1, 0], [0.5, 0.8660254037844386]]\n\
             basis: [{{name: a}}]\ncouplings: {{J: {j}}}\nbonds:\n\
             - {{from: a, to: a, cell: [1, 0], coupling: J}}\n\
             - {{from: a, to: a, cell: [0, 1], coupling: J}}\n\
             - {{from: a, to: a, cell: [1, -1], coupling: J}}\n"
        )
    };
    assert!(!load(&tri(1.0)).unwrap().is_frustrated());
    assert!(load(&tri(-1.0)).unwrap().is_frustrated());

    let square = |j2: f64| {
        format!(
            "name: sq\ndimension: 2\nvectors: [[1, 0], [0, 1]]\nbasis: [{{name: a}}]\n\
             couplings: {{J1: -1, J2: {j2}}}\nbonds:\n\
             - {{from: a, to: a, cell: [1, 0], coupling: J1}}\n\
             - {{from: a, to: a, cell: [0, 1], coupling: J1}}\n\
             - {{from: a, to: a, cell: [1, 1], coupling: J2}}\n\
             - {{from: a, to: a, cell: [1, -1], coupling: J2}}\n"
        )
    };
    assert!(load(&square(-0.3)).unwrap().is_frustrated());
    assert!(!load(&square(0.3)).unwrap().is_frustrated());
    // J2 = 0 bonds impose nothing: the plain square antiferromagnet.
    assert!(!load(&square(0.0)).unwrap().is_frustrated());

    let bcc = "name: bcc\ndimension: 3\n\
               vectors: [[-0.5, 0.5, 0.5], [0.5, -0.5, 0.5], [0.5, 0.5, -0.5]]\n\
               basis: [{name: a}]\ncouplings: {J1: -1, J2: 0.2}\nbonds:\n\
               - {from: a, to: a, cell: [1, 0, 0], coupling: J1}\n\
               - {from: a, to: a, cell: [0, 1, 0], coupling: J1}\n\
               - {from: a, to: a, cell: [0, 0, 1], coupling: J1}\n\
               - {from: a, to: a, cell: [1, 1, 1], coupling: J1}\n\
               - {from: a, to: a, cell: [1, 1, 0], coupling: J2}\n\
               - {from: a, to: a, cell: [1, 0, 1], coupling: J2}\n\
               - {from: a, to: a, cell: [0, 1, 1], coupling: J2}\n";
    let l = load(bcc).unwrap();
    assert!(!l.is_bipartite());
    assert!(!l.is_frustrated());
}

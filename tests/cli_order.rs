//! End to end: order at any wavevector, fields and ordered phases through the commands.

mod common;

use common::*;
use serde_json::Value;

fn json(args: &[&str]) -> Value {
    let text = ok(args);
    serde_json::from_str(&text).unwrap_or_else(|e| panic!("{args:?}: not JSON ({e}): {text}"))
}

fn csv_rows(text: &str) -> Vec<Vec<String>> {
    text.lines()
        .skip(1)
        .map(|l| l.split(',').map(str::to_string).collect())
        .collect()
}

#[test]
fn sweep_follows_neel_order_with_the_ferromagnets_numbers() {
    // Bipartite gauge symmetry: the staggered magnetisation of the antiferromagnet is the
    // ferromagnet's m and F is the same (common practice); the path cools on purpose.
    let dir = tempfile::tempdir().unwrap();
    let anti = with_j(&dir, "square", -1.0);
    let args = |f: &str| {
        vec![
            "sweep".to_string(),
            f.to_string(),
            "--levels".into(),
            "pair,plaquette".into(),
            "--temps".into(),
            "3:0.5:0.5".into(),
            "--format".into(),
            "csv".into(),
        ]
    };
    let a: Vec<String> = args(&anti);
    let f: Vec<String> = args("lattices/square.yaml");
    let a = csv_rows(&ok(&a.iter().map(String::as_str).collect::<Vec<_>>()));
    let f = csv_rows(&ok(&f.iter().map(String::as_str).collect::<Vec<_>>()));
    assert_eq!(a.len(), 12);
    for (ra, rf) in a.iter().zip(&f) {
        assert_eq!(ra[1], rf[1], "temperatures in the order given (descending)");
        let num = |r: &Vec<String>, k: usize| r[k].parse::<f64>().unwrap();
        // order_parameter (column 9) of the antiferromagnet = |m| (column 3) of the
        // ferromagnet; F (column 5) equal.
        assert!(
            (num(ra, 9) - num(rf, 3).abs()).abs() < 1e-9,
            "{ra:?} vs {rf:?}"
        );
        assert!((num(ra, 5) - num(rf, 5)).abs() < 1e-9, "{ra:?} vs {rf:?}");
    }
    assert_eq!(a[0][1], "3");
    assert_eq!(a[5][1], "0.5");
    let doc = json(&[
        "sweep",
        &anti,
        "--levels",
        "plaquette",
        "--temps",
        "1",
        "--format",
        "json",
    ]);
    let p = &doc["points"][0];
    assert_eq!(p["wavevector"], serde_json::json!([0.5, 0.5]));
    assert_eq!(p["cell"], serde_json::json!([2, 2]));
    assert_eq!(p["branch"], "ordered");
    assert_eq!(p["sublattice_magnetizations"].as_array().unwrap().len(), 4);
    assert!(p["note"].is_null());
}

#[test]
fn tc_in_a_field_gives_the_neel_line_and_says_why_a_ferromagnet_has_none() {
    let dir = tempfile::tempdir().unwrap();
    let anti = with_j(&dir, "square", -1.0);
    let doc = json(&[
        "tc", &anti, "--levels", "site", "--field", "2", "--format", "json",
    ]);
    assert_eq!(doc["field"], 2.0);
    assert!(doc["reference"].is_null());
    // Two-sublattice mean field (common practice): T_N(h = 2) = 4(1 − m²) with
    // m = tanh((2 − 4m)/T_N), m = 0.255644…, T_N = 3.7385845…
    let tc = doc["levels"][0]["tc"].as_f64().unwrap();
    assert!((tc - 3.738584547).abs() < 1e-7, "{doc}");
    let ferro = ok(&[
        "tc",
        "lattices/square.yaml",
        "--levels",
        "pair",
        "--field",
        "0.2",
    ]);
    assert!(ferro.contains("no phase transition in a field"), "{ferro}");
    assert!(ferro.contains("no transition found"), "{ferro}");
    // The file's field is the default.
    let text = std::fs::read_to_string(&anti)
        .unwrap()
        .replace("couplings:", "field: 2.0\ncouplings:");
    let path = dir.path().join("in_field.yaml");
    std::fs::write(&path, text).unwrap();
    let doc = json(&[
        "tc",
        path.to_str().unwrap(),
        "--levels",
        "site",
        "--format",
        "json",
    ]);
    assert_eq!(doc["field"], 2.0);
}

#[test]
fn tc_reports_a_failing_level_and_prints_the_others() {
    // Diamond `hexagons` is ill-posed (its paramagnetic branch ends above the pair Tc):
    // its row says so, the other levels print, the command succeeds.
    let doc = json(&[
        "tc",
        "lattices/diamond.yaml",
        "--levels",
        "pair,hexagons",
        "--format",
        "json",
    ]);
    let levels = doc["levels"].as_array().unwrap();
    assert!(levels[0]["tc"].as_f64().is_some());
    assert!(levels[1]["tc"].is_null());
    assert!(
        levels[1]["note"].as_str().is_some_and(|n| !n.is_empty()),
        "{doc}"
    );
}

#[test]
fn negative_entropy_is_flagged_in_every_format() {
    let dir = tempfile::tempdir().unwrap();
    let tri = with_j(&dir, "triangular", -1.0);
    let doc = json(&[
        "sweep", &tri, "--levels", "pair", "--temps", "0.2", "--format", "json",
    ]);
    let p = &doc["points"][0];
    assert!(p["entropy"].as_f64().unwrap() < 0.0);
    assert_eq!(p["negative_entropy"], true);
    assert!(
        p["note"].as_str().unwrap().contains("negative entropy"),
        "{p}"
    );
    let table = ok(&["sweep", &tri, "--levels", "pair", "--temps", "0.2"]);
    assert!(table.contains("negative entropy"), "{table}");
    // The frustrated lattice is flagged too.
    assert!(table.contains("frustrated"), "{table}");
}

#[test]
fn fcc_antiferromagnet_names_its_wavevector_and_the_first_order_caution() {
    let dir = tempfile::tempdir().unwrap();
    let fcc = with_j(&dir, "fcc", -1.0);
    let doc = json(&["tc", &fcc, "--levels", "tetrahedra", "--format", "json"]);
    let l = &doc["levels"][0];
    assert_eq!(l["supercell"].as_array().unwrap().len(), 3);
    let note = l["note"].as_str().unwrap();
    assert!(note.contains("degenerate along the line"), "{note}");
    assert!(note.contains("rungs phases"), "{note}");
}

//! `rungs inspect` end to end on every file in `lattices/`: the JSON keys of the command
//! contract, coordination and bipartiteness of each lattice, the Kikuchi sum rule, the
//! Bethe pair-level coefficients and Kikuchi's square approximation; the table and CSV
//! views.

use std::path::{Path, PathBuf};

use serde_json::Value;

mod common;

use common::rungs;

/// Shipped files whose lattice is known: (file stem, coordination z of every site,
/// bipartite). Coordination numbers and bipartiteness: common practice.
const KNOWN: &[(&str, u64, bool)] = &[
    ("chain", 2, true),
    ("square", 4, true),
    ("square_anisotropic", 4, true),
    ("triangular", 6, false),
    ("honeycomb", 3, true),
    ("kagome", 4, false),
    ("simple_cubic", 6, true),
    ("bcc", 8, true),
    ("fcc", 12, false),
    ("fcc_af", 12, false),
    ("diamond", 4, true),
];

fn lattice_files() -> Vec<PathBuf> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("lattices");
    let mut files: Vec<PathBuf> = std::fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "yaml" || e == "yml"))
        .collect();
    files.sort();
    files
}

fn inspect_json(file: &Path) -> Value {
    let out = rungs()
        .arg("inspect")
        .arg(file)
        .args(["--format", "json"])
        .output()
        .unwrap();
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(
        out.status.success(),
        "{}: exit {:?}, stderr: {stderr}",
        file.display(),
        out.status.code()
    );
    assert!(!stderr.contains("panicked"), "{stderr}");
    serde_json::from_slice(&out.stdout)
        .unwrap_or_else(|e| panic!("{}: not JSON: {e}", file.display()))
}

fn uint(v: &Value, key: &str) -> u64 {
    v[key]
        .as_u64()
        .unwrap_or_else(|| panic!("`{key}` is not a non-negative integer in {v}"))
}

/// (sites, per_cell, coefficient) of every region group of `level`.
fn regions(doc: &Value, level: &str) -> Vec<(u64, u64, i64)> {
    let lv = doc["levels"]
        .as_array()
        .unwrap()
        .iter()
        .find(|l| l["level"] == level)
        .unwrap();
    lv["regions"]
        .as_array()
        .unwrap()
        .iter()
        .map(|r| {
            (
                uint(r, "sites"),
                uint(r, "per_cell"),
                r["coefficient"].as_i64().unwrap(),
            )
        })
        .collect()
}

#[test]
fn every_shipped_lattice_inspects_to_the_json_contract() {
    let files = lattice_files();
    for (stem, _, _) in KNOWN {
        assert!(
            files.iter().any(|f| f.file_stem().unwrap() == *stem),
            "lattices/{stem}.yaml is missing"
        );
    }
    for file in &files {
        let doc = inspect_json(file);
        let stem = file.file_stem().unwrap().to_str().unwrap();
        for key in [
            "name",
            "dimension",
            "sites_per_cell",
            "bonds_per_cell",
            "coordination",
            "bipartite",
            "levels",
        ] {
            assert!(doc.get(key).is_some(), "{stem}: key `{key}` missing");
        }
        let spc = uint(&doc, "sites_per_cell");
        let dim = uint(&doc, "dimension");
        assert!((1..=3).contains(&dim), "{stem}: dimension {dim}");
        let coordination = doc["coordination"].as_object().unwrap();
        assert_eq!(
            coordination.len() as u64,
            spc,
            "{stem}: one coordination entry per basis site"
        );
        // Each bond has two ends: Σ_a z_a = 2 × bonds per cell.
        let zsum: u64 = coordination.values().map(|z| z.as_u64().unwrap()).sum();
        assert_eq!(
            zsum,
            2 * uint(&doc, "bonds_per_cell"),
            "{stem}: Σ z = 2 × bonds"
        );
        if let Some(&(_, z, bipartite)) = KNOWN.iter().find(|k| k.0 == stem) {
            assert!(
                coordination.values().all(|v| v.as_u64() == Some(z)),
                "{stem}: coordination {coordination:?}, expected {z}"
            );
            assert_eq!(
                doc["bipartite"].as_bool(),
                Some(bipartite),
                "{stem}: bipartite"
            );
        }
        let levels = doc["levels"].as_array().unwrap();
        assert_eq!(levels[0]["level"], "site", "{stem}");
        assert_eq!(levels[1]["level"], "pair", "{stem}");
        for lv in levels {
            let name = lv["level"].as_str().unwrap();
            let max = uint(lv, "max_cluster_sites");
            let rs = regions(&doc, name);
            assert!(!rs.is_empty(), "{stem}/{name}: no regions");
            assert_eq!(
                rs.iter().map(|r| r.0).max(),
                Some(max),
                "{stem}/{name}: largest region = max cluster"
            );
            assert!(
                rs.iter().all(|r| r.2 != 0 && r.1 > 0),
                "{stem}/{name}: zero coefficient or count listed"
            );
            // Kikuchi (1951), Phys. Rev. 81, 988: Σ_γ a_γ |γ| = sites per cell.
            let sum: i64 = rs.iter().map(|&(s, n, a)| (s * n) as i64 * a).sum();
            assert_eq!(sum, spc as i64, "{stem}/{name}: sum rule");
        }
        // Site level: one single-site region per basis site, coefficient 1 (common practice).
        assert_eq!(
            regions(&doc, "site"),
            vec![(1, spc, 1)],
            "{stem}: site level"
        );
        // Pair level (Bethe 1935, Proc. R. Soc. A 150, 552): every bond +1, each site 1 − z.
        if let Some(&(_, z, _)) = KNOWN.iter().find(|k| k.0 == stem) {
            let bonds = uint(&doc, "bonds_per_cell");
            assert_eq!(
                regions(&doc, "pair"),
                vec![(2, bonds, 1), (1, spc, 1 - z as i64)],
                "{stem}: pair level"
            );
        }
    }
}

#[test]
fn square_plaquette_is_kikuchis_square_approximation() {
    let doc = inspect_json(Path::new("lattices/square.yaml"));
    assert_eq!(doc["name"], "square");
    assert_eq!(uint(&doc, "dimension"), 2);
    assert_eq!(uint(&doc, "sites_per_cell"), 1);
    assert_eq!(uint(&doc, "bonds_per_cell"), 2);
    assert_eq!(doc["coordination"]["a"], 4);
    assert_eq!(doc["bipartite"], true);
    // Kikuchi (1951), Phys. Rev. 81, 988: plaquette +1, bonds −1 (two per cell), site +1.
    assert_eq!(
        regions(&doc, "plaquette"),
        vec![(4, 1, 1), (2, 2, -1), (1, 1, 1)]
    );
    let plaquette = doc["levels"]
        .as_array()
        .unwrap()
        .iter()
        .find(|l| l["level"] == "plaquette")
        .unwrap();
    assert_eq!(plaquette["max_cluster_sites"], 4);
    // The plaquette's 15 non-empty subsets fall into 10 translation orbits: 1 site, 2
    // bonds, 2 diagonals, 4 triangles, 1 plaquette (ARCHITECTURE.md; common practice).
    assert_eq!(plaquette["variables"], 10);
}

#[test]
fn table_names_every_level_and_the_summary() {
    let json = inspect_json(Path::new("lattices/honeycomb.yaml"));
    let out = rungs()
        .args(["inspect", "lattices/honeycomb.yaml"])
        .output()
        .unwrap();
    assert!(out.status.success());
    let text = String::from_utf8(out.stdout).unwrap();
    for level in json["levels"].as_array().unwrap() {
        let name = level["level"].as_str().unwrap();
        assert!(
            text.contains(&format!("Level {name}")),
            "table lacks level `{name}`:\n{text}"
        );
    }
    for label in [
        "honeycomb",
        "dimension",
        "sites per cell",
        "bonds per cell",
        "coordination",
        "a: 3, b: 3",
        "bipartite",
        "yes",
        "sum rule",
    ] {
        assert!(text.contains(label), "table lacks `{label}`:\n{text}");
    }
    assert!(!text.contains("WRONG"), "a sum rule failed:\n{text}");
}

#[test]
fn csv_has_one_row_per_level_and_region_group() {
    let json = inspect_json(Path::new("lattices/triangular.yaml"));
    let out = rungs()
        .args(["inspect", "lattices/triangular.yaml", "--format", "csv"])
        .output()
        .unwrap();
    assert!(out.status.success());
    let text = String::from_utf8(out.stdout).unwrap();
    let lines: Vec<&str> = text.lines().collect();
    assert_eq!(
        lines[0],
        "lattice,level,max_cluster_sites,variables,sites,per_cell,coefficient"
    );
    let groups: usize = json["levels"]
        .as_array()
        .unwrap()
        .iter()
        .map(|l| l["regions"].as_array().unwrap().len())
        .sum();
    assert_eq!(lines.len(), 1 + groups);
    // Triangle approximation (Kikuchi 1951): two triangles +1, three bonds −1, site +1.
    for row in [
        "triangular,triangles,3,6,3,2,1",
        "triangular,triangles,3,6,2,3,-1",
        "triangular,triangles,3,6,1,1,1",
    ] {
        assert!(lines.contains(&row), "missing row `{row}` in\n{text}");
    }
}

/// Shipped files whose levels draw a warning, with a word of it; every other shipped
/// file has `warnings: []`.
const WARNED: &[(&str, &str)] = &[(
    "layered_magnet",
    // The in-plane plaquette leaves the weak J_perp bonds as pairs, by design.
    "J_perp",
)];

#[test]
fn warnings_are_a_list_and_only_the_layered_demo_has_one() {
    for file in lattice_files() {
        let stem = file.file_stem().unwrap().to_str().unwrap().to_string();
        let doc = inspect_json(&file);
        let warnings = doc["warnings"]
            .as_array()
            .unwrap_or_else(|| panic!("{stem}: `warnings` is not a list"));
        match WARNED.iter().find(|w| w.0 == stem) {
            Some((_, word)) => assert!(
                warnings.len() == 1 && warnings[0].as_str().unwrap().contains(word),
                "{stem}: {warnings:?}"
            ),
            None => assert!(warnings.is_empty(), "{stem}: {warnings:?}"),
        }
    }
}

#[test]
fn bonds_per_coupling_and_neighbours_say_what_the_bond_list_holds() {
    let doc = inspect_json(Path::new("lattices/square_anisotropic.yaml"));
    let couplings: Vec<(String, f64, u64)> = doc["bonds_per_coupling"]
        .as_array()
        .unwrap()
        .iter()
        .map(|c| {
            (
                c["coupling"].as_str().unwrap().to_string(),
                c["j"].as_f64().unwrap(),
                uint(c, "bonds"),
            )
        })
        .collect();
    assert_eq!(
        couplings,
        vec![("Jx".to_string(), 1.0, 1), ("Jy".to_string(), 0.5, 1)]
    );
    // Four neighbours at distance 1 (unit square cell, common practice): two along x
    // through Jx, two along y through Jy.
    let a = doc["neighbours"]["a"].as_array().unwrap();
    assert_eq!(a.len(), 4);
    for n in a {
        assert!((n["distance"].as_f64().unwrap() - 1.0).abs() < 1e-12, "{n}");
        let cell: Vec<i64> = n["cell"]
            .as_array()
            .unwrap()
            .iter()
            .map(|x| x.as_i64().unwrap())
            .collect();
        let along_x = cell[1] == 0;
        assert_eq!(n["coupling"], if along_x { "Jx" } else { "Jy" }, "{n}");
    }
    let text = rungs()
        .args(["inspect", "lattices/square_anisotropic.yaml"])
        .output()
        .unwrap();
    let text = String::from_utf8(text.stdout).unwrap();
    for label in ["Bonds per coupling", "Neighbours", "Jy", "distance"] {
        assert!(text.contains(label), "table lacks `{label}`:\n{text}");
    }
    assert!(!text.contains("WARNING"), "{text}");
}

#[test]
fn one_plaquette_shape_on_the_antiferromagnets_two_site_cell_is_flagged() {
    // The square-lattice antiferromagnet in a √2×√2 cell: one plaquette shape covers
    // half the plaquettes, and the plaquette Tc comes out 2.7708 instead of Kikuchi's
    // 2.4257 (Kikuchi 1951, Phys. Rev. 81, 988; from memory to 4 digits, and the value
    // of `square.yaml`'s plaquette level, which rungs' own tests hold to the same).
    let one = Path::new("tests/fixtures/square_af_sqrt2_one_plaquette.yaml");
    let both = Path::new("tests/fixtures/square_af_sqrt2_both_plaquettes.yaml");
    let doc = inspect_json(one);
    let warnings = doc["warnings"].as_array().unwrap();
    assert_eq!(warnings.len(), 1, "{warnings:?}");
    let w = warnings[0].as_str().unwrap();
    assert!(
        w.contains("level `plaquette` is not closed under the lattice's symmetry")
            && w.contains("[[b, [0, 0]], [a, [1, 0]], [b, [1, 0]], [a, [1, 1]]]"),
        "{w}"
    );
    let table = rungs().arg("inspect").arg(one).output().unwrap();
    let table = String::from_utf8(table.stdout).unwrap();
    assert!(table.contains("WARNING: level `plaquette`"), "{table}");
    assert_eq!(inspect_json(both)["warnings"], serde_json::json!([]));

    let plaquette_tc = |file: &Path| -> f64 {
        let out = common::ok(&[
            "tc",
            file.to_str().unwrap(),
            "--levels",
            "plaquette",
            "--format",
            "json",
        ]);
        let doc: Value = serde_json::from_str(&out).unwrap();
        doc["levels"][0]["tc"].as_f64().unwrap()
    };
    let (t_one, t_both) = (plaquette_tc(one), plaquette_tc(both));
    assert!((t_both - 2.4257).abs() < 1e-3, "{t_both}");
    assert!((t_one - 2.7708).abs() < 1e-3, "{t_one}");
}

/// `inspect --plot`: an SVG with one dot per drawn site, a legend naming every coupling
/// and every named level, for a 1D, a 2D and a 3D lattice.
#[test]
fn plot_draws_sites_bonds_and_level_shapes() {
    let dir = tempfile::tempdir().unwrap();
    for (stem, words) in [
        (
            "chain",
            vec!["bond J (J = 1)", "level `triple`", "1 shape of 3 sites"],
        ),
        (
            "layered_magnet",
            vec![
                "bond J_in (J = 1)",
                "bond J_perp (J = 0.1)",
                "level `plaquette`",
                "level `box`",
                "1 shape of 8 sites",
            ],
        ),
        ("kagome", vec!["level `triangles`", "2 shapes of 3 sites"]),
    ] {
        let svg_path = dir.path().join(format!("{stem}.svg"));
        common::ok(&[
            "inspect",
            &format!("lattices/{stem}.yaml"),
            "--plot",
            svg_path.to_str().unwrap(),
        ]);
        let svg = std::fs::read_to_string(&svg_path).unwrap();
        assert!(svg.starts_with("<svg") && svg.trim_end().ends_with("</svg>"));
        for w in words {
            assert!(svg.contains(w), "{stem}: figure lacks `{w}`");
        }
        assert!(
            svg.matches("<circle").count() > 8,
            "{stem}: too few sites drawn"
        );
        assert!(
            svg.contains("<polyline") || svg.contains("<path"),
            "{stem}: no bonds"
        );
    }
}

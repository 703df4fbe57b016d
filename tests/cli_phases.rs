//! End to end: `rungs phases` and `rungs merge` — the boundary table, the alloy view,
//! the figure, shards merged into the unsharded output, and bad input.

mod common;

use common::*;
use serde_json::Value;

/// The square lattice with `J: j` and no reference, written into `dir`.
fn square(dir: &tempfile::TempDir, j: f64) -> String {
    with_j(dir, "square", j)
}

fn status(args: &[&str]) -> (Option<i32>, String) {
    let out = rungs().args(args).output().unwrap();
    (
        out.status.code(),
        String::from_utf8_lossy(&out.stderr).to_string(),
    )
}

#[test]
fn three_shards_merged_are_the_unsharded_run_byte_for_byte() {
    let dir = tempfile::tempdir().unwrap();
    let anti = square(&dir, -1.0);
    let base = [
        "phases",
        &anti,
        "--levels",
        "site,pair",
        "--temps",
        "1:4.5:0.5",
        "--fields",
        "-3:3:1",
    ];
    let with = |extra: &[&str]| -> Vec<String> {
        base.iter().chain(extra).map(|s| s.to_string()).collect()
    };
    let whole_csv = ok(&with(&["--format", "csv"])
        .iter()
        .map(String::as_str)
        .collect::<Vec<_>>());
    let whole_json = ok(&with(&["--format", "json"])
        .iter()
        .map(String::as_str)
        .collect::<Vec<_>>());
    let mut parts = Vec::new();
    for k in 1..=3 {
        let part = dir.path().join(format!("part{k}.json"));
        let p = part.to_str().unwrap().to_string();
        let shard = format!("{k}/3");
        ok(&with(&["--shard", &shard, "-o", &p])
            .iter()
            .map(String::as_str)
            .collect::<Vec<_>>());
        parts.push(p);
    }
    // Any order of the parts.
    let merged_csv = ok(&["merge", &parts[2], &parts[0], &parts[1], "--format", "csv"]);
    assert_eq!(merged_csv, whole_csv);
    let merged_json = ok(&["merge", &parts[1], &parts[2], &parts[0], "--format", "json"]);
    assert_eq!(merged_json, whole_json);
    // The Néel line: second order at every field, symmetric in h (particle–hole
    // symmetry of the Ising model, common practice).
    let rows: Vec<Vec<&str>> = whole_csv
        .lines()
        .skip(1)
        .map(|l| l.split(',').collect())
        .collect();
    let site: Vec<_> = rows.iter().filter(|r| r[0] == "site").collect();
    assert_eq!(site.len(), 7, "{whole_csv}");
    assert!(site.iter().all(|r| r[3] == "second"), "{whole_csv}");
    let t = |h: &str| -> f64 { site.iter().find(|r| r[1] == h).unwrap()[2].parse().unwrap() };
    assert!((t("-2") - t("2")).abs() < 1e-9 && (t("-3") - t("3")).abs() < 1e-9);
    // Missing, repeated and foreign parts are bad input.
    let (code, err) = status(&["merge", &parts[0], &parts[1]]);
    assert_eq!(code, Some(2), "{err}");
    assert!(err.contains("part 3/3 is missing"), "{err}");
    let (code, err) = status(&["merge", &parts[0], &parts[0], &parts[1]]);
    assert_eq!(code, Some(2), "{err}");
    assert!(err.contains("given twice"), "{err}");
    let (code, err) = status(&["merge", &anti]);
    assert_eq!(code, Some(2), "{err}");
    assert!(err.contains("not a partial result"), "{err}");
}

#[test]
fn alloy_view_of_the_ferromagnets_h0_line_and_the_figure() {
    // Below Tc the ferromagnet (a phase-separating alloy, w = 2J > 0) has a two-phase
    // field at Δμ = 0: the coexisting compositions x = (1 ∓ m_s)/2 are symmetric about
    // 1/2 (particle–hole symmetry, common practice).
    let dir = tempfile::tempdir().unwrap();
    let svg = dir.path().join("alloy.svg");
    let csv = ok(&[
        "phases",
        "lattices/square.yaml",
        "--levels",
        "plaquette",
        "--temps",
        "1.8,2.0,2.6",
        "--fields",
        "-0.2:0.2:0.1",
        "--along",
        "field",
        "--alloy",
        "--format",
        "csv",
        "--plot",
        svg.to_str().unwrap(),
    ]);
    let mut lines = csv.lines();
    let header = lines.next().unwrap();
    assert!(
        header.starts_with("level,chemical_potential,temperature,kind"),
        "{header}"
    );
    assert!(
        header.contains("composition_below,composition_above"),
        "{header}"
    );
    let rows: Vec<Vec<&str>> = lines.map(|l| l.split(',').collect()).collect();
    assert_eq!(rows.len(), 2, "{csv}");
    for r in &rows {
        assert_eq!((r[1], r[3]), ("0", "first"), "{csv}");
        let (xb, xa): (f64, f64) = (r[9].parse().unwrap(), r[10].parse().unwrap());
        assert!((xb + xa - 1.0).abs() < 1e-9, "{xb} + {xa}");
        assert!(xb > 0.6 && xa < 0.4, "{xb} {xa}");
    }
    let text = std::fs::read_to_string(&svg).unwrap();
    assert!(text.starts_with("<svg") && text.contains("level plaquette"));
    // JSON: the grid carries compositions; at T = 2.6 > Tc(plaquette) no transition.
    let json: Value = serde_json::from_str(&ok(&[
        "phases",
        "lattices/square.yaml",
        "--levels",
        "plaquette",
        "--temps",
        "1.8,2.6",
        "--fields",
        "-0.2:0.2:0.2",
        "--along",
        "field",
        "--alloy",
        "--format",
        "json",
    ]))
    .unwrap();
    assert_eq!(json["level"], "plaquette");
    assert_eq!(json["transitions"].as_array().unwrap().len(), 1);
    let grid = json["grid"].as_array().unwrap();
    assert_eq!(grid.len(), 6);
    assert!(grid.iter().all(|g| g["composition"].is_number()));
}

#[test]
fn bad_phases_arguments_exit_2() {
    for (args, says) in [
        (
            vec![
                "phases",
                "lattices/square.yaml",
                "--levels",
                "site",
                "--temps",
                "2",
                "--fields",
                "0",
            ],
            "at least two values",
        ),
        (
            vec![
                "phases",
                "lattices/square.yaml",
                "--levels",
                "site",
                "--temps",
                "1:3:1",
                "--shard",
                "4/3",
            ],
            "1 ≤ k ≤ n",
        ),
        (
            vec![
                "phases",
                "lattices/square.yaml",
                "--levels",
                "nope",
                "--temps",
                "1:3:1",
            ],
            "nope",
        ),
        (
            vec![
                "phases",
                "lattices/square.yaml",
                "--levels",
                "site",
                "--temps",
                "1:3:1",
                "--plot",
                "x.pdf",
            ],
            ".pdf",
        ),
    ] {
        let (code, err) = status(&args);
        assert_eq!(code, Some(2), "{args:?}: {err}");
        assert!(err.contains(says), "{args:?}: {err}");
    }
}

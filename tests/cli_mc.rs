//! `rungs mc` end to end: the JSON contract, error bars and named susceptibility in every
//! format, reproducibility, and bad input refused before any torus is built.

mod common;

use common::{ok, rungs, with_j};
use serde_json::Value;

fn mc(args: &[&str]) -> Value {
    serde_json::from_str(&ok(args)).unwrap()
}

const ARGS: [&str; 12] = [
    "mc",
    "lattices/square.yaml",
    "--sizes",
    "4,8",
    "--temps",
    "2.0,2.3,2.6",
    "--sweeps",
    "400",
    "--warmup",
    "100",
    "--format",
    "json",
];

#[test]
fn json_has_the_contract_keys() {
    let v = mc(&ARGS);
    assert_eq!(v["lattice"], "square");
    assert_eq!(v["seed"], 1);
    assert_eq!(v["sizes"], serde_json::json!([4, 8]));
    let points = v["points"].as_array().unwrap();
    assert_eq!(points.len(), 6);
    for p in points {
        for key in [
            "size",
            "sites",
            "temperature",
            "energy",
            "energy_error",
            "abs_magnetization",
            "abs_magnetization_error",
            "binder",
            "binder_error",
            "specific_heat",
            "susceptibility",
            "spins_flipped",
            "seconds",
        ] {
            assert!(p[key].is_number(), "missing or non-numeric `{key}` in {p}");
        }
        // Every energy per site of the square ferromagnet lies in [−2, 0] at these T
        // (two bonds per site, |s_i s_j| = 1; common practice).
        let e = p["energy"].as_f64().unwrap();
        assert!((-2.0..=0.0).contains(&e));
    }
    // The U4 curves of L = 4 and 8 cross between 2.0 and 2.6 around Onsager's
    // 2.269 (Onsager 1944, Phys. Rev. 65, 117); small sizes: a loose check.
    let tc = v["tc_estimate"]["tc"].as_f64().unwrap();
    assert!((2.1..2.45).contains(&tc), "crossing at {tc}");
    assert_eq!(v["tc_estimate"]["method"], "binder-crossing");
}

#[test]
fn same_seed_same_numbers() {
    let strip = |mut v: Value| {
        for p in v["points"].as_array_mut().unwrap() {
            p.as_object_mut().unwrap().remove("seconds");
        }
        v
    };
    // Wall-clock seconds differ run to run; everything else is identical.
    assert_eq!(strip(mc(&ARGS)), strip(mc(&ARGS)));
}

#[test]
fn too_few_sweeps_is_bad_input() {
    refused(
        &[
            "mc",
            "lattices/square.yaml",
            "--sizes",
            "4",
            "--temps",
            "2.0",
            "--sweeps",
            "3",
        ],
        &["sweeps"],
    );
}

#[test]
fn every_format_has_the_error_bars_and_names_the_susceptibility() {
    let args = |format: &'static str| {
        let mut a = ARGS.to_vec();
        *a.last_mut().unwrap() = format;
        a
    };
    let csv = ok(&args("csv"));
    let header: Vec<&str> = csv.lines().next().unwrap().split(',').collect();
    for column in [
        "specific_heat",
        "specific_heat_error",
        "susceptibility_abs_m",
        "susceptibility_abs_m_error",
    ] {
        assert!(header.contains(&column), "no `{column}` in {header:?}");
    }
    assert!(!header.contains(&"susceptibility"), "{header:?}");
    let table = ok(&args("table"));
    let head = table.lines().find(|l| l.contains("Binder U4")).unwrap();
    assert!(head.contains("χ′ = N(⟨m²⟩−⟨|m|⟩²)/T"), "{head}");
    // energy, |m|, U4, C and χ′: five `±` per row.
    let row = table
        .lines()
        .find(|l| l.trim_start().starts_with("8 "))
        .unwrap();
    assert_eq!(row.matches('±').count(), 5, "{row}");
    assert!(table.contains("NOT `sweep`'s χ = ∂m/∂h"), "{table}");
    let v = mc(&ARGS);
    let p = &v["points"][0];
    assert!(p["specific_heat_error"].as_f64().unwrap() > 0.0);
    assert!(p["susceptibility_error"].as_f64().unwrap() > 0.0);
    assert!(v["definitions"]["susceptibility"]
        .as_str()
        .unwrap()
        .contains("<|m|>"));
}

/// Run `mc` with `args`, expect exit status 2 and every word of `mentions` on stderr.
fn refused(args: &[&str], mentions: &[&str]) {
    let out = rungs().args(args).output().unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{args:?}: {err}");
    assert!(!err.contains("panicked"), "{err}");
    for m in mentions {
        assert!(err.contains(m), "{args:?}: no `{m}` in {err}");
    }
}

#[test]
fn a_torus_too_large_for_memory_is_refused_before_it_is_built() {
    // 10^10 sites: building it would need about a terabyte.
    refused(
        &[
            "mc",
            "lattices/square.yaml",
            "--sizes",
            "100000",
            "--temps",
            "2.3",
        ],
        &["100000", "GiB", "limit of 8.0 GiB"],
    );
    // Too few sweeps is named even for a torus that could never be built (10^12 sites):
    // the arguments are checked before anything is allocated.
    refused(
        &[
            "mc",
            "lattices/square.yaml",
            "--sizes",
            "1000000",
            "--temps",
            "2.3",
            "--sweeps",
            "10",
        ],
        &["sweeps", "at least 64"],
    );
}

#[test]
fn antiferromagnet_json_names_the_order_parameter_and_the_update() {
    let dir = tempfile::tempdir().unwrap();
    let path = with_j(&dir, "square", -1.0);
    let v = mc(&[
        "mc", &path, "--sizes", "3,6", "--temps", "2.0,3.0", "--sweeps", "200", "--warmup", "20",
        "--format", "json",
    ]);
    // Néel order at q = (1/2, 1/2); sizes rounded up to the period 2, and said so.
    assert_eq!(v["wavevector"], serde_json::json!([0.5, 0.5]));
    assert_eq!(v["order"]["wavevector"], serde_json::json!([0.5, 0.5]));
    assert_eq!(v["order"]["pattern"], "staggered");
    assert_eq!(v["order"]["period"], 2);
    assert_eq!(v["sizes"], serde_json::json!([4, 6]));
    let notes: Vec<&str> = v["notes"]
        .as_array()
        .unwrap()
        .iter()
        .filter_map(Value::as_str)
        .collect();
    assert!(notes.iter().any(|n| n.contains("3 → 4")), "{notes:?}");
    assert_eq!(v["algorithm"], "wolff (sublattice gauge)");
    for p in v["points"].as_array().unwrap() {
        for key in [
            "order_parameter",
            "order_parameter_error",
            "binder_order",
            "binder_order_error",
            "susceptibility_order",
            "uniform_magnetization",
            "uniform_magnetization_error",
            "abs_magnetization",
            "binder",
        ] {
            assert!(p[key].is_number(), "missing `{key}` in {p}");
        }
        assert_eq!(p["order_parameter"], p["abs_magnetization"]);
        assert_eq!(p["algorithm"], "wolff");
        assert_eq!(p["gauged"], true);
    }
    // Cold: the staggered magnetisation is large, the uniform one small (Néel order).
    let cold = &v["points"][0];
    assert!(cold["order_parameter"].as_f64().unwrap() > 0.8, "{cold}");
    assert!(
        cold["uniform_magnetization"].as_f64().unwrap() < 0.2,
        "{cold}"
    );
    // CSV: the new columns come after the old ones.
    let csv = ok(&[
        "mc", &path, "--sizes", "4", "--temps", "2.0", "--sweeps", "100", "--warmup", "10",
        "--format", "csv",
    ]);
    let header = csv.lines().next().unwrap();
    assert!(
        header.starts_with("size,sites,temperature,energy,"),
        "{header}"
    );
    assert!(
        header.ends_with("order_parameter,order_parameter_error,binder_order,binder_order_error,uniform_magnetization,uniform_magnetization_error,algorithm,wavevector"),
        "{header}"
    );
}

#[test]
fn triangular_antiferromagnet_has_no_tc_and_says_why() {
    // No order at T > 0 (Wannier 1950, Phys. Rev. 79, 357).
    let dir = tempfile::tempdir().unwrap();
    let path = with_j(&dir, "triangular", -1.0);
    let v = mc(&[
        "mc",
        &path,
        "--sizes",
        "6,12",
        "--temps",
        "0.5:3:0.5",
        "--sweeps",
        "1000",
        "--warmup",
        "100",
        "--format",
        "json",
    ]);
    assert!(v["tc_estimate"].is_null(), "{}", v["tc_estimate"]);
    assert!(v["note"].as_str().unwrap().contains("no"), "{}", v["note"]);
    assert_eq!(v["algorithm"], "metropolis");
    assert_eq!(v["order"]["components"], 2);
    assert!(v["order"]["degenerate"].is_string());
}

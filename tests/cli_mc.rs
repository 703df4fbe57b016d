//! `rungs mc` end to end: the JSON contract, reproducibility, and bad input.

use assert_cmd::Command;
use serde_json::Value;

fn mc(args: &[&str]) -> Value {
    let out = Command::cargo_bin("rungs")
        .unwrap()
        .args(args)
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).unwrap()
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
    let out = Command::cargo_bin("rungs")
        .unwrap()
        .args([
            "mc",
            "lattices/square.yaml",
            "--sizes",
            "4",
            "--temps",
            "2.0",
            "--sweeps",
            "3",
        ])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("sweeps") && !err.contains("panicked"), "{err}");
}

//! Temperature sweeps, what `rungs sweep` waits for, with every observable (C and χ
//! included), each point continuing the branch of the one before:
//!
//! * 301 points of the square-lattice plaquette level, T = 1.0 … 4.0 at h = 0, up and down
//!   (goal ≤ 0.3 s each);
//! * 401 points of the square antiferromagnet (J = −1) at the plaquette level through its
//!   ordered phase, T = 0.2 … 2.2, on the 2×2 cell of the Néel order (goal ≤ 1 s).

use std::path::Path;

use criterion::{criterion_group, criterion_main, Criterion};
use rungs::lattice::{Lattice, Level};
use rungs::solve::{sweep_level, SweepOptions};

fn square(j: f64) -> (Lattice, Level) {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("lattices")
        .join("square.yaml");
    let text = match std::fs::read_to_string(&path) {
        Ok(t) => t.replace("J: 1.0", &format!("J: {j}")),
        Err(e) => panic!("benchmark lattice: {e}"),
    };
    let lattice = match Lattice::from_yaml_str(&text, "square.yaml") {
        Ok(l) => l,
        Err(e) => panic!("benchmark lattice: {e}"),
    };
    let level = match Level::build(&lattice, "plaquette") {
        Ok(l) => l,
        Err(e) => panic!("benchmark level: {e}"),
    };
    (lattice, level)
}

fn bench_sweep(c: &mut Criterion) {
    let (ferro, fl) = square(1.0);
    let (anti, al) = square(-1.0);
    let up: Vec<f64> = (0..=300).map(|k| 1.0 + 0.01 * k as f64).collect();
    let down: Vec<f64> = up.iter().rev().copied().collect();
    let ordered: Vec<f64> = (0..=400).map(|k| 0.2 + 0.005 * k as f64).collect();
    let mut group = c.benchmark_group("sweep");
    group.sample_size(10);
    for (name, lattice, level, temps) in [
        ("square/plaquette/301 points, T up", &ferro, &fl, &up),
        ("square/plaquette/301 points, T down", &ferro, &fl, &down),
        (
            "square AF/plaquette/401 points, ordered phase",
            &anti,
            &al,
            &ordered,
        ),
    ] {
        let run = || {
            sweep_level(
                lattice,
                level,
                temps,
                &[0.0],
                SweepOptions::default(),
                &|| {},
            )
        };
        // Report a failing sweep once instead of timing an error path.
        if let Err(e) = run() {
            eprintln!("{name}: not benchmarked, the sweep fails: {e}");
            continue;
        }
        group.bench_function(name, |b| b.iter(|| run().map(|s| s.points.len())));
    }
    group.finish();
}

criterion_group!(benches, bench_sweep);
criterion_main!(benches);

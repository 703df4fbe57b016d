//! A temperature sweep, what `rungs sweep` waits for: 301 equilibrium points of the
//! square-lattice plaquette level (T = 1.0, 1.01, …, 4.0 at h = 0, each warm-started from
//! the one before) with all observables, C and χ included. Goal: ≤ 0.3 s. A second case
//! walks the same path down (4.0 → 1.0), starting on the paramagnetic side.

use std::path::Path;

use criterion::{criterion_group, criterion_main, Criterion};
use rungs::lattice::{Lattice, Level};
use rungs::solve::sweep;

fn square_plaquette() -> (Lattice, Level) {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("lattices")
        .join("square.yaml");
    let lattice = match Lattice::from_file(&path) {
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
    let (_lattice, level) = square_plaquette();
    let up: Vec<f64> = (0..=300).map(|k| 1.0 + 0.01 * k as f64).collect();
    let down: Vec<f64> = up.iter().rev().copied().collect();
    let mut group = c.benchmark_group("sweep");
    group.sample_size(10);
    for (name, temps) in [
        ("square/plaquette/301 points, T up", &up),
        ("square/plaquette/301 points, T down", &down),
    ] {
        // Report a failing sweep once instead of timing an error path.
        if let Err(e) = sweep(&level, temps, &[0.0], &|| {}) {
            eprintln!("{name}: not benchmarked, the sweep fails: {e}");
            continue;
        }
        group.bench_function(name, |b| {
            b.iter(|| sweep(&level, temps, &[0.0], &|| {}).map(|v| v.len()))
        });
    }
    group.finish();
}

criterion_group!(benches, bench_sweep);
criterion_main!(benches);

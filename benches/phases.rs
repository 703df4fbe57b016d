//! Phase diagrams, what `rungs phases` waits for, one path after another on one core:
//!
//! * the square antiferromagnet (J = −1) at the plaquette level, T = 0.05 … 5.0 (100
//!   temperatures) × h = 0 … 7.8 (40 fields), paths in T (goal ≤ 10 s);
//! * the fcc antiferromagnet (J = −1) at the tetrahedron level, T = 1.0 … 3.45 (50
//!   temperatures) × h = 0 … 9.5 (20 fields), paths in T (goal ≤ 60 s).
//!
//! Each takes long enough that criterion's minimum of ten samples makes the run long:
//! `cargo bench --bench phases` takes about ten times the two goals.

use std::path::Path;

use criterion::{criterion_group, criterion_main, Criterion};
use rungs::lattice::{Lattice, Level};
use rungs::solve::phases::{assemble, Along, DiagramHeader, DiagramSpec, PhaseDiagramSetup};

/// A shipped lattice with `J: 1.0` → `J: -1.0`, and one of its levels.
pub fn antiferromagnet(stem: &str, level: &str) -> (Lattice, Level) {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("lattices")
        .join(format!("{stem}.yaml"));
    let text = match std::fs::read_to_string(&path) {
        Ok(t) => t.replace("J: 1.0", "J: -1.0"),
        Err(e) => panic!("benchmark lattice: {e}"),
    };
    let lattice = match Lattice::from_yaml_str(&text, "bench.yaml") {
        Ok(l) => l,
        Err(e) => panic!("benchmark lattice: {e}"),
    };
    let level = match Level::build(&lattice, level) {
        Ok(l) => l,
        Err(e) => panic!("benchmark level: {e}"),
    };
    (lattice, level)
}

/// `n` evenly spaced values from `a` to `b`.
pub fn grid(a: f64, b: f64, n: usize) -> Vec<f64> {
    (0..n)
        .map(|i| a + (b - a) * i as f64 / (n - 1) as f64)
        .collect()
}

/// The whole diagram, paths one after another; the number of transitions found.
pub fn diagram(lattice: &Lattice, level: &Level, temps: &[f64], fields: &[f64]) -> usize {
    let spec = DiagramSpec::new(temps, fields, Along::Temperature);
    let setup = match PhaseDiagramSetup::new(lattice, level, spec) {
        Ok(s) => s,
        Err(e) => panic!("benchmark setup: {e}"),
    };
    let paths = (0..setup.paths()).map(|i| setup.path(i)).collect();
    match assemble(DiagramHeader::of(&setup), paths) {
        Ok(d) => d.transitions().count(),
        Err(e) => panic!("benchmark assembly: {e}"),
    }
}

fn bench_phases(c: &mut Criterion) {
    let (square, plaquette) = antiferromagnet("square", "plaquette");
    let (fcc, tetrahedra) = antiferromagnet("fcc", "tetrahedra");
    let square_grid = (grid(0.05, 5.0, 100), grid(0.0, 7.8, 40));
    let fcc_grid = (grid(1.0, 3.45, 50), grid(0.0, 9.5, 20));
    let mut group = c.benchmark_group("phases");
    group.sample_size(10);
    group.bench_function("square AF/plaquette/100 x 40", |b| {
        b.iter(|| diagram(&square, &plaquette, &square_grid.0, &square_grid.1))
    });
    group.bench_function("fcc AF/tetrahedra/50 x 20", |b| {
        b.iter(|| diagram(&fcc, &tetrahedra, &fcc_grid.0, &fcc_grid.1))
    });
    group.finish();
}

criterion_group!(benches, bench_phases);
criterion_main!(benches);

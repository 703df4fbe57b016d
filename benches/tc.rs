//! Tc of one level, the engine's headline cost: disordered solves along T, the
//! Fourier-space Hessian's lowest eigenvalue over the candidate wavevectors, a Brent root,
//! and the check of every wavevector of a zone grid just above Tc. Goals
//! (docs/benchmarks.md): square plaquette ≤ 2 ms, simple-cubic cube ≤ 2 ms, square 3×3
//! block ≤ 60 ms; the square antiferromagnet at every level within 2× of the
//! ferromagnet; the fcc antiferromagnet's tetrahedra ≤ 1 s.

use std::path::Path;

use criterion::{criterion_group, criterion_main, Criterion};
use rungs::lattice::{Lattice, Level};
use rungs::solve::{critical_temperature, TcOptions};

/// A shipped lattice, its couplings `J: 1.0` replaced by `J: j`.
fn load(stem: &str, j: f64) -> Lattice {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("lattices")
        .join(format!("{stem}.yaml"));
    let text = match std::fs::read_to_string(&path) {
        Ok(t) => t.replace("J: 1.0", &format!("J: {j}")),
        Err(e) => panic!("benchmark lattice {stem}: {e}"),
    };
    match Lattice::from_yaml_str(&text, "bench.yaml") {
        Ok(l) => l,
        Err(e) => panic!("benchmark lattice {stem}: {e}"),
    }
}

fn bench_tc(c: &mut Criterion) {
    let mut group = c.benchmark_group("tc");
    group.sample_size(10);
    for (stem, j, level) in [
        ("square", 1.0, "site"),
        ("square", -1.0, "site"),
        ("square", 1.0, "pair"),
        ("square", -1.0, "pair"),
        ("square", 1.0, "plaquette"),
        ("square", -1.0, "plaquette"),
        ("square", 1.0, "block3"),
        ("square", -1.0, "block3"),
        ("simple_cubic", 1.0, "cube"),
        ("fcc", -1.0, "tetrahedra"),
    ] {
        let lattice = load(stem, j);
        let kind = if j > 0.0 { "ferro" } else { "antiferro" };
        group.bench_function(format!("{stem} {kind}/{level}"), |b| {
            b.iter(|| {
                // Building the level is part of the job a user waits for.
                let lv = Level::build(&lattice, level).ok();
                lv.and_then(|lv| critical_temperature(&lattice, &lv, TcOptions::default()).ok())
            })
        });
    }
    group.finish();
}

criterion_group!(benches, bench_tc);
criterion_main!(benches);

//! Tc of one level, the engine's headline cost: paramagnetic solves along T, the
//! odd-sector spectrum and a Brent root. Goals (docs/benchmarks.md): square plaquette
//! ≤ 2 ms, simple-cubic cube ≤ 8 ms, square 3×3 block ≤ 60 ms.

use std::path::Path;

use criterion::{criterion_group, criterion_main, Criterion};
use rungs::lattice::{Lattice, Level};
use rungs::solve::{critical_temperature, TcOptions};

fn load(stem: &str) -> Lattice {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("lattices")
        .join(format!("{stem}.yaml"));
    match Lattice::from_file(&path) {
        Ok(l) => l,
        Err(e) => panic!("benchmark lattice {stem}: {e}"),
    }
}

fn bench_tc(c: &mut Criterion) {
    let mut group = c.benchmark_group("tc");
    group.sample_size(20);
    for (stem, level) in [
        ("square", "plaquette"),
        ("simple_cubic", "cube"),
        ("square", "block3"),
    ] {
        let lattice = load(stem);
        group.bench_function(format!("{stem}/{level}"), |b| {
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

//! The pieces of a Tc on region potentials (`rungs_solve::big::rect`), for the 5×5 block
//! of the square lattice (goal: its Tc ≤ 10 min, docs/benchmarks.md): one application of
//! the fixed-point map (one pass over the 2^24 states at h = 0 with its tables), and the
//! Anderson mixing's own cost on a vector of the same length (a map that costs nothing),
//! with single- and double-precision differences at depth 40. The 4×4 block's map too.

use std::hint::black_box;
use std::path::Path;

use criterion::{criterion_group, criterion_main, Criterion};
use rungs::lattice::Lattice;
use rungs::solve::big::rect::{anderson, AndersonOptions, RectBlock, RectSolver};

/// The shipped square lattice with an n×n block level.
fn block(n: usize) -> RectBlock {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("lattices/square.yaml");
    let name = format!("block{n}x{n}");
    let lattice = Lattice::from_file(&path)
        .and_then(|l| l.with_block_level(&name, [n, n, 1]))
        .unwrap_or_else(|e| panic!("square lattice: {e}"));
    RectBlock::detect(&lattice, &name).unwrap_or_else(|| panic!("{name} is a rectangle"))
}

fn bench_map(c: &mut Criterion) {
    let mut group = c.benchmark_group("rect");
    group.sample_size(10);
    for n in [4, 5] {
        let mut solver = RectSolver::new(block(n), 2.34, 0.0);
        let x = vec![0.0; solver.len()];
        let mut out = vec![0.0; solver.len()];
        group.bench_function(format!("map {n}x{n} (h = 0)"), |b| {
            b.iter(|| {
                solver
                    .map(black_box(&x), &mut out)
                    .expect("the map at T = 2.34")
            })
        });
    }
    // The mixing alone: half the 5×5 block's unknowns (what it mixes at h = 0), 60 steps
    // (the history fills over the first 40) of a slow linear contraction.
    let half = RectSolver::new(block(5), 2.34, 0.0).len() / 2;
    let options = AndersonOptions {
        tolerance: 0.0,
        max_iterations: 60,
        ..AndersonOptions::default()
    };
    let mut map = |v: &[f64], o: &mut [f64]| {
        o.iter_mut()
            .zip(v)
            .enumerate()
            .for_each(|(i, (o, v))| *o = 0.999 * v + 1e-3 * (i % 7) as f64);
        Ok(())
    };
    group.bench_function("anderson 60 steps, 5x5 half vector, f32 differences", |b| {
        b.iter(|| {
            let (mut y, mut k) = (vec![1.0; half], 0);
            let _ = anderson::<f32>(&mut map, &mut y, options, &mut k);
        })
    });
    group.bench_function("anderson 60 steps, 5x5 half vector, f64 differences", |b| {
        b.iter(|| {
            let (mut y, mut k) = (vec![1.0; half], 0);
            let _ = anderson::<f64>(&mut map, &mut y, options, &mut k);
        })
    });
    group.finish();
}

criterion_group!(benches, bench_map);
criterion_main!(benches);

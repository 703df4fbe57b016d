//! Exact enumeration of the 5×5 square torus (2^25 states): density of states by the
//! Gray-code walk, then one evaluation. Target: well under 1 s per enumeration.
//! Also the W = 12 square strip free energy by the sparse transfer matrix.

use std::hint::black_box;

use criterion::{criterion_group, criterion_main, Criterion};
use rungs::reference::enumerate::Enumeration;
use rungs::reference::transfer::Strip;

/// Periodic L × L square lattice, site x + L·y, coupling 1.
fn square_torus(l: usize) -> Vec<(usize, usize, f64)> {
    let mut e = Vec::new();
    for y in 0..l {
        for x in 0..l {
            e.push((x + l * y, (x + 1) % l + l * y, 1.0));
            e.push((x + l * y, x + l * ((y + 1) % l), 1.0));
        }
    }
    e
}

fn enumerate_5x5(c: &mut Criterion) {
    let edges = square_torus(5);
    let mut group = c.benchmark_group("enumerate");
    group.sample_size(10);
    group.bench_function("square 5x5 torus (2^25 states)", |b| {
        b.iter(|| {
            let e = Enumeration::new(25, black_box(&edges)).expect("25 sites is within the limit");
            e.thermo(2.0, 0.0).expect("valid temperature")
        })
    });
    let e = Enumeration::new(25, &edges).expect("25 sites is within the limit");
    group.bench_function("5x5 evaluation from the density of states", |b| {
        b.iter(|| e.thermo(black_box(2.3), 0.1).expect("valid temperature"))
    });
    group.finish();
}

fn strip_w12(c: &mut Criterion) {
    let w = 12;
    let intra: Vec<_> = (0..w).map(|x| (x, (x + 1) % w, 1.0)).collect();
    let inter: Vec<_> = (0..w).map(|x| (x, x, 1.0)).collect();
    let strip = Strip::from_rows(w, &intra, &inter).expect("valid strip");
    let mut group = c.benchmark_group("transfer");
    group.sample_size(10);
    group.bench_function("square strip W=12 at Tc", |b| {
        b.iter(|| {
            strip
                .free_energy(black_box(2.269_185_314_213_022), 0.0)
                .expect("converges")
        })
    });
    group.finish();
}

criterion_group!(benches, enumerate_5x5, strip_w12);
criterion_main!(benches);

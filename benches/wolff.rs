//! Speed of the Monte Carlo kernels on the 256 × 256 square torus at Onsager's critical
//! temperature Tc = 2 / ln(1 + √2) (Onsager 1944, Phys. Rev. 65, 117), where Wolff
//! clusters span a large part of the lattice.
//!
//! `wolff_ns_per_flipped_spin`: one benchmark iteration is one flipped spin, so the time
//! criterion reports is the cost per flipped spin (goal ≤ 20 ns).
//! `metropolis_ns_per_site`: one iteration is one attempted single-spin flip.
//! Run: `cargo bench --bench wolff`.

use std::hint::black_box;
use std::time::{Duration, Instant};

use criterion::{criterion_group, criterion_main, Criterion};
use rungs_reference::montecarlo::rng::rng_from_seed;
use rungs_reference::montecarlo::{Metropolis, Neighbours, Wolff};

const L: usize = 256;

fn square(l: usize) -> Neighbours {
    let mut edges = Vec::with_capacity(2 * l * l);
    for y in 0..l {
        for x in 0..l {
            edges.push((x + l * y, (x + 1) % l + l * y, 1.0));
            edges.push((x + l * y, x + l * ((y + 1) % l), 1.0));
        }
    }
    Neighbours::from_edges(l * l, &edges).expect("valid square torus")
}

fn kernels(c: &mut Criterion) {
    let tc = 2.0 / (1.0 + 2f64.sqrt()).ln();
    let n = square(L);
    let mut group = c.benchmark_group("square256_at_tc");
    group
        .sample_size(10)
        .warm_up_time(Duration::from_secs(1))
        .measurement_time(Duration::from_secs(5));

    let mut wolff = Wolff::new(&n, tc).expect("ferromagnet");
    let mut rng = rng_from_seed(1);
    let mut spins = vec![1i8; L * L];
    for _ in 0..200 {
        wolff.sweep(&n, &mut spins, &mut rng);
    }
    group.bench_function("wolff_ns_per_flipped_spin", |b| {
        b.iter_custom(|iters| {
            let start = Instant::now();
            let mut flipped = 0u64;
            while flipped < iters {
                flipped += black_box(wolff.cluster(&n, &mut spins, &mut rng)) as u64;
            }
            start.elapsed().mul_f64(iters as f64 / flipped as f64)
        })
    });

    let metropolis = Metropolis::new(tc, 0.0).expect("valid temperature");
    group.bench_function("metropolis_ns_per_site", |b| {
        b.iter_custom(|iters| {
            let sweeps = iters.div_ceil((L * L) as u64);
            let start = Instant::now();
            for _ in 0..sweeps {
                black_box(metropolis.sweep(&n, &mut spins, &mut rng));
            }
            start
                .elapsed()
                .mul_f64(iters as f64 / (sweeps * (L * L) as u64) as f64)
        })
    });
    group.finish();
}

criterion_group!(benches, kernels);
criterion_main!(benches);

//! Monte Carlo (rungs-reference `montecarlo`) against exact results: Onsager's energy of
//! the square lattice, the exact honeycomb Tc through Binder crossings, exact enumeration
//! of small tori (Wolff and Metropolis, ferro, anisotropic, frustrated, in a field), and
//! reproducibility of seeded runs.

use std::f64::consts::PI;

use rungs_lattice::{Lattice, Torus};
use rungs_reference::montecarlo::{
    run, run_systems, Algorithm, McConfig, McError, McPoint, Neighbours, Order, System,
};

/// The lattice file shipped in `lattices/`.
fn lattice_file(name: &str) -> Lattice {
    Lattice::from_file(
        &std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("lattices")
            .join(name),
    )
    .unwrap()
}

/// The square lattice of the lattice-file contract (docs: LATTICE-FORMAT).
const SQUARE: &str = "name: square\ndimension: 2\nvectors: [[1.0, 0.0], [0.0, 1.0]]\n\
    basis: [{name: a}]\ncouplings: {J: 1.0}\n\
    bonds: [{from: a, to: a, cell: [1, 0], coupling: J}, {from: a, to: a, cell: [0, 1], coupling: J}]\n";

/// Square L×L torus, `jx` along x and `jy` along y; site x + L·y.
fn square_edges(l: usize, jx: f64, jy: f64) -> Vec<(usize, usize, f64)> {
    let mut e = Vec::new();
    for y in 0..l {
        for x in 0..l {
            e.push((x + l * y, (x + 1) % l + l * y, jx));
            e.push((x + l * y, x + l * ((y + 1) % l), jy));
        }
    }
    e
}

/// Triangular L×L torus: square bonds plus one diagonal (x+1, y+1) per site, z = 6.
fn triangular_edges(l: usize, j: f64) -> Vec<(usize, usize, f64)> {
    let mut e = square_edges(l, j, j);
    for y in 0..l {
        for x in 0..l {
            e.push((x + l * y, (x + 1) % l + l * ((y + 1) % l), j));
        }
    }
    e
}

/// Honeycomb torus of L×L cells, basis a = 2c, b = 2c + 1 (c = x + L·y): a(x,y) bonds
/// to b(x,y), b(x-1,y) and b(x,y-1), so every site has z = 3.
fn honeycomb_edges(l: usize) -> Vec<(usize, usize, f64)> {
    let cell = |x: usize, y: usize| 2 * ((x % l) + l * (y % l));
    let mut e = Vec::new();
    for y in 0..l {
        for x in 0..l {
            let a = cell(x, y);
            e.push((a, cell(x, y) + 1, 1.0));
            e.push((a, cell(x + l - 1, y) + 1, 1.0));
            e.push((a, cell(x, y + l - 1) + 1, 1.0));
        }
    }
    e
}

fn system(size: usize, sites: usize, edges: &[(usize, usize, f64)], field: f64) -> System {
    System::new(size, Neighbours::from_edges(sites, edges).unwrap(), field)
}

/// Exact ⟨e⟩, ⟨|m|⟩, ⟨m²⟩, ⟨m⁴⟩ per site by summing all 2^n states.
fn exact(n: usize, edges: &[(usize, usize, f64)], h: f64, t: f64) -> [f64; 4] {
    let mut states = Vec::with_capacity(1 << n);
    for s in 0u32..(1 << n) {
        let spin = |i: usize| if s >> i & 1 == 1 { 1.0 } else { -1.0 };
        let m: f64 = (0..n).map(spin).sum();
        let e = -edges
            .iter()
            .map(|&(i, j, c)| c * spin(i) * spin(j))
            .sum::<f64>()
            - h * m;
        states.push((e, m));
    }
    let e0 = states.iter().map(|s| s.0).fold(f64::INFINITY, f64::min);
    let mut acc = [0.0; 5];
    for (e, m) in states {
        let w = (-(e - e0) / t).exp();
        let (e, m) = (e / n as f64, m / n as f64);
        for (a, v) in acc.iter_mut().zip([1.0, e, m.abs(), m * m, m.powi(4)]) {
            *a += w * v;
        }
    }
    [
        acc[1] / acc[0],
        acc[2] / acc[0],
        acc[3] / acc[0],
        acc[4] / acc[0],
    ]
}

/// Assert |mc - exact| ≤ 4σ (and σ > 0 so the check has teeth).
fn within(name: &str, mc: f64, sigma: f64, exact: f64) {
    assert!(sigma > 0.0, "{name}: zero error bar");
    assert!(
        (mc - exact).abs() <= 4.0 * sigma,
        "{name}: MC {mc} ± {sigma}, exact {exact}"
    );
}

fn check_against_enumeration(p: &McPoint, ex: [f64; 4]) {
    within(
        "energy",
        p.estimates.energy,
        p.estimates.energy_error,
        ex[0],
    );
    within(
        "|m|",
        p.estimates.abs_magnetization,
        p.estimates.abs_magnetization_error,
        ex[1],
    );
    within("m²", p.estimates.m2, p.estimates.m2_error, ex[2]);
    let u4 = 1.0 - ex[3] / (3.0 * ex[2] * ex[2]);
    within("binder", p.estimates.binder, p.estimates.binder_error, u4);
}

fn config(temps: &[f64], sweeps: usize, seed: u64) -> McConfig {
    McConfig {
        temperatures: temps.to_vec(),
        sweeps,
        warmup: sweeps / 10,
        seed,
        algorithm: Algorithm::Auto,
    }
}

#[test]
fn wolff_and_metropolis_match_exact_enumeration_of_a_4x4_square_torus() {
    let edges = square_edges(4, 1.0, 1.0);
    let t = 2.5;
    let ex = exact(16, &edges, 0.0, t);
    for algorithm in [Algorithm::Wolff, Algorithm::Metropolis] {
        let cfg = McConfig {
            algorithm,
            ..config(&[t], 40_000, 5)
        };
        let r = run_systems(&[system(4, 16, &edges, 0.0)], &cfg, None).unwrap();
        assert_eq!(r.points[0].algorithm, algorithm);
        check_against_enumeration(&r.points[0], ex);
    }
}

#[test]
fn wolff_with_two_distinct_couplings_matches_enumeration() {
    // Anisotropic square torus Jx = 1, Jy = 0.4: two activation probabilities.
    let edges = square_edges(4, 1.0, 0.4);
    let t = 1.8;
    let r = run_systems(
        &[system(4, 16, &edges, 0.0)],
        &config(&[t], 40_000, 9),
        None,
    )
    .unwrap();
    assert_eq!(r.points[0].algorithm, Algorithm::Wolff);
    check_against_enumeration(&r.points[0], exact(16, &edges, 0.0, t));
}

#[test]
fn metropolis_on_a_frustrated_antiferromagnet_in_a_field_matches_enumeration() {
    // Triangular 4×4 torus, J = -1 (frustrated), h = 0.7: Auto must pick Metropolis.
    let edges = triangular_edges(4, -1.0);
    let (t, h) = (1.2, 0.7);
    let r = run_systems(&[system(4, 16, &edges, h)], &config(&[t], 40_000, 13), None).unwrap();
    assert_eq!(r.points[0].algorithm, Algorithm::Metropolis);
    check_against_enumeration(&r.points[0], exact(16, &edges, h, t));
}

/// Complete elliptic integral of the first kind K(k) = π / (2 AGM(1, √(1-k²)))
/// (Gauss; Abramowitz & Stegun 1964, eq. 17.6.1).
fn elliptic_k(k: f64) -> f64 {
    let (mut a, mut b) = (1.0, (1.0 - k * k).sqrt());
    while (a - b).abs() > 1e-15 * a {
        (a, b) = (0.5 * (a + b), (a * b).sqrt());
    }
    PI / (2.0 * a)
}

/// Onsager's internal energy per site of the square lattice, J = 1 (Onsager 1944, Phys.
/// Rev. 65, 117): u = -coth 2K [1 + (2/π)(2 tanh² 2K - 1) K(k)], k = 2 sinh 2K / cosh² 2K.
fn onsager_energy(t: f64) -> f64 {
    let k2 = 2.0 / t;
    let modulus = 2.0 * k2.sinh() / (k2.cosh() * k2.cosh());
    -(1.0 / k2.tanh()) * (1.0 + 2.0 / PI * (2.0 * k2.tanh().powi(2) - 1.0) * elliptic_k(modulus))
}

#[test]
fn square_64_energy_at_t3_matches_onsager() {
    // Sanity of the closed form itself: u(Tc) = -√2 at Tc = 2/ln(1+√2) (Onsager 1944).
    let tc = 2.0 / (1.0 + 2f64.sqrt()).ln();
    assert!((onsager_energy(tc * (1.0 + 1e-9)) + 2f64.sqrt()).abs() < 1e-6);
    let t = 3.0;
    let r = run_systems(
        &[system(64, 64 * 64, &square_edges(64, 1.0, 1.0), 0.0)],
        &config(&[t], 3_000, 21),
        None,
    )
    .unwrap();
    let p = &r.points[0];
    assert_eq!(p.algorithm, Algorithm::Wolff);
    // At T = 3 the correlation length is ~1 site: finite-size effects on a 64² torus are
    // exponentially small (common practice), so the infinite-lattice value applies.
    within(
        "energy",
        p.estimates.energy,
        p.estimates.energy_error,
        onsager_energy(t),
    );
    assert!(
        p.estimates.energy_error < 2e-3,
        "{}",
        p.estimates.energy_error
    );
}

/// Honeycomb Tc = 2 / ln(2 + √3) for J = 1 (Houtappel 1950, Physica 16, 425).
fn honeycomb_tc() -> f64 {
    2.0 / (2.0 + 3f64.sqrt()).ln()
}

fn honeycomb_tc_estimate(sizes: &[usize], temps: &[f64], sweeps: usize, seed: u64) -> (f64, f64) {
    let r = run(
        &lattice_file("honeycomb.yaml"),
        sizes,
        &config(temps, sweeps, seed),
        &Order::Uniform,
        None,
    )
    .unwrap();
    assert_eq!(r.points[0].sites, 2 * sizes[0] * sizes[0]);
    let est = r
        .tc_estimate
        .expect("the temperatures bracket Tc, so the curves must cross");
    assert_eq!(est.method, "binder-crossing");
    (est.tc, est.tc_error)
}

#[test]
fn honeycomb_binder_crossing_smoke() {
    // Short CI run: small sizes and few sweeps, so the tolerance is 3% (the 1% check is
    // `honeycomb_binder_crossing_within_one_percent`, ignored by default).
    let temps: Vec<f64> = (0..8).map(|i| 1.45 + 0.02 * i as f64).collect();
    let (tc, err) = honeycomb_tc_estimate(&[8, 16], &temps, 4_000, 3);
    let exact = honeycomb_tc();
    assert!(
        (tc / exact - 1.0).abs() < 0.03,
        "Tc {tc} ± {err}, exact {exact}"
    );
    assert!(err > 0.0 && err < 0.05, "{err}");
}

#[test]
#[ignore = "long validation (~20 s of CPU): cargo test --release --test monte_carlo -- --ignored"]
fn honeycomb_binder_crossing_within_one_percent() {
    let temps: Vec<f64> = (0..11).map(|i| 1.47 + 0.01 * i as f64).collect();
    let (tc, err) = honeycomb_tc_estimate(&[8, 16, 32], &temps, 40_000, 17);
    let exact = honeycomb_tc();
    assert!(
        (tc / exact - 1.0).abs() < 0.01,
        "Tc {tc} ± {err}, exact {exact}"
    );
    // The error bar is honest: the exact value lies within 3 of them.
    assert!(
        (tc - exact).abs() < 3.0 * err,
        "Tc {tc} ± {err}, exact {exact}"
    );
}

#[test]
fn hand_written_honeycomb_torus_gives_the_same_physics_as_the_file() {
    // Same sizes, temperatures and seed through an edge list: the tori are isomorphic
    // but numbered differently, so results agree statistically, not bit for bit.
    let temps = [1.4, 1.7];
    let file = run(
        &lattice_file("honeycomb.yaml"),
        &[6],
        &config(&temps, 4_000, 8),
        &Order::Uniform,
        None,
    )
    .unwrap();
    let hand = run_systems(
        &[system(6, 72, &honeycomb_edges(6), 0.0)],
        &config(&temps, 4_000, 8),
        None,
    )
    .unwrap();
    for (f, h) in file.points.iter().zip(&hand.points) {
        within(
            "energy",
            f.estimates.energy,
            f.estimates.energy_error.hypot(h.estimates.energy_error),
            h.estimates.energy,
        );
    }
}

#[test]
fn lattice_file_torus_matches_exact_enumeration_and_fields_switch_to_metropolis() {
    let square = Lattice::from_yaml_str(SQUARE, "square.yaml").unwrap();
    let t = 2.5;
    let edges = Torus::new(&square, &[4, 4]).unwrap().edges();
    let r = run(
        &square,
        &[4],
        &config(&[t], 40_000, 31),
        &Order::Uniform,
        None,
    )
    .unwrap();
    assert_eq!(
        (r.points[0].sites, r.points[0].algorithm),
        (16, Algorithm::Wolff)
    );
    check_against_enumeration(&r.points[0], exact(16, &edges, 0.0, t));
    // The file's field is used; Wolff does not apply, Metropolis is chosen.
    let h = 0.2;
    let r = run(
        &square.with_field(h),
        &[4],
        &config(&[t], 40_000, 31),
        &Order::Uniform,
        None,
    )
    .unwrap();
    assert_eq!(r.points[0].algorithm, Algorithm::Metropolis);
    check_against_enumeration(&r.points[0], exact(16, &edges, h, t));
    // A torus too small to hold the lattice is refused with the size named.
    let err = run(&square, &[1], &config(&[t], 100, 1), &Order::Uniform, None).unwrap_err();
    assert!(matches!(err, McError::Torus { size: 1, .. }), "{err}");
}

#[test]
fn same_seed_same_results_different_seed_different_results() {
    let systems = [
        system(4, 16, &square_edges(4, 1.0, 1.0), 0.0),
        system(6, 36, &square_edges(6, 1.0, 1.0), 0.0),
    ];
    let temps = [2.0, 2.3, 2.6];
    let strip = |mut points: Vec<McPoint>| {
        points.iter_mut().for_each(|p| p.seconds = 0.0);
        points
    };
    let a = strip(
        run_systems(&systems, &config(&temps, 500, 42), None)
            .unwrap()
            .points,
    );
    let b = strip(
        run_systems(&systems, &config(&temps, 500, 42), None)
            .unwrap()
            .points,
    );
    let c = strip(
        run_systems(&systems, &config(&temps, 500, 43), None)
            .unwrap()
            .points,
    );
    assert_eq!(a, b);
    assert_ne!(a, c);
    // Order: sizes outer, temperatures inner, as given.
    let order: Vec<(usize, f64)> = a.iter().map(|p| (p.size, p.temperature)).collect();
    assert_eq!(
        order,
        vec![(4, 2.0), (4, 2.3), (4, 2.6), (6, 2.0), (6, 2.3), (6, 2.6)]
    );
}

//! Thermodynamics of solved states: exact limits, mean-field equations, Bethe's cavity
//! solution and thermodynamic identities.

mod common;

use common::*;
use rungs_lattice::Lattice;
use rungs_solve::{observables, solve_equilibrium, Observables};

fn obs(l: &Lattice, lv: &str, t: f64, h: f64) -> Observables {
    let level = level(l, lv);
    let st = solve_equilibrium(&level, t, h, None).unwrap();
    observables(&level, &st).unwrap()
}

/// Exact chain: −βf = K + ln[cosh βh + sqrt(sinh² βh + e^{−4K})] (Ising 1925; Baxter,
/// Exactly Solved Models, 1982, ch. 2), m = sinh βh / sqrt(sinh² βh + e^{−4K}).
fn chain_exact(j: f64, t: f64, h: f64) -> (f64, f64) {
    let (k, b) = (j / t, h / t);
    let root = (b.sinh().powi(2) + (-4.0 * k).exp()).sqrt();
    let f = -t * (k + (b.cosh() + root).ln());
    (f, b.sinh() / root)
}

#[test]
fn chain_pair_level_is_exact() {
    let l = chain(1.0);
    for (t, h) in [(0.5, 0.1), (1.0, 0.0), (1.0, 0.3), (2.5, -0.7), (4.0, 1.5)] {
        let o = obs(&l, "pair", t, h);
        let (f, m) = chain_exact(1.0, t, h);
        assert!(
            (o.free_energy - f).abs() < 1e-10,
            "F at T={t}, h={h}: {} vs {f}",
            o.free_energy
        );
        assert!(
            (o.magnetization - m).abs() < 1e-10,
            "m at T={t}, h={h}: {} vs {m}",
            o.magnetization
        );
        // χ = ∂m/∂h of the exact form, by central differences.
        let d = 1e-5;
        let chi = (chain_exact(1.0, t, h + d).1 - chain_exact(1.0, t, h - d).1) / (2.0 * d);
        assert!(
            (o.susceptibility / chi - 1.0).abs() < 1e-6,
            "χ at T={t}, h={h}: {} vs {chi}",
            o.susceptibility
        );
    }
}

#[test]
fn site_level_solves_the_mean_field_equation() {
    // Mean-field theory: m = tanh((z J m + h)/T) (common practice), square z = 4.
    let l = shipped("square");
    for (t, h) in [(2.0, 0.0), (3.0, 0.0), (3.9, 0.0), (5.0, 0.5), (2.5, -0.2)] {
        let m = obs(&l, "site", t, h).magnetization;
        assert!(
            (m - ((4.0 * m + h) / t).tanh()).abs() < 1e-10,
            "T={t} h={h} m={m}"
        );
        if h == 0.0 && t < 4.0 {
            assert!(m > 0.1, "ordered branch expected below Tc, got m={m}");
        }
    }
}

#[test]
fn site_level_specific_heat_jump_and_order_parameter() {
    // Mean-field theory: C jumps by 3/2 per spin at Tc and m² ≈ 3(1 − T/Tc) just below
    // (common practice).
    let l = shipped("square");
    let tc = 4.0;
    let below = obs(&l, "site", tc * (1.0 - 1e-4), 0.0);
    let above = obs(&l, "site", tc * (1.0 + 1e-4), 0.0);
    assert!(
        (below.specific_heat - above.specific_heat - 1.5).abs() < 2e-3,
        "{} {}",
        below.specific_heat,
        above.specific_heat
    );
    let m2 = below.magnetization.powi(2);
    assert!((m2 / (3.0 * 1e-4) - 1.0).abs() < 1e-3, "m² = {m2}");
}

#[test]
fn bethe_level_matches_the_cavity_solution() {
    // Bethe (1935): x = βh + (z−1) atanh(tanh K tanh x), m = tanh(βh + z atanh(tanh K tanh x)).
    let l = shipped("square");
    let z = 4.0;
    for (t, h) in [(2.5f64, 0.0f64), (3.5, 0.0), (2.0, 0.2), (4.0, 0.5)] {
        let (k, b) = (1.0 / t, h / t);
        let mut x: f64 = 1.0;
        for _ in 0..100_000 {
            x = b + (z - 1.0) * (k.tanh() * x.tanh()).atanh();
        }
        let m_exact = (b + z * (k.tanh() * x.tanh()).atanh()).tanh();
        let m = obs(&l, "pair", t, h).magnetization;
        assert!((m - m_exact).abs() < 1e-9, "T={t} h={h}: {m} vs {m_exact}");
    }
}

/// Central-difference checks of S = −∂F/∂T, C = ∂U/∂T, χ = ∂m/∂h and U = F + TS.
/// Neighbouring points are warm-started from the central one, so that at h = 0 below Tc
/// they stay on the same (m > 0) branch.
fn check_identities(l: &Lattice, lv: &str, t: f64, h: f64) {
    let level = level(l, lv);
    let centre = solve_equilibrium(&level, t, h, None).unwrap();
    let near = |t: f64, h: f64| {
        let st = solve_equilibrium(&level, t, h, Some(&centre.solution.x)).unwrap();
        observables(&level, &st).unwrap()
    };
    let o = observables(&level, &centre).unwrap();
    let dt = 1e-4 * t;
    let (up, dn) = (near(t + dt, h), near(t - dt, h));
    let s_fd = -(up.free_energy - dn.free_energy) / (2.0 * dt);
    let c_fd = (up.energy - dn.energy) / (2.0 * dt);
    let dh = 1e-4;
    let chi_fd = (near(t, h + dh).magnetization - near(t, h - dh).magnetization) / (2.0 * dh);
    let rel = |a: f64, b: f64| (a - b).abs() / b.abs().max(1e-3);
    assert!(
        rel(o.entropy, s_fd) < 1e-5,
        "{lv} T={t} h={h}: S {} vs {s_fd}",
        o.entropy
    );
    assert!(
        rel(o.specific_heat, c_fd) < 1e-5,
        "{lv} T={t} h={h}: C {} vs {c_fd}",
        o.specific_heat
    );
    assert!(
        rel(o.susceptibility, chi_fd) < 1e-5,
        "{lv} T={t} h={h}: χ {} vs {chi_fd}",
        o.susceptibility
    );
    assert!((o.energy - (o.free_energy + t * o.entropy)).abs() < 1e-12);
}

#[test]
fn thermodynamic_identities_square() {
    let l = shipped("square");
    for lv in ["site", "pair", "plaquette", "block3"] {
        check_identities(&l, lv, 3.0, 0.1);
        check_identities(&l, lv, 2.0, 0.0);
    }
}

#[test]
fn thermodynamic_identities_triangular_and_cubic() {
    let tri = shipped("triangular");
    for lv in ["site", "pair", "triangles"] {
        check_identities(&tri, lv, 5.0, 0.2);
        check_identities(&tri, lv, 3.0, 0.0);
    }
    let sc = shipped("simple_cubic");
    for lv in ["pair", "cube"] {
        check_identities(&sc, lv, 6.0, 0.0);
        check_identities(&sc, lv, 4.0, 0.05);
    }
}

#[test]
fn field_reversal_flips_the_magnetisation() {
    let l = shipped("square");
    for lv in ["pair", "plaquette"] {
        let a = obs(&l, lv, 2.5, 0.3);
        let b = obs(&l, lv, 2.5, -0.3);
        assert!((a.magnetization + b.magnetization).abs() < 1e-10);
        assert!((a.free_energy - b.free_energy).abs() < 1e-10);
    }
}

#[test]
fn plaquette_sweeps_through_tc_both_ways() {
    // Up and down through Tc at h = 0: every point solved, the ordered branch (m > 0)
    // followed below Tc, paramagnet above; at T = 1 the plaquette m is within 1e-3 of
    // Yang's m = (1 − sinh⁻⁴ 2K)^{1/8} = 0.99927 (Yang 1952, Phys. Rev. 85, 808).
    let l = shipped("square");
    let lv = level(&l, "plaquette");
    let up: Vec<f64> = (0..=30).map(|k| 1.0 + 0.1 * k as f64).collect();
    let down: Vec<f64> = up.iter().rev().copied().collect();
    for temps in [up, down] {
        let swept = rungs_solve::sweep_level(
            &l,
            &lv,
            &temps,
            &[0.0],
            rungs_solve::SweepOptions::default(),
            &|| {},
        )
        .unwrap();
        let obs: Vec<Observables> = swept
            .points
            .iter()
            .map(|p| match p {
                rungs_solve::SweepPoint::Solved(p) => p.observables.clone(),
                rungs_solve::SweepPoint::Omitted { reason, .. } => panic!("{reason}"),
            })
            .collect();
        for o in &obs {
            // The plaquette level's own Tc (rungs, `square_plaquette_kikuchi` in
            // tc_levels.rs; Kikuchi 1951 gives 2.4257): the branch switch is tested here.
            let tc = 2.4256657;
            if o.temperature < tc - 0.01 {
                assert!(
                    o.magnetization > 0.05,
                    "T={} m={}",
                    o.temperature,
                    o.magnetization
                );
            } else if o.temperature > tc + 0.01 {
                assert!(
                    o.magnetization.abs() < 1e-8,
                    "T={} m={}",
                    o.temperature,
                    o.magnetization
                );
            }
        }
        let k = 1.0f64;
        let yang = (1.0 - (2.0 * k).sinh().powi(-4)).powf(0.125);
        let at1 = obs
            .iter()
            .find(|o| (o.temperature - 1.0).abs() < 1e-12)
            .unwrap();
        assert!(
            (at1.magnetization - yang).abs() < 1e-3,
            "{} vs {yang}",
            at1.magnetization
        );
    }
}

//! Order at any wavevector, in a field, and at any temperature: antiferromagnets and
//! frustrated lattices without a supercell, ordered phases followed on the supercell that
//! holds them, and low-temperature precision.

mod common;

use common::*;
use rungs_lattice::Lattice;
use rungs_solve::phase::PhasePoint;
use rungs_solve::{
    critical_temperature, sweep_level, ModeKind, SweepOptions, SweepPoint, TcOptions,
};

/// The solved points of a sweep of one level (panics on an omitted point).
fn sweep(l: &Lattice, name: &str, temps: &[f64], field: f64) -> Vec<PhasePoint> {
    let lv = level(l, name);
    let s = sweep_level(l, &lv, temps, &[field], SweepOptions::default(), &|| {}).unwrap();
    s.points
        .into_iter()
        .map(|p| match p {
            SweepPoint::Solved(p) => *p,
            SweepPoint::Omitted {
                temperature,
                reason,
                ..
            } => panic!("{name} at T = {temperature}: {reason}"),
        })
        .collect()
}

#[test]
fn square_antiferromagnet_ordered_phase_is_the_ferromagnets() {
    // Flipping one sublattice maps J → −J on a bipartite lattice: the staggered
    // magnetisation of the antiferromagnet equals the ferromagnet's m, and F is the same
    // (common practice).
    let (anti, ferro) = (with_j("square", -1.0), with_j("square", 1.0));
    for name in ["site", "pair", "plaquette"] {
        let a = &sweep(&anti, name, &[1.0], 0.0)[0];
        let f = &sweep(&ferro, name, &[1.0], 0.0)[0];
        assert!(
            (a.order_parameter - f.observables.magnetization).abs() < 1e-9,
            "{name}: {} vs {}",
            a.order_parameter,
            f.observables.magnetization
        );
        assert!(a.observables.magnetization.abs() < 1e-12, "{name}");
        assert!((a.observables.free_energy - f.observables.free_energy).abs() < 1e-10);
        assert!((a.observables.entropy - f.observables.entropy).abs() < 1e-10);
        assert!((a.observables.specific_heat - f.observables.specific_heat).abs() < 1e-8);
        // Four sublattices of the 2×2 cell, alternating in sign.
        let m = &a.observables.sublattice_magnetization;
        assert_eq!(m.len(), 4);
        assert!(
            (m[0] + m[1]).abs() < 1e-10 && (m[0] - m[3]).abs() < 1e-10,
            "{m:?}"
        );
    }
}

#[test]
fn site_level_neel_line_in_a_field() {
    // Two-sublattice mean-field theory of the square antiferromagnet (z = 4, J = −1): on
    // the Néel line the uniform magnetisation solves m = tanh((h − 4m)/T) with
    // T = 4(1 − m²) (common practice); it ends at h = z|J| = 4 as T → 0.
    let anti = with_j("square", -1.0);
    let site = level(&anti, "site");
    for h in [0.5, 1.0, 2.0, 3.0, 3.9] {
        let g = |m: f64| m - ((h - 4.0 * m) / (4.0 * (1.0 - m * m))).tanh();
        let (mut lo, mut hi) = (1e-12, 1.0 - 1e-12);
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            if g(lo) * g(mid) <= 0.0 {
                hi = mid;
            } else {
                lo = mid;
            }
        }
        let m = 0.5 * (lo + hi);
        let expected = 4.0 * (1.0 - m * m);
        let options = TcOptions {
            field: h,
            ..TcOptions::default()
        };
        let cp = critical_temperature(&anti, &site, options).unwrap();
        let tc = cp.tc.unwrap();
        assert!(
            (tc / expected - 1.0).abs() < 1e-8,
            "h = {h}: {tc} vs {expected}"
        );
        assert_eq!(cp.ordering.unwrap().wavevector, [0.5, 0.5, 0.0]);
    }
}

#[test]
fn a_ferromagnet_in_a_field_has_no_transition() {
    // A uniform field breaks the up–down symmetry: no phase transition (common practice).
    let ferro = with_j("square", 1.0);
    for name in ["site", "pair", "plaquette"] {
        let options = TcOptions {
            field: 0.3,
            ..TcOptions::default()
        };
        let cp = critical_temperature(&ferro, &level(&ferro, name), options).unwrap();
        assert!(cp.tc.is_none(), "{name}: {:?}", cp.tc);
    }
}

#[test]
fn chain_pair_susceptibility_keeps_its_precision_at_low_temperature() {
    // The pair level is exact on the chain: χ = β e^{2βJ} at h = 0 (Ising 1925,
    // Z. Phys. 31, 253), here 10 e^{20} ≈ 4.85·10⁹ at T = 0.1, whose Hessian is a
    // difference of terms 10⁹ times larger.
    let chain = chain(1.0);
    for temps in [vec![0.1], vec![0.5, 0.3, 0.2, 0.1]] {
        let points = sweep(&chain, "pair", &temps, 0.0);
        let p = points.last().unwrap();
        let t = 0.1f64;
        let exact = (2.0 / t).exp() / t;
        let chi = p.observables.susceptibility;
        assert!(
            (chi / exact - 1.0).abs() < 1e-8,
            "{temps:?}: {chi} vs {exact}"
        );
        // U = −J tanh(βJ) (Ising 1925).
        assert!((p.observables.energy + (1.0 / t).tanh()).abs() < 1e-14);
    }
}

#[test]
fn ferromagnets_deep_in_the_ordered_phase_follow_the_low_temperature_expansion() {
    // Square lattice, T = 0.1 Tc of each level: the leading terms of the low-temperature
    // expansion are those of single flipped spins, ε = e^{−ΔE/T} with ΔE = 2zJ = 8:
    // 1 − m = 2ε, S = (1 + ΔE/T) ε, C = (ΔE/T)² ε, χ = 4ε/T (Domb 1960, Adv. Phys. 9,
    // 149; common practice); corrections are O(ΔE/T · ε) and, from two neighbouring
    // flips, O(e^{−4J/T}): below 2·10⁻⁵ here. Every level that treats a single flip
    // exactly must reproduce them, to that relative precision, at values of 10⁻¹¹.
    let ferro = with_j("square", 1.0);
    for (name, tc) in [
        ("site", 4.0),
        ("pair", 2.0 / 2f64.ln()),
        ("plaquette", 2.4256657),
    ] {
        let t = 0.1 * tc;
        let p = &sweep(&ferro, name, &[t], 0.0)[0];
        let o = &p.observables;
        let eps = (-8.0 / t).exp();
        let rel = |a: f64, b: f64| (a / b - 1.0).abs();
        // m itself is a double near 1: 1 − m only holds its digits above 10⁻¹⁶.
        let m_tol = 1e-4 + 2e-16 / (2.0 * eps);
        assert!(
            rel(1.0 - o.magnetization, 2.0 * eps) < m_tol,
            "{name}: m = {}",
            o.magnetization
        );
        let tol = 2e-5;
        assert!(
            rel(o.entropy, (1.0 + 8.0 / t) * eps) < tol,
            "{name}: S = {}",
            o.entropy
        );
        assert!(
            rel(o.specific_heat, (8.0 / t).powi(2) * eps) < tol,
            "{name}: C"
        );
        assert!(rel(o.susceptibility, 4.0 * eps / t) < tol, "{name}: χ");
        assert!(p.notes.is_empty(), "{name}: {:?}", p.notes);
    }
    // F at the site level: F = −zJ/2 − T ε (same expansion).
    let t = 0.4;
    let p = &sweep(&ferro, "site", &[t], 0.0)[0];
    let eps = (-8.0 / t).exp();
    assert!(((p.observables.free_energy + 2.0) / (-t * eps) - 1.0).abs() < 1e-5);
}

#[test]
fn fcc_antiferromagnet_orders_on_the_x_w_line() {
    // Nearest-neighbour fcc antiferromagnet: the instability lies on the line
    // (1, ξ, 0)·2π/a of the zone, degenerate along it in mean field (common practice);
    // the tetrahedron approximation picks a point of it, reports the degeneracy, and
    // warns that the transition may be first order (its X points form a star of three).
    let fcc = with_j("fcc", -1.0);
    let cp = critical_temperature(&fcc, &level(&fcc, "tetrahedra"), TcOptions::default()).unwrap();
    let o = cp.ordering.clone().unwrap();
    // Cartesian q/2π = Σ_i q_i b_i / 2π with b_i/2π the rows of the inverse transpose of
    // the primitive vectors (cubic edge 1): (−1,1,1), (1,−1,1), (1,1,−1).
    let b = [[-1.0, 1.0, 1.0], [1.0, -1.0, 1.0], [1.0, 1.0, -1.0]];
    let mut k = [0.0f64; 3];
    for (qi, bi) in o.wavevector.iter().zip(&b) {
        for (kc, bc) in k.iter_mut().zip(bi) {
            *kc += qi * bc;
        }
    }
    // Reduced to the first zone by reciprocal lattice vectors (all components mod 2 on
    // the bcc reciprocal lattice): sorted magnitudes (1, ξ, 0), 0 ≤ ξ ≤ 1/2.
    let mut mags: Vec<f64> = k.iter().map(|c| (c.rem_euclid(2.0) - 1.0).abs()).collect();
    mags = mags.iter().map(|m| 1.0 - m).collect();
    mags.sort_by(|a, b| b.total_cmp(a));
    assert!((mags[0] - 1.0).abs() < 1e-9, "{k:?} → {mags:?}");
    assert!(
        mags[1] <= 0.5 + 1e-9 && mags[2].abs() < 1e-9,
        "{k:?} → {mags:?}"
    );
    assert_eq!(cp.kind, ModeKind::Staggered);
    assert!(o.flat_direction.is_some());
    assert!(
        cp.notes.iter().any(|n| n.contains("degenerate")),
        "{:?}",
        cp.notes
    );
    assert!(cp
        .notes
        .iter()
        .any(|n| n.contains("first-order") && n.contains("rungs phases")));
}

#[test]
fn bethe_on_the_triangular_antiferromagnet_says_its_entropy_went_negative() {
    // The pair approximation treats the frustrated triangles as a tree: at T = 0.2 its
    // entropy per site is negative (≈ −1.38), which no distribution has; the exact
    // residual entropy is 0.3383 (Wannier 1950, Phys. Rev. 79, 357). The point is kept and
    // flagged.
    let tri = with_j("triangular", -1.0);
    let p = &sweep(&tri, "pair", &[0.2], 0.0)[0];
    assert!(p.observables.entropy < -1.0);
    assert!(
        p.notes.iter().any(|n| n.contains("negative entropy")),
        "{:?}",
        p.notes
    );
}

#[test]
fn cooling_and_heating_follow_the_branch_they_start_on() {
    // Descending paths are allowed; both directions give the same states away from Tc
    // at a continuous transition (plaquette level, square ferromagnet).
    let ferro = with_j("square", 1.0);
    let up: Vec<f64> = (0..=12).map(|k| 1.6 + 0.1 * k as f64).collect();
    let down: Vec<f64> = up.iter().rev().copied().collect();
    let a = sweep(&ferro, "plaquette", &up, 0.0);
    let mut b = sweep(&ferro, "plaquette", &down, 0.0);
    b.reverse();
    for (p, q) in a.iter().zip(&b) {
        assert!((p.observables.free_energy - q.observables.free_energy).abs() < 1e-10);
        assert!((p.order_parameter - q.order_parameter).abs() < 1e-6);
    }
}

#[test]
fn a_cold_start_in_a_field_finds_the_antiferromagnets_order() {
    // In a field the Néel line T_N(h) lies far below T_N(0), so a path that starts cold
    // below it must look for the ordered phase below T_N(h), not below T_N(0).
    let anti = with_j("square", -1.0);
    let (t, h) = (1.0, 3.0);
    // Two-sublattice mean field of the square antiferromagnet (z = 4, J = −1; common
    // practice): m_A = tanh((h − 4 m_B)/T), m_B = tanh((h − 4 m_A)/T), solved by damped
    // iteration from the Néel state.
    let (mut ma, mut mb) = (1.0f64, -1.0f64);
    for _ in 0..20_000 {
        let na = ((h - 4.0 * mb) / t).tanh();
        let nb = ((h - 4.0 * ma) / t).tanh();
        ma = 0.5 * (ma + na);
        mb = 0.5 * (mb + nb);
    }
    assert!(
        ma - mb > 0.5,
        "the Néel state survives at (T, h) = ({t}, {h})"
    );
    let site = &sweep(&anti, "site", &[t], h)[0];
    assert!(
        (site.observables.magnetization - 0.5 * (ma + mb)).abs() < 1e-8,
        "{site:?}"
    );
    assert!(
        (site.order_parameter - 0.5 * (ma - mb)).abs() < 1e-8,
        "{site:?}"
    );
    // The plaquette level: the cold start lands on the branch that cooling from the
    // disordered side reaches (common practice: one equilibrium state).
    let cold = &sweep(&anti, "plaquette", &[t], h)[0];
    let cooled = sweep(&anti, "plaquette", &[2.5, 2.0, 1.6, 1.3, t], h);
    let last = cooled.last().unwrap();
    assert!(cold.order_parameter > 0.5, "{cold:?}");
    assert!(
        (cold.observables.free_energy - last.observables.free_energy).abs() < 1e-9,
        "{cold:?} {last:?}"
    );
    assert!((cold.order_parameter - last.order_parameter).abs() < 1e-7);
}

#[test]
fn a_small_field_moves_a_big_blocks_neel_point_a_little_and_smoothly() {
    // The Néel temperature is even in h: T_N(h) = T_N(0) − O(h²), with the same critical
    // mode and amplitude as h → 0 (common practice). The 2×5 block of the square
    // antiferromagnet: in a field its stability matrix in flip probabilities had every
    // eigenvalue near 10⁻⁸, which read as a flat band and an amplitude four times too
    // small; it is now taken in correlations.
    let anti = with_j("square", -1.0)
        .with_block_level("block25", [2, 5, 1])
        .unwrap();
    let lv = level(&anti, "block25");
    let at = |h: f64| {
        let options = TcOptions {
            field: h,
            ..TcOptions::default()
        };
        critical_temperature(&anti, &lv, options).unwrap()
    };
    let (zero, small) = (at(0.0), at(0.01));
    let (t0, t1) = (zero.tc.unwrap(), small.tc.unwrap());
    assert!(t1 < t0 && t0 - t1 < 1e-4, "{t0} {t1}");
    assert_eq!(small.ordering.as_ref().unwrap().wavevector, [0.5, 0.5, 0.0]);
    assert!(
        !small.notes.iter().any(|n| n.contains("flat band")),
        "{:?}",
        small.notes
    );
    let (a0, a1) = (zero.amplitude.unwrap(), small.amplitude.unwrap());
    assert!((a1 / a0 - 1.0).abs() < 1e-3, "{a0} {a1}");
}

#[test]
fn the_cold_starts_tc_in_a_field_is_searched_only_when_an_ordered_state_is_started() {
    // A sweep gives each field's follower the level's Tc at that field for cold ordered
    // starts; that search (minutes on big blocks) runs at most once per follower, and
    // not at all where only the disordered state is met.
    use rungs_solve::phase::{PhaseCell, PhaseFollower};
    use std::sync::atomic::{AtomicUsize, Ordering};
    let anti = with_j("square", -1.0);
    let lv = level(&anti, "pair");
    let cp = critical_temperature(&anti, &lv, TcOptions::default()).unwrap();
    let cell = PhaseCell::new(&anti, &lv, cp.ordering.as_ref(), [2, 2, 1]).unwrap();
    let calls = AtomicUsize::new(0);
    let tc_at_h = || {
        calls.fetch_add(1, Ordering::SeqCst);
        let options = TcOptions {
            field: 2.0,
            ..TcOptions::default()
        };
        critical_temperature(&anti, &lv, options)
            .ok()
            .and_then(|c| c.tc)
    };
    let mut follower = PhaseFollower::new(&anti, &lv, &cell, 2.0, cp.tc).cold_start_below(tc_at_h);
    // Above the Néel line (the pair level's T_N(0) is 2/ln 2 ≈ 2.885, Bethe 1935; a field
    // lowers it): disordered points only.
    for t in [6.0, 5.0, 4.0] {
        assert!(follower.next(t).unwrap().order_parameter.abs() < 1e-9);
    }
    assert_eq!(calls.load(Ordering::SeqCst), 0);
    // Far below it: ordered, the search ran once however many points follow.
    for t in [0.6, 0.5, 0.4] {
        assert!(follower.next(t).unwrap().order_parameter > 0.5);
    }
    assert_eq!(calls.load(Ordering::SeqCst), 1);
}

#[test]
fn a_neel_state_past_double_precision_in_a_field_is_not_replaced_by_noise() {
    // Square antiferromagnet, plaquette level, h = 2. Cooling, the Néel state is
    // followed until the ratio e^{−8/T} of its two sublattices' excitation factors
    // (flip costs 2(4 − h) and 2(4 + h)) falls below double precision, near T ≈ 0.22.
    // Below it the symmetric state (a mixture of the two Néel domains, equal in F to
    // rounding, its Hessian singular to double precision) used to be reported as the
    // disordered phase with C ≈ 34–133 and χ ≈ 1.7–3.3, where both are exponentially small
    // (common practice: every excitation is gapped). Such points are now omitted with
    // the reason, on cooling and from a cold start alike.
    let anti = with_j("square", -1.0);
    let lv = level(&anti, "plaquette");
    let run = |temps: &[f64]| {
        sweep_level(&anti, &lv, temps, &[2.0], SweepOptions::default(), &|| {})
            .unwrap()
            .points
    };
    let cooled = run(&[0.5, 0.4, 0.3, 0.25, 0.2, 0.1]);
    let cold = run(&[0.1]);
    let mut solved = 0;
    for p in cooled.iter().chain(&cold) {
        match p {
            SweepPoint::Solved(p) => {
                solved += 1;
                let o = &p.observables;
                assert!(o.temperature >= 0.25, "{p:?}");
                assert!(p.order_parameter > 0.99, "{p:?}");
                assert!(o.specific_heat.abs() < 0.02, "{p:?}");
                assert!(o.susceptibility.abs() < 0.01, "{p:?}");
            }
            SweepPoint::Omitted {
                temperature,
                reason,
                ..
            } => {
                assert!(*temperature < 0.25, "{temperature}: {reason}");
                assert!(reason.contains("double-precision resolution"), "{reason}");
            }
        }
    }
    assert_eq!(solved, 4);
}

//! The exact references of rungs-reference held against published exact results and
//! against each other: Onsager's free and internal energy (with the elliptic integrals
//! cross-checked by quadrature written here), Yang's magnetisation, Kaufman's finite-torus
//! partition function against exact enumeration, enumeration against transfer matrices on
//! narrow tori, strips converging to Onsager, the chain ring, recognition of the shipped
//! lattice files, and thermodynamic consistency of every closed form.

use std::f64::consts::{LN_2, PI, SQRT_2};
use std::path::Path;

use rungs::lattice::Lattice;
use rungs::reference::closed::{chain, elliptic, ClosedForm};
use rungs::reference::enumerate::Enumeration;
use rungs::reference::transfer::Strip;

fn lattice(stem: &str) -> Lattice {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("lattices")
        .join(format!("{stem}.yaml"));
    Lattice::from_file(&path).unwrap()
}

/// 2/ln(1+√2) (Onsager 1944, Phys. Rev. 65, 117).
const TC_SQUARE: f64 = 2.269_185_314_213_022;

/// Midpoint rule for a smooth periodic (or even-periodic) integrand on [a, b]: converges
/// exponentially in the number of points (common practice).
fn midpoint(f: impl Fn(f64) -> f64, a: f64, b: f64, n: usize) -> f64 {
    let h = (b - a) / n as f64;
    (0..n).map(|i| f(a + (i as f64 + 0.5) * h)).sum::<f64>() * h
}

/// Onsager's double integral for the isotropic square lattice, written out here:
/// −βf = ln 2 + (1/2π²) ∫₀^π∫₀^π ln[cosh² 2K − sinh 2K (cos ω₁ + cos ω₂)] dω₁ dω₂
/// (Onsager 1944, eq. 109a with J = J').
fn onsager_double_integral(t: f64) -> f64 {
    let k = 1.0 / t;
    let (c, s) = ((2.0 * k).cosh(), (2.0 * k).sinh());
    let n = 600;
    let inner = |w1: f64| midpoint(|w2| (c * c - s * (w1.cos() + w2.cos())).ln(), 0.0, PI, n);
    LN_2 + midpoint(inner, 0.0, PI, n) / (2.0 * PI * PI)
}

/// Onsager's internal energy u = −coth 2K [1 + (2/π)(2 tanh² 2K − 1) K(k)],
/// k = 2 sinh 2K / cosh² 2K (Onsager 1944), with K(k) by quadrature here.
fn onsager_energy_by_quadrature(t: f64) -> f64 {
    let k = 1.0 / t;
    let (c, s) = ((2.0 * k).cosh(), (2.0 * k).sinh());
    let kappa = 2.0 * s / (c * c);
    let kk = midpoint(
        |th: f64| 1.0 / (1.0 - kappa * kappa * th.sin().powi(2)).sqrt(),
        0.0,
        PI / 2.0,
        4000,
    );
    let th2 = (s / c).powi(2);
    -(c / s) * (1.0 + 2.0 / PI * (2.0 * th2 - 1.0) * kk)
}

#[test]
fn elliptic_integrals_match_quadrature() {
    // K(k) = ∫₀^{π/2} (1 − k² sin²θ)^{−1/2} dθ, E(k) = ∫₀^{π/2} (1 − k² sin²θ)^{1/2} dθ
    // (definitions, Abramowitz & Stegun 1964, 17.3.1–2).
    for &k in &[0.0, 0.2, 0.5, 0.8, 0.95, 0.99] {
        let kq = midpoint(
            |t: f64| 1.0 / (1.0 - k * k * t.sin().powi(2)).sqrt(),
            0.0,
            PI / 2.0,
            20_000,
        );
        let eq = midpoint(
            |t: f64| (1.0 - k * k * t.sin().powi(2)).sqrt(),
            0.0,
            PI / 2.0,
            20_000,
        );
        assert!((elliptic::elliptic_k(k) - kq).abs() < 1e-12, "K({k})");
        assert!((elliptic::elliptic_e(k) - eq).abs() < 1e-12, "E({k})");
    }
}

#[test]
fn onsager_free_and_internal_energy() {
    let square = ClosedForm::recognise(&lattice("square")).unwrap();
    for &t in &[1.5, 2.0, 2.5, 3.0] {
        // Free energy: Onsager (1944) double integral, evaluated independently here.
        let f_ref = -t * onsager_double_integral(t);
        let f = square.free_energy(t, 0.0).unwrap();
        assert!((f - f_ref).abs() < 1e-11, "f(T={t}) = {f}, Onsager {f_ref}");
        // Internal energy: Onsager (1944) elliptic form with K(k) by quadrature here.
        let u_ref = onsager_energy_by_quadrature(t);
        let u = square.energy(t, 0.0).unwrap();
        assert!((u - u_ref).abs() < 1e-11, "u(T={t}) = {u}, Onsager {u_ref}");
    }
}

#[test]
fn onsager_values_at_the_critical_point() {
    let square = ClosedForm::recognise(&lattice("square")).unwrap();
    assert!((square.tc().unwrap() - TC_SQUARE).abs() < 1e-14);
    // −βf(Tc) = ½ ln 2 + 2G/π, G = 0.915965594177219 (Catalan's constant)
    // (Onsager 1944, eq. 121; OEIS A242743: 0.9296953983416102).
    let mbf = -square.free_energy(TC_SQUARE, 0.0).unwrap() / TC_SQUARE;
    assert!((mbf - 0.929_695_398_341_610_2).abs() < 1e-12, "{mbf}");
    assert!(
        (0.5 * LN_2 + 2.0 * 0.915_965_594_177_219 / PI - 0.929_695_398_341_610_2).abs() < 1e-15
    );
    // u(Tc) = −√2 J (Onsager 1944: coth 2Kc = √2, the elliptic term vanishes).
    assert!((square.energy(TC_SQUARE, 0.0).unwrap() + SQRT_2).abs() < 1e-12);
}

#[test]
fn yang_spontaneous_magnetisation() {
    let square = ClosedForm::recognise(&lattice("square")).unwrap();
    for &t in &[1.5f64, 2.0] {
        // m = (1 − sinh⁻⁴ 2K)^{1/8} (Yang 1952, Phys. Rev. 85, 808).
        let m_ref = (1.0 - (2.0 / t).sinh().powi(-4)).powf(0.125);
        let m = square.magnetization(t, 0.0).unwrap();
        assert!((m - m_ref).abs() < 1e-15);
    }
    // m(T = 2) = 0.911319 (Yang 1952 formula, evaluated; from memory to 6 digits).
    assert!((square.magnetization(2.0, 0.0).unwrap() - 0.911_319).abs() < 1e-6);
    assert_eq!(square.magnetization(2.3, 0.0), Some(0.0));
    // Anisotropic: (1 − (sinh 2K₁ sinh 2K₂)⁻²)^{1/8} (Chang 1952, Phys. Rev. 88, 1422).
    let aniso = ClosedForm::recognise(&lattice("square_anisotropic")).unwrap();
    let t = 1.2f64;
    let p = (2.0 / t).sinh() * (1.0 / t).sinh();
    assert!((aniso.magnetization(t, 0.0).unwrap() - (1.0 - p.powi(-2)).powf(0.125)).abs() < 1e-15);
}

/// Kaufman's partition function of the m × n square torus (m rows of n spins), coupling
/// `kv` between rows and `kh` within a row, K in units of 1/T (Kaufman 1949, Phys. Rev. 76,
/// 1232):
/// Z = ½ (2 sinh 2K)^{mn/2} [Π_{r=1}^n 2cosh(m γ_{2r−1}/2) + Π 2sinh(m γ_{2r−1}/2)
///                           + Π 2cosh(m γ_{2r}/2) + Π 2sinh(m γ_{2r}/2)],
/// cosh γ_j = cosh 2K* cosh 2K' − sinh 2K* sinh 2K' cos(πj/n), tanh K* = e^{−2K},
/// with K the coupling between rows, K' the one within a row, and γ_{2n} ≡ γ₀ = 2(K' − K*)
/// carrying its sign (γ₀ < 0 above Tc). Which coupling is K and which K', and the sign of
/// γ₀, are pinned down by the anisotropic and the below-/above-Tc cases of the test.
fn kaufman_ln_z(m: usize, n: usize, kv: f64, kh: f64) -> f64 {
    let ks = (-2.0 * kv).exp().atanh();
    let gamma = |j: usize| -> f64 {
        if j.is_multiple_of(2 * n) {
            return 2.0 * (kh - ks);
        }
        let ch = (2.0 * ks).cosh() * (2.0 * kh).cosh()
            - (2.0 * ks).sinh() * (2.0 * kh).sinh() * (PI * j as f64 / n as f64).cos();
        ch.acosh()
    };
    let mf = m as f64;
    let prod = |odd: bool, f: fn(f64) -> f64| -> f64 {
        (1..=n)
            .map(|r| 2.0 * f(0.5 * mf * gamma(if odd { 2 * r - 1 } else { 2 * r })))
            .product()
    };
    let sum = prod(true, f64::cosh)
        + prod(true, f64::sinh)
        + prod(false, f64::cosh)
        + prod(false, f64::sinh);
    (0.5 * sum).ln() + 0.5 * (m * n) as f64 * (2.0 * (2.0 * kv).sinh()).ln()
}

#[test]
fn enumeration_equals_kaufman_on_square_tori() {
    let square = lattice("square");
    for &(l1, l2) in &[(4usize, 4usize), (6, 4), (4, 6)] {
        // Torus index: x + l1·y, so rows of l1 spins, l2 rows.
        let e = Enumeration::of_lattice(&square, &[l1, l2]).unwrap();
        for &t in &[1.0, 1.8, TC_SQUARE, 3.0, 5.0] {
            let k = 1.0 / t;
            let z_ref = kaufman_ln_z(l2, l1, k, k);
            let z = e.thermo(t, 0.0).unwrap().ln_z;
            assert!(
                (z - z_ref).abs() < 1e-11 * z_ref,
                "{l1}x{l2} T={t}: {z} vs Kaufman {z_ref}"
            );
        }
    }
    // Anisotropic couplings fix which coupling is which in Kaufman's formula.
    let aniso = lattice("square_anisotropic"); // Jx = 1 within a row, Jy = 0.5 between rows
    let e = Enumeration::of_lattice(&aniso, &[4, 6]).unwrap();
    for &t in &[0.9, 1.641, 2.5] {
        let z_ref = kaufman_ln_z(6, 4, 0.5 / t, 1.0 / t);
        let z = e.thermo(t, 0.0).unwrap().ln_z;
        assert!(
            (z - z_ref).abs() < 1e-11 * z_ref,
            "aniso T={t}: {z} vs Kaufman {z_ref}"
        );
    }
}

#[test]
fn enumeration_equals_transfer_matrix_on_narrow_tori() {
    // Z(W × L torus) = Tr T^L exactly (Kramers & Wannier 1941, Phys. Rev. 60, 252).
    for &(stem, w, l) in &[
        ("square", 4, 5),
        ("square_anisotropic", 3, 6),
        ("triangular", 3, 5),
        ("honeycomb", 3, 3),
        ("kagome", 2, 3),
    ] {
        let lat = lattice(stem);
        let e = Enumeration::of_lattice(&lat, &[w, l]).unwrap();
        let strip = Strip::new(&lat, w).unwrap();
        for &(t, h) in &[(1.2, 0.0), (2.5, 0.0), (2.0, 0.4), (4.0, -0.3)] {
            let a = e.thermo(t, h).unwrap().ln_z;
            let b = strip.torus_ln_z(t, h, l).unwrap();
            assert!(
                (a - b).abs() < 1e-11 * a.abs(),
                "{stem} {w}x{l} T={t} h={h}: {a} vs {b}"
            );
        }
    }
}

#[test]
fn strips_converge_to_onsager() {
    // Onsager (1944) free energy at T = 3.0; periodic strips approach it monotonically.
    let square = lattice("square");
    let t = 3.0;
    let exact = -ClosedForm::recognise(&square)
        .unwrap()
        .free_energy(t, 0.0)
        .unwrap()
        / t;
    let mut prev = f64::INFINITY;
    for w in [4, 6, 8, 10, 12, 16] {
        let f = Strip::new(&square, w).unwrap().free_energy(t, 0.0).unwrap();
        let err = (f.minus_beta_f - exact).abs();
        assert!(err < prev, "W={w}: {err} after {prev}");
        prev = err;
    }
    assert!(prev < 1e-4, "W=16 off Onsager by {prev}");
}

#[test]
fn houtappel_free_energies_match_wide_strips() {
    // Triangular and honeycomb free energies (Houtappel 1950, Physica 16, 425) against
    // transfer matrices away from Tc, where strips converge exponentially in the width.
    for &(stem, w, ts) in &[
        ("triangular", 12, [2.0, 10.0]),
        ("honeycomb", 8, [0.9, 6.0]),
    ] {
        let lat = lattice(stem);
        let exact = ClosedForm::recognise(&lat).unwrap();
        let strip = Strip::new(&lat, w).unwrap();
        for t in ts {
            let f_tm = strip.free_energy(t, 0.0).unwrap().free_energy;
            let f = exact.free_energy(t, 0.0).unwrap();
            assert!(
                (f - f_tm).abs() < 1e-7,
                "{stem} T={t}: closed {f} vs strip {f_tm}"
            );
        }
    }
}

#[test]
fn chain_ring_enumeration_equals_transfer_trace() {
    // Z_N = λ₊^N + λ₋^N for a ring (Ising 1925, Z. Phys. 31, 253).
    let chain_lattice = lattice("chain");
    let n = 20;
    let e = Enumeration::of_lattice(&chain_lattice, &[n]).unwrap();
    for &(t, h) in &[(0.5, 0.0), (1.0, 0.3), (3.0, -1.0)] {
        let z = e.thermo(t, h).unwrap().ln_z;
        let z_ref = chain::ring_ln_z(n, t, 1.0, h);
        assert!(
            (z - z_ref).abs() < 1e-12 * z.abs().max(1.0),
            "T={t} h={h}: {z} vs {z_ref}"
        );
    }
    // At high T the ring is the infinite chain to exponential accuracy.
    let form = ClosedForm::recognise(&chain_lattice).unwrap();
    // (λ₋/λ₊)^20 ≈ 3e-12 at T = 3, h = 1.
    let th = e.thermo(3.0, 1.0).unwrap();
    assert!((th.energy - form.energy(3.0, 1.0).unwrap()).abs() < 1e-9);
    assert!((th.magnetization - form.magnetization(3.0, 1.0).unwrap()).abs() < 1e-9);
    assert!((th.susceptibility - form.susceptibility(3.0, 1.0).unwrap()).abs() < 1e-8);
}

#[test]
fn shipped_lattices_are_recognised_with_their_reference_tc() {
    for stem in [
        "square",
        "square_anisotropic",
        "triangular",
        "honeycomb",
        "kagome",
    ] {
        let lat = lattice(stem);
        let form = ClosedForm::recognise(&lat).unwrap_or_else(|| panic!("{stem} not recognised"));
        let file_tc = lat.reference().unwrap().tc;
        assert!(
            (form.tc().unwrap() - file_tc).abs() < 1e-12 * file_tc,
            "{stem}: {:?} vs {file_tc}",
            form.tc()
        );
        assert!(!form.source().is_empty());
    }
    assert!(matches!(
        ClosedForm::recognise(&lattice("chain")),
        Some(ClosedForm::Chain { .. })
    ));
    for stem in ["simple_cubic", "bcc", "fcc", "diamond", "layered_magnet"] {
        assert_eq!(ClosedForm::recognise(&lattice(stem)), None, "{stem}");
    }
}

/// A distorted triangular lattice (couplings 1, 1, 0.5 on its three bond directions) and
/// a distorted honeycomb lattice (1, 0.5, −0.25), as a user would write them.
const DISTORTED_TRIANGULAR: &str = "name: tri\ndimension: 2\nvectors: [[1.0, 0.0], [0.5, 0.8]]\n\
    basis: [{name: a}]\ncouplings: {J: 1.0, Jd: 0.5}\nbonds:\n\
    - {from: a, to: a, cell: [1, 0], coupling: J}\n\
    - {from: a, to: a, cell: [0, 1], coupling: J}\n\
    - {from: a, to: a, cell: [-1, 1], coupling: Jd}\n";
const DISTORTED_HONEYCOMB: &str = "name: hc\ndimension: 2\nvectors: [[1.7, 0.0], [0.9, 1.5]]\n\
    basis: [{name: a}, {name: b, position: [0.0, 1.0]}]\ncouplings: {J1: 1.0, J2: 0.5, J3: -0.25}\n\
    bonds:\n\
    - {from: a, to: b, cell: [0, 0], coupling: J1}\n\
    - {from: a, to: b, cell: [0, -1], coupling: J2}\n\
    - {from: a, to: b, cell: [1, -1], coupling: J3}\n";

/// Root in T of `f(1/T) = 1` for `f` increasing in β, by plain bisection on [0.01, 100].
fn root_in_temperature(f: impl Fn(f64) -> f64) -> f64 {
    let (mut lo, mut hi) = (0.01f64, 100.0f64);
    for _ in 0..200 {
        let mid = (lo * hi).sqrt();
        if f(1.0 / mid) > 1.0 {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    (lo * hi).sqrt()
}

#[test]
fn distorted_triangular_and_honeycomb_lattices_get_houtappels_tc() {
    // Houtappel (1950), Physica 16, 425: sinh 2K1 sinh 2K2 + sinh 2K2 sinh 2K3 +
    // sinh 2K3 sinh 2K1 = 1 (triangular), tanh K1 tanh K2 + tanh K2 tanh K3 +
    // tanh K3 tanh K1 = 1 (honeycomb, |K|), solved here by a bisection of their own.
    let tri = Lattice::from_yaml_str(DISTORTED_TRIANGULAR, "tri.yaml").unwrap();
    let form = ClosedForm::recognise(&tri).expect("distorted triangular recognised");
    let s = |b: f64, j: f64| (2.0 * b * j).sinh();
    let want = root_in_temperature(|b| s(b, 1.0) * s(b, 1.0) + 2.0 * s(b, 1.0) * s(b, 0.5));
    let got = form.tc().unwrap();
    assert!((got - want).abs() < 1e-10 * want, "{got} vs {want}");
    // Between the square lattice (third coupling 0, Onsager 1944) and the isotropic
    // triangular lattice (4/ln 3, Houtappel 1950).
    assert!(TC_SQUARE < got && got < 4.0 / 3f64.ln(), "{got}");
    assert!(form.source().contains("Houtappel (1950)"));

    let hc = Lattice::from_yaml_str(DISTORTED_HONEYCOMB, "hc.yaml").unwrap();
    let form = ClosedForm::recognise(&hc).expect("distorted honeycomb recognised");
    let t = |b: f64, j: f64| (b * j).tanh();
    let want = root_in_temperature(|b| {
        t(b, 1.0) * t(b, 0.5) + t(b, 0.5) * t(b, 0.25) + t(b, 0.25) * t(b, 1.0)
    });
    let got = form.tc().unwrap();
    assert!((got - want).abs() < 1e-10 * want, "{got} vs {want}");
    assert!(
        got < 2.0 / (2.0 + 3f64.sqrt()).ln(),
        "weaker bonds, lower Tc: {got}"
    );
}

#[test]
fn closed_forms_are_thermodynamically_consistent() {
    // u = ∂(βf)/∂β and c = ∂u/∂T by central differences (thermodynamic identities).
    let forms = [
        ClosedForm::Square { j1: 1.0, j2: 1.0 },
        ClosedForm::Square { j1: 1.0, j2: 0.5 },
        ClosedForm::Triangular { j: 1.0 },
        ClosedForm::Honeycomb { j: 1.0 },
        ClosedForm::Chain { j: 1.0 },
        ClosedForm::Bethe { z: 4, j: 1.0 },
    ];
    for form in forms {
        let tc = form.tc().unwrap_or(1.0);
        for &x in &[0.6, 0.9, 1.2, 2.0] {
            let t = x * tc;
            let beta = 1.0 / t;
            let d = 1e-5;
            let bf = |b: f64| b * form.free_energy(1.0 / b, 0.0).unwrap();
            let u_fd = (bf(beta + d) - bf(beta - d)) / (2.0 * d);
            let u = form.energy(t, 0.0).unwrap();
            assert!(
                (u - u_fd).abs() < 1e-7,
                "{} T={t}: u {u} vs {u_fd}",
                form.name()
            );
            let du =
                (form.energy(t + d, 0.0).unwrap() - form.energy(t - d, 0.0).unwrap()) / (2.0 * d);
            let c = form.specific_heat(t, 0.0).unwrap();
            assert!(
                (c - du).abs() < 1e-6 * c.max(1.0),
                "{} T={t}: c {c} vs {du}",
                form.name()
            );
            let s = form.entropy(t, 0.0).unwrap();
            assert!(s > 0.0 && s < LN_2, "{} T={t}: s {s}", form.name());
        }
    }
}

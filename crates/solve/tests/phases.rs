//! Phase diagrams: first- and second-order transitions along paths in T and in h, with
//! their jumps, against exact limits, mean-field closed forms and published values.

mod common;

use common::*;
use rungs_lattice::Lattice;
use rungs_solve::phases::alloy::composition;
use rungs_solve::phases::{
    assemble, Along, DiagramHeader, DiagramSpec, Kind, PhaseDiagram, PhaseDiagramSetup,
};
use rungs_solve::{critical_temperature, TcOptions};

fn diagram(l: &Lattice, name: &str, temps: &[f64], fields: &[f64], along: Along) -> PhaseDiagram {
    let lv = level(l, name);
    let setup = PhaseDiagramSetup::new(l, &lv, DiagramSpec::new(temps, fields, along)).unwrap();
    let paths = (0..setup.paths()).map(|i| setup.path(i)).collect();
    assemble(DiagramHeader::of(&setup), paths).unwrap()
}

fn range(a: f64, b: f64, n: usize) -> Vec<f64> {
    (0..n)
        .map(|i| a + (b - a) * i as f64 / (n - 1) as f64)
        .collect()
}

#[test]
fn ferromagnet_h0_line_is_first_order_with_twice_the_spontaneous_moment() {
    // Below Tc the ferromagnet's magnetisation jumps from −m_s to +m_s across h = 0,
    // with no latent heat (the two states are images under spin reversal: equal
    // entropies); the line ends at the level's Tc (common practice).
    let l = shipped("square");
    for name in ["site", "pair", "plaquette"] {
        let tc = critical_temperature(&l, &level(&l, name), TcOptions::default())
            .unwrap()
            .tc
            .unwrap();
        let fields = [-0.2, -0.1, 0.0, 0.1, 0.2];
        let d = diagram(&l, name, &[0.8 * tc, 1.03 * tc], &fields, Along::Field);
        let below: Vec<_> = d.paths[0].transitions.iter().collect();
        assert_eq!(below.len(), 1, "{name}: {below:?}");
        let t = below[0];
        assert_eq!(t.kind, Kind::First, "{name}");
        assert_eq!((t.below.as_str(), t.above.as_str()), ("down", "up"));
        assert!(t.field.abs() < 1e-12, "{name}: at h = {}", t.field);
        assert!(
            t.latent_heat.abs() < 1e-9,
            "{name}: T ΔS = {}",
            t.latent_heat
        );
        let ms = t.magnetization_above;
        assert!((t.magnetization_jump() - 2.0 * ms).abs() < 1e-9, "{name}");
        assert!(ms > 0.3, "{name}: m_s = {ms}");
        if name == "site" {
            // Weiss mean field: m_s = tanh(z J m_s / T), z = 4 (common practice).
            let tt = 0.8 * tc;
            assert!((ms - (4.0 * ms / tt).tanh()).abs() < 1e-8, "m_s = {ms}");
        }
        // Above the level's Tc the path crosses h = 0 smoothly: no transition.
        assert!(
            d.paths[1].transitions.is_empty(),
            "{name}: {:?}",
            d.paths[1]
        );
    }
}

#[test]
fn square_antiferromagnet_site_level_neel_line_is_second_order_to_h_4() {
    // Two-sublattice mean field, nearest neighbours only: the Néel line is second order
    // everywhere; on it the uniform moment m satisfies 1 − m² = T/(z|J|) and
    // h = z|J| m + T artanh m, so T → 0 as h → z|J| = 4 (common practice; e.g. the
    // mean-field metamagnet of Kincaid & Cohen 1975, Phys. Rep. 22, 57, with no
    // intra-sublattice coupling). The line bulges beyond h = 4 at finite T (its largest
    // field, 4.7987 at T ≈ 1.22, follows from the same two equations), so h = 5 is
    // outside it at every temperature.
    let l = with_j("square", -1.0);
    let temps = range(0.2, 4.6, 12);
    let fields = [0.0, 1.0, 2.0, 3.0, 3.9, 5.0];
    let d = diagram(&l, "site", &temps, &fields, Along::Temperature);
    let mut last_t = f64::INFINITY;
    for p in &d.paths[..5] {
        assert_eq!(
            p.transitions.len(),
            1,
            "h = {}: {:?}",
            p.fixed,
            p.transitions
        );
        let t = &p.transitions[0];
        assert_eq!(t.kind, Kind::Second, "h = {}", p.fixed);
        assert_eq!((t.below.as_str(), t.above.as_str()), ("AB", "disordered"));
        let m = (1.0 - t.temperature / 4.0).max(0.0).sqrt();
        let h = 4.0 * m + t.temperature * m.atanh();
        assert!(
            (h - p.fixed).abs() < 1e-7,
            "h = {}: line gives {h}",
            p.fixed
        );
        assert!((t.magnetization_below - m).abs() < 1e-6, "h = {}", p.fixed);
        assert!(t.temperature < last_t);
        last_t = t.temperature;
    }
    // Beyond the line's largest field no Néel order at any temperature of the grid.
    let beyond = &d.paths[5];
    assert!(beyond.transitions.is_empty(), "{beyond:?}");
    assert!(beyond
        .grid
        .iter()
        .all(|g| g.phase.as_deref() == Some("disordered")));
    assert!(d.tricritical.is_empty());
    // Along h at T = 0.5 the same line is crossed once, second order, where the two
    // equations put it.
    let along_h = diagram(&l, "site", &[0.5], &range(3.0, 5.0, 9), Along::Field);
    let p = &along_h.paths[0];
    assert_eq!(p.transitions.len(), 1, "{:?}", p.transitions);
    let t = &p.transitions[0];
    assert_eq!((t.kind, t.below.as_str()), (Kind::Second, "AB"), "{p:?}");
    let m = (1.0f64 - 0.5 / 4.0).sqrt();
    let h = 4.0 * m + 0.5 * m.atanh();
    assert!((t.field - h).abs() < 1e-7 * h, "{} vs {h}", t.field);
    // Particle–hole symmetry: h → −h mirrors the line (same T, x → 1 − x).
    let mirrored = diagram(&l, "site", &temps, &[-2.0, 2.0], Along::Temperature);
    let (a, b) = (
        &mirrored.paths[0].transitions[0],
        &mirrored.paths[1].transitions[0],
    );
    assert!((a.temperature - b.temperature).abs() < 1e-9 * b.temperature);
    let (xa, xb) = (
        composition(a.magnetization_below),
        composition(b.magnetization_below),
    );
    assert!((xa + xb - 1.0).abs() < 1e-7, "{xa} {xb}");
}

#[test]
fn fcc_antiferromagnet_tetrahedra_orders_first_order_above_the_spinodal() {
    // The fcc antiferromagnet (an ordering A–B alloy at x = 1/2) in Kikuchi's
    // tetrahedron approximation orders into the CuAu-type layering by a first-order
    // transition at kT/|J| ≈ 1.89 (van Baal 1973, Physica 64, 571; value from memory),
    // above the disordered state's spinodal, with a latent heat.
    let l = with_j("fcc", -1.0);
    let lv = level(&l, "tetrahedra");
    let spinodal = critical_temperature(&l, &lv, TcOptions::default())
        .unwrap()
        .tc
        .unwrap();
    let temps = range(1.5, 2.2, 8);
    let d = diagram(&l, "tetrahedra", &temps, &[0.0], Along::Temperature);
    // The X-point star gives the CuAu-type layering and both Cu3Au-type patterns.
    let names: Vec<&str> = d.header.phases.iter().map(|p| p.name.as_str()).collect();
    for n in ["disordered", "AB", "A3B", "AB3"] {
        assert!(names.contains(&n), "{names:?}");
    }
    let firsts: Vec<_> = d.paths[0]
        .transitions
        .iter()
        .filter(|t| t.kind == Kind::First)
        .collect();
    assert_eq!(firsts.len(), 1, "{:?}", d.paths[0]);
    let t = firsts[0];
    assert_eq!((t.below.as_str(), t.above.as_str()), ("AB", "disordered"));
    assert!(
        t.temperature > spinodal + 0.1,
        "{} vs {spinodal}",
        t.temperature
    );
    assert!((t.temperature - 1.89).abs() < 0.02, "T = {}", t.temperature);
    assert!(t.latent_heat > 0.1, "T ΔS = {}", t.latent_heat);
    assert!(
        t.order_parameter_jump() < -0.5,
        "Δψ = {}",
        t.order_parameter_jump()
    );
    // Δμ = 0: both sides have composition 1/2 (particle–hole symmetry, common practice).
    assert!((composition(t.magnetization_below) - 0.5).abs() < 1e-9);
    assert!((composition(t.magnetization_above) - 0.5).abs() < 1e-9);
    // The disordered branch's lower end is the spinodal from the stability analysis.
    let sp = d.paths[0]
        .spinodals
        .iter()
        .find(|s| s.phase == "disordered")
        .expect("the disordered phase's spinodal");
    assert!(
        (sp.temperature - spinodal).abs() < 1e-6 * spinodal,
        "{sp:?}"
    );
    // The crossing does not depend on the grid that brackets it (located to 1e-8).
    let other = diagram(
        &l,
        "tetrahedra",
        &[1.8, 1.87, 1.95],
        &[0.0],
        Along::Temperature,
    );
    let u = other.paths[0]
        .transitions
        .iter()
        .find(|u| u.kind == Kind::First)
        .unwrap();
    assert!(
        (u.temperature - t.temperature).abs() < 1e-8 * t.temperature,
        "{} vs {}",
        u.temperature,
        t.temperature
    );
}

#[test]
fn declared_phase_is_compared_and_loses_to_neel_order() {
    // A stripe pattern declared in the file is followed and compared; for the
    // nearest-neighbour antiferromagnet its energy per bond is 0 against the Néel
    // state's −|J|, so it never becomes the equilibrium (common practice).
    let l = inline(
        "name: sq\ndimension: 2\nvectors: [[1, 0], [0, 1]]\nbasis: [{name: a}]\n\
         couplings: {J: -1.0}\n\
         bonds: [{from: a, to: a, cell: [1, 0], coupling: J}, {from: a, to: a, cell: [0, 1], coupling: J}]\n\
         phases:\n  columns: {supercell: [2, 1], signs: [+1, -1]}\n",
    );
    let d = diagram(&l, "site", &range(1.0, 5.0, 5), &[0.0], Along::Temperature);
    let columns = d
        .header
        .phases
        .iter()
        .find(|p| p.name == "columns")
        .unwrap();
    assert_eq!(columns.origin, rungs_solve::phases::Origin::Declared);
    assert!(d.paths[0]
        .grid
        .iter()
        .all(|g| g.phase.as_deref() != Some("columns")));
    let t = &d.paths[0].transitions;
    assert_eq!(t.len(), 1, "{t:?}");
    // Weiss mean field: T_N = z|J| = 4 (common practice).
    assert!((t[0].temperature - 4.0).abs() < 1e-8, "{t:?}");
}

#[test]
fn points_without_a_phase_and_frustration_are_said() {
    // The triangular antiferromagnet has no transition at any T > 0 (Wannier 1950,
    // Phys. Rev. 79, 357); its triangle level orders at h = 0 near T ≈ 0.99, where the
    // two ordered candidates are degenerate and neither is followed below it. The
    // diagram must say both things, not leave empty points silently.
    let l = with_j("triangular", -1.0);
    let d = diagram(&l, "triangles", &[0.5, 1.5], &[0.0], Along::Temperature);
    let blank = d.paths[0].grid.iter().filter(|g| g.phase.is_none()).count();
    let notes = d.header.notes.join(" ") + &d.paths[0].notes.join(" ");
    assert!(notes.contains("frustrated couplings"), "{notes}");
    assert_eq!(
        blank > 0,
        notes.contains("no phase could be followed at"),
        "{blank} blank point(s): {notes}"
    );
}

#[test]
fn an_alloy_path_whose_order_falls_steeply_meets_its_second_order_line() {
    // A made-up bcc A–B alloy (unlike nearest neighbours favoured, J1 = −1, and a weaker
    // unlike next-nearest-neighbour preference, J2 = −0.25; demo data) at Δμ = 2h = 16.
    // Between grid points 1.75 and 2.0 the B2 order parameter falls from ~0.3 to 0.145,
    // and one continuation step overshot onto the reversed pattern (ψ < 0), which was
    // read as a collapse: the path reported no transition, an empty grid point at
    // T = 2 and a spurious upper spinodal there. The transition is second order where
    // the disordered state goes unstable (common practice: the order vanishes
    // continuously at the disordered state's instability, which the Tc search finds
    // independently), and every grid point has a phase.
    let file = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("../../tests/fixtures/demo_bcc_alloy.yaml");
    let l = Lattice::from_file(&file).unwrap();
    let h = 8.0;
    let temps: Vec<f64> = (0..=22).map(|i| 0.5 + 0.25 * i as f64).collect();
    let d = diagram(&l, "tetrahedron", &temps, &[h], Along::Temperature);
    let path = &d.paths[0];
    assert!(
        path.grid.iter().all(|g| g.phase.is_some()),
        "{:?}",
        path.grid
    );
    let options = TcOptions {
        field: h,
        ..TcOptions::default()
    };
    let line = critical_temperature(&l, &level(&l, "tetrahedron"), options)
        .unwrap()
        .tc
        .unwrap();
    assert_eq!(path.transitions.len(), 1, "{:?}", path.transitions);
    let t = &path.transitions[0];
    assert_eq!(t.kind, Kind::Second, "{t:?}");
    assert!((t.temperature - line).abs() < 1e-6, "{t:?} against {line}");
    assert!(path.spinodals.is_empty(), "{:?}", path.spinodals);
}

#[test]
fn where_the_neel_branch_outruns_double_precision_no_transition_is_invented() {
    // Square antiferromagnet, plaquette level, h = 2: the Néel state is the equilibrium
    // down to T = 0 (it is the ground state for h < z|J| = 4; common practice), but below
    // T ≈ 0.21 its cluster probabilities outrun doubles (see the sweep test
    // `a_neel_state_past_double_precision_in_a_field_is_not_replaced_by_noise`). The
    // symmetric state there, of unresolved stability, used to be taken for the
    // disordered phase, with a first-order transition to it; the path now has no
    // transition, no spinodal, and says where the arithmetic ends.
    let l = with_j("square", -1.0);
    let temps = [0.2, 0.3, 0.4, 0.5, 0.6];
    let d = diagram(&l, "plaquette", &temps, &[2.0], Along::Temperature);
    let path = &d.paths[0];
    assert!(path.transitions.is_empty(), "{:?}", path.transitions);
    assert!(path.spinodals.is_empty(), "{:?}", path.spinodals);
    for g in &path.grid {
        if g.temperature >= 0.3 {
            assert_eq!(g.phase.as_deref(), Some("AB"), "{g:?}");
        } else {
            assert!(g.phase.as_deref() != Some("disordered"), "{g:?}");
        }
    }
    assert!(
        path.notes
            .iter()
            .any(|n| n.contains("limit of the arithmetic")),
        "{:?}",
        path.notes
    );
}

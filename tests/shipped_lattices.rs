//! The ready lattice files in `lattices/`: each one loads, has the coordination and
//! bipartiteness of its lattice, builds every level with the Kikuchi sum rule, gives the
//! Kikuchi coefficients counted by hand for the classic approximations (Kikuchi 1951,
//! Phys. Rev. 81, 988), and carries the published reference Tc it claims.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use rungs::lattice::{Lattice, Level};

/// Every shipped file: (file stem, sites per cell, coordination z of every site,
/// bipartite, level names after `site` and `pair`).
///
/// Coordination numbers and bipartiteness of these lattices: common practice.
const SHIPPED: &[(&str, usize, usize, bool, &[&str])] = &[
    ("chain", 1, 2, true, &["triple"]),
    ("square", 1, 4, true, &["plaquette", "block3", "block4"]),
    ("square_anisotropic", 1, 4, true, &["plaquette", "block3"]),
    ("triangular", 1, 6, false, &["triangles", "hexagon"]),
    (
        "honeycomb",
        2,
        3,
        true,
        &["hexagon", "hexagons2", "hexagons3"],
    ),
    (
        "kagome",
        3,
        4,
        false,
        &["triangles", "hexagon", "hexagon_tips"],
    ),
    ("simple_cubic", 1, 6, true, &["plaquettes", "cube"]),
    (
        "bcc",
        1,
        8,
        true,
        &["tetrahedron", "octahedra", "cube_octahedra"],
    ),
    (
        "fcc",
        1,
        12,
        false,
        &["tetrahedra", "tetrahedra_octahedron"],
    ),
    ("diamond", 2, 4, true, &["stars", "hexagons"]),
    ("layered_magnet", 1, 6, true, &["plaquette", "box"]),
    (
        "fcc_af",
        1,
        12,
        false,
        &["tetrahedra", "tetrahedra_octahedron"],
    ),
];

fn lattices_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("lattices")
}

fn load(stem: &str) -> Lattice {
    let path = lattices_dir().join(format!("{stem}.yaml"));
    match Lattice::from_file(path.as_path()) {
        Ok(l) => l,
        Err(e) => panic!("{}: {e}", path.display()),
    }
}

fn level(stem: &str, name: &str) -> Level {
    Level::build(&load(stem), name).unwrap_or_else(|e| panic!("{stem}/{name}: {e}"))
}

/// (sites, coefficient) of every region with a non-zero coefficient, sorted.
fn summary(level: &Level) -> Vec<(usize, i64)> {
    let mut v: Vec<(usize, i64)> = level
        .active_regions()
        .map(|r| (r.cluster.len(), r.coefficient))
        .collect();
    v.sort();
    v
}

/// Sum of the coefficients of the regions of each size.
fn totals_by_size(level: &Level) -> BTreeMap<usize, i64> {
    let mut m = BTreeMap::new();
    for r in &level.regions {
        *m.entry(r.cluster.len()).or_insert(0) += r.coefficient;
    }
    m.retain(|_, a| *a != 0);
    m
}

/// `n` copies of `(sites, coefficient)`.
fn rep(n: usize, sites: usize, coefficient: i64) -> Vec<(usize, i64)> {
    vec![(sites, coefficient); n]
}

fn sorted(mut v: Vec<(usize, i64)>) -> Vec<(usize, i64)> {
    v.sort();
    v
}

#[test]
fn the_directory_holds_exactly_the_listed_files_and_each_loads() {
    let mut found: Vec<String> = std::fs::read_dir(lattices_dir())
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|x| x == "yaml"))
        .map(|p| p.file_stem().unwrap().to_string_lossy().into_owned())
        .collect();
    found.sort();
    let mut listed: Vec<String> = SHIPPED.iter().map(|s| s.0.to_string()).collect();
    listed.sort();
    assert_eq!(
        found, listed,
        "a file in lattices/ is missing from SHIPPED, or the reverse"
    );
    for &(stem, nb, ..) in SHIPPED {
        let l = load(stem);
        assert_eq!(l.name(), stem, "{stem}: `name` should match the file name");
        assert!(
            l.description().is_some_and(|d| !d.is_empty()),
            "{stem}: no description"
        );
        assert_eq!(l.sites_per_cell(), nb, "{stem}: sites per cell");
        assert_eq!(l.field(), 0.0, "{stem}: shipped files are in zero field");
    }
}

#[test]
fn coordination_of_every_basis_site() {
    // chain 2, square 4, triangular 6, honeycomb 3, kagome 4, simple cubic 6, bcc 8,
    // fcc 12, diamond 4 (common practice); the layered demo is simple tetragonal, 6.
    for &(stem, nb, z, ..) in SHIPPED {
        assert_eq!(load(stem).coordination(), vec![z; nb], "{stem}");
    }
}

#[test]
fn bipartiteness() {
    // Square, honeycomb, simple cubic, bcc, diamond (and chain) are bipartite;
    // triangular, kagome and fcc hold triangles (common practice).
    for &(stem, _, _, bipartite, _) in SHIPPED {
        assert_eq!(load(stem).is_bipartite(), bipartite, "{stem}");
    }
}

#[test]
fn every_level_builds_and_obeys_the_sum_rule() {
    // Kikuchi sum rule Σ_γ a_γ |γ| = sites per cell (Kikuchi 1951, Phys. Rev. 81, 988).
    for &(stem, nb, _, _, levels) in SHIPPED {
        let lattice = load(stem);
        let mut expected = vec!["site".to_string(), "pair".to_string()];
        expected.extend(levels.iter().map(|s| s.to_string()));
        let mut names = Level::names(&lattice);
        assert_eq!(
            names[..2],
            expected[..2],
            "{stem}: `site` and `pair` come first"
        );
        names.sort();
        expected.sort();
        assert_eq!(names, expected, "{stem}: level names");
        for name in Level::names(&lattice) {
            let l = Level::build(&lattice, &name).unwrap_or_else(|e| panic!("{stem}/{name}: {e}"));
            assert_eq!(l.sum_rule(), nb as i64, "{stem}/{name}: sum rule");
            assert_eq!(l.sites_per_cell, nb, "{stem}/{name}");
        }
    }
}

#[test]
fn pair_level_is_bethe_on_every_file() {
    // Bethe (1935) in Kikuchi's counting: +1 per bond, 1 − z_a for each basis site a
    // (checked by hand; see the worked example in ARCHITECTURE.md).
    for &(stem, nb, z, ..) in SHIPPED {
        let lattice = load(stem);
        let l = Level::build(&lattice, "pair").unwrap();
        let pairs: Vec<i64> = l
            .regions
            .iter()
            .filter(|r| r.cluster.len() == 2)
            .map(|r| r.coefficient)
            .collect();
        assert_eq!(
            pairs,
            vec![1; lattice.bonds().len()],
            "{stem}: one region per bond, each +1"
        );
        let mut sites = vec![None; nb];
        for r in l.regions.iter().filter(|r| r.cluster.len() == 1) {
            sites[r.cluster.site(0).0] = Some(r.coefficient);
        }
        assert_eq!(
            sites,
            vec![Some(1 - z as i64); nb],
            "{stem}: site coefficients 1 − z"
        );
        assert!(
            l.regions.iter().all(|r| r.cluster.len() <= 2),
            "{stem}: nothing above pairs"
        );
    }
}

#[test]
fn square_plaquette_coefficients() {
    // Kikuchi (1951) square approximation: plaquette +1, each bond orientation −1,
    // site +1 (checked by hand).
    assert_eq!(
        summary(&level("square", "plaquette")),
        vec![(1, 1), (2, -1), (2, -1), (4, 1)]
    );
}

#[test]
fn square_block3_coefficients() {
    // 3×3 block: +1 (3×3), −1 (3×2), −1 (2×3), +1 (2×2), zero for every smaller region
    // (inclusion–exclusion of overlapping blocks; checked by hand).
    assert_eq!(
        summary(&level("square", "block3")),
        vec![(4, 1), (6, -1), (6, -1), (9, 1)]
    );
}

#[test]
fn anisotropic_square_has_the_geometry_of_the_square() {
    // Couplings do not enter the coefficients: same as the square plaquette (by hand).
    let l = load("square_anisotropic");
    assert_eq!(
        l.couplings(),
        &[("Jx".to_string(), 1.0), ("Jy".to_string(), 0.5)]
    );
    assert_eq!(
        summary(&level("square_anisotropic", "plaquette")),
        vec![(1, 1), (2, -1), (2, -1), (4, 1)]
    );
}

#[test]
fn triangular_triangles_coefficients() {
    // Kikuchi (1951) triangle approximation, per site: 2 S_triangle − 3 S_pair + S_site
    // (checked by hand).
    let s = summary(&level("triangular", "triangles"));
    assert_eq!(s, vec![(1, 1), (2, -1), (2, -1), (2, -1), (3, 1), (3, 1)]);
}

#[test]
fn fcc_tetrahedra_coefficients() {
    // Kikuchi (1951) tetrahedron approximation on fcc, per site: 2 S_tet − 6 S_pair +
    // 5 S_site (checked by hand).
    let t = totals_by_size(&level("fcc", "tetrahedra"));
    assert_eq!(t, BTreeMap::from([(1, 5), (2, -6), (4, 2)]));
    let s = summary(&level("fcc", "tetrahedra"));
    assert_eq!(
        s,
        sorted([rep(1, 1, 5), rep(6, 2, -1), rep(2, 4, 1)].concat())
    );
}

#[test]
fn simple_cubic_cube_coefficients() {
    // Cube approximation: cube +1, each face orientation −1, each edge orientation +1,
    // site −1 (inclusion–exclusion on the cubic lattice; checked by hand).
    let want = sorted([rep(1, 1, -1), rep(3, 2, 1), rep(3, 4, -1), rep(1, 8, 1)].concat());
    assert_eq!(summary(&level("simple_cubic", "cube")), want);
    // The layered demo's 2×2×2 box has the same topology, whatever the couplings.
    assert_eq!(summary(&level("layered_magnet", "box")), want);
}

#[test]
fn simple_cubic_plaquettes_coefficients() {
    // Three face orientations: each face +1; each bond lies in 4 faces → 1 − 4 = −3; a
    // site lies in 12 faces and 6 bonds → 1 − (12 − 18) = 7 (checked by hand).
    let want = sorted([rep(1, 1, 7), rep(3, 2, -3), rep(3, 4, 1)].concat());
    assert_eq!(summary(&level("simple_cubic", "plaquettes")), want);
}

#[test]
fn bcc_tetrahedron_coefficients() {
    // bcc irregular-tetrahedron approximation, per site: 6 S_tet − 12 S_triangle +
    // 3 S_nnn + 4 S_nn − S_site. By hand: a triangle lies in 2 tetrahedra (1 − 2); an
    // nnn pair in 4 tetrahedra and 4 triangles (1 − 0); an nn bond in 6 of each (1 − 0);
    // a site in 24, 36, 6 and 8 of them (1 − 2).
    let want = sorted([rep(1, 1, -1), rep(7, 2, 1), rep(12, 3, -1), rep(6, 4, 1)].concat());
    assert_eq!(summary(&level("bcc", "tetrahedron")), want);
}

#[test]
fn two_dimensional_multi_site_levels() {
    // Kagome up/down triangles: +1 each, every site in 2 triangles → 1 − 2 (by hand).
    assert_eq!(
        summary(&level("kagome", "triangles")),
        sorted([rep(3, 1, -1), rep(2, 3, 1)].concat())
    );
    // Kagome hexagon ring with both triangles as clusters: ring +1, each triangle +1;
    // each bond lies in one ring and one triangle → 1 − 2 = −1; each site in 2 rings,
    // 2 triangles and 4 bonds → 1 − (2 + 2 − 4) = +1 (by hand).
    assert_eq!(
        summary(&level("kagome", "hexagon")),
        sorted([rep(3, 1, 1), rep(6, 2, -1), rep(2, 3, 1), rep(1, 6, 1)].concat())
    );
    // Honeycomb hexagon: +1; each bond in 2 hexagons → −1; each site in 3 hexagons and
    // 3 bonds → +1 (by hand).
    let want = sorted([rep(2, 1, 1), rep(3, 2, -1), rep(1, 6, 1)].concat());
    assert_eq!(summary(&level("honeycomb", "hexagon")), want);
}

#[test]
fn loop_free_levels() {
    // Chain triple: +1, each pair in 2 triples → −1, each site in 3 triples and 2 pairs →
    // 0 (by hand).
    assert_eq!(summary(&level("chain", "triple")), vec![(2, -1), (3, 1)]);
    // Diamond stars (one on a, one on b): each star +1, each bond in 2 stars → −1, each
    // site in 5 stars and 4 bonds → 0 (by hand).
    assert_eq!(
        summary(&level("diamond", "stars")),
        sorted([rep(4, 2, -1), rep(2, 5, 1)].concat())
    );
}

#[test]
fn every_shipped_level_is_closed_under_the_lattice_symmetry_and_covers_every_bond() {
    // The new levels of triangular, honeycomb, kagome, bcc and fcc were written for the
    // full point group; `check::lattice_warnings` would name a missing orientation. Only
    // the layered demo leaves a bond (J_perp) to bare pairs, on purpose.
    for &(stem, ..) in SHIPPED {
        let warnings = rungs::lattice::check::lattice_warnings(&load(stem)).unwrap();
        if stem == "layered_magnet" {
            assert_eq!(warnings.len(), 1, "{warnings:?}");
        } else {
            assert!(warnings.is_empty(), "{stem}: {warnings:?}");
        }
    }
}

#[test]
fn cluster_sizes_fit_the_engine() {
    // The largest shipped cluster is the 4×4 block, exactly the engine's limit.
    assert_eq!(level("square", "plaquette").max_cluster_sites(), 4);
    assert_eq!(
        Level::max_cluster_sites_of(&load("square"), "block4").unwrap(),
        16
    );
    assert_eq!(
        Level::max_cluster_sites_of(&load("diamond"), "hexagons").unwrap(),
        6
    );
    assert_eq!(
        Level::max_cluster_sites_of(&load("layered_magnet"), "box").unwrap(),
        8
    );
}

/// Root of `sinh(2 jx / t) sinh(2 jy / t) = 1` by bisection (the left side falls with t).
fn onsager_anisotropic_tc(jx: f64, jy: f64) -> f64 {
    let f = |t: f64| (2.0 * jx / t).sinh() * (2.0 * jy / t).sinh() - 1.0;
    let (mut lo, mut hi) = (0.1, 10.0);
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if f(mid) > 0.0 {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    0.5 * (lo + hi)
}

#[test]
fn exact_reference_temperatures_match_their_closed_forms() {
    let cases: [(&str, f64, &str); 5] = [
        // Onsager (1944), Phys. Rev. 65, 117: Tc = 2J/ln(1 + √2).
        ("square", 2.0 / (1.0 + 2f64.sqrt()).ln(), "Onsager (1944)"),
        // Onsager (1944), Phys. Rev. 65, 117: sinh(2Jx/Tc) sinh(2Jy/Tc) = 1.
        (
            "square_anisotropic",
            onsager_anisotropic_tc(1.0, 0.5),
            "Onsager (1944)",
        ),
        // Houtappel (1950), Physica 16, 425: Tc = 4J/ln 3.
        ("triangular", 4.0 / 3f64.ln(), "Houtappel (1950)"),
        // Houtappel (1950), Physica 16, 425: Tc = 2J/ln(2 + √3).
        (
            "honeycomb",
            2.0 / (2.0 + 3f64.sqrt()).ln(),
            "Houtappel (1950)",
        ),
        // Syozi (1951), Prog. Theor. Phys. 6, 306, who first obtained it (volume and page
        // from memory): Tc = 4J/ln(3 + 2√3).
        (
            "kagome",
            4.0 / (3.0 + 2.0 * 3f64.sqrt()).ln(),
            "Syozi (1951)",
        ),
    ];
    for (stem, tc, author) in cases {
        let r = load(stem)
            .reference()
            .cloned()
            .unwrap_or_else(|| panic!("{stem}: no reference"));
        assert!(
            (r.tc - tc).abs() < 1e-12 * tc,
            "{stem}: file {} vs closed form {tc}",
            r.tc
        );
        assert!(
            r.source.contains(author),
            "{stem}: source `{}` should name {author}",
            r.source
        );
        assert!(
            r.source.contains("exact"),
            "{stem}: source should say the value is exact"
        );
    }
    // The anisotropic root really solves Onsager's condition.
    let t = onsager_anisotropic_tc(1.0, 0.5);
    assert!(((2.0 / t).sinh() * (1.0 / t).sinh() - 1.0).abs() < 1e-13);
}

#[test]
fn estimated_reference_temperatures_are_one_over_the_published_coupling() {
    let cases: [(&str, f64, &str); 4] = [
        // Ferrenberg, Xu & Landau (2018), Phys. Rev. E 97, 043301: Kc = 0.221654626(5).
        (
            "simple_cubic",
            0.221654626,
            "Ferrenberg, Xu & Landau (2018)",
        ),
        // Lundow, Markström & Rosengren (2009), Phil. Mag. 89, 2009 (from memory; matches
        // secondary quotations): bcc Kc = 0.1573725, fcc Kc = 0.1020707(2),
        // diamond Kc = 0.3697398.
        ("bcc", 0.1573725, "Lundow, Markström & Rosengren (2009)"),
        ("fcc", 0.1020707, "Lundow, Markström & Rosengren (2009)"),
        ("diamond", 0.3697398, "Lundow, Markström & Rosengren (2009)"),
    ];
    for (stem, kc, author) in cases {
        let r = load(stem)
            .reference()
            .cloned()
            .unwrap_or_else(|| panic!("{stem}: no reference"));
        assert!(
            (r.tc - 1.0 / kc).abs() < 1e-12 / kc,
            "{stem}: file {} vs 1/Kc {}",
            r.tc,
            1.0 / kc
        );
        assert!(
            r.source.contains(author),
            "{stem}: source `{}` should name {author}",
            r.source
        );
    }
}

#[test]
fn files_without_a_known_tc_carry_no_reference() {
    // The chain has no transition at T > 0 (Ising 1925, Z. Phys. 31, 253); the layered
    // magnet is a made-up demo; the fcc antiferromagnet has no exact Tc.
    for stem in ["chain", "layered_magnet", "fcc_af"] {
        assert!(load(stem).reference().is_none(), "{stem}");
    }
}

#[test]
fn reference_tc_lies_below_the_bethe_and_mean_field_values() {
    // Exact Tc < Bethe Tc = 2J/ln(z/(z−2)) < mean-field Tc = zJ for a nearest-neighbour
    // ferromagnet with equal couplings (common practice).
    for &(stem, _, z, ..) in SHIPPED {
        let l = load(stem);
        let (Some(r), true) = (l.reference(), l.couplings().iter().all(|c| c.1 == 1.0)) else {
            continue;
        };
        let zf = z as f64;
        let bethe = 2.0 / (zf / (zf - 2.0)).ln();
        assert!(
            r.tc < bethe && bethe < zf,
            "{stem}: Tc {} vs Bethe {bethe}, mean field {zf}",
            r.tc
        );
    }
}

#[test]
fn diamond_hexagons_is_ill_posed_and_says_so() {
    // The chair-hexagon level on the diamond lattice has a paramagnetic solution at
    // T = 2.95 but none at the pair-level Tc 2/ln 2 = 2.885 (Bethe 1935, z = 4): its
    // paramagnetic branch ends above the pair Tc, so the level can give no Tc.
    use rungs::solve::{solve_equilibrium, state::magnetization};
    let lattice = load("diamond");
    let hexagons = level("diamond", "hexagons");
    let above = solve_equilibrium(&hexagons, 2.95, 0.0, None).expect("paramagnet at T = 2.95");
    assert!(
        magnetization(&hexagons, &above.solution.x).abs() < 1e-9,
        "paramagnetic at 2.95"
    );
    assert!(
        solve_equilibrium(&hexagons, 2.0 / 2f64.ln(), 0.0, None).is_err(),
        "no paramagnetic solution is expected at the pair Tc"
    );
    let description = lattice.description().unwrap();
    assert!(
        description.contains("ill-posed") && description.contains("no Tc"),
        "diamond.yaml should say that `hexagons` is ill-posed: {description}"
    );
    let docs =
        std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("docs/lattices.md"))
            .unwrap();
    assert!(
        docs.contains("`hexagons` (ill-posed, no Tc)"),
        "docs/lattices.md table"
    );
}

#[test]
fn the_fcc_antiferromagnet_is_the_fcc_file_with_j_reversed() {
    // The alloy demo must stay the fcc lattice, its bonds and levels, with J → −J; that
    // is what makes it frustrated (three mutually neighbouring sites: common practice).
    let (f, af) = (load("fcc"), load("fcc_af"));
    assert_eq!(f.vectors(), af.vectors());
    assert_eq!(f.bonds().len(), af.bonds().len());
    for (a, b) in f.bonds().iter().zip(af.bonds()) {
        assert_eq!((a.from, a.to, a.cell), (b.from, b.to, b.cell));
        assert_eq!(a.j, -b.j);
    }
    assert_eq!(Level::names(&f), Level::names(&af));
    for name in Level::names(&f) {
        assert_eq!(
            summary(&level("fcc", &name)),
            summary(&level("fcc_af", &name)),
            "{name}"
        );
    }
    assert!(!f.is_frustrated() && af.is_frustrated());
}

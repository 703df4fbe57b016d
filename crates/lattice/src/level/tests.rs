//! Kikuchi coefficients checked by hand against the method of Kikuchi (1951), Phys. Rev.
//! 81, 988, on lattices built in code (the shipped files are checked in the root tests).

use super::*;
use crate::testutil::Shape;

/// A lattice whose bonds all have J = 1.
fn lattice(
    dim: usize,
    nb: usize,
    bonds: &[(usize, usize, Cell)],
    levels: &[(&str, Vec<Shape>)],
) -> Lattice {
    let bonds: Vec<_> = bonds.iter().map(|&(a, b, c)| (a, b, c, 1.0)).collect();
    crate::testutil::lattice(dim, nb, &bonds, levels)
}

fn block2(nx: i32, ny: i32) -> Vec<(usize, Cell)> {
    (0..ny)
        .flat_map(|y| (0..nx).map(move |x| (0usize, [x, y, 0])))
        .collect()
}

/// (sites, coefficient) of every region with a non-zero coefficient, sorted.
fn summary(level: &Level) -> Vec<(usize, i64)> {
    let mut v: Vec<(usize, i64)> = level
        .regions
        .iter()
        .filter(|r| r.coefficient != 0)
        .map(|r| (r.cluster.len(), r.coefficient))
        .collect();
    v.sort();
    v
}

fn square() -> Lattice {
    lattice(
        2,
        1,
        &[(0, 0, [1, 0, 0]), (0, 0, [0, 1, 0])],
        &[
            ("plaquette", vec![block2(2, 2)]),
            ("block3", vec![block2(3, 3)]),
            ("block4", vec![block2(4, 4)]),
        ],
    )
}

#[test]
fn pair_level_square_bond_plus_one_site_one_minus_z() {
    // Bethe (1935): per site S = Σ_bonds S_b + (1 − z) S_site; z = 4 (common practice).
    let l = Level::build(&square(), "pair").unwrap();
    assert_eq!(summary(&l), vec![(1, -3), (2, 1), (2, 1)]);
    assert_eq!(l.sum_rule(), 1);
}

#[test]
fn square_plaquette_coefficients() {
    // Kikuchi (1951) square approximation: plaquette +1, each bond −1, site +1 (by hand).
    let l = Level::build(&square(), "plaquette").unwrap();
    assert_eq!(summary(&l), vec![(1, 1), (2, -1), (2, -1), (4, 1)]);
    assert_eq!(l.sum_rule(), 1);
    // 10 translation classes of correlation variables (1 site, 2 bonds, 2 diagonals,
    // 4 triangles, 1 plaquette; counted by hand).
    assert_eq!(l.variables.len(), 10);
}

#[test]
fn square_block3_coefficients() {
    // 3×3 block: +1 (3×3), −1 (3×2), −1 (2×3), +1 (2×2), zero for every smaller region
    // (inclusion–exclusion of overlapping blocks; checked by hand).
    let l = Level::build(&square(), "block3").unwrap();
    assert_eq!(summary(&l), vec![(4, 1), (6, -1), (6, -1), (9, 1)]);
    assert_eq!(l.sum_rule(), 1);
}

#[test]
fn square_block4_sizes() {
    // 4×4 block: 57,856 translation classes of correlation variables (common practice
    // for this block; the count follows from the orbit enumeration).
    let l = Level::build(&square(), "block4").unwrap();
    assert_eq!(summary(&l), vec![(9, 1), (12, -1), (12, -1), (16, 1)]);
    assert_eq!(l.variables.len(), 57_856);
}

#[test]
fn triangular_triangles() {
    // Triangular lattice, both triangles: per site 2 S_triangle − 3 S_pair + S_site
    // (Kikuchi 1951 triangle approximation; checked by hand).
    let t = lattice(
        2,
        1,
        &[(0, 0, [1, 0, 0]), (0, 0, [0, 1, 0]), (0, 0, [-1, 1, 0])],
        &[(
            "triangles",
            vec![
                vec![(0, [0, 0, 0]), (0, [1, 0, 0]), (0, [0, 1, 0])],
                vec![(0, [1, 0, 0]), (0, [0, 1, 0]), (0, [1, 1, 0])],
            ],
        )],
    );
    let l = Level::build(&t, "triangles").unwrap();
    assert_eq!(
        summary(&l),
        vec![(1, 1), (2, -1), (2, -1), (2, -1), (3, 1), (3, 1)]
    );
    assert_eq!(l.sum_rule(), 1);
}

#[test]
fn simple_cubic_cube() {
    // Cube approximation: cube +1, each face −1 (3 orientations), each edge +1 (3), site
    // −1 (inclusion–exclusion on the cubic lattice; checked by hand).
    let cube: Vec<(usize, Cell)> = (0..8)
        .map(|k| (0usize, [k & 1, (k >> 1) & 1, (k >> 2) & 1]))
        .collect();
    let sc = lattice(
        3,
        1,
        &[(0, 0, [1, 0, 0]), (0, 0, [0, 1, 0]), (0, 0, [0, 0, 1])],
        &[("cube", vec![cube])],
    );
    let l = Level::build(&sc, "cube").unwrap();
    assert_eq!(
        summary(&l),
        vec![
            (1, -1),
            (2, 1),
            (2, 1),
            (2, 1),
            (4, -1),
            (4, -1),
            (4, -1),
            (8, 1)
        ]
    );
    assert_eq!(l.sum_rule(), 1);
}

#[test]
fn fcc_tetrahedra() {
    // fcc with both nearest-neighbour tetrahedra: per site 2 S_tet − 6 S_pair + 5 S_site
    // (Kikuchi 1951 tetrahedron approximation; checked by hand). Primitive vectors
    // a1 = (0,½,½), a2 = (½,0,½), a3 = (½,½,0); the 12 neighbours are ±a_i and ±(a_i − a_j).
    let bonds = [
        (0, 0, [1, 0, 0]),
        (0, 0, [0, 1, 0]),
        (0, 0, [0, 0, 1]),
        (0, 0, [1, -1, 0]),
        (0, 0, [0, 1, -1]),
        (0, 0, [1, 0, -1]),
    ];
    let up = vec![
        (0, [0, 0, 0]),
        (0, [1, 0, 0]),
        (0, [0, 1, 0]),
        (0, [0, 0, 1]),
    ];
    let down = vec![
        (0, [1, 0, 0]),
        (0, [0, 1, 0]),
        (0, [0, 0, 1]),
        (0, [1, 1, 1]),
    ];
    let _ = down.clone();
    // The second tetrahedron: sites a1, a2, a3 and a1+a2+a3 − ... use the inverted one
    // −(0, a1, a2, a3) translated by a1+a2+a3 is not an nn tetrahedron; the inverted
    // tetrahedron is {0, −a1, −a2, −a3}.
    let inverted = vec![
        (0, [0, 0, 0]),
        (0, [-1, 0, 0]),
        (0, [0, -1, 0]),
        (0, [0, 0, -1]),
    ];
    let f = lattice(3, 1, &bonds, &[("tetrahedra", vec![up, inverted])]);
    let l = Level::build(&f, "tetrahedra").unwrap();
    let total_pairs: i64 = l
        .regions
        .iter()
        .filter(|r| r.cluster.len() == 2)
        .map(|r| r.coefficient)
        .sum();
    let total_tets: i64 = l
        .regions
        .iter()
        .filter(|r| r.cluster.len() == 4)
        .map(|r| r.coefficient)
        .sum();
    let site: i64 = l
        .regions
        .iter()
        .filter(|r| r.cluster.len() == 1)
        .map(|r| r.coefficient)
        .sum();
    assert_eq!((total_tets, total_pairs, site), (2, -6, 5));
    assert_eq!(l.sum_rule(), 1);
}

#[test]
fn site_level_factorises_every_bond() {
    let l = Level::build(&square(), "site").unwrap();
    assert_eq!(l.variables.len(), 1);
    assert!(l
        .bond_terms
        .iter()
        .all(|b| matches!(b, BondTerm::Factorised { .. })));
}

#[test]
fn oversized_cluster_is_refused_before_building() {
    let sq = lattice(
        2,
        1,
        &[(0, 0, [1, 0, 0]), (0, 0, [0, 1, 0])],
        &[("block5", vec![block2(5, 5)])],
    );
    let e = Level::build(&sq, "block5").unwrap_err();
    assert!(matches!(
        e,
        LatticeError::ClusterTooLarge {
            sites: 25,
            limit: crate::level::MAX_MATERIALISED_SITES,
            ..
        }
    ));
}

//! Point groups of standard lattices (group orders: common practice) and orbit counts.

use super::*;
use crate::level::Level;
use crate::testutil::lattice;

fn block(nx: i32, ny: i32) -> Vec<(usize, Cell)> {
    (0..ny)
        .flat_map(|y| (0..nx).map(move |x| (0usize, [x, y, 0])))
        .collect()
}

fn square(jy: f64) -> Lattice {
    lattice(
        2,
        1,
        &[(0, 0, [1, 0, 0], 1.0), (0, 0, [0, 1, 0], jy)],
        &[
            ("plaquette", vec![block(2, 2)]),
            ("block3", vec![block(3, 3)]),
            ("block4", vec![block(4, 4)]),
        ],
    )
}

#[test]
fn square_lattice_has_the_eight_operations_of_d4() {
    // The square lattice's point group is D4, order 8 (common practice).
    assert_eq!(point_group(&square(1.0)).len(), 8);
    // Jx ≠ Jy leaves the reflections and the 180° rotation: order 4.
    assert_eq!(point_group(&square(0.5)).len(), 4);
}

#[test]
fn simple_cubic_has_48_and_triangular_12() {
    // Oh has order 48, the triangular lattice's point group C6v order 12 (common practice).
    let sc = lattice(
        3,
        1,
        &[
            (0, 0, [1, 0, 0], 1.0),
            (0, 0, [0, 1, 0], 1.0),
            (0, 0, [0, 0, 1], 1.0),
        ],
        &[],
    );
    assert_eq!(point_group(&sc).len(), 48);
    let tri = lattice(
        2,
        1,
        &[
            (0, 0, [1, 0, 0], 1.0),
            (0, 0, [0, 1, 0], 1.0),
            (0, 0, [-1, 1, 0], 1.0),
        ],
        &[],
    );
    assert_eq!(point_group(&tri).len(), 12);
}

#[test]
fn honeycomb_operations_swap_the_sublattices() {
    // Honeycomb: C6v about a hexagon centre, order 12, half of the operations exchange
    // the two sublattices (common practice).
    let h = lattice(
        2,
        2,
        &[
            (0, 1, [0, 0, 0], 1.0),
            (0, 1, [-1, 0, 0], 1.0),
            (0, 1, [0, -1, 0], 1.0),
        ],
        &[],
    );
    let ops = point_group(&h);
    assert_eq!(ops.len(), 12);
    assert_eq!(ops.iter().filter(|o| o.perm[0] == 1).count(), 6);
}

#[test]
fn square_block4_orbits_under_d4() {
    // 4×4 block: 57,856 translation classes fall into 7,625 orbits under D4, 3,862 even
    // and 3,763 odd (counted by this enumeration; consistent with the sizes the method
    // is known for).
    let l = square(1.0);
    let lv = Level::build(&l, "block4").unwrap();
    let ops = level_group(&lv, &point_group(&l));
    assert_eq!(ops.len(), 8);
    let orbits = variable_orbits(&lv, &ops);
    let red = lv.reduced(&orbits);
    assert_eq!(red.variables.len(), 7_625);
    let even = red.variables.iter().filter(|c| c.len() % 2 == 0).count();
    assert_eq!((even, red.variables.len() - even), (3_862, 3_763));
}

#[test]
fn plaquette_orbits() {
    // Plaquette: 10 translation classes (site, 2 bonds, 2 diagonals, 4 triangles,
    // plaquette) → 5 orbits under D4: the bond orientations, the diagonals and the
    // triangles each merge (counted by hand).
    let l = square(1.0);
    let lv = Level::build(&l, "plaquette").unwrap();
    let orbits = variable_orbits(&lv, &level_group(&lv, &point_group(&l)));
    assert_eq!(lv.reduced(&orbits).variables.len(), 5);
}

#[test]
fn supercells_keep_the_point_group_times_the_inner_translations() {
    // A 6×6 supercell of the square lattice: D4 (order 8) times the 36 translations that
    // permute the supercell's sites, 288 operations (common practice: the space group
    // modulo the supercell's translations). Before the search pruned each placed site,
    // this took minutes.
    let l = square(1.0).supercell([6, 6, 1]).unwrap();
    assert_eq!(point_group(&l).len(), 8 * 36);
    // Jx ≠ Jy: order 4 times 36.
    let l = square(0.5).supercell([6, 6, 1]).unwrap();
    assert_eq!(point_group(&l).len(), 4 * 36);
}

#[test]
fn rotations_from_bond_images_are_the_candidates_that_keep_the_bonds() {
    // The fast search (images of d independent bond vectors) against the test of every
    // candidate rotation, on one-site lattices in one, two and three dimensions, with
    // equal and unequal couplings and second neighbours (the sets must be equal).
    let one_site = |d: usize, bonds: &[([i32; 3], f64)]| {
        let b: Vec<(usize, usize, [i32; 3], f64)> =
            bonds.iter().map(|&(c, j)| (0, 0, c, j)).collect();
        lattice(d, 1, &b, &[])
    };
    let cases = [
        one_site(1, &[([1, 0, 0], 1.0), ([2, 0, 0], -0.5)]),
        one_site(2, &[([1, 0, 0], 1.0), ([0, 1, 0], 1.0)]),
        one_site(2, &[([1, 0, 0], 1.0), ([0, 1, 0], 0.5)]),
        one_site(2, &[([1, 0, 0], 1.0), ([0, 1, 0], 1.0), ([1, 1, 0], -0.3)]),
        // Triangular: a1, a2 and a1 − a2.
        one_site(2, &[([1, 0, 0], 1.0), ([0, 1, 0], 1.0), ([1, -1, 0], 1.0)]),
        one_site(3, &[([1, 0, 0], 1.0), ([0, 1, 0], 1.0), ([0, 0, 1], 1.0)]),
        one_site(3, &[([1, 0, 0], 1.0), ([0, 1, 0], 1.0), ([0, 0, 1], 0.7)]),
        // Face-centred cubic on its primitive cell: the twelve neighbours.
        one_site(
            3,
            &[
                ([1, 0, 0], 1.0),
                ([0, 1, 0], 1.0),
                ([0, 0, 1], 1.0),
                ([1, -1, 0], 1.0),
                ([0, 1, -1], 1.0),
                ([1, 0, -1], 1.0),
            ],
        ),
    ];
    for l in &cases {
        let d = l.dimension();
        let vectors = bond_vectors(l);
        // In one dimension the two candidates are fewer than the trials: no fast path.
        let Some(fast) = rotations_from_bonds(d, &vectors) else {
            assert_eq!(d, 1);
            continue;
        };
        let mut fast: Vec<[[i32; 3]; 3]> = fast
            .into_iter()
            .filter(|r| keeps_bond_vectors(r, &vectors))
            .collect();
        let mut all: Vec<[[i32; 3]; 3]> = candidate_rotations(d)
            .iter()
            .copied()
            .filter(|r| keeps_bond_vectors(r, &vectors))
            .collect();
        fast.sort_unstable();
        all.sort_unstable();
        assert!(!all.is_empty());
        assert_eq!(fast, all, "dimension {d}, bonds {vectors:?}");
    }
}

//! The compact level against the listed one (`Level::build` + `variable_orbits`).

use std::collections::HashMap;

use super::*;
use crate::testutil::lattice;

fn square() -> Lattice {
    let block = |n: i32| -> Vec<(usize, Cell)> {
        (0..n * n).map(|k| (0usize, [k % n, k / n, 0])).collect()
    };
    lattice(
        2,
        1,
        &[(0, 0, [1, 0, 0], 1.0), (0, 0, [0, 1, 0], 1.0)],
        &[
            ("plaquette", vec![block(2)]),
            ("block3", vec![block(3)]),
            ("block4", vec![block(4)]),
            ("block5", vec![block(5)]),
        ],
    )
}

fn honeycomb() -> Lattice {
    // Two sites per cell, hexagon of six sites.
    lattice(
        2,
        2,
        &[
            (0, 1, [0, 0, 0], 1.0),
            (1, 0, [1, 0, 0], 1.0),
            (1, 0, [0, 1, 0], 1.0),
        ],
        &[(
            "hexagon",
            vec![vec![
                (0, [0, 0, 0]),
                (1, [0, 0, 0]),
                (0, [1, 0, 0]),
                (1, [0, 1, 0]),
                (0, [1, 1, 0]),
                (1, [1, 1, 0]),
            ]],
        )],
    )
}

fn simple_cubic() -> Lattice {
    let cube: Vec<(usize, Cell)> = (0..8)
        .map(|k| (0usize, [k & 1, (k >> 1) & 1, (k >> 2) & 1]))
        .collect();
    lattice(
        3,
        1,
        &[
            (0, 0, [1, 0, 0], 1.0),
            (0, 0, [0, 1, 0], 1.0),
            (0, 0, [0, 0, 1], 1.0),
        ],
        &[("cube", vec![cube])],
    )
}

/// The orbit partition of the compact level equals the listed one: a bijection of ids
/// under which every region table, site and bond agrees.
fn agrees(l: &Lattice, name: &str) {
    let level = Level::build(l, name).unwrap();
    let ops = symmetry::level_group(&level, &symmetry::point_group(l));
    let orbit_of = symmetry::variable_orbits(&level, &ops);
    let listed = level.reduced(&orbit_of);
    let compact = CompactLevel::build(l, name).unwrap();
    assert_eq!(compact.len(), listed.variables.len(), "{name}: orbit count");
    assert_eq!(
        compact.translation_classes(),
        level.variables.len(),
        "{name}: translation classes"
    );
    let mut map: HashMap<u32, u32> = HashMap::new();
    let mut same = |c: u32, d: u32| {
        let e = *map.entry(c).or_insert(d);
        assert_eq!(e, d, "{name}: orbit {c} maps to two listed orbits");
    };
    let active: Vec<_> = listed.active_regions().collect();
    assert_eq!(active.len(), compact.regions.len(), "{name}: regions");
    for (r, c) in active.iter().zip(&compact.regions) {
        assert_eq!(r.cluster, c.cluster);
        assert_eq!(r.coefficient, c.coefficient);
        for (&v, &w) in c.vars.iter().zip(&r.subset_vars).skip(1) {
            same(v, w);
        }
    }
    for (&v, &w) in compact.site_vars.iter().zip(&listed.site_vars) {
        same(v as u32, w as u32);
    }
    for (b, c) in compact.bond_terms.iter().zip(&listed.bond_terms) {
        match (*b, *c) {
            (BondTerm::Correlated { var: v, .. }, BondTerm::Correlated { var: w, .. }) => {
                same(v as u32, w as u32)
            }
            (BondTerm::Factorised { .. }, BondTerm::Factorised { .. }) => {}
            _ => panic!("{name}: bond terms differ: {b:?} vs {c:?}"),
        }
    }
    for (k, &s) in compact.orbit_sites.iter().enumerate() {
        let w = map[&(k as u32)] as usize;
        assert_eq!(s as usize, listed.variables[w].len());
    }
}

#[test]
fn compact_orbits_match_the_listed_level() {
    let sq = square();
    for name in ["pair", "plaquette", "block3", "block4"] {
        agrees(&sq, name);
    }
    agrees(&honeycomb(), "hexagon");
    agrees(&simple_cubic(), "cube");
}

#[test]
fn square_block4_counts() {
    // 4×4 block: 2^16 − 2·2^12 + 2^9 = 57,856 translation classes of subsets (those
    // touching the box's lowest row and column, inclusion–exclusion; common practice),
    // 7,625 orbits under the eight operations of the square.
    let c = CompactLevel::build(&square(), "block4").unwrap();
    assert_eq!(c.group_order, 8);
    assert_eq!(c.translation_classes(), 57_856);
    assert_eq!(c.len(), 7_625);
}

/// 2^25 masks: a few seconds in release.
#[test]
#[ignore]
fn square_block5_counts() {
    // 2^25 − 2·2^20 + 2^16 translation classes (inclusion–exclusion as above).
    let c = CompactLevel::build(&square(), "block5").unwrap();
    assert_eq!(c.translation_classes(), 31_522_816);
    assert_eq!(c.regions.len(), 4);
    assert!(Level::build(&square(), "block5").is_err());
}

//! Recognising, from the structure of a lattice (never its name), which closed form
//! applies.
//!
//! Only the bond graph matters for the Ising model, so each test is on the translation
//! structure of the bonds (zero couplings ignored):
//!
//! * **chain**: 1D, one site per cell, one bond with a nonzero offset;
//! * **square**: 2D, one site per cell, two bonds with linearly independent offsets
//!   (couplings may differ: anisotropic);
//! * **triangular**: 2D, one site per cell, three bonds with pairwise independent offsets
//!   `v₁, v₂, v₃` with `v₃ = ±v₁ ± v₂`, ferromagnetic couplings (equal: the full
//!   closed form; unequal: the anisotropic critical condition);
//! * **honeycomb**: 2D, two sites per cell, three bonds all joining the two sublattices
//!   at distinct offsets whose differences span the plane (equal couplings: the full
//!   closed form; unequal, of any signs: the anisotropic critical condition);
//! * **kagome**: 2D, three sites per cell, six bonds, two between each pair of
//!   sublattices and none within one, splitting into two closed triangles (offsets summing
//!   to zero around each) whose relative shifts span the plane, equal ferromagnetic
//!   couplings.
//!
//! Offsets whose lattice has index > 1 (e.g. a square lattice drawn with bonds (1,1) and
//! (1,−1)) describe disjoint copies of the same graph, which have the same per-site
//! thermodynamics, so they are accepted.

use rungs_lattice::{Bond, Lattice};

use super::form::ClosedForm;

fn det(a: [i32; 3], b: [i32; 3]) -> i64 {
    a[0] as i64 * b[1] as i64 - a[1] as i64 * b[0] as i64
}

fn add(a: [i32; 3], b: [i32; 3]) -> [i32; 3] {
    [a[0] + b[0], a[1] + b[1], a[2] + b[2]]
}

fn sub(a: [i32; 3], b: [i32; 3]) -> [i32; 3] {
    [a[0] - b[0], a[1] - b[1], a[2] - b[2]]
}

fn neg(a: [i32; 3]) -> [i32; 3] {
    [-a[0], -a[1], -a[2]]
}

fn all_equal(js: &[f64]) -> Option<f64> {
    let j0 = *js.first()?;
    js.iter()
        .all(|&j| (j - j0).abs() <= 1e-12 * j0.abs())
        .then_some(j0)
}

/// Which closed form describes `lattice`, judged by its bond structure (module docs).
pub fn recognise(lattice: &Lattice) -> Option<ClosedForm> {
    recognise_bonds(
        lattice.dimension(),
        lattice.sites_per_cell(),
        lattice.bonds(),
    )
}

/// The structural test of [`recognise`] on a bare description: spatial dimension, basis
/// size and the bond list (each bond once).
pub fn recognise_bonds(
    dimension: usize,
    sites_per_cell: usize,
    bonds: &[Bond],
) -> Option<ClosedForm> {
    let bonds: Vec<&Bond> = bonds
        .iter()
        .filter(|b| b.j != 0.0 && b.j.is_finite())
        .collect();
    let js: Vec<f64> = bonds.iter().map(|b| b.j).collect();
    match (dimension, sites_per_cell, bonds.len()) {
        (1, 1, 1) => (bonds[0].cell[0] != 0).then(|| ClosedForm::Chain { j: bonds[0].j }),
        (2, 1, 2) => (det(bonds[0].cell, bonds[1].cell) != 0).then(|| ClosedForm::Square {
            j1: js[0],
            j2: js[1],
        }),
        (2, 1, 3) => {
            if js.iter().any(|&j| j <= 0.0) {
                return None;
            }
            let (v1, v2, v3) = (bonds[0].cell, bonds[1].cell, bonds[2].cell);
            let independent = det(v1, v2) != 0 && det(v1, v3) != 0 && det(v2, v3) != 0;
            let closes = [add(v1, v2), sub(v1, v2)]
                .iter()
                .any(|&s| s == v3 || neg(s) == v3);
            if !(independent && closes) {
                return None;
            }
            Some(match all_equal(&js) {
                Some(j) => ClosedForm::Triangular { j },
                None => ClosedForm::TriangularAnisotropic {
                    j: [js[0], js[1], js[2]],
                },
            })
        }
        (2, 2, 3) => {
            if bonds.iter().any(|b| b.from == b.to) {
                return None;
            }
            // Offset of the site-1 end relative to the site-0 end.
            let d: Vec<[i32; 3]> = bonds
                .iter()
                .map(|b| if b.from == 0 { b.cell } else { neg(b.cell) })
                .collect();
            if det(sub(d[1], d[0]), sub(d[2], d[0])) == 0 {
                return None;
            }
            Some(match all_equal(&js) {
                Some(j) => ClosedForm::Honeycomb { j },
                None => ClosedForm::HoneycombAnisotropic {
                    j: [js[0], js[1], js[2]],
                },
            })
        }
        (2, 3, 6) => {
            let j = all_equal(&js).filter(|&j| j > 0.0)?;
            kagome_structure(&bonds).then_some(ClosedForm::Kagome { j })
        }
        _ => None,
    }
}

/// Kagome test: two bonds for each sublattice pair (0,1), (1,2), (2,0), splitting into an
/// "up" and a "down" triangle that each close, with independent relative shifts.
fn kagome_structure(bonds: &[&Bond]) -> bool {
    // Oriented offsets for the pairs 0→1, 1→2, 2→0.
    let mut pairs: [Vec<[i32; 3]>; 3] = [vec![], vec![], vec![]];
    for b in bonds {
        let (slot, off) = match (b.from, b.to) {
            (0, 1) => (0, b.cell),
            (1, 0) => (0, neg(b.cell)),
            (1, 2) => (1, b.cell),
            (2, 1) => (1, neg(b.cell)),
            (2, 0) => (2, b.cell),
            (0, 2) => (2, neg(b.cell)),
            _ => return false,
        };
        pairs[slot].push(off);
    }
    if pairs.iter().any(|p| p.len() != 2) {
        return false;
    }
    for choice in 0..8u32 {
        let pick = |slot: usize, up: bool| {
            let bit = (choice >> slot) & 1 == 1;
            pairs[slot][usize::from(bit == up)]
        };
        let up = add(add(pick(0, true), pick(1, true)), pick(2, true));
        let down = add(add(pick(0, false), pick(1, false)), pick(2, false));
        if up == [0, 0, 0] && down == [0, 0, 0] {
            let d01 = sub(pick(0, false), pick(0, true));
            let d12 = sub(pick(1, false), pick(1, true));
            if det(d01, d12) != 0 {
                return true;
            }
        }
    }
    false
}

#[cfg(test)]
mod tests {
    use super::*;

    fn bond(from: usize, to: usize, c: [i32; 2], j: f64) -> Bond {
        Bond {
            from,
            to,
            cell: [c[0], c[1], 0],
            coupling: "J".into(),
            j,
        }
    }

    #[test]
    fn recognises_square_isotropic_and_anisotropic() {
        let b = [bond(0, 0, [1, 0], 1.0), bond(0, 0, [0, 1], 1.0)];
        assert_eq!(
            recognise_bonds(2, 1, &b),
            Some(ClosedForm::Square { j1: 1.0, j2: 1.0 })
        );
        let b = [bond(0, 0, [1, 1], 1.0), bond(0, 0, [1, -1], 0.5)];
        assert_eq!(
            recognise_bonds(2, 1, &b),
            Some(ClosedForm::Square { j1: 1.0, j2: 0.5 })
        );
        let b = [bond(0, 0, [1, 0], 1.0), bond(0, 0, [2, 0], 1.0)];
        assert_eq!(
            recognise_bonds(2, 1, &b),
            None,
            "collinear bonds: a chain with nnn, not square"
        );
    }

    #[test]
    fn recognises_triangular() {
        let b = [
            bond(0, 0, [1, 0], 1.0),
            bond(0, 0, [0, 1], 1.0),
            bond(0, 0, [1, -1], 1.0),
        ];
        assert_eq!(
            recognise_bonds(2, 1, &b),
            Some(ClosedForm::Triangular { j: 1.0 })
        );
        let b = [
            bond(0, 0, [1, 0], 1.0),
            bond(0, 0, [0, 1], 1.0),
            bond(0, 0, [1, 1], 1.0),
        ];
        assert_eq!(
            recognise_bonds(2, 1, &b),
            Some(ClosedForm::Triangular { j: 1.0 })
        );
        let b = [
            bond(0, 0, [1, 0], 1.0),
            bond(0, 0, [0, 1], 1.0),
            bond(0, 0, [2, 1], 1.0),
        ];
        assert_eq!(recognise_bonds(2, 1, &b), None);
        let b = [
            bond(0, 0, [1, 0], 1.0),
            bond(0, 0, [0, 1], 1.0),
            bond(0, 0, [1, 1], 0.5),
        ];
        assert_eq!(
            recognise_bonds(2, 1, &b),
            Some(ClosedForm::TriangularAnisotropic { j: [1.0, 1.0, 0.5] }),
            "unequal couplings: Houtappel's anisotropic condition"
        );
        let b = [
            bond(0, 0, [1, 0], 1.0),
            bond(0, 0, [0, 1], 1.0),
            bond(0, 0, [1, 1], -0.5),
        ];
        assert_eq!(
            recognise_bonds(2, 1, &b),
            None,
            "a frustrating bond: no closed form here"
        );
    }

    #[test]
    fn recognises_anisotropic_honeycomb_of_any_signs() {
        let b = [
            bond(0, 1, [0, 0], 1.0),
            bond(0, 1, [-1, 0], 0.5),
            bond(0, 1, [0, -1], -0.25),
        ];
        let form = recognise_bonds(2, 2, &b).unwrap();
        assert_eq!(
            form,
            ClosedForm::HoneycombAnisotropic {
                j: [1.0, 0.5, -0.25]
            }
        );
        assert!(form.tc().is_some_and(|t| t > 0.0));
        assert_eq!(form.free_energy(1.0, 0.0), None);
    }

    #[test]
    fn recognises_honeycomb_and_brick_wall() {
        let b = [
            bond(0, 1, [0, 0], 1.0),
            bond(1, 0, [1, 0], 1.0),
            bond(1, 0, [0, 1], 1.0),
        ];
        assert_eq!(
            recognise_bonds(2, 2, &b),
            Some(ClosedForm::Honeycomb { j: 1.0 })
        );
        let b = [
            bond(0, 1, [0, 0], 1.0),
            bond(0, 1, [-1, 0], 1.0),
            bond(0, 1, [0, -1], 1.0),
        ];
        assert_eq!(
            recognise_bonds(2, 2, &b),
            Some(ClosedForm::Honeycomb { j: 1.0 })
        );
        let b = [
            bond(0, 1, [0, 0], 1.0),
            bond(0, 1, [1, 0], 1.0),
            bond(0, 1, [2, 0], 1.0),
        ];
        assert_eq!(
            recognise_bonds(2, 2, &b),
            None,
            "a ladder-like strip, not a honeycomb"
        );
    }

    #[test]
    fn recognises_kagome() {
        // Up triangle inside the cell, down triangle across cells.
        let b = [
            bond(0, 1, [0, 0], 1.0),
            bond(1, 2, [0, 0], 1.0),
            bond(2, 0, [0, 0], 1.0),
            bond(0, 1, [-1, 0], 1.0),
            bond(1, 2, [1, -1], 1.0),
            bond(2, 0, [0, 1], 1.0),
        ];
        assert_eq!(
            recognise_bonds(2, 3, &b),
            Some(ClosedForm::Kagome { j: 1.0 })
        );
        let mut bad = b.clone();
        bad[5] = bond(2, 0, [0, 2], 1.0);
        assert_eq!(recognise_bonds(2, 3, &bad), None);
    }

    #[test]
    fn recognises_chain_and_rejects_others() {
        let b = [Bond {
            from: 0,
            to: 0,
            cell: [1, 0, 0],
            coupling: "J".into(),
            j: -0.7,
        }];
        assert_eq!(
            recognise_bonds(1, 1, &b),
            Some(ClosedForm::Chain { j: -0.7 })
        );
        let b = [
            bond(0, 0, [1, 0], 1.0),
            bond(0, 0, [0, 1], 1.0),
            bond(0, 0, [1, 1], 1.0),
        ];
        assert_eq!(recognise_bonds(3, 1, &b), None);
    }
}

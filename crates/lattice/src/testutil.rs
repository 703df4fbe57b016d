//! Lattices built in code for the crate's unit tests (no loader involved).

use crate::model::{Bond, Cell, Lattice, LevelSpec, Site};

/// One cluster shape: (basis site, cell offset) per site.
pub(crate) type Shape = Vec<(usize, Cell)>;

/// A lattice with unit vectors along the first `dim` axes, `nb` basis sites at the
/// origin, bonds `(from, to, cell, J)` and named levels.
pub(crate) fn lattice(
    dim: usize,
    nb: usize,
    bonds: &[(usize, usize, Cell, f64)],
    levels: &[(&str, Vec<Shape>)],
) -> Lattice {
    let mut vectors = vec![[0.0; 3]; dim];
    for (k, v) in vectors.iter_mut().enumerate() {
        v[k] = 1.0;
    }
    Lattice {
        name: "test".into(),
        description: None,
        dimension: dim,
        vectors,
        basis: (0..nb)
            .map(|a| Site {
                name: format!("s{a}"),
                position: [0.0; 3],
            })
            .collect(),
        couplings: vec![("J".into(), 1.0)],
        field: 0.0,
        bonds: bonds
            .iter()
            .map(|&(from, to, cell, j)| Bond {
                from,
                to,
                cell,
                coupling: "J".into(),
                j,
            })
            .collect(),
        levels: levels
            .iter()
            .map(|(n, s)| LevelSpec {
                name: n.to_string(),
                shapes: s.clone(),
            })
            .collect(),
        reference: None,
        phases: Vec::new(),
    }
}

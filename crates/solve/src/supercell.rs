//! States of a lattice seen on an enlarged cell ([`rungs_lattice::Lattice::supercell`]):
//! which primitive variable each supercell variable is, so that a translation-invariant
//! state of the primitive level can be written on the supercell level (the disordered
//! start of an ordered branch) and a supercell state read back site by site.

use std::collections::HashMap;

use rungs_lattice::{Cell, Cluster, Level};

/// The primitive site `(basis, cell)` of supercell site `(idx, big cell)` for a supercell
/// of `n` primitive cells along each axis over a primitive basis of `nb` sites (the
/// numbering of `Lattice::supercell`: `idx = a + nb (i + n0 (j + n1 k))`).
pub fn primitive_site(idx: usize, big: Cell, nb: usize, n: [usize; 3]) -> (usize, Cell) {
    let a = idx % nb;
    let mut sub = idx / nb;
    let i = sub % n[0];
    sub /= n[0];
    let j = sub % n[1];
    let k = sub / n[1];
    let ni = [n[0] as i32, n[1] as i32, n[2] as i32];
    (
        a,
        [
            i as i32 + ni[0] * big[0],
            j as i32 + ni[1] * big[1],
            k as i32 + ni[2] * big[2],
        ],
    )
}

/// For every variable of `sc` (a level of the `n`-fold supercell of the lattice of
/// `prim`), the primitive variable it is a translate of; `None` if some supercell
/// variable has no primitive counterpart (the levels do not correspond).
pub fn variable_map(prim: &Level, sc: &Level, n: [usize; 3]) -> Option<Vec<usize>> {
    let nb = prim.sites_per_cell;
    let index: HashMap<&Cluster, usize> = prim
        .variables
        .iter()
        .enumerate()
        .map(|(i, c)| (c, i))
        .collect();
    sc.variables
        .iter()
        .map(|c| {
            let prim_cluster =
                Cluster::canonical(c.sites().map(|(idx, big)| primitive_site(idx, big, nb, n)));
            index.get(&prim_cluster).copied()
        })
        .collect()
}

/// The translation-invariant primitive values `x` written on the supercell variables.
pub fn expand(x: &[f64], map: &[usize]) -> Vec<f64> {
    map.iter().map(|&v| x[v]).collect()
}

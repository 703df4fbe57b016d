//! Point-group symmetries of a lattice, and the orbits they make of a level's
//! correlation variables.
//!
//! A symmetry is an affine map of sites `(a, n) ↦ (π(a), R n + t_a)` (R an integer
//! matrix with det ±1 acting on cell offsets, π a permutation of the basis) that maps
//! every bond onto a bond with the same coupling. Such maps, found by a backtracking
//! search over R with entries in {−1, 0, 1}, include rotations, reflections and
//! inversions and, on a supercell, the primitive translations that permute its basis.
//! The free energy is invariant under them, so a state that shares the symmetry
//! (the paramagnet at h = 0, uniform order) can be solved on orbit variables only.

use std::collections::BTreeSet;

use crate::cluster::Cluster;
use crate::level::Level;
use crate::model::{Cell, Lattice};

/// One symmetry operation: `(a, n) ↦ (perm[a], rot · n + shift[a])`.
#[derive(Debug, Clone, PartialEq, Eq, Hash)]
pub struct SiteMap {
    /// Integer matrix acting on cell offsets (rows: output components).
    pub rot: [[i32; 3]; 3],
    /// Image of each basis site.
    pub perm: Vec<usize>,
    /// Cell offset added for each basis site.
    pub shift: Vec<Cell>,
}

impl SiteMap {
    /// The image of site `(a, c)`.
    pub fn apply(&self, a: usize, c: Cell) -> (usize, Cell) {
        let r = &self.rot;
        let mut out = self.shift[a];
        for (i, o) in out.iter_mut().enumerate() {
            *o += r[i][0] * c[0] + r[i][1] * c[1] + r[i][2] * c[2];
        }
        (self.perm[a], out)
    }

    /// The image of a cluster, canonicalised.
    pub fn image(&self, cluster: &Cluster) -> Cluster {
        Cluster::canonical(cluster.sites().map(|(a, c)| self.apply(a, c)))
    }

    /// The image of a cluster written into `buf` as the canonical form's
    /// [`Cluster::key`], and the cell `t` its first site lies in before the translation
    /// to cell 0 (`op(cluster) = canonical + t`). No allocation once `buf` has grown: the
    /// symmetry analysis of a level maps every orbit's variable under every operation.
    pub fn image_into(&self, cluster: &Cluster, buf: &mut Vec<(Cell, usize)>) -> Cell {
        buf.clear();
        buf.extend(cluster.sites().map(|(a, c)| {
            let (b, d) = self.apply(a, c);
            (d, b)
        }));
        buf.sort_unstable();
        let t = buf.first().map_or([0; 3], |s| s.0);
        for s in buf.iter_mut() {
            s.0 = [s.0[0] - t[0], s.0[1] - t[1], s.0[2] - t[2]];
        }
        t
    }
}

fn det3(m: &[[i32; 3]; 3]) -> i32 {
    m[0][0] * (m[1][1] * m[2][2] - m[1][2] * m[2][1])
        - m[0][1] * (m[1][0] * m[2][2] - m[1][2] * m[2][0])
        + m[0][2] * (m[1][0] * m[2][1] - m[1][1] * m[2][0])
}

/// A found operation as (permutation, shifts, rotation), ordered for deduplication.
type FoundOp = (Vec<usize>, Vec<Cell>, [[i32; 3]; 3]);

/// For each basis site after the first: the earlier site it is reached from by a bond,
/// the bond's cell offset and its coupling bits.
type Parents = [Option<(usize, Cell, u64)>];

/// Every candidate R: entries in {−1, 0, 1} on the lattice's dimensions, identity on the
/// unused ones, det ±1. The list depends on the dimension only: built once per process
/// (3⁹ matrices in three dimensions, a tenth of a millisecond that every Tc search paid).
fn candidate_rotations(d: usize) -> &'static [[[i32; 3]; 3]] {
    static BUILT: [std::sync::OnceLock<Vec<[[i32; 3]; 3]>>; 4] =
        [const { std::sync::OnceLock::new() }; 4];
    BUILT[d.min(3)].get_or_init(|| unimodular(d.min(3)))
}

fn unimodular(d: usize) -> Vec<[[i32; 3]; 3]> {
    let cells = d * d;
    let mut out = Vec::new();
    for code in 0..3usize.pow(cells as u32) {
        let mut m = [[0i32; 3]; 3];
        for (k, row) in m.iter_mut().enumerate().skip(d) {
            row[k] = 1;
        }
        let mut c = code;
        for row in m.iter_mut().take(d) {
            for entry in row.iter_mut().take(d) {
                *entry = (c % 3) as i32 - 1;
                c /= 3;
            }
        }
        if det3(&m).abs() == 1 {
            out.push(m);
        }
    }
    out
}

/// Every bond's cell offset, both ways, with its coupling's bits: sorted, no repeats.
fn bond_vectors(lattice: &Lattice) -> Vec<(Cell, u64)> {
    let mut vectors: Vec<(Cell, u64)> = lattice
        .bonds()
        .iter()
        .flat_map(|b| {
            let j = b.j.to_bits();
            [(b.cell, j), ([-b.cell[0], -b.cell[1], -b.cell[2]], j)]
        })
        .collect();
    vectors.sort_unstable();
    vectors.dedup();
    vectors
}

/// Whether `rot` maps every one of `vectors` (see [`bond_vectors`]) onto one of them.
fn keeps_bond_vectors(rot: &[[i32; 3]; 3], vectors: &[(Cell, u64)]) -> bool {
    vectors.iter().all(|&(c, j)| {
        let rc = [0, 1, 2].map(|i| rot[i][0] * c[0] + rot[i][1] * c[1] + rot[i][2] * c[2]);
        vectors.binary_search(&(rc, j)).is_ok()
    })
}

/// The candidate rotations (entries in {−1, 0, 1}, |det| = 1, identity on unused
/// dimensions; see [`candidate_rotations`]) that map `d` linearly independent bond
/// vectors of `vectors` (sorted (cell offset, coupling) pairs) onto bond vectors of the
/// same couplings: `R = T B⁻¹ = T adj(B) / det B` for the chosen vectors B and each choice
/// of images T. Every candidate that keeps the bonds is among them (it maps B to some T);
/// the caller still checks all bonds. `None` where the bond vectors do not span the
/// space or the trials would outnumber the candidates.
fn rotations_from_bonds(d: usize, vectors: &[(Cell, u64)]) -> Option<Vec<[[i32; 3]; 3]>> {
    if d == 0 {
        return None;
    }
    // d independent bond vectors, greedily: the columns of B.
    let mut basis: Vec<(Cell, u64)> = Vec::new();
    for &v in vectors {
        let mut cells: Vec<Cell> = basis.iter().map(|b| b.0).collect();
        cells.push(v.0);
        if independent(&cells) {
            basis.push(v);
            if basis.len() == d {
                break;
            }
        }
    }
    if basis.len() < d {
        return None;
    }
    let trials = vectors.len().checked_pow(d as u32)?;
    if trials >= candidate_rotations(d).len() {
        return None;
    }
    let b = with_columns(basis.iter().map(|v| v.0), d);
    let det = det3(&b);
    let adj = adjugate3(&b);
    let mut out = Vec::new();
    let mut choice = vec![0usize; d];
    'trials: loop {
        // T: the images of B's columns, each a bond vector of the same coupling.
        if choice
            .iter()
            .zip(&basis)
            .all(|(&ci, v)| vectors[ci].1 == v.1)
        {
            let t = with_columns(choice.iter().map(|&ci| vectors[ci].0), d);
            let mut r = [[0i32; 3]; 3];
            let mut integral = true;
            for (i, row) in r.iter_mut().enumerate() {
                for (k, e) in row.iter_mut().enumerate() {
                    let num: i32 = (0..3).map(|m| t[i][m] * adj[m][k]).sum();
                    integral &= num % det == 0;
                    *e = num / det;
                }
            }
            let unit = r.iter().flatten().all(|e| (-1..=1).contains(e));
            if integral && unit && det3(&r).abs() == 1 {
                out.push(r);
            }
        }
        // The next choice (odometer).
        for slot in choice.iter_mut() {
            *slot += 1;
            if *slot < vectors.len() {
                continue 'trials;
            }
            *slot = 0;
        }
        break;
    }
    Some(out)
}

/// The matrix with `columns` (cell offsets) as its first columns on the first `d` rows,
/// identity on the unused dimensions.
fn with_columns(columns: impl Iterator<Item = Cell>, d: usize) -> [[i32; 3]; 3] {
    let mut m = [[0i32; 3]; 3];
    for (k, row) in m.iter_mut().enumerate().skip(d) {
        row[k] = 1;
    }
    for (col, c) in columns.enumerate() {
        for (row, r) in m.iter_mut().enumerate().take(d) {
            r[col] = c[row];
        }
    }
    m
}

/// Whether one, two or three integer vectors are linearly independent: non-zero, a
/// non-zero cross product, a non-zero determinant.
fn independent(cells: &[Cell]) -> bool {
    let cross = |a: &Cell, b: &Cell| {
        [
            a[1] * b[2] - a[2] * b[1],
            a[2] * b[0] - a[0] * b[2],
            a[0] * b[1] - a[1] * b[0],
        ]
    };
    match cells {
        [a] => *a != [0; 3],
        [a, b] => cross(a, b) != [0; 3],
        [a, b, c] => {
            let n = cross(a, b);
            n[0] * c[0] + n[1] * c[1] + n[2] * c[2] != 0
        }
        _ => false,
    }
}

/// The adjugate of a 3 × 3 integer matrix (`m · adj m = det m · I`).
fn adjugate3(m: &[[i32; 3]; 3]) -> [[i32; 3]; 3] {
    let c =
        |r0: usize, r1: usize, c0: usize, c1: usize| m[r0][c0] * m[r1][c1] - m[r0][c1] * m[r1][c0];
    [
        [c(1, 2, 1, 2), -c(0, 2, 1, 2), c(0, 1, 1, 2)],
        [-c(1, 2, 0, 2), c(0, 2, 0, 2), -c(0, 1, 0, 2)],
        [c(1, 2, 0, 1), -c(0, 2, 0, 1), c(0, 1, 0, 1)],
    ]
}

/// Bonds as canonical two-site clusters with their coupling (bit pattern, so equal
/// couplings compare equal).
fn bond_table(lattice: &Lattice) -> foldhash::HashMap<Cluster, u64> {
    lattice
        .bonds()
        .iter()
        .map(|b| {
            (
                Cluster::canonical([(b.from, [0; 3]), (b.to, b.cell)]),
                b.j.to_bits(),
            )
        })
        .collect()
}

/// All symmetry operations of `lattice` (the identity first). Lattices whose basis is
/// not connected through bonds get the identity only.
pub fn point_group(lattice: &Lattice) -> Vec<SiteMap> {
    let nb = lattice.sites_per_cell();
    let identity = SiteMap {
        rot: [[1, 0, 0], [0, 1, 0], [0, 0, 1]],
        perm: (0..nb).collect(),
        shift: vec![[0; 3]; nb],
    };
    // BFS order of the basis: each later site reached from an earlier one by a bond.
    let mut parent: Vec<Option<(usize, Cell, u64)>> = vec![None; nb];
    let mut order = vec![0usize];
    let mut seen = vec![false; nb];
    seen[0] = true;
    let mut k = 0;
    while k < order.len() {
        let p = order[k];
        for (b, c, j) in lattice.neighbours(p) {
            if !seen[b] {
                seen[b] = true;
                parent[b] = Some((p, c, j.to_bits()));
                order.push(b);
            }
        }
        k += 1;
    }
    if order.len() < nb {
        return vec![identity];
    }
    let bonds = bond_table(lattice);
    let neighbours: Vec<Vec<(usize, Cell, u64)>> = (0..nb)
        .map(|a| {
            lattice
                .neighbours(a)
                .into_iter()
                .map(|(b, c, j)| (b, c, j.to_bits()))
                .collect()
        })
        .collect();
    let mut found: BTreeSet<FoundOp> = BTreeSet::new();
    // One site per cell: R must map every bond vector onto a bond vector with the same
    // coupling, a test that discards almost every candidate before any search; the
    // candidates are found from the images of d independent bond vectors (|bonds|^d
    // trials, 216 on the simple cubic lattice) rather than by testing all 3,480, where
    // that is fewer.
    let vectors = bond_vectors(lattice);
    let keeps_bonds = |rot: &[[i32; 3]; 3]| nb > 1 || keeps_bond_vectors(rot, &vectors);
    let d = lattice.dimension();
    let from_bonds = (nb == 1)
        .then(|| rotations_from_bonds(d, &vectors))
        .flatten();
    let rotations: Vec<[[i32; 3]; 3]> = match from_bonds {
        Some(r) => r,
        None => candidate_rotations(d).to_vec(),
    };
    for &rot in rotations.iter().filter(|r| keeps_bonds(r)) {
        for first in 0..nb {
            let mut map = SiteMap {
                rot,
                perm: vec![usize::MAX; nb],
                shift: vec![[0; 3]; nb],
            };
            map.perm[0] = first;
            search(
                1,
                &order,
                &parent,
                &neighbours,
                &bonds,
                &mut map,
                &mut found,
            );
        }
    }
    let mut ops = vec![identity.clone()];
    for (perm, shift, rot) in found {
        let op = SiteMap { rot, perm, shift };
        if op != identity {
            ops.push(op);
        }
    }
    ops
}

fn search(
    k: usize,
    order: &[usize],
    parent: &Parents,
    neighbours: &[Vec<(usize, Cell, u64)>],
    bonds: &foldhash::HashMap<Cluster, u64>,
    map: &mut SiteMap,
    found: &mut BTreeSet<FoundOp>,
) {
    if k == order.len() {
        // Every bond must land on a bond with the same coupling.
        let ok = bonds
            .iter()
            .all(|(cl, j)| bonds.get(&map.image(cl)) == Some(j));
        if ok {
            found.insert((map.perm.clone(), map.shift.clone(), map.rot));
        }
        return;
    }
    let a = order[k];
    let Some((p, c, j)) = parent[a] else { return };
    // (a, c) is a neighbour of (p, 0): its image must be a neighbour of p's image.
    let (pi, pc) = (map.perm[p], map.shift[p]);
    let mut rc = [0i32; 3];
    for (i, r) in rc.iter_mut().enumerate() {
        *r = map.rot[i][0] * c[0] + map.rot[i][1] * c[1] + map.rot[i][2] * c[2];
    }
    for &(b, cb, jb) in &neighbours[pi] {
        if jb != j || map.perm.contains(&b) {
            continue;
        }
        map.perm[a] = b;
        map.shift[a] = [
            pc[0] + cb[0] - rc[0],
            pc[1] + cb[1] - rc[1],
            pc[2] + cb[2] - rc[2],
        ];
        // Prune now: every bond from `a` to an already placed site must land on a bond
        // with the same coupling. Without this the search only fails at the leaves, which
        // is exponential in the basis (a 6×6 supercell took minutes).
        let consistent = neighbours[a].iter().all(|&(n, cn, jn)| {
            map.perm[n] == usize::MAX
                || bonds.get(&map.image(&Cluster::canonical([(a, [0; 3]), (n, cn)]))) == Some(&jn)
        });
        if consistent {
            search(k + 1, order, parent, neighbours, bonds, map, found);
        }
        map.perm[a] = usize::MAX;
    }
}

/// The operations of `ops` that map the level's set of maximal clusters onto itself.
pub fn level_group(level: &Level, ops: &[SiteMap]) -> Vec<SiteMap> {
    group_of(&level.maximal, ops)
}

/// The operations of `ops` that map the set of `maximal` clusters onto itself.
pub fn group_of(maximal: &[Cluster], ops: &[SiteMap]) -> Vec<SiteMap> {
    let set: BTreeSet<&Cluster> = maximal.iter().collect();
    ops.iter()
        .filter(|op| maximal.iter().all(|m| set.contains(&op.image(m))))
        .cloned()
        .collect()
}

/// Whether `ops` is closed under composition (a group, as maps of sites). Each product
/// `a ∘ b` is compared in place with the operations of its rotation (without building
/// it: |ops|² products are tested at every Tc search).
fn is_group(ops: &[SiteMap]) -> bool {
    // Keyed by the rotation packed in one word (entries in −64..=63, as every lattice's
    // are; a product outside that range is no member).
    let key = |r: &[[i32; 3]; 3]| -> Option<u64> {
        r.iter().flatten().try_fold(0u64, |acc, &e| {
            (-64..=63).contains(&e).then(|| acc << 7 | (e + 64) as u64)
        })
    };
    let mut by_rot: foldhash::HashMap<u64, Vec<&SiteMap>> = Default::default();
    for op in ops {
        let Some(k) = key(&op.rot) else {
            return false;
        };
        by_rot.entry(k).or_default().push(op);
    }
    let is_product = |c: &SiteMap, a: &SiteMap, b: &SiteMap| {
        b.perm.iter().zip(&b.shift).enumerate().all(|(i, (&p, s))| {
            let t = a.shift[p];
            c.perm[i] == a.perm[p]
                && c.shift[i]
                    == [0, 1, 2].map(|k| {
                        a.rot[k][0] * s[0] + a.rot[k][1] * s[1] + a.rot[k][2] * s[2] + t[k]
                    })
        })
    };
    ops.iter().all(|a| {
        ops.iter().all(|b| {
            key(&compose_rot(&a.rot, &b.rot))
                .and_then(|k| by_rot.get(&k))
                .is_some_and(|cs| cs.iter().any(|c| is_product(c, a, b)))
        })
    })
}

/// The product of two cell matrices.
fn compose_rot(a: &[[i32; 3]; 3], b: &[[i32; 3]; 3]) -> [[i32; 3]; 3] {
    let mut rot = [[0i32; 3]; 3];
    for (i, row) in rot.iter_mut().enumerate() {
        for (j, e) in row.iter_mut().enumerate() {
            *e = (0..3).map(|k| a[i][k] * b[k][j]).sum();
        }
    }
    rot
}

/// Every variable of a level by its cluster's [`Cluster::key`].
pub type VariableIndex<'l> = foldhash::HashMap<&'l [(Cell, usize)], usize>;

/// The index of every variable of `level` by its cluster's key, against which images
/// from [`SiteMap::image_into`] are looked up.
pub fn variable_index(level: &Level) -> VariableIndex<'_> {
    level
        .variables
        .iter()
        .enumerate()
        .map(|(i, c)| (c.key(), i))
        .collect()
}

/// Orbit id of every correlation variable under `ops` (ids dense, in order of first
/// appearance). When `ops` is a group, each orbit is `{g v : g ∈ ops}` and is listed
/// once from its first variable (orbits × |ops| images); otherwise the orbits of the
/// group `ops` generates are found by union–find over every variable and operation.
pub fn variable_orbits(level: &Level, ops: &[SiteMap]) -> Vec<usize> {
    let index = variable_index(level);
    let n = level.variables.len();
    if is_group(ops) {
        let mut out = vec![usize::MAX; n];
        let mut next = 0;
        let mut buf = Vec::new();
        for (v, c) in level.variables.iter().enumerate() {
            if out[v] != usize::MAX {
                continue;
            }
            out[v] = next;
            for op in ops {
                op.image_into(c, &mut buf);
                if let Some(&w) = index.get(buf.as_slice()) {
                    out[w] = next;
                }
            }
            next += 1;
        }
        return out;
    }
    let mut root: Vec<usize> = (0..n).collect();
    fn find(root: &mut [usize], mut v: usize) -> usize {
        while root[v] != v {
            root[v] = root[root[v]];
            v = root[v];
        }
        v
    }
    let mut buf = Vec::new();
    for (v, c) in level.variables.iter().enumerate() {
        for op in ops {
            op.image_into(c, &mut buf);
            if let Some(&w) = index.get(buf.as_slice()) {
                let (a, b) = (find(&mut root, v), find(&mut root, w));
                if a != b {
                    root[a.max(b)] = a.min(b);
                }
            }
        }
    }
    let mut id = vec![usize::MAX; n];
    let mut next = 0;
    let mut out = vec![0; n];
    for (v, slot) in out.iter_mut().enumerate() {
        let r = find(&mut root, v);
        if id[r] == usize::MAX {
            id[r] = next;
            next += 1;
        }
        *slot = id[r];
    }
    out
}

#[cfg(test)]
mod tests;

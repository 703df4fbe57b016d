//! The validated lattice model: basis, primitive vectors, bonds with resolved couplings.
//!
//! A [`Lattice`] is only built by the loader ([`Lattice::from_yaml_str`]) or by
//! [`Lattice::supercell`], so every instance satisfies the rules of the lattice-file
//! contract (see `docs/lattice-format.md`).

use crate::error::LatticeError;

/// A unit-cell offset along the primitive vectors; unused dimensions are zero.
pub type Cell = [i32; 3];

/// Add two cell offsets.
pub fn cell_add(a: Cell, b: Cell) -> Cell {
    [a[0] + b[0], a[1] + b[1], a[2] + b[2]]
}

/// Subtract two cell offsets, `a - b`.
pub fn cell_sub(a: Cell, b: Cell) -> Cell {
    [a[0] - b[0], a[1] - b[1], a[2] - b[2]]
}

/// One basis site of the unit cell.
#[derive(Debug, Clone, PartialEq)]
pub struct Site {
    /// Unique name within the basis.
    pub name: String,
    /// Cartesian position inside the cell (zero-padded to three components).
    pub position: [f64; 3],
}

/// One bond: basis site `from` in cell 0 to basis site `to` in cell `cell`.
#[derive(Debug, Clone, PartialEq)]
pub struct Bond {
    /// Basis index of the first site (in cell 0).
    pub from: usize,
    /// Basis index of the second site (in cell `cell`).
    pub to: usize,
    /// Cell offset of the second site.
    pub cell: Cell,
    /// The coupling's name in the file, or the literal number as written.
    pub coupling: String,
    /// Resolved exchange constant J (J > 0 ferromagnetic).
    pub j: f64,
}

/// One neighbour of a basis site (see [`Lattice::neighbour_list`]).
#[derive(Debug, Clone, PartialEq)]
pub struct Neighbour {
    /// Basis index of the neighbour.
    pub site: usize,
    /// Its cell offset (the site itself is in cell 0).
    pub cell: Cell,
    /// The bond's coupling name (or literal value as written).
    pub coupling: String,
    /// The bond's exchange constant J.
    pub j: f64,
    /// Cartesian distance `|Σ_k cell_k v_k + r_site − r_self|`.
    pub distance: f64,
}

/// A named Kikuchi level from the file: one or more cluster shapes.
#[derive(Debug, Clone, PartialEq)]
pub struct LevelSpec {
    /// Level name (never `site` or `pair`).
    pub name: String,
    /// Each shape as a list of (basis index, cell offset), `block` shorthand expanded.
    pub shapes: Vec<Vec<(usize, Cell)>>,
}

/// An ordered phase declared under `phases:` in the file: a ±1 pattern on a supercell.
#[derive(Debug, Clone, PartialEq)]
pub struct PhaseSpec {
    /// The phase's name, as reports print it.
    pub name: String,
    /// Primitive cells of the supercell along each axis (unused dimensions 1).
    pub supercell: [usize; 3],
    /// One sign (±1) per site of the supercell, numbered as [`Lattice::supercell`]
    /// numbers them: basis sites fastest, then cells along axis 0, 1, 2.
    pub signs: Vec<f64>,
}

/// A known critical temperature to compare against, with its published source.
#[derive(Debug, Clone, PartialEq)]
pub struct Reference {
    /// Critical temperature in units of the file's couplings (k_B = 1).
    pub tc: f64,
    /// Where the value comes from (author, year, journal).
    pub source: String,
}

/// A validated periodic lattice with its couplings.
#[derive(Debug, Clone, PartialEq)]
pub struct Lattice {
    pub(crate) name: String,
    pub(crate) description: Option<String>,
    pub(crate) dimension: usize,
    pub(crate) vectors: Vec<[f64; 3]>,
    pub(crate) basis: Vec<Site>,
    pub(crate) couplings: Vec<(String, f64)>,
    pub(crate) field: f64,
    pub(crate) bonds: Vec<Bond>,
    pub(crate) levels: Vec<LevelSpec>,
    pub(crate) reference: Option<Reference>,
    pub(crate) phases: Vec<PhaseSpec>,
}

impl Lattice {
    /// Name used in reports.
    pub fn name(&self) -> &str {
        &self.name
    }
    /// Optional free-text description.
    pub fn description(&self) -> Option<&str> {
        self.description.as_deref()
    }
    /// Spatial dimension, 1 to 3.
    pub fn dimension(&self) -> usize {
        self.dimension
    }
    /// Primitive vectors (zero-padded to three components).
    pub fn vectors(&self) -> &[[f64; 3]] {
        &self.vectors
    }
    /// Basis sites of one cell.
    pub fn basis(&self) -> &[Site] {
        &self.basis
    }
    /// Number of basis sites per cell.
    pub fn sites_per_cell(&self) -> usize {
        self.basis.len()
    }
    /// Named couplings in file order.
    pub fn couplings(&self) -> &[(String, f64)] {
        &self.couplings
    }
    /// Uniform field h.
    pub fn field(&self) -> f64 {
        self.field
    }
    /// Bonds, each listed once.
    pub fn bonds(&self) -> &[Bond] {
        &self.bonds
    }
    /// Named cluster levels from the file.
    pub fn level_specs(&self) -> &[LevelSpec] {
        &self.levels
    }
    /// The file's `reference:`, if any.
    pub fn reference(&self) -> Option<&Reference> {
        self.reference.as_ref()
    }
    /// The ordered phases the file declares under `phases:` (patterns on supercells of
    /// this lattice's cell; empty on a lattice made by [`Lattice::supercell`], whose cell
    /// the patterns no longer refer to).
    pub fn declared_phases(&self) -> &[PhaseSpec] {
        &self.phases
    }

    /// A copy with a different uniform field.
    pub fn with_field(&self, h: f64) -> Lattice {
        let mut l = self.clone();
        l.field = h;
        l
    }

    /// A copy with every bond's coupling multiplied by `factors[bond index]` (the bonds
    /// in file order); the coupling names are kept. With factors `ε_i ε_j` of a sign per
    /// site this is the gauge transformation `s_i → ε_i s_i`, which at h = 0 maps the
    /// model onto one with the same free energy (e.g. a bipartite antiferromagnet onto
    /// the ferromagnet). Factors beyond the bond count are ignored, missing ones are 1.
    pub fn with_scaled_couplings(&self, factors: &[f64]) -> Lattice {
        let mut l = self.clone();
        for (b, f) in l.bonds.iter_mut().zip(factors) {
            b.j *= f;
        }
        l
    }

    /// A copy with one more named level: every basis site of an `n[0] × n[1] × n[2]`
    /// block of cells (unused dimensions 1), e.g. the extra rungs of `ladder --up-to`.
    /// Refused if the name is taken or reserved, or the block exceeds the engine's limit.
    pub fn with_block_level(&self, name: &str, n: [usize; 3]) -> Result<Lattice, LatticeError> {
        let sites = self.basis.len() * n[0] * n[1] * n[2];
        if name == "site" || name == "pair" || self.levels.iter().any(|l| l.name == name) {
            return Err(LatticeError::BadLevelName {
                name: name.to_string(),
            });
        }
        if n.iter()
            .enumerate()
            .any(|(k, &nk)| nk == 0 || (k >= self.dimension && nk != 1))
            || sites < 2
        {
            return Err(LatticeError::BadSupercell {
                detail: format!(
                    "block {}x{}x{} does not fit a {}-dimensional lattice",
                    n[0], n[1], n[2], self.dimension
                ),
            });
        }
        if sites > crate::level::MAX_CLUSTER_SITES {
            return Err(LatticeError::ClusterTooLarge {
                level: name.to_string(),
                sites,
                limit: crate::level::MAX_CLUSTER_SITES,
            });
        }
        let mut shape = Vec::with_capacity(sites);
        for k in 0..n[2] as i32 {
            for j in 0..n[1] as i32 {
                for i in 0..n[0] as i32 {
                    for a in 0..self.basis.len() {
                        shape.push((a, [i, j, k]));
                    }
                }
            }
        }
        let mut l = self.clone();
        l.levels.push(LevelSpec {
            name: name.to_string(),
            shapes: vec![shape],
        });
        Ok(l)
    }

    /// Basis index of the site called `name`.
    pub fn site_index(&self, name: &str) -> Option<usize> {
        self.basis.iter().position(|s| s.name == name)
    }

    /// Every neighbour of basis site `i` in cell 0 as (basis index, cell, J), both bond
    /// directions included.
    pub fn neighbours(&self, i: usize) -> Vec<(usize, Cell, f64)> {
        self.neighbour_list(i)
            .into_iter()
            .map(|n| (n.site, n.cell, n.j))
            .collect()
    }

    /// Every neighbour of basis site `i` with its bond's coupling and Cartesian distance
    /// `|Σ_k n_k v_k + r_b − r_i|`, in bond order (both directions of each bond).
    pub fn neighbour_list(&self, i: usize) -> Vec<Neighbour> {
        let mut out = Vec::new();
        let mut push = |site: usize, cell: Cell, b: &Bond| {
            let mut d = [0.0f64; 3];
            for (k, x) in d.iter_mut().enumerate() {
                *x = self.basis[site].position[k] - self.basis[i].position[k];
                for (n, v) in cell.iter().zip(&self.vectors) {
                    *x += f64::from(*n) * v[k];
                }
            }
            out.push(Neighbour {
                site,
                cell,
                coupling: b.coupling.clone(),
                j: b.j,
                distance: d.iter().map(|x| x * x).sum::<f64>().sqrt(),
            });
        };
        for b in &self.bonds {
            if b.from == i {
                push(b.to, b.cell, b);
            }
            if b.to == i {
                push(b.from, [-b.cell[0], -b.cell[1], -b.cell[2]], b);
            }
        }
        out
    }

    /// Bonds per cell of each coupling: `(coupling name or literal, J, count)`, named
    /// couplings in file order (those no bond uses omitted), then literal values in bond
    /// order.
    pub fn bonds_per_coupling(&self) -> Vec<(String, f64, usize)> {
        let mut out: Vec<(String, f64, usize)> = self
            .couplings
            .iter()
            .map(|(name, j)| (name.clone(), *j, 0))
            .collect();
        for b in &self.bonds {
            match out.iter_mut().find(|(name, ..)| *name == b.coupling) {
                Some(entry) => entry.2 += 1,
                None => out.push((b.coupling.clone(), b.j, 1)),
            }
        }
        out.retain(|e| e.2 > 0);
        out
    }

    /// Coordination number z of each basis site: the number of bonds that touch it.
    pub fn coordination(&self) -> Vec<usize> {
        (0..self.basis.len())
            .map(|i| self.neighbours(i).len())
            .collect()
    }

    /// The mean-field coupling matrix `J_ab = Σ_{bonds a–b} J` summed over all cell
    /// offsets (both directions; a bond from a site to its own image counts twice on the
    /// diagonal). Its largest eigenvalue is the site-level Tc of a ferromagnet.
    pub fn coupling_matrix(&self) -> Vec<Vec<f64>> {
        let n = self.basis.len();
        let mut m = vec![vec![0.0; n]; n];
        for b in &self.bonds {
            m[b.from][b.to] += b.j;
            m[b.to][b.from] += b.j;
        }
        m
    }

    /// Whether the infinite periodic lattice is bipartite: a two-colouring of all sites
    /// exists with every bond joining opposite colours. A colouring is a colour per basis
    /// site plus a parity per primitive direction (colour of (a, n) = c_a + Σ_k p_k n_k mod
    /// 2), so odd cycles that close only through the periodic structure are caught.
    pub fn is_bipartite(&self) -> bool {
        self.two_colouring_exists(|_| true)
    }

    /// Whether the couplings are frustrated: no choice of spin signs (a gauge
    /// s_i → ε_i s_i, ε_i = ±1, periodic up to a parity per primitive direction) makes
    /// every bond ferromagnetic. Equivalently, some closed loop of bonds has
    /// Π_bonds sign(J) = −1 (Toulouse 1977, Commun. Phys. 2, 115). An unfrustrated
    /// lattice at h = 0 is the ferromagnet with couplings |J| in disguise: the same Tc,
    /// free energy, entropy and specific heat, with order at the gauge's wavevector.
    /// Bonds with J = 0 impose nothing.
    ///
    /// ```
    /// // A square antiferromagnet is not frustrated; add an antiferromagnetic diagonal and it is.
    /// let af = "name: af\ndimension: 2\nvectors: [[1, 0], [0, 1]]\nbasis: [{name: a, position: [0, 0]}]\n\
    ///     couplings: {J: -1, K: -0.3}\nbonds: [{from: a, to: a, cell: [1, 0], coupling: J},\
    ///     {from: a, to: a, cell: [0, 1], coupling: J}";
    /// let plain = rungs_lattice::Lattice::from_yaml_str(&format!("{af}]\n"), "af.yaml").unwrap();
    /// assert!(!plain.is_frustrated());
    /// let diagonal = rungs_lattice::Lattice::from_yaml_str(
    ///     &format!("{af}, {{from: a, to: a, cell: [1, 1], coupling: K}}]\n"),
    ///     "diagonal.yaml",
    /// ).unwrap();
    /// assert!(diagonal.is_frustrated());
    /// ```
    pub fn is_frustrated(&self) -> bool {
        !self.two_colouring_exists(|j| j < 0.0)
    }

    /// Whether colours c_a per basis site and parities p_k per primitive direction exist
    /// with c_from + c_to + Σ_k p_k cell_k = opposite(J) (mod 2) for every bond with
    /// J ≠ 0 (bonds with `opposite(J)` false join equal colours). Gaussian elimination
    /// over GF(2).
    fn two_colouring_exists(&self, opposite: impl Fn(f64) -> bool) -> bool {
        let d = self.dimension;
        let nb = self.basis.len();
        let nvar = nb + d;
        let mut rows: Vec<(Vec<u8>, u8)> = self
            .bonds
            .iter()
            .filter(|b| b.j != 0.0)
            .map(|b| {
                let mut r = vec![0u8; nvar];
                r[b.from] ^= 1;
                r[b.to] ^= 1;
                for k in 0..d {
                    r[nb + k] ^= (b.cell[k].rem_euclid(2)) as u8;
                }
                (r, u8::from(opposite(b.j)))
            })
            .collect();
        let mut pivot_row = 0;
        for col in 0..nvar {
            let Some(p) = (pivot_row..rows.len()).find(|&r| rows[r].0[col] == 1) else {
                continue;
            };
            rows.swap(pivot_row, p);
            let (prow, prhs) = rows[pivot_row].clone();
            for (r, row) in rows.iter_mut().enumerate() {
                if r != pivot_row && row.0[col] == 1 {
                    for (x, y) in row.0.iter_mut().zip(&prow) {
                        *x ^= *y;
                    }
                    row.1 ^= prhs;
                }
            }
            pivot_row += 1;
        }
        !rows
            .iter()
            .any(|(r, rhs)| *rhs == 1 && r.iter().all(|&x| x == 0))
    }

    /// The lattice seen with an enlarged cell of `n[0] × n[1] × n[2]` primitive cells
    /// (unused dimensions must be 1). Basis site `a` of sub-cell `(i, j, k)` becomes basis
    /// site `a + nb·(i + n0·(j + n1·k))`, named `a@i,j,k`. Bonds and cluster shapes are
    /// carried over (each shape once per sub-cell offset), so order that breaks the
    /// primitive translations (e.g. Néel order) becomes order inside the enlarged cell.
    pub fn supercell(&self, n: [usize; 3]) -> Result<Lattice, LatticeError> {
        for (k, &nk) in n.iter().enumerate() {
            if nk == 0 || (k >= self.dimension && nk != 1) {
                return Err(LatticeError::BadSupercell {
                    detail: format!(
                        "{}x{}x{} does not fit a {}-dimensional lattice: give {} positive factor(s), e.g. 2x2",
                        n[0], n[1], n[2], self.dimension, self.dimension
                    ),
                });
            }
        }
        let total = n[0] * n[1] * n[2];
        if self.basis.len() * total > 64 {
            return Err(LatticeError::BadSupercell {
                detail: format!(
                    "a supercell of {} sites per cell is larger than the 64 rungs supports",
                    self.basis.len() * total
                ),
            });
        }
        let nb = self.basis.len();
        let ni = [n[0] as i32, n[1] as i32, n[2] as i32];
        // Map a primitive (basis, cell) to a supercell (basis, cell).
        let map = |a: usize, c: Cell| -> (usize, Cell) {
            let mut sub = [0i32; 3];
            let mut big = [0i32; 3];
            for k in 0..3 {
                sub[k] = c[k].rem_euclid(ni[k]);
                big[k] = c[k].div_euclid(ni[k]);
            }
            let idx =
                a + nb * (sub[0] as usize + n[0] * (sub[1] as usize + n[1] * sub[2] as usize));
            (idx, big)
        };
        let offsets: Vec<Cell> = (0..n[2] as i32)
            .flat_map(|k| {
                (0..n[1] as i32).flat_map(move |j| (0..n[0] as i32).map(move |i| [i, j, k]))
            })
            .collect();
        let mut basis = Vec::with_capacity(nb * total);
        for off in &offsets {
            for s in &self.basis {
                let mut pos = s.position;
                for (k, v) in self.vectors.iter().enumerate() {
                    for (x, vx) in pos.iter_mut().zip(v) {
                        *x += off[k] as f64 * vx;
                    }
                }
                basis.push(Site {
                    name: format!("{}@{},{},{}", s.name, off[0], off[1], off[2]),
                    position: pos,
                });
            }
        }
        let mut bonds = Vec::new();
        for off in &offsets {
            for b in &self.bonds {
                let (f, fc) = map(b.from, *off);
                let (t, tc) = map(b.to, cell_add(*off, b.cell));
                bonds.push(Bond {
                    from: f,
                    to: t,
                    cell: cell_sub(tc, fc),
                    coupling: b.coupling.clone(),
                    j: b.j,
                });
            }
        }
        let levels = self
            .levels
            .iter()
            .map(|l| LevelSpec {
                name: l.name.clone(),
                shapes: offsets
                    .iter()
                    .flat_map(|off| {
                        l.shapes.iter().map(move |shape| {
                            shape
                                .iter()
                                .map(|&(a, c)| map(a, cell_add(c, *off)))
                                .collect::<Vec<_>>()
                        })
                    })
                    .collect(),
            })
            .collect();
        let mut vectors = self.vectors.clone();
        for (k, v) in vectors.iter_mut().enumerate() {
            for x in v.iter_mut() {
                *x *= n[k] as f64;
            }
        }
        Ok(Lattice {
            name: format!("{} ({}x{}x{} cell)", self.name, n[0], n[1], n[2]),
            description: self.description.clone(),
            dimension: self.dimension,
            vectors,
            basis,
            couplings: self.couplings.clone(),
            field: self.field,
            bonds,
            levels,
            reference: self.reference.clone(),
            phases: Vec::new(),
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn neighbours_carry_coupling_and_distance_and_bonds_are_counted_per_coupling() {
        // Honeycomb with nearest-neighbour distance 1 (common practice), one bond
        // direction weaker, and a literal coupling on another.
        let text = "name: hc\ndimension: 2\nvectors: [[1.7320508075688772, 0.0], [0.8660254037844386, 1.5]]\n\
                    basis: [{name: a}, {name: b, position: [0.0, 1.0]}]\n\
                    couplings: {J: 1.0, Jw: 0.5, unused: 2.0}\nbonds:\n\
                    \x20 - {from: a, to: b, cell: [0, 0], coupling: J}\n\
                    \x20 - {from: a, to: b, cell: [0, -1], coupling: Jw}\n\
                    \x20 - {from: a, to: b, cell: [1, -1], coupling: 0.25}\n";
        let l = Lattice::from_yaml_str(text, "hc.yaml").unwrap();
        let nb = l.neighbour_list(1);
        assert_eq!(nb.len(), 3);
        assert!(nb
            .iter()
            .all(|n| n.site == 0 && (n.distance - 1.0).abs() < 1e-12));
        assert_eq!(nb[1].cell, [0, 1, 0]);
        assert_eq!((nb[1].coupling.as_str(), nb[1].j), ("Jw", 0.5));
        assert_eq!(
            l.bonds_per_coupling(),
            vec![
                ("J".to_string(), 1.0, 1),
                ("Jw".to_string(), 0.5, 1),
                ("0.25".to_string(), 0.25, 1)
            ]
        );
        assert_eq!(l.neighbours(0).len(), 3);
    }
}

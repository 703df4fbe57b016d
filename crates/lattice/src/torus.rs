//! Finite periodic samples (tori) of a lattice, for exact enumeration, transfer matrices
//! and Monte Carlo.
//!
//! Site `(a, n)` of an `L1 × L2 × L3` torus has index `a + nb·(n1 + L1·(n2 + L2·n3))`.
//! Sizes where wrapping would join a site to itself or list one pair of sites twice are
//! refused, so every edge of the graph is one bond of the infinite lattice.

use std::collections::HashSet;

use petgraph::graph::{NodeIndex, UnGraph};

use crate::error::LatticeError;
use crate::model::{Cell, Lattice};

/// One site of a torus: its basis index and its cell.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct TorusSite {
    /// Basis index.
    pub basis: usize,
    /// Cell coordinates, each in `0..L_k`.
    pub cell: [usize; 3],
}

/// A finite torus of cells as a graph whose edge weights are the couplings J.
#[derive(Debug, Clone)]
pub struct Torus {
    size: [usize; 3],
    sites_per_cell: usize,
    graph: UnGraph<TorusSite, f64>,
}

impl Torus {
    /// Build the `size` torus (one entry per dimension, each ≥ 1).
    pub fn new(lattice: &Lattice, size: &[usize]) -> Result<Torus, LatticeError> {
        let d = lattice.dimension();
        let label = size
            .iter()
            .map(|s| s.to_string())
            .collect::<Vec<_>>()
            .join("x");
        if size.len() != d || size.contains(&0) {
            return Err(LatticeError::BadTorus {
                size: label,
                detail: format!("give {d} positive size(s), one per dimension"),
            });
        }
        let mut l = [1usize; 3];
        l[..d].copy_from_slice(size);
        let nb = lattice.sites_per_cell();
        let n_cells = l[0] * l[1] * l[2];
        let mut graph = UnGraph::with_capacity(nb * n_cells, lattice.bonds().len() * n_cells);
        for c2 in 0..l[2] {
            for c1 in 0..l[1] {
                for c0 in 0..l[0] {
                    for a in 0..nb {
                        graph.add_node(TorusSite {
                            basis: a,
                            cell: [c0, c1, c2],
                        });
                    }
                }
            }
        }
        let index = |a: usize, c: [i64; 3]| -> usize {
            let w = |k: usize| c[k].rem_euclid(l[k] as i64) as usize;
            a + nb * (w(0) + l[0] * (w(1) + l[1] * w(2)))
        };
        let mut seen = HashSet::new();
        for c2 in 0..l[2] as i64 {
            for c1 in 0..l[1] as i64 {
                for c0 in 0..l[0] as i64 {
                    for b in lattice.bonds() {
                        let i = index(b.from, [c0, c1, c2]);
                        let j = index(
                            b.to,
                            [
                                c0 + b.cell[0] as i64,
                                c1 + b.cell[1] as i64,
                                c2 + b.cell[2] as i64,
                            ],
                        );
                        if i == j {
                            return Err(LatticeError::BadTorus {
                                size: label,
                                detail: format!(
                                    "a {}–{} bond wraps onto its own site; make the torus larger",
                                    lattice.basis()[b.from].name,
                                    lattice.basis()[b.to].name
                                ),
                            });
                        }
                        if !seen.insert((i.min(j), i.max(j))) {
                            return Err(LatticeError::BadTorus {
                                size: label,
                                detail: "two bonds join the same pair of sites once wrapped; make the torus larger (3 cells per direction usually suffice)".into(),
                            });
                        }
                        graph.add_edge(NodeIndex::new(i), NodeIndex::new(j), b.j);
                    }
                }
            }
        }
        Ok(Torus {
            size: l,
            sites_per_cell: nb,
            graph,
        })
    }

    /// Cells per direction (unused dimensions 1).
    pub fn size(&self) -> [usize; 3] {
        self.size
    }
    /// Number of sites.
    pub fn sites(&self) -> usize {
        self.graph.node_count()
    }
    /// The graph: nodes are sites (index as in the module docs), edge weights J.
    pub fn graph(&self) -> &UnGraph<TorusSite, f64> {
        &self.graph
    }
    /// Index of site `(basis, cell)`, cell taken modulo the torus.
    pub fn index(&self, basis: usize, cell: Cell) -> usize {
        let w = |k: usize| cell[k].rem_euclid(self.size[k] as i32) as usize;
        basis + self.sites_per_cell * (w(0) + self.size[0] * (w(1) + self.size[1] * w(2)))
    }
    /// Every bond as `(i, j, J)` with `i < j`.
    pub fn edges(&self) -> Vec<(usize, usize, f64)> {
        self.graph
            .edge_indices()
            .filter_map(|e| {
                let (a, b) = self.graph.edge_endpoints(e)?;
                let (i, j) = (a.index().min(b.index()), a.index().max(b.index()));
                Some((i, j, self.graph[e]))
            })
            .collect()
    }
}

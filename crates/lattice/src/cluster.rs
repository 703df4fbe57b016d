//! Clusters: finite sets of lattice sites, canonical under lattice translation.
//!
//! A site is `(basis index, cell)`. The canonical form of a cluster sorts its sites by
//! `(cell, basis)` and translates it so that the first site lies in cell 0; two clusters
//! are translates of each other exactly when their canonical forms are equal.

use crate::model::{cell_add, cell_sub, Cell};

/// A finite set of sites, kept sorted; canonical if built with [`Cluster::canonical`].
#[derive(Debug, Clone, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct Cluster {
    sites: Vec<(Cell, usize)>,
}

impl Cluster {
    /// The canonical representative of the translation orbit of `sites`.
    pub fn canonical(sites: impl IntoIterator<Item = (usize, Cell)>) -> Cluster {
        let mut v: Vec<(Cell, usize)> = sites.into_iter().map(|(a, c)| (c, a)).collect();
        v.sort_unstable();
        v.dedup();
        if let Some(&(c0, _)) = v.first() {
            for s in v.iter_mut() {
                s.0 = cell_sub(s.0, c0);
            }
        }
        Cluster { sites: v }
    }

    /// The sorted `(cell, basis)` pairs: a hash key equal for equal clusters, against
    /// which [`crate::symmetry::SiteMap::image_into`] looks images up without building
    /// a cluster.
    pub fn key(&self) -> &[(Cell, usize)] {
        &self.sites
    }

    /// Number of sites.
    pub fn len(&self) -> usize {
        self.sites.len()
    }
    /// Whether the cluster has no site.
    pub fn is_empty(&self) -> bool {
        self.sites.is_empty()
    }
    /// Sites as `(basis, cell)`, sorted by `(cell, basis)`.
    pub fn sites(&self) -> impl ExactSizeIterator<Item = (usize, Cell)> + '_ {
        self.sites.iter().map(|&(c, a)| (a, c))
    }
    /// The `k`-th site as `(basis, cell)`.
    pub fn site(&self, k: usize) -> (usize, Cell) {
        let (c, a) = self.sites[k];
        (a, c)
    }
    /// Whether the cluster contains site `(a, c)`.
    pub fn contains(&self, a: usize, c: Cell) -> bool {
        self.sites.binary_search(&(c, a)).is_ok()
    }
    /// This cluster translated by `t` (not canonical unless `t` is zero).
    pub fn translated(&self, t: Cell) -> Cluster {
        Cluster {
            sites: self
                .sites
                .iter()
                .map(|&(c, a)| (cell_add(c, t), a))
                .collect(),
        }
    }
    /// Whether every site of `self` lies in `other`.
    pub fn is_subset_of(&self, other: &Cluster) -> bool {
        self.sites
            .iter()
            .all(|s| other.sites.binary_search(s).is_ok())
    }
    /// The sites common to both (as given, not canonicalised).
    pub fn intersection(&self, other: &Cluster) -> Vec<(usize, Cell)> {
        self.sites
            .iter()
            .filter(|s| other.sites.binary_search(s).is_ok())
            .map(|&(c, a)| (a, c))
            .collect()
    }
    /// Every translation `t` such that `self + t` shares the site `(a, c)` placement of
    /// some site of `other` with the same basis index: the candidate overlaps of
    /// `self + t` with `other`.
    pub fn overlap_translations(&self, other: &Cluster) -> Vec<Cell> {
        let mut ts = Vec::new();
        for &(c1, a1) in &self.sites {
            for &(c2, a2) in &other.sites {
                if a1 == a2 {
                    ts.push(cell_sub(c2, c1));
                }
            }
        }
        ts.sort_unstable();
        ts.dedup();
        ts
    }
    /// The subset selected by the bits of `mask` (bit k ↔ k-th site), canonicalised.
    pub fn subset(&self, mask: u64) -> Cluster {
        Cluster::canonical(
            self.sites
                .iter()
                .enumerate()
                .filter(|(k, _)| mask >> k & 1 == 1)
                .map(|(_, &(c, a))| (a, c)),
        )
    }
}

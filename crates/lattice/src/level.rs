//! Levels of the cluster-variation ladder: maximal clusters, regions, Kikuchi
//! coefficients and correlation variables (Kikuchi 1951, Phys. Rev. 81, 988; the
//! correlation-function form of Sanchez, Ducastelle & Gratias 1984, Physica A 128, 334).
//!
//! * `site`: every basis site alone (the Bogoliubov product trial state);
//! * `pair`: every bond (Bethe);
//! * a named level: the translates of its shapes plus every bond that no translate of a
//!   shape contains.
//!
//! Regions are the maximal clusters closed under intersection, one canonical
//! representative per translation orbit. Their coefficients follow from Möbius
//! inversion, counted per unit cell:
//!
//! ```text
//! a_γ = 1 − Σ_{δ ⊋ γ} m(γ, δ) a_δ
//! ```
//!
//! with `m(γ, δ)` the number of translates of δ that contain a fixed translate of γ.
//! Sum rule: `Σ_γ a_γ |γ| = sites per cell`.

use std::collections::BTreeSet;

use crate::cluster::Cluster;
use crate::error::LatticeError;
use crate::model::{Cell, Lattice};

/// Largest maximal cluster any level may have (its cluster distribution has 2^n states;
/// 2^25 f64 values are 256 MiB). Levels above [`MAX_MATERIALISED_SITES`] exist only in the
/// compact, orbit-reduced form of [`crate::compact::CompactLevel`].
pub const MAX_CLUSTER_SITES: usize = 25;

/// Largest maximal cluster for which [`Level::build`] lists every correlation variable
/// as a [`Cluster`] (the 4×4 block: 57,856 of them; the 5×5 block would need 31.5
/// million, so it is built only as a [`crate::compact::CompactLevel`]).
pub const MAX_MATERIALISED_SITES: usize = 16;

/// A level's geometry without its correlation variables: the maximal clusters and the
/// region orbits with their Kikuchi coefficients, largest first. Cheap at any size.
#[derive(Debug, Clone)]
pub struct Skeleton {
    /// Level name.
    pub name: String,
    /// Maximal clusters, one canonical representative per translation orbit.
    pub maximal: Vec<Cluster>,
    /// Region orbits (maximal clusters and their intersections), largest first, with
    /// their Kikuchi coefficients per unit cell (zero included).
    pub regions: Vec<(Cluster, i64)>,
}

/// One region orbit of a level.
#[derive(Debug, Clone)]
pub struct Region {
    /// Canonical representative.
    pub cluster: Cluster,
    /// Kikuchi coefficient per unit cell.
    pub coefficient: i64,
    /// For each non-empty subset `mask` of the region's sites (bit k ↔ k-th site of
    /// `cluster`), the index of its correlation variable; entry 0 (the empty set) is
    /// `u32::MAX`.
    pub subset_vars: Vec<u32>,
}

/// How one bond's energy `−J ⟨s_i s_j⟩` enters the functional.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum BondTerm {
    /// The bond lies in a region: `−J ξ_var`.
    Correlated {
        /// Correlation variable of the bond.
        var: usize,
        /// Coupling.
        j: f64,
    },
    /// The bond lies in no region (site level): `−J ξ_a ξ_b` (factorised).
    Factorised {
        /// Site variable of the first end.
        a: usize,
        /// Site variable of the second end.
        b: usize,
        /// Coupling.
        j: f64,
    },
}

/// A level: everything the engine needs to write the free-energy functional.
#[derive(Debug, Clone)]
pub struct Level {
    /// Level name (`site`, `pair` or a name from the file).
    pub name: String,
    /// Basis sites per cell.
    pub sites_per_cell: usize,
    /// Maximal clusters, one canonical representative per translation orbit.
    pub maximal: Vec<Cluster>,
    /// Every region orbit (maximal clusters and their intersections), largest first,
    /// including those whose coefficient is zero.
    pub regions: Vec<Region>,
    /// Correlation variables: every non-empty subset of a maximal cluster, one per
    /// translation orbit, sorted by size.
    pub variables: Vec<Cluster>,
    /// Variable index of each basis site's magnetisation ξ_a.
    pub site_vars: Vec<usize>,
    /// The energy terms, one per bond of the lattice.
    pub bond_terms: Vec<BondTerm>,
}

impl Level {
    /// Names of every level of `lattice`: `site`, `pair`, then the file's levels.
    pub fn names(lattice: &Lattice) -> Vec<String> {
        let mut v = vec!["site".to_string(), "pair".to_string()];
        v.extend(lattice.level_specs().iter().map(|l| l.name.clone()));
        v
    }

    /// Sites of the largest maximal cluster of level `name`, computed without building
    /// the level.
    pub fn max_cluster_sites_of(lattice: &Lattice, name: &str) -> Result<usize, LatticeError> {
        Ok(Self::maximal_clusters(lattice, name)?
            .iter()
            .map(Cluster::len)
            .max()
            .unwrap_or(1))
    }

    /// Sites of the largest maximal cluster.
    pub fn max_cluster_sites(&self) -> usize {
        self.maximal.iter().map(Cluster::len).max().unwrap_or(1)
    }

    /// Regions with a non-zero coefficient (the ones the entropy sums over).
    pub fn active_regions(&self) -> impl Iterator<Item = &Region> {
        self.regions.iter().filter(|r| r.coefficient != 0)
    }

    /// Whether variable `v` is odd under global spin reversal (odd number of sites).
    pub fn is_odd(&self, v: usize) -> bool {
        self.variables[v].len() % 2 == 1
    }

    fn maximal_clusters(lattice: &Lattice, name: &str) -> Result<Vec<Cluster>, LatticeError> {
        let bond_cluster =
            |b: &crate::model::Bond| Cluster::canonical([(b.from, [0; 3]), (b.to, b.cell)]);
        let mut clusters: Vec<Cluster> = match name {
            "site" => (0..lattice.sites_per_cell())
                .map(|a| Cluster::canonical([(a, [0; 3])]))
                .collect(),
            "pair" => {
                let mut v: Vec<Cluster> = lattice.bonds().iter().map(bond_cluster).collect();
                // A site that no bond touches is its own maximal cluster.
                for a in 0..lattice.sites_per_cell() {
                    if !v.iter().any(|c| c.sites().any(|(b, _)| b == a)) {
                        v.push(Cluster::canonical([(a, [0; 3])]));
                    }
                }
                v
            }
            _ => {
                let spec = lattice
                    .level_specs()
                    .iter()
                    .find(|l| l.name == name)
                    .ok_or_else(|| LatticeError::unknown_level(name, &Self::names(lattice)))?;
                let shapes: Vec<Cluster> = spec
                    .shapes
                    .iter()
                    .map(|s| Cluster::canonical(s.iter().copied()))
                    .collect();
                for s in &shapes {
                    if s.len() > MAX_CLUSTER_SITES {
                        return Err(LatticeError::ClusterTooLarge {
                            level: name.to_string(),
                            sites: s.len(),
                            limit: MAX_CLUSTER_SITES,
                        });
                    }
                }
                let mut v = shapes.clone();
                for b in lattice.bonds() {
                    let bc = bond_cluster(b);
                    if !shapes.iter().any(|s| contained_in_translate(&bc, s)) {
                        v.push(bc);
                    }
                }
                for a in 0..lattice.sites_per_cell() {
                    if !v.iter().any(|c| c.sites().any(|(b, _)| b == a)) {
                        v.push(Cluster::canonical([(a, [0; 3])]));
                    }
                }
                v
            }
        };
        clusters.sort();
        clusters.dedup();
        // Keep only clusters not contained in a translate of another one.
        let all = clusters.clone();
        clusters.retain(|c| {
            !all.iter()
                .any(|d| d != c && d.len() > c.len() && contained_in_translate(c, d))
        });
        Ok(clusters)
    }

    /// The maximal clusters and regions of level `name`, with Möbius-inverted Kikuchi
    /// coefficients, without listing any correlation variable.
    pub fn skeleton(lattice: &Lattice, name: &str) -> Result<Skeleton, LatticeError> {
        let maximal = Self::maximal_clusters(lattice, name)?;
        if let Some(big) = maximal.iter().find(|c| c.len() > MAX_CLUSTER_SITES) {
            return Err(LatticeError::ClusterTooLarge {
                level: name.to_string(),
                sites: big.len(),
                limit: MAX_CLUSTER_SITES,
            });
        }
        // Close under intersection.
        let mut set: BTreeSet<Cluster> = maximal.iter().cloned().collect();
        let mut frontier: Vec<Cluster> = maximal.clone();
        while !frontier.is_empty() {
            let mut next = Vec::new();
            for a in &frontier {
                for b in &maximal {
                    for t in b.overlap_translations(a) {
                        let inter = b.translated(t).intersection(a);
                        if inter.is_empty() {
                            continue;
                        }
                        let c = Cluster::canonical(inter);
                        if !set.contains(&c) {
                            set.insert(c.clone());
                            next.push(c);
                        }
                    }
                }
            }
            frontier = next;
        }
        let mut orbits: Vec<Cluster> = set.into_iter().collect();
        orbits.sort_by(|a, b| b.len().cmp(&a.len()).then(a.cmp(b)));
        // Möbius inversion, largest first.
        let mut coeff: Vec<i64> = Vec::with_capacity(orbits.len());
        for (g, gamma) in orbits.iter().enumerate() {
            let mut a = 1i64;
            for (d, delta) in orbits[..g].iter().enumerate() {
                if delta.len() > gamma.len() {
                    a -= count_containing_translates(gamma, delta) as i64 * coeff[d];
                }
            }
            coeff.push(a);
        }
        Ok(Skeleton {
            name: name.to_string(),
            maximal,
            regions: orbits.into_iter().zip(coeff).collect(),
        })
    }

    /// Build level `name` of `lattice`, every correlation variable listed. Levels whose
    /// clusters exceed [`MAX_MATERIALISED_SITES`] are refused
    /// ([`LatticeError::ClusterTooLarge`]); build them as a
    /// [`crate::compact::CompactLevel`].
    pub fn build(lattice: &Lattice, name: &str) -> Result<Level, LatticeError> {
        let Skeleton {
            maximal, regions, ..
        } = Self::skeleton(lattice, name)?;
        if let Some(big) = maximal.iter().find(|c| c.len() > MAX_MATERIALISED_SITES) {
            return Err(LatticeError::ClusterTooLarge {
                level: name.to_string(),
                sites: big.len(),
                limit: MAX_MATERIALISED_SITES,
            });
        }
        let (orbits, coeff): (Vec<Cluster>, Vec<i64>) = regions.into_iter().unzip();
        // Correlation variables: every non-empty subset of a maximal cluster.
        // (Listed in the order sorted below: the set only removes duplicates.)
        let mut var_set: foldhash::HashSet<Cluster> = foldhash::HashSet::default();
        for m in &maximal {
            let n = m.len();
            for mask in 1u64..(1u64 << n) {
                var_set.insert(m.subset(mask));
            }
        }
        let mut variables: Vec<Cluster> = var_set.into_iter().collect();
        variables.sort_by(|a, b| a.len().cmp(&b.len()).then(a.cmp(b)));
        let index: foldhash::HashMap<&Cluster, usize> =
            variables.iter().enumerate().map(|(i, c)| (c, i)).collect();
        let regions = orbits
            .iter()
            .zip(&coeff)
            .map(|(c, &a)| {
                let n = c.len();
                let mut subset_vars = vec![u32::MAX; 1 << n];
                if a != 0 {
                    for (mask, slot) in subset_vars.iter_mut().enumerate().skip(1) {
                        *slot = index[&c.subset(mask as u64)] as u32;
                    }
                }
                Region {
                    cluster: c.clone(),
                    coefficient: a,
                    subset_vars,
                }
            })
            .collect();
        let site_vars: Vec<usize> = (0..lattice.sites_per_cell())
            .map(|a| index[&Cluster::canonical([(a, [0; 3])])])
            .collect();
        let bond_terms = lattice
            .bonds()
            .iter()
            .map(|b| {
                let bc = Cluster::canonical([(b.from, [0; 3]), (b.to, b.cell)]);
                match index.get(&bc) {
                    Some(&var) => BondTerm::Correlated { var, j: b.j },
                    None => BondTerm::Factorised {
                        a: site_vars[b.from],
                        b: site_vars[b.to],
                        j: b.j,
                    },
                }
            })
            .collect();
        Ok(Level {
            name: name.to_string(),
            sites_per_cell: lattice.sites_per_cell(),
            maximal,
            regions,
            variables,
            site_vars,
            bond_terms,
        })
    }

    /// The same level on orbit variables: variable `v` becomes `orbit_of[v]` (one
    /// representative cluster per orbit). The engine run on it computes `F(P y)` with
    /// `P` the orbit-expansion matrix, so its gradient is `Pᵀ∇F` and its Hessian
    /// `PᵀHP`: exact for states that share the symmetry.
    pub fn reduced(&self, orbit_of: &[usize]) -> Level {
        let n_orbits = orbit_of.iter().copied().max().map_or(0, |m| m + 1);
        let mut rep: Vec<Option<Cluster>> = vec![None; n_orbits];
        for (v, &o) in orbit_of.iter().enumerate() {
            if rep[o].is_none() {
                rep[o] = Some(self.variables[v].clone());
            }
        }
        let variables = rep.into_iter().flatten().collect();
        let map = |v: usize| orbit_of[v];
        Level {
            name: self.name.clone(),
            sites_per_cell: self.sites_per_cell,
            maximal: self.maximal.clone(),
            regions: self
                .regions
                .iter()
                .map(|r| Region {
                    cluster: r.cluster.clone(),
                    coefficient: r.coefficient,
                    subset_vars: r
                        .subset_vars
                        .iter()
                        .map(|&v| {
                            if v == u32::MAX {
                                v
                            } else {
                                map(v as usize) as u32
                            }
                        })
                        .collect(),
                })
                .collect(),
            variables,
            site_vars: self.site_vars.iter().map(|&v| map(v)).collect(),
            bond_terms: self
                .bond_terms
                .iter()
                .map(|b| match *b {
                    BondTerm::Correlated { var, j } => BondTerm::Correlated { var: map(var), j },
                    BondTerm::Factorised { a, b, j } => BondTerm::Factorised {
                        a: map(a),
                        b: map(b),
                        j,
                    },
                })
                .collect(),
        }
    }

    /// The Kikuchi sum rule `Σ_γ a_γ |γ|`, which must equal the sites per cell.
    pub fn sum_rule(&self) -> i64 {
        self.regions
            .iter()
            .map(|r| r.coefficient * r.cluster.len() as i64)
            .sum()
    }
}

/// Whether some translate of `small` lies inside `big`.
fn contained_in_translate(small: &Cluster, big: &Cluster) -> bool {
    count_containing_translates(small, big) > 0
}

/// Number of translates of `big` that contain `small` as it stands.
fn count_containing_translates(small: &Cluster, big: &Cluster) -> usize {
    if small.len() > big.len() || small.is_empty() {
        return 0;
    }
    let (a0, c0): (usize, Cell) = small.site(0);
    big.sites()
        .filter(|&(a, _)| a == a0)
        .filter(|&(_, c)| {
            let t = crate::model::cell_sub(c0, c);
            small.is_subset_of(&big.translated(t))
        })
        .count()
}

#[cfg(test)]
mod tests;

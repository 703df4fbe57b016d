//! Levels held compactly on point-group orbits, without a [`Cluster`] per correlation
//! variable: what makes 25-site clusters possible (the 5×5 block has 31.5 million
//! translation classes of subsets, 3.9 million orbits under the square's point group).
//!
//! A correlation variable is a translation class of subsets of a maximal cluster. Its
//! **key** is the set of its sites moved so that its smallest cell coordinates are zero,
//! as a bitset over a small grid of `(basis site, cell offset)` positions (at most 128).
//! Two subsets are translates exactly when their keys are equal. The **orbit key** is
//! the smallest key over the images under the level's point group. For the 2^n subsets
//! (masks) of a maximal cluster the keys come from byte tables per operation — for each
//! byte of the mask, the OR of the image sites' grid bits and their lowest coordinates —
//! so a mask costs a few look-ups per operation and no allocation. Each distinct orbit
//! key gets a dense id, in order of first appearance.
//!
//! Each active region keeps its mask → orbit table, which is all the engine needs:
//! `p(σ) = 2^-n Σ_c y_{vars[c]} χ_c(σ)`.

use std::collections::HashMap;
use std::hash::{BuildHasherDefault, Hasher};

use rayon::prelude::*;

use crate::cluster::Cluster;
use crate::error::LatticeError;
use crate::level::{BondTerm, Level, Skeleton};
use crate::model::{Cell, Lattice};
use crate::symmetry::{self, SiteMap};

/// One active region: its mask → orbit-variable table.
#[derive(Debug, Clone)]
pub struct CompactRegion {
    /// Canonical representative of the region's translation orbit.
    pub cluster: Cluster,
    /// Kikuchi coefficient per unit cell (never zero here).
    pub coefficient: i64,
    /// Whether the region is a maximal cluster of the level.
    pub maximal: bool,
    /// Orbit variable of every subset `mask` of the region's sites (bit k ↔ k-th site of
    /// `cluster`); entry 0 (the empty set) is `u32::MAX`.
    pub vars: Vec<u32>,
}

/// A level on point-group orbit variables, listed by count only.
#[derive(Debug, Clone)]
pub struct CompactLevel {
    /// Level name.
    pub name: String,
    /// Basis sites per cell.
    pub sites_per_cell: usize,
    /// Sites of the largest maximal cluster.
    pub max_cluster_sites: usize,
    /// Number of point-group operations that keep the level (1: translations only).
    pub group_order: usize,
    /// The regions with a non-zero Kikuchi coefficient, largest first.
    pub regions: Vec<CompactRegion>,
    /// Sites of each orbit variable's clusters.
    pub orbit_sites: Vec<u8>,
    /// Translation classes (correlation variables of [`Level`]) in each orbit.
    pub orbit_classes: Vec<u16>,
    /// Orbit variable of each basis site's magnetisation.
    pub site_vars: Vec<usize>,
    /// The energy terms, one per bond of the lattice, on orbit variables.
    pub bond_terms: Vec<BondTerm>,
}

impl CompactLevel {
    /// Level `name` of `lattice` on orbits of the lattice's point group.
    pub fn build(lattice: &Lattice, name: &str) -> Result<CompactLevel, LatticeError> {
        Self::build_with_ops(lattice, name, &symmetry::point_group(lattice))
    }

    /// Level `name` on orbits of those operations of `ops` that keep the level (give
    /// the identity alone for translation classes).
    pub fn build_with_ops(
        lattice: &Lattice,
        name: &str,
        ops: &[SiteMap],
    ) -> Result<CompactLevel, LatticeError> {
        let skeleton = Level::skeleton(lattice, name)?;
        let ops = symmetry::group_of(&skeleton.maximal, ops);
        let grid = Grid::new(lattice, &skeleton, &ops)?;
        let mut orbits = Orbits::default();
        let mut tables = Vec::with_capacity(skeleton.maximal.len());
        for m in &skeleton.maximal {
            let images: Vec<ImageTable> =
                ops.iter().map(|g| ImageTable::new(&grid, m, g)).collect();
            tables.push(orbits.assign(&images, m.len()));
        }
        let regions = regions(&skeleton, tables);
        let key_of = |sites: &[(usize, Cell)]| -> Option<u32> {
            let key = grid.orbit_key(&ops, sites)?;
            orbits.ids.get(&key).copied()
        };
        let site_vars = (0..lattice.sites_per_cell())
            .map(|a| {
                key_of(&[(a, [0; 3])]).map(|v| v as usize).ok_or_else(|| {
                    LatticeError::CompactLimit {
                        level: name.to_string(),
                        detail: format!("basis site {a} lies in no cluster of the level"),
                    }
                })
            })
            .collect::<Result<Vec<usize>, _>>()?;
        let bond_terms = lattice
            .bonds()
            .iter()
            .map(|b| match key_of(&[(b.from, [0; 3]), (b.to, b.cell)]) {
                Some(var) => BondTerm::Correlated {
                    var: var as usize,
                    j: b.j,
                },
                None => BondTerm::Factorised {
                    a: site_vars[b.from],
                    b: site_vars[b.to],
                    j: b.j,
                },
            })
            .collect();
        Ok(CompactLevel {
            name: name.to_string(),
            sites_per_cell: lattice.sites_per_cell(),
            max_cluster_sites: skeleton.maximal.iter().map(Cluster::len).max().unwrap_or(1),
            group_order: ops.len(),
            regions,
            orbit_sites: orbits.sites,
            orbit_classes: orbits.classes,
            site_vars,
            bond_terms,
        })
    }

    /// Number of orbit variables.
    pub fn len(&self) -> usize {
        self.orbit_sites.len()
    }

    /// Whether there are no variables (never, for a valid level).
    pub fn is_empty(&self) -> bool {
        self.orbit_sites.is_empty()
    }

    /// Whether orbit variable `k` is odd under global spin reversal.
    pub fn is_odd(&self, k: usize) -> bool {
        self.orbit_sites[k] % 2 == 1
    }

    /// Correlation variables before the point-group reduction (translation classes),
    /// i.e. `Level::variables.len()` of the same level.
    pub fn translation_classes(&self) -> usize {
        self.orbit_classes.iter().map(|&c| c as usize).sum()
    }
}

/// The grid of `(basis, offset)` positions that keys are bitsets over.
struct Grid {
    basis: usize,
    dims: usize,
    ext: [usize; 3],
}

impl Grid {
    /// A grid wide enough for every image of every maximal cluster.
    fn new(lattice: &Lattice, sk: &Skeleton, ops: &[SiteMap]) -> Result<Grid, LatticeError> {
        let mut ext = [1usize; 3];
        for m in &sk.maximal {
            for g in ops {
                let img: Vec<(usize, Cell)> = m.sites().map(|(a, c)| g.apply(a, c)).collect();
                for (d, e) in ext.iter_mut().enumerate() {
                    let lo = img.iter().map(|s| s.1[d]).min().unwrap_or(0);
                    let hi = img.iter().map(|s| s.1[d]).max().unwrap_or(0);
                    *e = (*e).max((hi - lo) as usize + 1);
                }
            }
        }
        let basis = lattice.sites_per_cell();
        let positions = basis * ext[0] * ext[1] * ext[2];
        if positions > 128 {
            return Err(LatticeError::CompactLimit {
                level: sk.name.clone(),
                detail: format!(
                    "its clusters and their symmetric images span {positions} (site, cell) positions, above the limit of 128 that the orbit-reduced (big-level) representation holds; choose a more compact cluster"
                ),
            });
        }
        Ok(Grid {
            basis,
            dims: lattice.dimension(),
            ext,
        })
    }

    /// Bit of site `a` at offset `rel` (every component in `0..ext`).
    fn bit(&self, a: usize, rel: Cell) -> u32 {
        let [x, y, z] = rel.map(|v| v as usize);
        (a + self.basis * (x + self.ext[0] * (y + self.ext[1] * z))) as u32
    }

    /// Translation key of a set of sites, `None` if it does not fit the grid.
    fn key(&self, sites: &[(usize, Cell)]) -> Option<u128> {
        let mut lo = [i32::MAX; 3];
        for (_, c) in sites {
            for d in 0..3 {
                lo[d] = lo[d].min(c[d]);
            }
        }
        let mut bits = 0u128;
        for &(a, c) in sites {
            let rel = [c[0] - lo[0], c[1] - lo[1], c[2] - lo[2]];
            if (0..3).any(|d| rel[d] as usize >= self.ext[d]) {
                return None;
            }
            bits |= 1u128 << self.bit(a, rel);
        }
        Some(bits)
    }

    /// Orbit key of a set of sites: the smallest key of its images.
    fn orbit_key(&self, ops: &[SiteMap], sites: &[(usize, Cell)]) -> Option<u128> {
        let mut best: Option<u128> = None;
        for g in ops {
            let img: Vec<(usize, Cell)> = sites.iter().map(|&(a, c)| g.apply(a, c)).collect();
            let k = self.key(&img)?;
            best = Some(best.map_or(k, |b| b.min(k)));
        }
        best
    }
}

/// Byte tables of one operation's image of one maximal cluster.
struct ImageTable {
    /// Per mask byte: OR of the image sites' grid bits (offsets from the image's corner).
    pos: Vec<[u128; 256]>,
    /// Per mask byte and dimension: the lowest offset among the selected sites.
    low: Vec<[[i32; 256]; 3]>,
    /// Bits per unit of offset along each dimension.
    stride: [u32; 3],
    dims: usize,
}

impl ImageTable {
    fn new(grid: &Grid, m: &Cluster, g: &SiteMap) -> ImageTable {
        let img: Vec<(usize, Cell)> = m.sites().map(|(a, c)| g.apply(a, c)).collect();
        let mut origin = [i32::MAX; 3];
        for (_, c) in &img {
            for d in 0..3 {
                origin[d] = origin[d].min(c[d]);
            }
        }
        let rel: Vec<(usize, Cell)> = img
            .iter()
            .map(|&(a, c)| (a, [c[0] - origin[0], c[1] - origin[1], c[2] - origin[2]]))
            .collect();
        let bytes = m.len().div_ceil(8);
        let mut pos = vec![[0u128; 256]; bytes];
        let mut low = vec![[[i32::MAX; 256]; 3]; bytes];
        for (b, (pos_b, low_b)) in pos.iter_mut().zip(low.iter_mut()).enumerate() {
            for v in 0..256usize {
                for bit in 0..8 {
                    let k = 8 * b + bit;
                    if v >> bit & 1 == 0 || k >= rel.len() {
                        continue;
                    }
                    let (a, r) = rel[k];
                    pos_b[v] |= 1u128 << grid.bit(a, r);
                    for d in 0..3 {
                        low_b[d][v] = low_b[d][v].min(r[d]);
                    }
                }
            }
        }
        let b = grid.basis as u32;
        ImageTable {
            pos,
            low,
            stride: [
                b,
                b * grid.ext[0] as u32,
                b * (grid.ext[0] * grid.ext[1]) as u32,
            ],
            dims: grid.dims,
        }
    }

    /// Translation key of the image of the subset `mask` (non-zero).
    #[inline]
    fn key(&self, mask: u32) -> u128 {
        let mut bits = 0u128;
        let mut lo = [i32::MAX; 3];
        for (b, (pos, low)) in self.pos.iter().zip(&self.low).enumerate() {
            let v = (mask >> (8 * b) & 255) as usize;
            bits |= pos[v];
            for d in 0..self.dims {
                lo[d] = lo[d].min(low[d][v]);
            }
        }
        let shift: u32 = lo
            .iter()
            .zip(&self.stride)
            .take(self.dims)
            .map(|(l, s)| *l as u32 * s)
            .sum();
        bits >> shift
    }
}

/// Orbit key of a mask: the smallest key over the images.
#[inline]
fn orbit_key(images: &[ImageTable], mask: u32) -> u128 {
    images.iter().map(|t| t.key(mask)).min().unwrap_or_default()
}

/// A fast hasher for u128 keys (a multiply–fold mix; the keys are not adversarial).
#[derive(Default)]
struct KeyHasher(u64);

impl Hasher for KeyHasher {
    fn finish(&self) -> u64 {
        self.0
    }
    fn write(&mut self, bytes: &[u8]) {
        for &b in bytes {
            self.0 = (self.0 ^ b as u64).wrapping_mul(0x100_0000_01b3);
        }
    }
    fn write_u128(&mut self, k: u128) {
        let x = (k as u64) ^ ((k >> 64) as u64).rotate_left(29);
        let m = (x as u128).wrapping_mul(0x9e37_79b9_7f4a_7c15_f39c_c060_5ced_c835);
        self.0 = (m as u64) ^ ((m >> 64) as u64);
    }
}

/// The orbits found so far: ids of keys, and each orbit's size.
#[derive(Default)]
struct Orbits {
    ids: HashMap<u128, u32, BuildHasherDefault<KeyHasher>>,
    sites: Vec<u8>,
    classes: Vec<u16>,
}

impl Orbits {
    /// The mask → orbit table of one maximal cluster, adding its new orbits.
    fn assign(&mut self, images: &[ImageTable], n: usize) -> Vec<u32> {
        let size = 1usize << n;
        let mut table = vec![u32::MAX; size];
        self.ids.reserve(size / images.len().max(1) / 2);
        const CHUNK: usize = 1 << 15;
        let mut keys = vec![0u128; CHUNK.min(size)];
        for start in (0..size).step_by(CHUNK) {
            let end = (start + CHUNK).min(size);
            keys[..end - start]
                .par_iter_mut()
                .enumerate()
                .for_each(|(k, out)| {
                    let mask = (start + k) as u32;
                    *out = if mask == 0 {
                        0
                    } else {
                        orbit_key(images, mask)
                    };
                });
            for (k, &key) in keys[..end - start].iter().enumerate() {
                let mask = start + k;
                if mask == 0 {
                    continue;
                }
                let next = self.sites.len() as u32;
                let id = *self.ids.entry(key).or_insert(next);
                if id == next {
                    self.sites.push(mask.count_ones() as u8);
                    let mut all: Vec<u128> = images.iter().map(|t| t.key(mask as u32)).collect();
                    all.sort_unstable();
                    all.dedup();
                    self.classes.push(all.len() as u16);
                }
                table[mask] = id;
            }
        }
        table
    }
}

/// The active regions' tables, from the maximal clusters' tables.
fn regions(sk: &Skeleton, mut tables: Vec<Vec<u32>>) -> Vec<CompactRegion> {
    let mut out = Vec::new();
    let mut own: Vec<(usize, usize)> = Vec::new();
    for (cluster, coefficient) in sk.regions.iter().filter(|r| r.1 != 0) {
        if let Some(i) = sk.maximal.iter().position(|m| m == cluster) {
            own.push((out.len(), i));
            out.push(CompactRegion {
                cluster: cluster.clone(),
                coefficient: *coefficient,
                maximal: true,
                vars: Vec::new(),
            });
            continue;
        }
        let Some((i, bits)) = placement(cluster, &sk.maximal) else {
            continue;
        };
        let table = &tables[i];
        let n = cluster.len();
        let mut vars = vec![u32::MAX; 1 << n];
        for (rm, slot) in vars.iter_mut().enumerate().skip(1) {
            let mut mm = 0usize;
            for (k, &b) in bits.iter().enumerate() {
                if rm >> k & 1 == 1 {
                    mm |= 1 << b;
                }
            }
            *slot = table[mm];
        }
        out.push(CompactRegion {
            cluster: cluster.clone(),
            coefficient: *coefficient,
            maximal: false,
            vars,
        });
    }
    for (r, i) in own {
        out[r].vars = std::mem::take(&mut tables[i]);
    }
    out
}

/// A maximal cluster containing a translate of `region`, and the bit of each region site
/// in it.
fn placement(region: &Cluster, maximal: &[Cluster]) -> Option<(usize, Vec<usize>)> {
    for (i, m) in maximal.iter().enumerate() {
        for t in region.overlap_translations(m) {
            let moved = region.translated(t);
            if !moved.is_subset_of(m) {
                continue;
            }
            let sites: Vec<(usize, Cell)> = m.sites().collect();
            let bits = moved
                .sites()
                .map(|s| sites.iter().position(|&x| x == s))
                .collect::<Option<Vec<usize>>>()?;
            return Some((i, bits));
        }
    }
    None
}

#[cfg(test)]
mod tests;

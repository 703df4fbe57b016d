//! The extra rungs of a ladder climbed up to N sites (`rungs ladder --up-to N`):
//! square-ish blocks of cells beyond the file's levels.
//!
//! Blocks are `n_1 × … × n_d` cells with `n_1 ≤ … ≤ n_d ≤ n_1 + 1` (2D: 2×2, 2×3, 3×3,
//! 3×4, 4×4, …; 3D: 2×2×2, 2×2×3, 2×3×3, …; 1D: 3, 4, 5, … cells), every basis site of
//! each cell included, with at least three sites, at most N, and at most the lattice
//! crate's cluster limit (`rungs_lattice::MAX_CLUSTER_SITES`). For one-site cells every
//! side is at least 2. A block whose shape is already a level of the file (e.g. the
//! square plaquette is the 2×2 block) is not added twice. Each is added with
//! [`Lattice::with_block_level`] as level `block{n1}x{n2}[x{n3}]`.

use rungs_lattice::{Cell, Lattice, LatticeError, MAX_CLUSTER_SITES};

/// The square-ish block shapes of a `dimension`-D lattice with `basis` sites per cell,
/// `3 ≤ sites ≤ limit`, smallest first.
pub fn shapes(dimension: usize, basis: usize, limit: usize) -> Vec<[usize; 3]> {
    let min_side = if basis == 1 { 2 } else { 1 };
    let mut out = Vec::new();
    // n_1 = a, and k of the d sides are a + 1 (the last k, keeping the order).
    for a in min_side..usize::MAX {
        if basis * a.pow(dimension as u32) > limit {
            break;
        }
        let range = if dimension == 1 { 0..1 } else { 0..dimension };
        for k in range {
            let mut n = [1usize; 3];
            for (i, side) in n.iter_mut().enumerate().take(dimension) {
                *side = if i + k >= dimension { a + 1 } else { a };
            }
            let sites = basis * n.iter().product::<usize>();
            if (3..=limit).contains(&sites) {
                out.push(n);
            }
        }
    }
    out.sort_by_key(|n| (basis * n.iter().product::<usize>(), *n));
    out.dedup();
    out
}

/// A shape translated so its smallest cell offsets are zero, sorted.
fn normalised(shape: &[(usize, Cell)]) -> Vec<(usize, Cell)> {
    let mut low = [i32::MAX; 3];
    for (_, c) in shape {
        for k in 0..3 {
            low[k] = low[k].min(c[k]);
        }
    }
    let mut v: Vec<(usize, Cell)> = shape
        .iter()
        .map(|&(a, c)| (a, [c[0] - low[0], c[1] - low[1], c[2] - low[2]]))
        .collect();
    v.sort_unstable();
    v
}

/// The block of `n` cells as (basis site, cell) pairs.
fn block(basis: usize, n: [usize; 3]) -> Vec<(usize, Cell)> {
    let mut v = Vec::new();
    for k in 0..n[2] as i32 {
        for j in 0..n[1] as i32 {
            for i in 0..n[0] as i32 {
                v.extend((0..basis).map(|a| (a, [i, j, k])));
            }
        }
    }
    v
}

/// Level name of a block, e.g. `block2x3`, `block2x2x3`, `block5` (1D).
pub fn name(dimension: usize, n: [usize; 3]) -> String {
    let sides: Vec<String> = n[..dimension].iter().map(|s| s.to_string()).collect();
    format!("block{}", sides.join("x"))
}

/// `lattice` with every square-ish block of at most `up_to` sites that is not already one
/// of its levels; what was added (or could not be) goes to `notes`.
pub fn with_blocks(
    lattice: &Lattice,
    up_to: usize,
    notes: &mut Vec<String>,
) -> Result<Lattice, LatticeError> {
    let (d, basis) = (lattice.dimension(), lattice.sites_per_cell());
    let known: Vec<Vec<(usize, Cell)>> = lattice
        .level_specs()
        .iter()
        .filter(|l| l.shapes.len() == 1)
        .map(|l| normalised(&l.shapes[0]))
        .collect();
    let mut extended = lattice.clone();
    let mut added = Vec::new();
    for n in shapes(d, basis, up_to.min(MAX_CLUSTER_SITES)) {
        if known.contains(&normalised(&block(basis, n))) {
            continue;
        }
        let level = name(d, n);
        if extended.level_specs().iter().any(|l| l.name == level) {
            continue;
        }
        extended = extended.with_block_level(&level, n)?;
        added.push(format!(
            "`{level}` ({} sites)",
            basis * n.iter().product::<usize>()
        ));
    }
    if !added.is_empty() {
        notes.push(format!(
            "up to {up_to} sites: added blocks of cells beyond the file's levels: {}",
            added.join(", ")
        ));
    }
    if up_to > MAX_CLUSTER_SITES {
        notes.push(format!(
            "up to {up_to} sites: blocks are generated up to {MAX_CLUSTER_SITES} sites, the largest cluster a level may have"
        ));
    }
    Ok(extended)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn square_ish_sequences() {
        assert_eq!(
            shapes(2, 1, 12),
            vec![[2, 2, 1], [2, 3, 1], [3, 3, 1], [3, 4, 1]]
        );
        assert_eq!(shapes(3, 1, 18), vec![[2, 2, 2], [2, 2, 3], [2, 3, 3]]);
        assert_eq!(shapes(1, 1, 5), vec![[3, 1, 1], [4, 1, 1], [5, 1, 1]]);
        // Two sites per cell (honeycomb): 1×2 cells = 4 sites, 2×2 = 8, 2×3 = 12.
        assert_eq!(shapes(2, 2, 12), vec![[1, 2, 1], [2, 2, 1], [2, 3, 1]]);
        // --up-to 25 on the square lattice reaches the 5×5 block (25 sites, the limit).
        assert_eq!(
            shapes(2, 1, 25),
            vec![
                [2, 2, 1],
                [2, 3, 1],
                [3, 3, 1],
                [3, 4, 1],
                [4, 4, 1],
                [4, 5, 1],
                [5, 5, 1]
            ]
        );
        assert_eq!(name(2, [2, 3, 1]), "block2x3");
        assert_eq!(name(1, [5, 1, 1]), "block5");
    }

    #[test]
    fn shapes_are_compared_up_to_translation() {
        let plaquette = [
            (0, [1, 1, 0]),
            (0, [2, 1, 0]),
            (0, [1, 2, 0]),
            (0, [2, 2, 0]),
        ];
        assert_eq!(normalised(&plaquette), normalised(&block(1, [2, 2, 1])));
        assert_ne!(normalised(&plaquette), normalised(&block(1, [2, 3, 1])));
    }
}

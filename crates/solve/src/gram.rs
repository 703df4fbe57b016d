//! Hessians in the Walsh basis summed over groups of cluster states.
//!
//! In correlation functions a region's probabilities are linear,
//! `p(σ) = 2^-n Σ_c ξ_c χ_c(σ)`, so its part of the Hessian of `F = E − T Σ_γ a_γ S_γ`
//! is a Gram form over its states:
//!
//! ```text
//! H_ij += T a_γ 4^-n Σ_σ u_i(σ) u_j(σ) / p(σ),     u_i(σ) = Σ_{c → i} w_c χ_c(σ),
//! ```
//!
//! the sum over the region's masks c that land on row i (with weight `w_c`: 1 on a block
//! of variables; a phase and a symmetric mode's coefficient on a projected block). States
//! with the same column `u(σ)` share one outer product,
//!
//! ```text
//! H += T a_γ 4^-n Σ_g (Σ_{σ ∈ g} 1/p(σ)) u_g u_gᵀ,
//! ```
//!
//! which is exact for any p. On a block of point-group orbit variables (the disordered
//! state's Newton Hessian) or on a projection onto symmetric modes (the Tc search's
//! candidates), states related by a symmetry of the cluster have the same column, so the
//! groups are few: the simple-cubic cube's 256 states fall into at most 22 (the orbits of
//! the cube's vertex sets under the octahedral group, common practice), and its even-sector
//! Hessian costs a few hundred multiplications instead of a visit of each of the 8,128
//! pairs of even subsets. The groups depend only on the level and the block, not on the
//! temperature: built once, used at every probe.
//!
//! Where grouping does not pay (no symmetry to merge states), [`StateGroups::new`]
//! declines and the callers keep the pair visits.

use crate::subset::walsh;

/// The states of every region grouped by their columns `u(σ)` (see the module docs).
#[derive(Debug, Clone)]
pub struct StateGroups {
    /// Order of the matrices assembled.
    m: usize,
    regions: Vec<RegionGroups>,
}

#[derive(Debug, Clone)]
struct RegionGroups {
    /// The group of each state.
    group_of: Vec<u32>,
    /// Per group, the non-zero entries of its column (row, value), rows ascending.
    columns: Vec<Vec<(usize, f64)>>,
}

/// Most entries (rows × states) of one region's columns that [`StateGroups::new`] builds
/// (16 MB of integers); beyond it grouping is not tried: regions that large have too few
/// symmetries to merge their states profitably.
const MAX_ENTRIES: usize = 1 << 22;

/// One region's masks on the rows of the matrix: (mask, row, integer weight); the row's
/// factor multiplies the weight (see [`StateGroups::new`]).
pub type MaskRows = Vec<(usize, usize, i32)>;

impl StateGroups {
    /// Group the states of regions given as `(n, masks)` (n sites; each mask with its
    /// row and integer weight `w`), for matrices of order `m` whose row i carries the
    /// factor `factor[i]`: `u_i(σ) = factor[i] Σ_{(c, i, w)} w χ_c(σ)`, with
    /// `χ_c(σ) = (−1)^{|c ∧ σ|}`. The integer sums are computed by one Walsh–Hadamard
    /// transform per row and compared exactly.
    ///
    /// `None` when grouping would not pay: when the outer products of the groups cost
    /// more than the visits of pairs of masks they replace, or a region's columns would
    /// hold more than 2²² numbers (16 MB).
    pub fn new(
        m: usize,
        factor: &[f64],
        regions: impl IntoIterator<Item = (usize, MaskRows)>,
    ) -> Option<StateGroups> {
        let (groups, pairs, products) = StateGroups::group(m, factor, regions)?;
        (products < pairs).then_some(groups)
    }

    /// The groups, the number of pairs of masks and the cost of the outer products
    /// (`None` beyond [`MAX_ENTRIES`]).
    fn group(
        m: usize,
        factor: &[f64],
        regions: impl IntoIterator<Item = (usize, MaskRows)>,
    ) -> Option<(StateGroups, usize, usize)> {
        let (mut pairs, mut products) = (0usize, 0usize);
        let mut out = Vec::new();
        for (n, masks) in regions {
            let size = 1usize << n;
            let mut rows: Vec<usize> = masks.iter().map(|&(_, row, _)| row).collect();
            rows.sort_unstable();
            rows.dedup();
            // u on every state, row by row: the transform of the row's mask weights.
            let k = rows.len();
            if k * size > MAX_ENTRIES {
                return None;
            }
            let mut u = vec![0i32; k * size];
            for &(mask, row, w) in &masks {
                if let Ok(r) = rows.binary_search(&row) {
                    u[r * size + mask] += w;
                }
            }
            for chunk in u.chunks_exact_mut(size) {
                walsh(chunk);
            }
            // The columns state by state (one contiguous key per state).
            let mut keys = vec![0i32; k * size];
            for (r, chunk) in u.chunks_exact(size).enumerate() {
                for (s, &v) in chunk.iter().enumerate() {
                    keys[s * k + r] = v;
                }
            }
            let mut index: foldhash::HashMap<&[i32], u32> = Default::default();
            let mut group_of = Vec::with_capacity(size);
            let mut columns: Vec<Vec<(usize, f64)>> = Vec::new();
            for key in keys.chunks_exact(k.max(1)).take(size) {
                let next = columns.len() as u32;
                let g = *index.entry(key).or_insert(next);
                if g == next {
                    columns.push(
                        rows.iter()
                            .zip(key)
                            .filter(|(_, &v)| v != 0)
                            .map(|(&row, &v)| (row, factor[row] * f64::from(v)))
                            .collect(),
                    );
                }
                group_of.push(g);
            }
            pairs += masks.len() * (masks.len() + 1) / 2;
            products += size
                + columns
                    .iter()
                    .map(|c| c.len() * (c.len() + 1) / 2)
                    .sum::<usize>();
            out.push(RegionGroups { group_of, columns });
        }
        Some((StateGroups { m, regions: out }, pairs, products))
    }

    /// Order of the matrices.
    pub fn order(&self) -> usize {
        self.m
    }

    /// Number of regions grouped.
    pub fn regions(&self) -> usize {
        self.regions.len()
    }

    /// Number of groups of region `ri`.
    pub fn groups(&self, ri: usize) -> usize {
        self.regions[ri].columns.len()
    }

    /// Add `scale Σ_g (Σ_{σ∈g} inv_p[σ]) u_g u_gᵀ` of region `ri` to the upper triangle
    /// of the column-major `m × m` matrix `h` (`inv_p`: 1/p per state).
    pub fn add_region(&self, ri: usize, inv_p: &[f64], scale: f64, h: &mut [f64]) {
        let r = &self.regions[ri];
        let mut w = vec![0.0; r.columns.len()];
        for (&g, &v) in r.group_of.iter().zip(inv_p) {
            w[g as usize] += v;
        }
        let m = self.m;
        for (col, wg) in r.columns.iter().zip(&w) {
            let wg = scale * wg;
            for (a, &(i, ui)) in col.iter().enumerate() {
                let wi = wg * ui;
                for &(j, uj) in &col[a..] {
                    h[i + m * j] += wi * uj;
                }
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The grouped Gram form against the plain sum over states, on a three-site region
    /// whose masks fall on two rows (common practice: the Gram form of a Hessian of
    /// `Σ p ln p` with p linear in the variables).
    #[test]
    fn grouped_gram_form_is_the_sum_over_states() {
        // Row 0 <- the three one-site masks (a symmetric mode), row 1 <- the three-site mask.
        let masks: MaskRows = vec![(1, 0, 1), (2, 0, 1), (4, 0, 1), (7, 1, 1)];
        let factor = [0.5, 2.0];
        let inv_p: Vec<f64> = (0..8).map(|s| 1.0 + 0.1 * f64::from(s)).collect();
        let mut expect = [0.0; 4];
        for (s, w) in inv_p.iter().enumerate() {
            let chi = |c: usize| crate::subset::parity_sign(c & s);
            let u = [0.5 * (chi(1) + chi(2) + chi(4)), 2.0 * chi(7)];
            for i in 0..2 {
                for j in i..2 {
                    expect[i + 2 * j] += 3.0 * w * u[i] * u[j];
                }
            }
        }
        let (groups, pairs, products) =
            StateGroups::group(2, &factor, [(3, masks.clone())]).unwrap();
        // The columns (3, 1), (1, −1), (−1, 1), (−3, −1) times the factors: four groups of
        // the eight states (σ and its three-site complement share none, the sites' sums
        // differ), so on so small a region grouping does not pay and `new` declines.
        assert_eq!((groups.regions(), groups.groups(0)), (1, 4));
        assert_eq!((pairs, products), (10, 8 + 4 * 3));
        assert!(StateGroups::new(2, &factor, [(3, masks)]).is_none());
        let mut h = [0.0; 4];
        groups.add_region(0, &inv_p, 3.0, &mut h);
        for k in [0, 2, 3] {
            assert!(
                (h[k] - expect[k]).abs() < 1e-12,
                "{k}: {} {}",
                h[k],
                expect[k]
            );
        }
    }
}

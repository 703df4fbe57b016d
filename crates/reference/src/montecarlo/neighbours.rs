//! The torus as a flat compressed-sparse-row (CSR) neighbour table: for site i, the
//! slots `offsets[i]..offsets[i + 1]` hold its neighbours, their couplings and a small
//! integer naming each coupling's value, so the update kernels run over plain slices
//! and never allocate.

use rungs_lattice::Torus;

use super::error::McError;

/// Neighbour table of a finite torus. Each bond (i, j, J) appears twice: j in i's row
/// and i in j's row.
#[derive(Debug, Clone, PartialEq)]
pub struct Neighbours {
    offsets: Vec<u32>,
    targets: Vec<u32>,
    couplings: Vec<f64>,
    kinds: Vec<u32>,
    distinct: Vec<f64>,
}

impl Neighbours {
    /// Build from `sites` sites and bonds `(i, j, J)`. A pair listed twice counts as two
    /// bonds (their couplings add); bonds from a site to itself are refused.
    pub fn from_edges(sites: usize, edges: &[(usize, usize, f64)]) -> Result<Neighbours, McError> {
        let max = u32::MAX as usize;
        if sites == 0 || sites > max {
            return Err(McError::BadSiteCount { sites, max });
        }
        if 2 * edges.len() > max {
            return Err(McError::BadSiteCount {
                sites: 2 * edges.len(),
                max,
            });
        }
        let mut degree = vec![0u32; sites];
        for (index, &(i, j, coupling)) in edges.iter().enumerate() {
            let bad = |detail: String| McError::BadEdge {
                index,
                i,
                j,
                detail,
            };
            if i >= sites || j >= sites {
                return Err(bad(format!("site index beyond the {sites} sites")));
            }
            if i == j {
                return Err(bad("joins a site to itself".into()));
            }
            if !coupling.is_finite() {
                return Err(bad(format!("coupling {coupling} is not a finite number")));
            }
            degree[i] += 1;
            degree[j] += 1;
        }
        let mut offsets = Vec::with_capacity(sites + 1);
        offsets.push(0u32);
        for d in &degree {
            let last = offsets[offsets.len() - 1];
            offsets.push(last + d);
        }
        let slots = 2 * edges.len();
        let mut targets = vec![0u32; slots];
        let mut couplings = vec![0.0; slots];
        let mut fill: Vec<u32> = offsets[..sites].to_vec();
        for &(i, j, coupling) in edges {
            for (a, b) in [(i, j), (j, i)] {
                let slot = fill[a] as usize;
                targets[slot] = b as u32;
                couplings[slot] = coupling;
                fill[a] += 1;
            }
        }
        let mut distinct: Vec<f64> = Vec::new();
        let kinds = couplings
            .iter()
            .map(
                |&c| match distinct.iter().position(|&d| d.to_bits() == c.to_bits()) {
                    Some(k) => k as u32,
                    None => {
                        distinct.push(c);
                        (distinct.len() - 1) as u32
                    }
                },
            )
            .collect();
        Ok(Neighbours {
            offsets,
            targets,
            couplings,
            kinds,
            distinct,
        })
    }

    /// Build from a torus of a lattice file (its bonds with their couplings J).
    pub fn from_torus(torus: &Torus) -> Result<Neighbours, McError> {
        Neighbours::from_edges(torus.sites(), &torus.edges())
    }

    /// Number of sites.
    pub fn sites(&self) -> usize {
        self.offsets.len() - 1
    }

    /// Number of bonds (each counted once).
    pub fn bonds(&self) -> usize {
        self.targets.len() / 2
    }

    /// Row offsets: site i's slots are `offsets()[i]..offsets()[i + 1]`.
    pub fn offsets(&self) -> &[u32] {
        &self.offsets
    }

    /// Neighbour site of every slot.
    pub fn targets(&self) -> &[u32] {
        &self.targets
    }

    /// Coupling J of every slot.
    pub fn couplings(&self) -> &[f64] {
        &self.couplings
    }

    /// Index into [`Neighbours::distinct_couplings`] of every slot's coupling.
    pub fn kinds(&self) -> &[u32] {
        &self.kinds
    }

    /// The distinct coupling values, in order of first appearance.
    pub fn distinct_couplings(&self) -> &[f64] {
        &self.distinct
    }

    /// Whether every coupling is ferromagnetic or zero (J ≥ 0).
    pub fn is_ferromagnetic(&self) -> bool {
        self.distinct.iter().all(|&j| j >= 0.0)
    }

    /// Total energy `E = -Σ_bonds J s_i s_j - h Σ_i s_i` and magnetisation `M = Σ_i s_i`
    /// of a configuration of ±1 spins, in one pass over the table (each bond seen from
    /// both ends, so the bond sum is halved).
    pub fn energy_magnetization(&self, spins: &[i8], field: f64) -> (f64, i64) {
        let mut bond_sum = 0.0;
        let mut magnetization = 0i64;
        for (i, &s) in spins.iter().enumerate() {
            let (a, b) = (self.offsets[i] as usize, self.offsets[i + 1] as usize);
            let mut local = 0.0;
            for (&t, &j) in self.targets[a..b].iter().zip(&self.couplings[a..b]) {
                local += j * f64::from(spins[t as usize]);
            }
            bond_sum += f64::from(s) * local;
            magnetization += i64::from(s);
        }
        (
            -0.5 * bond_sum - field * magnetization as f64,
            magnetization,
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rows_hold_both_directions_and_energy_counts_each_bond_once() {
        // A triangle with couplings 1, 1, -2 (the last listed from the larger index).
        let n = Neighbours::from_edges(3, &[(0, 1, 1.0), (1, 2, 1.0), (2, 0, -2.0)]).unwrap();
        assert_eq!(n.sites(), 3);
        assert_eq!(n.bonds(), 3);
        assert_eq!(n.offsets(), &[0, 2, 4, 6]);
        assert_eq!(n.distinct_couplings(), &[1.0, -2.0]);
        assert!(!n.is_ferromagnetic());
        // All up: E = -(1 + 1 - 2) - h·3.
        let (e, m) = n.energy_magnetization(&[1, 1, 1], 0.5);
        assert_eq!((e, m), (-1.5, 3));
        // Site 2 down: E = -(1 - 1 + 2) - 0.5·1.
        let (e, m) = n.energy_magnetization(&[1, 1, -1], 0.5);
        assert_eq!((e, m), (-2.5, 1));
    }

    #[test]
    fn bad_edges_are_refused_with_their_index() {
        assert!(matches!(
            Neighbours::from_edges(2, &[(0, 1, 1.0), (1, 1, 1.0)]),
            Err(McError::BadEdge { index: 1, .. })
        ));
        assert!(matches!(
            Neighbours::from_edges(2, &[(0, 2, 1.0)]),
            Err(McError::BadEdge { .. })
        ));
        assert!(matches!(
            Neighbours::from_edges(2, &[(0, 1, f64::NAN)]),
            Err(McError::BadEdge { .. })
        ));
        assert!(matches!(
            Neighbours::from_edges(0, &[]),
            Err(McError::BadSiteCount { .. })
        ));
    }
}

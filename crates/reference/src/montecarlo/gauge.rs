//! The sublattice gauge that turns an antiferromagnet into a ferromagnet, so that Wolff
//! clusters apply to it.
//!
//! Flipping the spins of a set of sites, `σ_i = ε_i s_i` with `ε_i = ±1`, maps the
//! couplings to `J'_ij = ε_i ε_j J_ij` and leaves the energy at h = 0 and the Boltzmann
//! weights unchanged. When some ε makes every `J'_ij ≥ 0` (on a bipartite lattice whose
//! bonds are all antiferromagnetic, ε is +1 on one sublattice and −1 on the other) the
//! model is a ferromagnet in the variables σ, where Wolff's clusters (Wolff 1989, Phys.
//! Rev. Lett. 62, 361) are valid; an observable of s is read through `s_i = ε_i σ_i`.
//! [`ferromagnetic_gauge`] finds ε by a breadth-first walk over the bonds, or says that
//! none exists (an odd ring of antiferromagnetic bonds: frustration).

use std::collections::VecDeque;

/// A gauge `ε` (one ±1 per site) with `ε_i ε_j J_ij ≥ 0` on every edge `(i, j, J_ij)`,
/// or `None` when no such choice exists. Every site starts at +1; each connected piece
/// is fixed from its lowest site. Bonds with J = 0 impose nothing. Edges naming a site
/// `≥ sites` give `None`.
///
/// ```
/// use rungs_reference::montecarlo::gauge::ferromagnetic_gauge;
/// // A ring of four antiferromagnetic bonds: alternate signs.
/// let ring4: Vec<_> = (0..4).map(|i| (i, (i + 1) % 4, -1.0)).collect();
/// assert_eq!(ferromagnetic_gauge(4, &ring4), Some(vec![1, -1, 1, -1]));
/// // A triangle of antiferromagnetic bonds is frustrated: no gauge.
/// let triangle: Vec<_> = (0..3).map(|i| (i, (i + 1) % 3, -1.0)).collect();
/// assert_eq!(ferromagnetic_gauge(3, &triangle), None);
/// ```
pub fn ferromagnetic_gauge(sites: usize, edges: &[(usize, usize, f64)]) -> Option<Vec<i8>> {
    let mut adjacency: Vec<Vec<(usize, i8)>> = vec![Vec::new(); sites];
    for &(i, j, coupling) in edges {
        if i >= sites || j >= sites {
            return None;
        }
        if coupling == 0.0 {
            continue;
        }
        let sign = if coupling > 0.0 { 1 } else { -1 };
        adjacency[i].push((j, sign));
        adjacency[j].push((i, sign));
    }
    let mut eps = vec![0i8; sites];
    let mut queue = VecDeque::new();
    for start in 0..sites {
        if eps[start] != 0 {
            continue;
        }
        eps[start] = 1;
        queue.push_back(start);
        while let Some(i) = queue.pop_front() {
            for &(j, sign) in &adjacency[i] {
                let want = eps[i] * sign;
                if eps[j] == 0 {
                    eps[j] = want;
                    queue.push_back(j);
                } else if eps[j] != want {
                    return None;
                }
            }
        }
    }
    Some(eps)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn mixed_signs_and_self_consistency() {
        // Ferromagnetic bonds keep signs, antiferromagnetic ones alternate them; the
        // gauge makes every bond ferromagnetic.
        let edges = [
            (0, 1, 1.0),
            (1, 2, -0.5),
            (2, 3, 1.0),
            (3, 0, -2.0),
            (4, 4, 0.0),
        ];
        let eps = ferromagnetic_gauge(5, &edges).unwrap();
        for &(i, j, c) in &edges {
            assert!(f64::from(eps[i] * eps[j]) * c >= 0.0);
        }
        assert_eq!(eps, vec![1, 1, -1, -1, 1]);
        // An odd number of negative bonds around a ring has no gauge.
        assert_eq!(
            ferromagnetic_gauge(3, &[(0, 1, 1.0), (1, 2, 1.0), (2, 0, -1.0)]),
            None
        );
        assert_eq!(ferromagnetic_gauge(2, &[(0, 5, 1.0)]), None);
    }
}

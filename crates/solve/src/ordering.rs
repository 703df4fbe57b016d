//! What order sets in: the ordering wavevector, the pattern on the cell's sites, and
//! the smallest diagonal supercell that holds it.
//!
//! The critical mode at wavevector q has site components `u_a` (one per basis site,
//! complex); the magnetisation it describes on site a of cell R is
//! `m_a(R) ∝ Re(u_a e^{2πi q·R})`. On the supercell of `n_k` cells along axis k, with
//! `q_k = p_k / n_k` in lowest terms, that pattern is periodic: its values on the
//! supercell's sites ([`Ordering::pattern`]) are the sublattice signs (or weights) of the
//! ordered phase. Its amplitude is the order parameter:
//! `A = Σ_i P_i m_i / Σ_i P_i²` (for ±1 patterns the staggered magnetisation; for the
//! uniform pattern m itself).

use nalgebra::Complex;

use crate::qspace::{phase, Wavevector};

/// Largest supercell denominator tried when writing q as a fraction.
pub const MAX_DENOMINATOR: usize = 12;

/// Most sites a supercell may have (as `Lattice::supercell` accepts).
pub const MAX_SUPERCELL_SITES: usize = 64;

/// Which kind of order, read from the pattern.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ModeKind {
    /// Every site orders the same way (ferromagnetic-like).
    Uniform,
    /// Sites order with opposite signs or unequal weights (Néel order, superstructures).
    Staggered,
    /// The mode has no site component (order in multi-spin correlations only).
    Hidden,
}

impl ModeKind {
    /// A lower-case word for reports.
    pub fn as_str(self) -> &'static str {
        match self {
            ModeKind::Uniform => "uniform",
            ModeKind::Staggered => "staggered",
            ModeKind::Hidden => "hidden",
        }
    }
}

/// The order a level's disordered state becomes unstable to.
#[derive(Debug, Clone, PartialEq)]
pub struct Ordering {
    /// Spatial dimension (components of `wavevector` beyond it are 0).
    pub dimension: usize,
    /// The ordering wavevector, components in [0, 1) in units of the reciprocal
    /// primitive vectors.
    pub wavevector: Wavevector,
    /// `wavevector` as fractions `p/n` (n ≤ [`MAX_DENOMINATOR`]); `exact` says whether
    /// they equal it (to 10⁻⁶) or only approximate an incommensurate q.
    pub fractions: [(i64, usize); 3],
    /// Whether `fractions` are exact.
    pub exact: bool,
    /// Site components `u_a` of the critical mode, largest |·| = 1.
    pub site_mode: Vec<Complex<f64>>,
    /// A direction along which the instability is flat (degenerate), if any: the
    /// minimum is a line, and `wavevector` is one point of it.
    pub flat_direction: Option<Wavevector>,
}

impl Ordering {
    /// An ordering at `q` with the given site components.
    pub fn new(dimension: usize, q: Wavevector, site_mode: Vec<Complex<f64>>) -> Ordering {
        let mut wavevector = [0.0; 3];
        let mut fractions = [(0i64, 1usize); 3];
        let mut exact = true;
        for k in 0..dimension {
            let c = q[k].rem_euclid(1.0);
            let (p, n, err) = best_fraction(c);
            fractions[k] = (p, n);
            exact &= err < 1e-6;
            wavevector[k] = if err < 1e-6 { p as f64 / n as f64 } else { c };
            if wavevector[k] >= 1.0 - 1e-12 {
                wavevector[k] = 0.0;
                fractions[k] = (0, 1);
            }
        }
        let big = site_mode.iter().map(|c| c.norm()).fold(0.0, f64::max);
        let site_mode = if big > 1e-12 {
            // Global phase: the largest component real and positive.
            let k = site_mode
                .iter()
                .position(|c| c.norm() >= big * (1.0 - 1e-9))
                .unwrap_or(0);
            let rot = site_mode[k].conj() / site_mode[k].norm();
            site_mode.iter().map(|c| c * rot / big).collect()
        } else {
            vec![Complex::new(0.0, 0.0); site_mode.len()]
        };
        Ordering {
            dimension,
            wavevector,
            fractions,
            exact,
            site_mode,
            flat_direction: None,
        }
    }

    /// The smallest diagonal supercell commensurate with the (rational) wavevector:
    /// the denominators of its components.
    pub fn supercell(&self) -> [usize; 3] {
        [
            self.fractions[0].1,
            self.fractions[1].1,
            self.fractions[2].1,
        ]
    }

    /// Sites of that supercell for a primitive basis of `nb` sites.
    pub fn supercell_sites(&self, nb: usize) -> usize {
        nb * self.supercell().iter().product::<usize>()
    }

    /// The wavevector as written with the fractions (rational q).
    pub fn rational_wavevector(&self) -> Wavevector {
        let mut q = [0.0; 3];
        for (k, &(p, n)) in self.fractions.iter().enumerate() {
            q[k] = p as f64 / n as f64;
        }
        q
    }

    /// Whether the order keeps the primitive translations (q = 0).
    pub fn is_uniform_q(&self) -> bool {
        self.fractions.iter().all(|&(p, _)| p == 0)
    }

    /// The pattern on the sites of the supercell (numbered as `Lattice::supercell`
    /// numbers them: basis fastest, then cells along axis 0, 1, 2), largest |·| = 1:
    /// `P(a, R) = Re(u_a e^{2πi q·R})` at the rational q.
    pub fn pattern(&self) -> Vec<f64> {
        let n = self.supercell();
        let q = self.rational_wavevector();
        let mut out = Vec::new();
        for k in 0..n[2] as i32 {
            for j in 0..n[1] as i32 {
                for i in 0..n[0] as i32 {
                    let ph = phase(&q, &[i, j, k]);
                    for u in &self.site_mode {
                        out.push((u * ph).re);
                    }
                }
            }
        }
        let big = out.iter().map(|v| v.abs()).fold(0.0, f64::max);
        if big > 1e-12 {
            out.iter_mut().for_each(|v| {
                *v /= big;
                if v.abs() < 1e-12 {
                    *v = 0.0;
                }
            });
        }
        out
    }

    /// Uniform, staggered or hidden.
    pub fn kind(&self) -> ModeKind {
        let p = self.pattern();
        if p.iter().all(|v| v.abs() < 1e-9) {
            ModeKind::Hidden
        } else if p.iter().all(|&v| (v - 1.0).abs() < 1e-9) {
            ModeKind::Uniform
        } else {
            ModeKind::Staggered
        }
    }
}

/// The amplitude of `pattern` in the sublattice magnetisations `m` (same site order):
/// `A = Σ P_i m_i / Σ P_i²`, 0 for an all-zero pattern.
pub fn amplitude(pattern: &[f64], m: &[f64]) -> f64 {
    let norm: f64 = pattern.iter().map(|p| p * p).sum();
    if norm == 0.0 {
        return 0.0;
    }
    pattern.iter().zip(m).map(|(p, x)| p * x).sum::<f64>() / norm
}

/// The fraction p/n (n ≤ [`MAX_DENOMINATOR`], smallest n among the best) nearest to
/// `c ∈ [0, 1)`, and its distance.
pub fn best_fraction(c: f64) -> (i64, usize, f64) {
    let mut best = (0i64, 1usize, c.min(1.0 - c).abs());
    for n in 1..=MAX_DENOMINATOR {
        let p = (c * n as f64).round() as i64;
        let err = (c - p as f64 / n as f64).abs();
        if err < best.2 - 1e-9 {
            best = (p, n, err);
        }
    }
    if best.0 as usize == best.1 {
        best.0 = 0;
        best.1 = 1;
    }
    best
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn neel_pattern_on_the_square_lattice() {
        let o = Ordering::new(2, [0.5, 0.5, 0.0], vec![Complex::new(-0.3, 0.0)]);
        assert_eq!(o.supercell(), [2, 2, 1]);
        assert!(o.exact);
        assert_eq!(o.pattern(), vec![1.0, -1.0, -1.0, 1.0]);
        assert_eq!(o.kind(), ModeKind::Staggered);
        assert!((amplitude(&o.pattern(), &[0.7, -0.7, -0.7, 0.7]) - 0.7).abs() < 1e-15);
    }

    #[test]
    fn three_sublattice_pattern_and_incommensurate_q() {
        let o = Ordering::new(2, [1.0 / 3.0, 1.0 / 3.0, 0.0], vec![Complex::new(1.0, 0.0)]);
        assert_eq!(o.supercell(), [3, 3, 1]);
        let p = o.pattern();
        assert_eq!(p[0], 1.0);
        assert!((p[1] + 0.5).abs() < 1e-12);
        let inc = Ordering::new(1, [0.2371, 0.0, 0.0], vec![Complex::new(1.0, 0.0)]);
        assert!(!inc.exact);
        assert_eq!(inc.fractions[0], (1, 4));
        let uni = Ordering::new(3, [0.0, 0.0, 0.0], vec![Complex::new(2.0, 0.0)]);
        assert_eq!(uni.kind(), ModeKind::Uniform);
        assert!(uni.is_uniform_q());
    }
}

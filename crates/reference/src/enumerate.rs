//! Exact enumeration of small samples (tori of any lattice file, or any graph given as an
//! edge list) — every one of the `2^N` spin states, `N ≤ 30`.
//!
//! Method. States are visited in Gray-code order, so each step flips one spin `i` (the
//! lowest set bit of the step counter); spin `N − 1` is held up and the other half of
//! state space is added by global spin reversal at the end. Bonds are grouped into
//! classes of equal coupling `J_c`; a state's energy is then
//! `E = −Σ_c J_c (B_c − 2 n_c) − h M`, with `B_c` the bonds of class c, `n_c` those whose
//! spins are antiparallel and `M = N − 2d` (`d` down spins). Flipping spin `i` changes
//! `n_c` by `deg_c(i) − 2·popcount(antiparallel neighbours)` — a mask-and-popcount per
//! class — so the walk fills the **density of states** `g(n₁, …, n_C, d)` with integer
//! counts in a few nanoseconds per state. Any (T, h) is then evaluated from `g` alone,
//! with log-sum-exp scaling (`ln Z = max + ln Σ exp(ln g − βE − max)`), so nothing
//! overflows at any temperature.
//!
//! When the couplings take too many distinct values for the histogram
//! (`Π_c (B_c + 1) · (N + 1)` above [`MAX_HISTOGRAM`] entries), each evaluation instead
//! walks the states twice: once for the ground-state energy, once accumulating
//! Boltzmann weights shifted by it (same Gray-code walk, energies tracked through local
//! fields).
//!
//! Two bonds joining the same pair of sites are merged (their couplings add).

use std::collections::HashMap;

use rungs_lattice::{Lattice, LatticeError, Torus};
use thiserror::Error;

/// The largest number of sites enumerated (2^30 states).
pub const MAX_SITES: usize = 30;

/// The largest density-of-states histogram kept (entries).
pub const MAX_HISTOGRAM: usize = 1 << 22;

/// Errors of exact enumeration; each says what to change.
#[derive(Debug, Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum EnumerateError {
    /// More sites than [`MAX_SITES`].
    #[error("exact enumeration is limited to {limit} sites (2^{limit} states); this sample has {sites} — choose a smaller torus")]
    TooManySites {
        /// Sites requested.
        sites: usize,
        /// The limit, [`MAX_SITES`].
        limit: usize,
    },
    /// No sites at all.
    #[error("nothing to enumerate: the sample has no sites")]
    Empty,
    /// A bond endpoint outside the sample.
    #[error("bond {index} names site {site}, but the sample has only {sites} sites (0..{sites})")]
    SiteOutOfRange {
        /// Position of the bond in the list.
        index: usize,
        /// The offending site index.
        site: usize,
        /// Number of sites.
        sites: usize,
    },
    /// A bond from a site to itself.
    #[error("bond {index} joins site {site} to itself; remove it (it only shifts the energy)")]
    SelfBond {
        /// Position of the bond in the list.
        index: usize,
        /// The site.
        site: usize,
    },
    /// A coupling that is NaN or infinite.
    #[error("bond {index} has coupling {j}; couplings must be finite")]
    NonFiniteCoupling {
        /// Position of the bond in the list.
        index: usize,
        /// The value.
        j: f64,
    },
    /// Temperature not positive and finite.
    #[error("temperature {t} is not usable: give a positive, finite temperature")]
    BadTemperature {
        /// The value given.
        t: f64,
    },
    /// Field not finite.
    #[error("field {h} is not usable: give a finite field")]
    BadField {
        /// The value given.
        h: f64,
    },
    /// The torus could not be built.
    #[error(transparent)]
    Lattice(#[from] LatticeError),
}

/// Exact thermodynamics of a finite sample at one (T, h), per site.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Thermo {
    /// Temperature.
    pub temperature: f64,
    /// Field.
    pub field: f64,
    /// Number of sites N.
    pub sites: usize,
    /// `ln Z` of the whole sample (not per site).
    pub ln_z: f64,
    /// Free energy per site, `−T ln Z / N`.
    pub free_energy: f64,
    /// Internal energy per site, `⟨E⟩/N`.
    pub energy: f64,
    /// Entropy per site, `(u − f)/T`.
    pub entropy: f64,
    /// Specific heat per site, `(⟨E²⟩ − ⟨E⟩²)/(N T²)`.
    pub specific_heat: f64,
    /// `⟨m⟩`, `m = M/N`.
    pub magnetization: f64,
    /// `⟨m²⟩`.
    pub m2: f64,
    /// `⟨|m|⟩`.
    pub abs_m: f64,
    /// `⟨m⁴⟩` (for Binder cumulants).
    pub m4: f64,
    /// Susceptibility per site, `N (⟨m²⟩ − ⟨m⟩²)/T`.
    pub susceptibility: f64,
}

/// The density of states `g(n₁..n_C, d)`, flattened.
#[derive(Debug, Clone)]
struct Dos {
    /// Counts; index = Σ_c n_c · stride_c + d · stride_d.
    counts: Vec<u64>,
    strides: Vec<usize>,
    stride_d: usize,
}

/// An exactly enumerated sample: its bonds grouped by coupling and, when small enough,
/// its density of states. Build once, evaluate at any (T, h).
#[derive(Debug, Clone)]
pub struct Enumeration {
    n: usize,
    /// Merged bonds `(i, j, J)`, `i < j`.
    edges: Vec<(usize, usize, f64)>,
    /// Distinct couplings and the number of bonds carrying each.
    classes: Vec<(f64, usize)>,
    dos: Option<Dos>,
}

impl Enumeration {
    /// Enumerate the torus of `lattice` with `size` cells per direction.
    pub fn of_lattice(lattice: &Lattice, size: &[usize]) -> Result<Enumeration, EnumerateError> {
        Enumeration::of_torus(&Torus::new(lattice, size)?)
    }

    /// Enumerate a torus (its sites and bonds).
    pub fn of_torus(torus: &Torus) -> Result<Enumeration, EnumerateError> {
        Enumeration::new(torus.sites(), &torus.edges())
    }

    /// Enumerate `n_sites` spins coupled by `edges` `(i, j, J)` (energy `−J s_i s_j` each).
    /// Fails beyond [`MAX_SITES`] sites, on a bond out of range or onto its own site, or
    /// on a non-finite coupling.
    pub fn new(
        n_sites: usize,
        edges: &[(usize, usize, f64)],
    ) -> Result<Enumeration, EnumerateError> {
        if n_sites == 0 {
            return Err(EnumerateError::Empty);
        }
        if n_sites > MAX_SITES {
            return Err(EnumerateError::TooManySites {
                sites: n_sites,
                limit: MAX_SITES,
            });
        }
        let mut merged: HashMap<(usize, usize), f64> = HashMap::new();
        for (index, &(i, j, c)) in edges.iter().enumerate() {
            for site in [i, j] {
                if site >= n_sites {
                    return Err(EnumerateError::SiteOutOfRange {
                        index,
                        site,
                        sites: n_sites,
                    });
                }
            }
            if i == j {
                return Err(EnumerateError::SelfBond { index, site: i });
            }
            if !c.is_finite() {
                return Err(EnumerateError::NonFiniteCoupling { index, j: c });
            }
            *merged.entry((i.min(j), i.max(j))).or_insert(0.0) += c;
        }
        let mut edges: Vec<(usize, usize, f64)> = merged
            .into_iter()
            .filter(|&(_, c)| c != 0.0)
            .map(|((i, j), c)| (i, j, c))
            .collect();
        edges.sort_by_key(|e| (e.0, e.1));
        let mut classes: Vec<(f64, usize)> = Vec::new();
        for &(_, _, c) in &edges {
            match classes.iter_mut().find(|(v, _)| *v == c) {
                Some(cl) => cl.1 += 1,
                None => classes.push((c, 1)),
            }
        }
        let mut out = Enumeration {
            n: n_sites,
            edges,
            classes,
            dos: None,
        };
        let size = out.classes.iter().try_fold(n_sites + 1, |acc, &(_, b)| {
            acc.checked_mul(b + 1).filter(|&s| s <= MAX_HISTOGRAM)
        });
        if size.is_some() {
            out.dos = Some(out.density_of_states());
        }
        Ok(out)
    }

    /// Number of sites.
    pub fn sites(&self) -> usize {
        self.n
    }

    /// Whether the density of states was accumulated (evaluations are then instant);
    /// otherwise each evaluation re-walks all states.
    pub fn has_density_of_states(&self) -> bool {
        self.dos.is_some()
    }

    /// The distinct couplings and how many bonds carry each.
    pub fn coupling_classes(&self) -> &[(f64, usize)] {
        &self.classes
    }

    fn class_of(&self, c: f64) -> usize {
        self.classes.iter().position(|(v, _)| *v == c).unwrap_or(0)
    }

    /// Per spin: `(neighbour mask, degree, stride)` for each class with neighbours.
    fn spin_terms(&self, strides: &[usize]) -> (Vec<(u32, isize, isize)>, Vec<usize>) {
        let mut terms = Vec::new();
        let mut start = vec![0];
        for i in 0..self.n {
            let mut masks = vec![0u32; self.classes.len()];
            for &(a, b, c) in &self.edges {
                let other = if a == i {
                    b
                } else if b == i {
                    a
                } else {
                    continue;
                };
                masks[self.class_of(c)] |= 1 << other;
            }
            for (c, &m) in masks.iter().enumerate() {
                if m != 0 {
                    terms.push((m, m.count_ones() as isize, strides[c] as isize));
                }
            }
            start.push(terms.len());
        }
        (terms, start)
    }

    fn density_of_states(&self) -> Dos {
        let n = self.n;
        let mut strides = Vec::with_capacity(self.classes.len());
        let mut s = 1usize;
        for &(_, b) in &self.classes {
            strides.push(s);
            s *= b + 1;
        }
        let stride_d = s;
        let size = s * (n + 1);
        let (terms, start) = self.spin_terms(&strides);
        let mut half = vec![0u64; size];
        let mut state: u32 = 0;
        let mut idx: isize = 0;
        half[0] = 1;
        let sd = stride_d as isize;
        for k in 1u64..(1u64 << (n - 1)) {
            let i = k.trailing_zeros() as usize;
            let si = (state >> i) & 1;
            let x = state ^ 0u32.wrapping_sub(si);
            let mut delta = if si == 0 { sd } else { -sd };
            for &(mask, deg, stride) in &terms[start[i]..start[i + 1]] {
                let anti = (x & mask).count_ones() as isize;
                delta += (deg - 2 * anti) * stride;
            }
            idx += delta;
            state ^= 1 << i;
            half[idx as usize] += 1;
        }
        // Global reversal: (n_c, d) ↦ (n_c, N − d).
        let mut counts = vec![0u64; size];
        for d in 0..=n {
            let (lo, hi) = (d * stride_d, (n - d) * stride_d);
            for r in 0..stride_d {
                counts[lo + r] = half[lo + r] + half[hi + r];
            }
        }
        Dos {
            counts,
            strides,
            stride_d,
        }
    }

    /// Exact thermodynamics at temperature `t > 0` and field `h`.
    pub fn thermo(&self, t: f64, h: f64) -> Result<Thermo, EnumerateError> {
        if !(t > 0.0 && t.is_finite()) {
            return Err(EnumerateError::BadTemperature { t });
        }
        if !h.is_finite() {
            return Err(EnumerateError::BadField { h });
        }
        let m = match &self.dos {
            Some(dos) => self.moments_from_dos(dos, t, h),
            None => self.moments_direct(t, h),
        };
        Ok(m.finish(self.n, t, h))
    }

    fn moments_from_dos(&self, dos: &Dos, t: f64, h: f64) -> Moments {
        let beta = 1.0 / t;
        let n = self.n;
        let bond_sum: f64 = self.classes.iter().map(|&(c, b)| c * b as f64).sum();
        // Decode each histogram index into (energy, M).
        let levels: Vec<(f64, f64, f64)> = dos
            .counts
            .iter()
            .enumerate()
            .filter(|(_, &g)| g > 0)
            .map(|(idx, &g)| {
                let d = idx / dos.stride_d;
                let mut e = -bond_sum;
                for (c, &(jc, b)) in self.classes.iter().enumerate() {
                    let nc = (idx / dos.strides[c]) % (b + 1);
                    e += 2.0 * jc * nc as f64;
                }
                let mag = n as f64 - 2.0 * d as f64;
                e -= h * mag;
                ((g as f64).ln() - beta * e, e, mag)
            })
            .collect();
        Moments::accumulate(levels.iter().copied())
    }

    /// Two Gray-code walks: ground-state energy, then shifted Boltzmann sums.
    fn moments_direct(&self, t: f64, h: f64) -> Moments {
        let n = self.n;
        let mut nbrs: Vec<Vec<(usize, f64)>> = vec![Vec::new(); n];
        for &(i, j, c) in &self.edges {
            nbrs[i].push((j, c));
            nbrs[j].push((i, c));
        }
        let e0: f64 = -self.edges.iter().map(|e| e.2).sum::<f64>() - h * n as f64;
        let walk = |visit: &mut dyn FnMut(f64, f64)| {
            let mut s = vec![1.0f64; n];
            let mut field: Vec<f64> = (0..n)
                .map(|i| nbrs[i].iter().map(|&(_, c)| c).sum())
                .collect();
            let (mut e, mut mag) = (e0, n as f64);
            visit(e, mag);
            for k in 1u64..(1u64 << n) {
                let i = k.trailing_zeros() as usize;
                e += 2.0 * s[i] * (field[i] + h);
                mag -= 2.0 * s[i];
                for &(j, c) in &nbrs[i] {
                    field[j] -= 2.0 * c * s[i];
                }
                s[i] = -s[i];
                visit(e, mag);
            }
        };
        let mut e_min = f64::INFINITY;
        walk(&mut |e, _| e_min = e_min.min(e));
        let beta = 1.0 / t;
        let mut acc = Moments::new(-beta * e_min);
        walk(&mut |e, mag| acc.add(-beta * e, e, mag));
        acc
    }
}

/// Weighted sums `Σ w·(1, E, E², M, M², |M|, M⁴)` with weights `w = exp(lw − shift)`.
#[derive(Debug, Clone, Copy)]
struct Moments {
    shift: f64,
    z: f64,
    e: f64,
    e2: f64,
    m: f64,
    m2: f64,
    am: f64,
    m4: f64,
    /// Energy offset subtracted before squaring (keeps the variance accurate).
    e_ref: f64,
}

impl Moments {
    fn new(shift: f64) -> Moments {
        Moments {
            shift,
            z: 0.0,
            e: 0.0,
            e2: 0.0,
            m: 0.0,
            m2: 0.0,
            am: 0.0,
            m4: 0.0,
            e_ref: f64::NAN,
        }
    }

    fn add(&mut self, lw: f64, e: f64, mag: f64) {
        if self.e_ref.is_nan() {
            self.e_ref = e;
        }
        let w = (lw - self.shift).exp();
        let de = e - self.e_ref;
        let m2 = mag * mag;
        self.z += w;
        self.e += w * de;
        self.e2 += w * de * de;
        self.m += w * mag;
        self.m2 += w * m2;
        self.am += w * mag.abs();
        self.m4 += w * m2 * m2;
    }

    /// From `(ln weight, E, M)` levels: shift by the largest log-weight, then sum.
    fn accumulate(levels: impl Iterator<Item = (f64, f64, f64)> + Clone) -> Moments {
        let shift = levels
            .clone()
            .map(|l| l.0)
            .fold(f64::NEG_INFINITY, f64::max);
        let mut acc = Moments::new(shift);
        // Reference energy: the most probable level, so E − e_ref is small where it matters.
        if let Some(top) = levels.clone().find(|l| l.0 == shift) {
            acc.e_ref = top.1;
        }
        for (lw, e, mag) in levels {
            acc.add(lw, e, mag);
        }
        acc
    }

    fn finish(&self, n: usize, t: f64, h: f64) -> Thermo {
        let nf = n as f64;
        let ln_z = self.shift + self.z.ln();
        let mean_de = self.e / self.z;
        let var_e = (self.e2 / self.z - mean_de * mean_de).max(0.0);
        let energy = (self.e_ref + mean_de) / nf;
        let free_energy = -t * ln_z / nf;
        let mm = self.m / self.z / nf;
        let m2 = self.m2 / self.z / (nf * nf);
        Thermo {
            temperature: t,
            field: h,
            sites: n,
            ln_z,
            free_energy,
            energy,
            entropy: (energy - free_energy) / t,
            specific_heat: var_e / (nf * t * t),
            magnetization: mm,
            m2,
            abs_m: self.am / self.z / nf,
            m4: self.m4 / self.z / (nf * nf * nf * nf),
            susceptibility: nf * (m2 - mm * mm).max(0.0) / t,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Periodic L1 × L2 square lattice, site x + L1·y.
    fn square_torus(l1: usize, l2: usize, j: f64) -> Vec<(usize, usize, f64)> {
        let mut e = Vec::new();
        for y in 0..l2 {
            for x in 0..l1 {
                let s = x + l1 * y;
                e.push((s, (x + 1) % l1 + l1 * y, j));
                e.push((s, x + l1 * ((y + 1) % l2), j));
            }
        }
        e
    }

    #[test]
    fn two_spins_by_hand() {
        // Z = 2e^{K+2B} ... for one bond with field: states ++, --, +-, -+.
        let (t, j, h) = (0.7f64, 1.3f64, 0.4f64);
        let (k, b) = (j / t, h / t);
        let z = (k + 2.0 * b).exp() + (k - 2.0 * b).exp() + 2.0 * (-k).exp();
        let e = Enumeration::new(2, &[(0, 1, j)]).unwrap();
        let th = e.thermo(t, h).unwrap();
        assert!((th.ln_z - z.ln()).abs() < 1e-14);
        let m = ((k + 2.0 * b).exp() - (k - 2.0 * b).exp()) / z;
        assert!((th.magnetization - m).abs() < 1e-14);
    }

    #[test]
    fn dos_and_direct_walk_agree() {
        // Same sample through the histogram and through the direct Boltzmann walk.
        let edges = square_torus(4, 3, 1.0);
        let a = Enumeration::new(12, &edges).unwrap();
        assert!(a.has_density_of_states());
        let mut b = a.clone();
        b.dos = None;
        for &(t, h) in &[(0.5, 0.0), (2.3, 0.0), (1.5, 0.3), (10.0, -1.0)] {
            let x = a.thermo(t, h).unwrap();
            let y = b.thermo(t, h).unwrap();
            for (p, q) in [
                (x.ln_z, y.ln_z),
                (x.energy, y.energy),
                (x.specific_heat, y.specific_heat),
                (x.magnetization, y.magnetization),
                (x.m2, y.m2),
                (x.abs_m, y.abs_m),
                (x.susceptibility, y.susceptibility),
            ] {
                assert!(
                    (p - q).abs() < 1e-10 * (1.0 + p.abs()),
                    "T={t} h={h}: {p} vs {q}"
                );
            }
        }
    }

    #[test]
    fn ground_state_and_infinite_temperature() {
        let e = Enumeration::new(16, &square_torus(4, 4, 1.0)).unwrap();
        // T → ∞: ln Z → N ln 2, u → 0; T → 0: u → −2J per site, ⟨m²⟩ → 1 (common practice).
        let hot = e.thermo(1e6, 0.0).unwrap();
        assert!((hot.ln_z - 16.0 * std::f64::consts::LN_2).abs() < 1e-4);
        let cold = e.thermo(0.05, 0.0).unwrap();
        assert!((cold.energy + 2.0).abs() < 1e-12);
        assert!((cold.m2 - 1.0).abs() < 1e-12);
        assert!(cold.ln_z.is_finite() && (cold.ln_z - (32.0 / 0.05 + 2f64.ln())).abs() < 1e-9);
    }

    #[test]
    fn fluctuation_formulas_match_derivatives() {
        // c = dU/dT and χ = dm/dh (fluctuation–dissipation, common practice).
        let e = Enumeration::new(9, &square_torus(3, 3, 0.8)).unwrap();
        let (t, h, d) = (1.7, 0.2, 1e-5);
        let th = e.thermo(t, h).unwrap();
        let du =
            (e.thermo(t + d, h).unwrap().energy - e.thermo(t - d, h).unwrap().energy) / (2.0 * d);
        assert!((du - th.specific_heat).abs() < 1e-7);
        let dm = (e.thermo(t, h + d).unwrap().magnetization
            - e.thermo(t, h - d).unwrap().magnetization)
            / (2.0 * d);
        assert!((dm - th.susceptibility).abs() < 1e-7);
    }

    #[test]
    fn several_coupling_classes_and_merging() {
        // A 3-ring with couplings 1, 1, −0.5, one bond given twice in two halves.
        let edges = [(0, 1, 1.0), (1, 2, 1.0), (2, 0, -0.25), (0, 2, -0.25)];
        let e = Enumeration::new(3, &edges).unwrap();
        assert_eq!(e.coupling_classes().len(), 2);
        let t = 0.9f64;
        let mut z = 0.0;
        for s in 0..8u32 {
            let sp = |i: u32| if (s >> i) & 1 == 0 { 1.0 } else { -1.0 };
            let en = -(sp(0) * sp(1) + sp(1) * sp(2) - 0.5 * sp(2) * sp(0));
            z += (-en / t).exp();
        }
        assert!((e.thermo(t, 0.0).unwrap().ln_z - z.ln()).abs() < 1e-13);
    }

    #[test]
    fn refuses_too_many_sites_and_bad_input() {
        let err = Enumeration::new(31, &[]).unwrap_err();
        assert_eq!(
            err,
            EnumerateError::TooManySites {
                sites: 31,
                limit: 30
            }
        );
        assert!(err.to_string().contains("30"));
        assert!(matches!(
            Enumeration::new(2, &[(0, 2, 1.0)]),
            Err(EnumerateError::SiteOutOfRange { .. })
        ));
        assert!(matches!(
            Enumeration::new(2, &[(1, 1, 1.0)]),
            Err(EnumerateError::SelfBond { .. })
        ));
        assert!(matches!(
            Enumeration::new(2, &[(0, 1, f64::NAN)]),
            Err(EnumerateError::NonFiniteCoupling { .. })
        ));
        let e = Enumeration::new(2, &[(0, 1, 1.0)]).unwrap();
        assert!(matches!(
            e.thermo(0.0, 0.0),
            Err(EnumerateError::BadTemperature { .. })
        ));
        assert!(matches!(
            e.thermo(1.0, f64::INFINITY),
            Err(EnumerateError::BadField { .. })
        ));
    }
}

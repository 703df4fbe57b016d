//! The free energy of a [`CompactLevel`] on orbit variables, matrix-free.
//!
//! With `P_r` the map from orbit variables y to the subsets (masks) of region r
//! (`(P_r y)_c = y_{vars[c]}`, `ξ_∅ = 1`) and `W` the Walsh–Hadamard transform:
//!
//! ```text
//! p_r = 2^-n W P_r y,                F(y) = E(y) − T Σ_r a_r S_r,  S_r = −Σ_σ p_r ln p_r
//! ∇F  = ∇E + T Σ_r a_r 2^-n P_rᵀ W ln p_r
//! H v = T Σ_r a_r 4^-n P_rᵀ W diag(1/p_r) W P_r v      (two transforms per region)
//! H_kk = T Σ_r a_r 4^-n Σ_{c,d ∈ S_k(r)} (W (1/p_r))[c ⊕ d]   (S_k(r): masks of orbit k)
//! ```
//!
//! **Spin-flip symmetry.** Where every odd correlation is zero (the paramagnet at
//! h = 0, the state of every Tc probe), `p_r(σ) = p_r(−σ)` and each transform is done at
//! half length: with `half = 2^(n−1)` and the top site's bit folded,
//!
//! ```text
//! (W f)[s] = (W_{n−1} (f_low + f_high))[s]            for s < half (the other half
//!                                                     follows from p(σ) = p(−σ))
//! (W z)[c] = 2 (W_{n−1} z_low)[c mod half]            for z(−σ) = ±z(σ) and |c| of
//!                                                     the matching parity, else 0
//! ```
//!
//! so F, ∇F, H·v (one parity at a time: H is block diagonal there), M⁻¹·v and diag H
//! cost half the transforms and half the memory traffic of the general path.
//!
//! Nothing of size (variables)² exists: memory is a few vectors of 2^n per region (the
//! masks' orbits, the masks grouped by orbit, 1/p at the current point, one scratch).
//! Scatter `P_r v` reads v at random, gather `P_rᵀ w` sums each orbit's masks: both are
//! race-free parallel loops; the transforms are [`wht_fast`].

use rayon::prelude::*;
use rungs_lattice::{BondTerm, CompactLevel};

use crate::wht::wht_fast;

/// Regions at least this large are processed with parallel loops.
const PARALLEL: usize = 1 << 16;

/// Chunk of the deterministic parallel sums.
const CHUNK: usize = 1 << 14;

/// The masks of each orbit in one region, grouped (a CSR index).
struct Members {
    offsets: Vec<u32>,
    masks: Vec<u32>,
}

impl Members {
    fn new(vars: &[u32], orbits: usize) -> Members {
        let mut offsets = vec![0u32; orbits + 1];
        for &v in vars.iter().skip(1) {
            offsets[v as usize + 1] += 1;
        }
        for k in 0..orbits {
            offsets[k + 1] += offsets[k];
        }
        let mut fill = offsets.clone();
        let mut masks = vec![0u32; vars.len().saturating_sub(1)];
        for (c, &v) in vars.iter().enumerate().skip(1) {
            let slot = &mut fill[v as usize];
            masks[*slot as usize] = c as u32;
            *slot += 1;
        }
        Members { offsets, masks }
    }

    fn of(&self, k: usize) -> &[u32] {
        &self.masks[self.offsets[k] as usize..self.offsets[k + 1] as usize]
    }
}

/// Free energy, energy and entropy per cell at a point.
#[derive(Debug, Clone, Copy)]
pub struct Eval {
    /// F per cell.
    pub free_energy: f64,
    /// E per cell.
    pub energy: f64,
    /// Σ_r a_r S_r per cell.
    pub entropy: f64,
}

/// The matrix-free functional of a compact level at (T, h), with its work buffers.
pub struct Model<'a> {
    level: &'a CompactLevel,
    t: f64,
    h: f64,
    members: Vec<Members>,
    /// 1/p of each region at the last point evaluated with a feasible result.
    inv_p: Vec<Vec<f64>>,
    work: Vec<Vec<f64>>,
    /// `1/√(D_k h_k)` of the preconditioner (see [`Model::precondition`]).
    pre_scale: Vec<f64>,
    scratch: Vec<f64>,
    /// Whether each orbit variable is odd (an odd number of sites).
    odd: Vec<bool>,
    /// Whether the last point evaluated is spin-flip symmetric (its odd variables are
    /// zero): `inv_p` then holds the lower half only and products use half transforms.
    symmetric: bool,
    /// Whether the half transforms may be used (off only to test them).
    fold: bool,
}

impl<'a> Model<'a> {
    /// The functional of `level` at temperature `t` and field `h`.
    pub fn new(level: &'a CompactLevel, t: f64, h: f64) -> Model<'a> {
        let n = level.len();
        let members: Vec<Members> = level
            .regions
            .iter()
            .map(|r| Members::new(&r.vars, n))
            .collect();
        let sizes: Vec<usize> = level.regions.iter().map(|r| r.vars.len()).collect();
        let pre_scale = preconditioner_scale(level, &members);
        Model {
            level,
            t,
            h,
            members,
            inv_p: sizes.iter().map(|&s| vec![0.0; s]).collect(),
            work: sizes.iter().map(|&s| vec![0.0; s]).collect(),
            pre_scale,
            scratch: vec![0.0; n],
            odd: (0..n).map(|k| level.is_odd(k)).collect(),
            symmetric: false,
            fold: true,
        }
    }

    /// Move to another temperature and field (the buffers are kept).
    pub fn set(&mut self, t: f64, h: f64) {
        self.t = t;
        self.h = h;
    }

    /// The level.
    pub fn level(&self) -> &'a CompactLevel {
        self.level
    }
    /// Temperature.
    pub fn temperature(&self) -> f64 {
        self.t
    }
    /// Field.
    pub fn field(&self) -> f64 {
        self.h
    }
    /// Number of orbit variables.
    pub fn len(&self) -> usize {
        self.level.len()
    }
    /// Whether there are no variables.
    pub fn is_empty(&self) -> bool {
        self.level.is_empty()
    }

    /// `E(y) = −Σ_b J_b y_b − h Σ_a y_a` (factorised bonds: `y_a y_b`).
    pub fn energy(&self, x: &[f64]) -> f64 {
        let mut e = 0.0;
        for b in &self.level.bond_terms {
            e -= match *b {
                BondTerm::Correlated { var, j } => j * x[var],
                BondTerm::Factorised { a, b, j } => j * x[a] * x[b],
            };
        }
        e - self.h * self.level.site_vars.iter().map(|&v| x[v]).sum::<f64>()
    }

    fn add_energy_gradient(&self, x: &[f64], g: &mut [f64]) {
        for b in &self.level.bond_terms {
            match *b {
                BondTerm::Correlated { var, j } => g[var] -= j,
                BondTerm::Factorised { a, b, j } => {
                    g[a] -= j * x[b];
                    g[b] -= j * x[a];
                }
            }
        }
        for &v in &self.level.site_vars {
            g[v] -= self.h;
        }
    }

    /// F, E, S at `x`; with `grad`, ∇F into it; with `grad_s`, ∇S (entropy per cell)
    /// into it. `None` where a cluster probability is not positive. A feasible point
    /// becomes the point of later [`Model::hessian_vector`] and [`Model::diagonal`].
    pub fn evaluate(
        &mut self,
        x: &[f64],
        mut grad: Option<&mut [f64]>,
        mut grad_s: Option<&mut [f64]>,
    ) -> Option<Eval> {
        if let Some(g) = grad.as_deref_mut() {
            g.iter_mut().for_each(|v| *v = 0.0);
        }
        if let Some(g) = grad_s.as_deref_mut() {
            g.iter_mut().for_each(|v| *v = 0.0);
        }
        let need_gradient = grad.is_some() || grad_s.is_some();
        let symmetric = self.is_symmetric(x);
        self.symmetric = symmetric;
        let mut entropy = 0.0;
        for (r, region) in self.level.regions.iter().enumerate() {
            let size = region.vars.len();
            let scale = 1.0 / size as f64;
            let a = region.coefficient as f64;
            if symmetric {
                // Half transforms: p on the lower half, each value twice in the sum.
                let half = size / 2;
                let w = &mut self.work[r][..half];
                fold(&region.vars, x, 1.0, &self.odd, None, w);
                wht_fast(w);
                let s = probabilities(w, &mut self.inv_p[r][..half], scale)?;
                entropy += a * 2.0 * s;
                if !need_gradient {
                    continue;
                }
                wht_fast(w);
                // (W ln p)[c] = 2 (W_{n−1} ln p_low)[c mod half], even c only.
                if let Some(g) = grad.as_deref_mut() {
                    gather_folded(
                        &self.members[r],
                        w,
                        2.0 * self.t * a * scale,
                        &self.odd,
                        false,
                        g,
                    );
                }
                if let Some(g) = grad_s.as_deref_mut() {
                    gather_folded(&self.members[r], w, -2.0 * a * scale, &self.odd, false, g);
                }
                continue;
            }
            let w = &mut self.work[r];
            scatter(&region.vars, x, 1.0, w);
            wht_fast(w);
            let s = probabilities(w, &mut self.inv_p[r], scale)?;
            entropy += a * s;
            if !need_gradient {
                continue;
            }
            wht_fast(w);
            // ∂S_r/∂ξ_c = −2^-n (W ln p)[c]
            if let Some(g) = grad.as_deref_mut() {
                gather(&self.members[r], w, self.t * a * scale, g);
            }
            if let Some(g) = grad_s.as_deref_mut() {
                gather(&self.members[r], w, -a * scale, g);
            }
        }
        let energy = self.energy(x);
        if let Some(g) = grad {
            self.add_energy_gradient(x, g);
        }
        Some(Eval {
            free_energy: energy - self.t * entropy,
            energy,
            entropy,
        })
    }

    /// `out = H v` at the last feasible point evaluated.
    pub fn hessian_vector(&mut self, v: &[f64], out: &mut [f64]) {
        out.iter_mut().for_each(|o| *o = 0.0);
        let parities = self.parities(v);
        for (r, region) in self.level.regions.iter().enumerate() {
            let size = region.vars.len() as f64;
            let f = self.t * region.coefficient as f64 / (size * size);
            self.sandwich(r, v, &parities, multiply, f, out);
        }
        for b in &self.level.bond_terms {
            if let BondTerm::Factorised { a, b, j } = *b {
                out[a] -= j * v[b];
                out[b] -= j * v[a];
            }
        }
    }

    /// `out = M⁻¹ v`, an approximate inverse of H at the last feasible point evaluated:
    /// the exact inverse of the maximal clusters' own terms in mask space,
    /// `(4^-n W diag(1/p) W)⁻¹ = W diag(p) W`, carried to orbits by the pseudo-inverse
    /// of the map P from orbits to masks (`(PᵀP)⁻¹ = diag(1/D_k)`):
    ///
    /// ```text
    /// M⁻¹ = T⁻¹ G Σ_{r maximal} P_rᵀ W diag(p_r) W P_r G,   G = diag(1/D_k)
    /// ```
    ///
    /// with `D_k = Σ_{r maximal} |S_k(r)|` (masks of orbit k in the maximal regions).
    /// Symmetric positive definite; it absorbs the spread of 1/p over many decades that
    /// makes H ill-conditioned for big clusters. The sub-regions' terms are left out.
    /// An earlier scale, `1/√(D_k h_k)` with the Kikuchi count `h_k = Σ_r a_r |S_k(r)|`,
    /// made M exact for the uncorrelated state but spread the spectrum of M⁻¹H near Tc
    /// (4×4 block, even sector at T = 2.33: [0.013, 1.7·10⁴] against [0.033, 359] with
    /// 1/D_k) and cost twice the products per Tc probe (docs/benchmarks.md).
    pub fn precondition(&mut self, v: &[f64], out: &mut [f64]) {
        out.iter_mut().for_each(|o| *o = 0.0);
        let mut z = std::mem::take(&mut self.scratch);
        z.iter_mut()
            .zip(v.iter().zip(&self.pre_scale))
            .for_each(|(z, (v, g))| *z = v * g);
        let parities = self.parities(v);
        for (r, region) in self.level.regions.iter().enumerate() {
            if region.maximal {
                self.sandwich(r, &z, &parities, divide, 1.0, out);
            }
        }
        self.scratch = z;
        let t = self.t;
        out.iter_mut()
            .zip(&self.pre_scale)
            .for_each(|(o, g)| *o *= g / t);
    }

    /// The diagonal of H at the last feasible point evaluated.
    pub fn diagonal(&mut self) -> Vec<f64> {
        let n = self.len();
        let mut d = vec![0.0; n];
        for (r, region) in self.level.regions.iter().enumerate() {
            let size = region.vars.len();
            // Symmetric: W(1/p)[e] = 2 (W_{n−1} (1/p)_low)[e mod half] (e = c ⊕ d even).
            let (len, fold_mask, twice) = if self.symmetric {
                (size / 2, (size / 2 - 1) as u32, 2.0)
            } else {
                (size, u32::MAX, 1.0)
            };
            let w = &mut self.work[r][..len];
            w.copy_from_slice(&self.inv_p[r][..len]);
            wht_fast(w);
            let f = twice * self.t * region.coefficient as f64 / (size as f64 * size as f64);
            let members = &self.members[r];
            let w = &*w;
            let one = |k: usize| -> f64 {
                let m = members.of(k);
                let mut s = 0.0;
                for &c in m {
                    for &e in m {
                        s += w[((c ^ e) & fold_mask) as usize];
                    }
                }
                f * s
            };
            if size >= PARALLEL {
                d.par_iter_mut()
                    .enumerate()
                    .for_each(|(k, dk)| *dk += one(k));
            } else {
                d.iter_mut().enumerate().for_each(|(k, dk)| *dk += one(k));
            }
        }
        for b in &self.level.bond_terms {
            if let BondTerm::Factorised { a, b, j } = *b {
                if a == b {
                    d[a] -= 2.0 * j;
                }
            }
        }
        d
    }

    /// Whether every odd variable of `x` is zero (then `p(σ) = p(−σ)` in every region).
    fn is_symmetric(&self, x: &[f64]) -> bool {
        self.fold && x.iter().zip(&self.odd).all(|(v, &o)| !o || *v == 0.0)
    }

    /// `out += f P_rᵀ W diag(q) W P_r v` for region r, with `kernel(w, 1/p_r)` applying
    /// `diag(q)` (multiply: q = 1/p, H·v; divide: q = p, M⁻¹·v). At a spin-flip-symmetric
    /// point each parity of `parities` by half transforms (module documentation).
    fn sandwich(
        &mut self,
        r: usize,
        v: &[f64],
        parities: &[bool],
        kernel: fn(&mut [f64], &[f64]),
        f: f64,
        out: &mut [f64],
    ) {
        let vars = &self.level.regions[r].vars;
        if self.symmetric {
            let half = vars.len() / 2;
            for &odd in parities {
                let w = &mut self.work[r][..half];
                fold(vars, v, 0.0, &self.odd, Some(odd), w);
                wht_fast(w);
                kernel(w, &self.inv_p[r][..half]);
                wht_fast(w);
                gather_folded(&self.members[r], w, 2.0 * f, &self.odd, odd, out);
            }
            return;
        }
        let w = &mut self.work[r];
        scatter(vars, v, 0.0, w);
        wht_fast(w);
        kernel(w, &self.inv_p[r]);
        wht_fast(w);
        gather(&self.members[r], w, f, out);
    }

    /// The parities (odd: `true`) with a non-zero entry in `v`; none asked for (empty)
    /// unless the point is spin-flip symmetric, where products go parity by parity.
    fn parities(&self, v: &[f64]) -> Vec<bool> {
        if !self.symmetric {
            return Vec::new();
        }
        let (mut even, mut odd) = (false, false);
        for (x, &o) in v.iter().zip(&self.odd) {
            if *x != 0.0 {
                if o {
                    odd = true;
                } else {
                    even = true;
                }
            }
            if even && odd {
                break;
            }
        }
        [(even, false), (odd, true)]
            .into_iter()
            .filter_map(|(present, o)| present.then_some(o))
            .collect()
    }

    /// The smallest cluster probability at `x` (negative or zero: infeasible).
    pub fn min_probability(&mut self, x: &[f64]) -> f64 {
        let mut low = f64::INFINITY;
        let symmetric = self.is_symmetric(x);
        for (r, region) in self.level.regions.iter().enumerate() {
            let size = region.vars.len();
            let scale = 1.0 / size as f64;
            let w = if symmetric {
                let w = &mut self.work[r][..size / 2];
                fold(&region.vars, x, 1.0, &self.odd, None, w);
                w
            } else {
                let w = &mut self.work[r][..];
                scatter(&region.vars, x, 1.0, w);
                w
            };
            wht_fast(w);
            let m = if w.len() >= PARALLEL {
                w.par_iter().copied().reduce(|| f64::INFINITY, f64::min)
            } else {
                w.iter().copied().fold(f64::INFINITY, f64::min)
            };
            low = low.min(m * scale);
        }
        low
    }
}

/// `w[c] = x[vars[c]]`, `w[0] = empty`.
fn scatter(vars: &[u32], x: &[f64], empty: f64, w: &mut [f64]) {
    if w.len() >= PARALLEL {
        w.par_iter_mut()
            .zip(vars.par_iter())
            .with_min_len(4096)
            .for_each(|(s, &v)| *s = if v == u32::MAX { empty } else { x[v as usize] });
    } else {
        for (s, &v) in w.iter_mut().zip(vars) {
            *s = if v == u32::MAX { empty } else { x[v as usize] };
        }
    }
}

/// The folded scatter of the spin-flip-symmetric path: `w[c] = f[c] + f[c + half]`
/// for `c < half = w.len()`, with `f[c] = x[vars[c]]` (`empty` at c = 0) restricted to
/// the orbits of parity `parity` when given.
fn fold(vars: &[u32], x: &[f64], empty: f64, odd: &[bool], parity: Option<bool>, w: &mut [f64]) {
    let half = w.len();
    let val = |c: usize| -> f64 {
        let v = vars[c];
        if v == u32::MAX {
            return empty;
        }
        match parity {
            Some(p) if odd[v as usize] != p => 0.0,
            _ => x[v as usize],
        }
    };
    if half >= PARALLEL {
        w.par_iter_mut()
            .enumerate()
            .with_min_len(4096)
            .for_each(|(c, s)| *s = val(c) + val(c + half));
    } else {
        for (c, s) in w.iter_mut().enumerate() {
            *s = val(c) + val(c + half);
        }
    }
}

/// The gather of the spin-flip-symmetric path: `out[k] += scale Σ_{c ∈ S_k}
/// w[c mod half]` for the orbits k of parity `parity` (`half = w.len()`).
fn gather_folded(
    members: &Members,
    w: &[f64],
    scale: f64,
    odd: &[bool],
    parity: bool,
    out: &mut [f64],
) {
    let mask = w.len() - 1;
    let one = |k: usize| -> f64 {
        members
            .of(k)
            .iter()
            .map(|&c| w[c as usize & mask])
            .sum::<f64>()
    };
    if w.len() >= PARALLEL / 2 {
        out.par_iter_mut()
            .enumerate()
            .with_min_len(1024)
            .filter(|(k, _)| odd[*k] == parity)
            .for_each(|(k, o)| *o += scale * one(k));
    } else {
        for (k, o) in out.iter_mut().enumerate() {
            if odd[k] == parity {
                *o += scale * one(k);
            }
        }
    }
}

/// `out[k] += scale Σ_{c ∈ S_k} w[c]`.
fn gather(members: &Members, w: &[f64], scale: f64, out: &mut [f64]) {
    let one = |k: usize| -> f64 { members.of(k).iter().map(|&c| w[c as usize]).sum::<f64>() };
    if w.len() >= PARALLEL {
        out.par_iter_mut()
            .enumerate()
            .with_min_len(1024)
            .for_each(|(k, o)| *o += scale * one(k));
    } else {
        for (k, o) in out.iter_mut().enumerate() {
            *o += scale * one(k);
        }
    }
}

/// `w ← w ⊘ q`.
fn divide(w: &mut [f64], q: &[f64]) {
    if w.len() >= PARALLEL {
        w.par_iter_mut()
            .zip(q.par_iter())
            .with_min_len(4096)
            .for_each(|(a, b)| *a /= b);
    } else {
        w.iter_mut().zip(q).for_each(|(a, b)| *a /= b);
    }
}

/// `1/D_k` per orbit (see [`Model::precondition`]); 1 for an orbit in no maximal
/// region.
fn preconditioner_scale(level: &CompactLevel, members: &[Members]) -> Vec<f64> {
    (0..level.len())
        .map(|k| {
            let d: f64 = level
                .regions
                .iter()
                .zip(members)
                .filter(|(region, _)| region.maximal)
                .map(|(_, m)| (m.offsets[k + 1] - m.offsets[k]) as f64)
                .sum();
            if d > 0.0 {
                1.0 / d
            } else {
                1.0
            }
        })
        .collect()
}

/// `w ← w ⊙ q`.
fn multiply(w: &mut [f64], q: &[f64]) {
    if w.len() >= PARALLEL {
        w.par_iter_mut()
            .zip(q.par_iter())
            .with_min_len(4096)
            .for_each(|(a, b)| *a *= b);
    } else {
        w.iter_mut().zip(q).for_each(|(a, b)| *a *= b);
    }
}

/// From `w = W P y` (unscaled): store `1/p` in `inv_p`, leave `ln p` in `w`, return the
/// entropy `−Σ p ln p`; `None` if some `p = scale · w ≤ 0`.
fn probabilities(w: &mut [f64], inv_p: &mut [f64], scale: f64) -> Option<f64> {
    let one = |(q, ip): (&mut f64, &mut f64)| -> (f64, bool) {
        let p = *q * scale;
        if p <= 0.0 || p.is_nan() {
            return (0.0, false);
        }
        let l = p.ln();
        *ip = 1.0 / p;
        *q = l;
        (-p * l, true)
    };
    // Fixed chunks summed in order: the same entropy on every run and thread count.
    let parts: Vec<(f64, bool)> = if w.len() >= PARALLEL {
        w.par_chunks_mut(CHUNK)
            .zip(inv_p.par_chunks_mut(CHUNK))
            .map(|(a, b)| {
                a.iter_mut()
                    .zip(b.iter_mut())
                    .map(one)
                    .fold((0.0, true), |x, y| (x.0 + y.0, x.1 && y.1))
            })
            .collect()
    } else {
        vec![w
            .iter_mut()
            .zip(inv_p.iter_mut())
            .map(one)
            .fold((0.0, true), |x, y| (x.0 + y.0, x.1 && y.1))]
    };
    let (s, ok) = parts
        .iter()
        .fold((0.0, true), |x, y| (x.0 + y.0, x.1 && y.1));
    ok.then_some(s)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::big::test_levels::square_block;

    /// A spin-flip-symmetric point with strong even correlations: the paramagnet at
    /// T = 2.4 (3×3 block), by Newton from the uncorrelated state.
    fn paramagnet(level: &CompactLevel) -> Vec<f64> {
        let mut model = Model::new(level, 2.4, 0.0);
        let even: Vec<usize> = (0..level.len()).filter(|&k| !level.is_odd(k)).collect();
        let x0 = crate::big::newton::product_state(&model, 0.0);
        crate::big::newton::minimise(&mut model, x0, &even, Default::default())
            .expect("the paramagnet")
            .x
    }

    fn max_diff(a: &[f64], b: &[f64]) -> f64 {
        a.iter()
            .zip(b)
            .map(|(x, y)| (x - y).abs())
            .fold(0.0, f64::max)
    }

    #[test]
    fn half_transforms_give_the_general_path() {
        // Both paths compute the same sums (W² = 2^n folded by p(σ) = p(−σ)), so they
        // agree to rounding.
        let level = square_block(3);
        let x = paramagnet(&level);
        let n = level.len();
        let v: Vec<f64> = (0..n).map(|k| (0.7 * k as f64).sin()).collect();
        let odd_only: Vec<f64> = (0..n)
            .map(|k| if level.is_odd(k) { v[k] } else { 0.0 })
            .collect();
        let mut results = Vec::new();
        for fold in [true, false] {
            let mut model = Model::new(&level, 2.4, 0.0);
            model.fold = fold;
            let mut g = vec![0.0; n];
            let mut gs = vec![0.0; n];
            let ev = model
                .evaluate(&x, Some(&mut g), Some(&mut gs))
                .expect("a feasible point");
            assert_eq!(model.symmetric, fold);
            let (mut hv, mut ho, mut pv) = (vec![0.0; n], vec![0.0; n], vec![0.0; n]);
            model.hessian_vector(&v, &mut hv);
            model.hessian_vector(&odd_only, &mut ho);
            model.precondition(&v, &mut pv);
            let d = model.diagonal();
            let low = model.min_probability(&x);
            results.push((ev.free_energy, ev.entropy, g, gs, hv, ho, pv, d, low));
        }
        let (a, b) = (&results[0], &results[1]);
        assert!((a.0 - b.0).abs() < 1e-13 && (a.1 - b.1).abs() < 1e-13);
        for (p, q) in [
            (&a.2, &b.2),
            (&a.3, &b.3),
            (&a.4, &b.4),
            (&a.5, &b.5),
            (&a.6, &b.6),
            (&a.7, &b.7),
        ] {
            let scale = q.iter().map(|x| x.abs()).fold(1.0, f64::max);
            assert!(
                max_diff(p, q) < 1e-11 * scale,
                "{} of {scale}",
                max_diff(p, q)
            );
        }
        assert!((a.8 - b.8).abs() < 1e-15 && a.8 > 0.0);
    }
}

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
        let mut entropy = 0.0;
        for (r, region) in self.level.regions.iter().enumerate() {
            let size = region.vars.len();
            let w = &mut self.work[r];
            scatter(&region.vars, x, 1.0, w);
            wht_fast(w);
            let scale = 1.0 / size as f64;
            let s = probabilities(w, &mut self.inv_p[r], scale)?;
            entropy += region.coefficient as f64 * s;
            if !need_gradient {
                continue;
            }
            wht_fast(w);
            let a = region.coefficient as f64;
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
        for (r, region) in self.level.regions.iter().enumerate() {
            let size = region.vars.len();
            let w = &mut self.work[r];
            scatter(&region.vars, v, 0.0, w);
            wht_fast(w);
            multiply(w, &self.inv_p[r]);
            wht_fast(w);
            let f = self.t * region.coefficient as f64 / (size as f64 * size as f64);
            gather(&self.members[r], w, f, out);
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
    /// `(4^-n W diag(1/p) W)⁻¹ = W diag(p) W`, carried to orbits and rescaled so that
    /// it is exact for the uncorrelated state (where H = T diag(h_k), h_k = Σ_r a_r
    /// |S_k(r)|):
    ///
    /// ```text
    /// M⁻¹ = T⁻¹ G Σ_{r maximal} P_rᵀ W diag(p_r) W P_r G,   G = diag(1/√(D_k h_k))
    /// ```
    ///
    /// with `D_k = Σ_{r maximal} |S_k(r)|`. Symmetric positive definite; it absorbs the
    /// spread of 1/p over many decades that makes H ill-conditioned for big clusters.
    pub fn precondition(&mut self, v: &[f64], out: &mut [f64]) {
        out.iter_mut().for_each(|o| *o = 0.0);
        let z = &mut self.scratch;
        z.iter_mut()
            .zip(v.iter().zip(&self.pre_scale))
            .for_each(|(z, (v, g))| *z = v * g);
        for (r, region) in self.level.regions.iter().enumerate() {
            if !region.maximal {
                continue;
            }
            let w = &mut self.work[r];
            scatter(&region.vars, z, 0.0, w);
            wht_fast(w);
            divide(w, &self.inv_p[r]);
            wht_fast(w);
            gather(&self.members[r], w, 1.0, out);
        }
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
            let w = &mut self.work[r];
            w.copy_from_slice(&self.inv_p[r]);
            wht_fast(w);
            let f = self.t * region.coefficient as f64 / (size as f64 * size as f64);
            let members = &self.members[r];
            let w = &*w;
            let one = |k: usize| -> f64 {
                let m = members.of(k);
                let mut s = 0.0;
                for &c in m {
                    for &e in m {
                        s += w[(c ^ e) as usize];
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

    /// The smallest cluster probability at `x` (negative or zero: infeasible).
    pub fn min_probability(&mut self, x: &[f64]) -> f64 {
        let mut low = f64::INFINITY;
        for (r, region) in self.level.regions.iter().enumerate() {
            let w = &mut self.work[r];
            scatter(&region.vars, x, 1.0, w);
            wht_fast(w);
            let scale = 1.0 / w.len() as f64;
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

/// `1/√(D_k h_k)` per orbit (see [`Model::precondition`]); `1/D_k` where the Kikuchi
/// count `h_k` is not positive.
fn preconditioner_scale(level: &CompactLevel, members: &[Members]) -> Vec<f64> {
    (0..level.len())
        .map(|k| {
            let mut d = 0.0;
            let mut h = 0.0;
            for (region, m) in level.regions.iter().zip(members) {
                let count = (m.offsets[k + 1] - m.offsets[k]) as f64;
                h += region.coefficient as f64 * count;
                if region.maximal {
                    d += count;
                }
            }
            if d <= 0.0 {
                1.0
            } else if h > 0.0 {
                1.0 / (d * h).sqrt()
            } else {
                1.0 / d
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

//! The cluster-variation free energy of correlation variables, one functional for every
//! level (Kikuchi 1951; correlation-function form of Sanchez, Ducastelle & Gratias 1984).
//!
//! For a region of n sites, `p(σ) = 2^-n Σ_{c⊆region} ξ_c χ_c(σ)` with `ξ_∅ = 1`, and per
//! cell
//!
//! ```text
//! F(ξ) = E(ξ) − T Σ_γ a_γ S_γ,   S_γ = −Σ_σ p_γ ln p_γ,
//! E(ξ) = −Σ_bonds J_b ξ_b − h Σ_a ξ_a          (ξ_b = ξ_i ξ_j for a factorised bond)
//! ∂S/∂ξ_c      = −2^-n Σ_σ χ_c(σ) ln p(σ)      (one WHT of ln p)
//! ∂²S/∂ξ_c∂ξ_d = −4^-n Σ_σ χ_{c△d}(σ) / p(σ)   (one WHT of 1/p, read at c XOR d)
//! ```

use nalgebra::{DMatrix, DVector};
use rungs_lattice::{BondTerm, Level};

use crate::wht::wht;

/// Most correlation variables a level may have for the dense engine (a 6000² Hessian is
/// 288 MB; the square 3×3 block has 400 variables, the 4×4 block 57,856).
pub const MAX_DENSE_VARIABLES: usize = 6000;

/// Refuse a level too large for the dense engine, before any memory is spent.
pub fn check_size(level: &Level) -> Result<(), crate::error::SolveError> {
    let n = level.variables.len();
    if n > MAX_DENSE_VARIABLES {
        return Err(crate::error::SolveError::TooLarge {
            level: level.name.clone(),
            variables: n,
            gib: (n * n * 8) as f64 / (1u64 << 30) as f64,
            limit: MAX_DENSE_VARIABLES,
        });
    }
    Ok(())
}

/// One region's part of the entropy: its weight `a_γ` and the variable of each subset.
#[derive(Debug, Clone)]
struct RegionTerm {
    n: usize,
    coefficient: f64,
    vars: Vec<u32>,
}

/// The free-energy functional of one level at temperature `t` and field `h`.
#[derive(Debug, Clone)]
pub struct Functional<'a> {
    level: &'a Level,
    t: f64,
    h: f64,
    regions: Vec<RegionTerm>,
}

/// Value and gradient of F at a point, with the entropy and energy parts.
#[derive(Debug, Clone)]
pub struct Evaluation {
    /// Free energy per cell.
    pub free_energy: f64,
    /// Energy per cell.
    pub energy: f64,
    /// Entropy per cell, `Σ_γ a_γ S_γ`.
    pub entropy: f64,
    /// ∂F/∂ξ for every variable.
    pub gradient: Vec<f64>,
}

impl<'a> Functional<'a> {
    /// The functional of `level` at temperature `t` (> 0) and field `h`.
    pub fn new(level: &'a Level, t: f64, h: f64) -> Functional<'a> {
        let regions = level
            .active_regions()
            .map(|r| RegionTerm {
                n: r.cluster.len(),
                coefficient: r.coefficient as f64,
                vars: r.subset_vars.clone(),
            })
            .collect();
        Functional {
            level,
            t,
            h,
            regions,
        }
    }

    /// The level.
    pub fn level(&self) -> &'a Level {
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
    /// The same functional at another temperature and field.
    pub fn at(&self, t: f64, h: f64) -> Functional<'a> {
        Functional {
            level: self.level,
            t,
            h,
            regions: self.regions.clone(),
        }
    }

    /// Number of variables.
    pub fn len(&self) -> usize {
        self.level.variables.len()
    }
    /// Whether there are no variables (never, for a valid level).
    pub fn is_empty(&self) -> bool {
        self.level.variables.is_empty()
    }

    /// Fill `p` with the probabilities of region `r` at `x`; false if any is ≤ 0.
    fn probabilities(&self, r: &RegionTerm, x: &[f64], p: &mut [f64]) -> bool {
        p[0] = 1.0;
        for (slot, &v) in p.iter_mut().zip(&r.vars).skip(1) {
            *slot = x[v as usize];
        }
        wht(p);
        let scale = 1.0 / (1u64 << r.n) as f64;
        let mut ok = true;
        for q in p.iter_mut() {
            *q *= scale;
            ok &= *q > 0.0;
        }
        ok
    }

    /// Whether every region probability is strictly positive at `x`.
    pub fn feasible(&self, x: &[f64]) -> bool {
        let mut p = Vec::new();
        self.regions.iter().all(|r| {
            p.resize(1 << r.n, 0.0);
            self.probabilities(r, x, &mut p)
        })
    }

    /// Energy per cell `E(ξ)`.
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

    /// ∂E/∂ξ added into `g`.
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

    /// F, E, S and ∇F at `x`, or `None` where some cluster probability is not positive.
    pub fn evaluate(&self, x: &[f64]) -> Option<Evaluation> {
        let mut gradient = vec![0.0; self.len()];
        let entropy = self.entropy_and_gradient(x, &mut gradient, -self.t)?;
        let energy = self.energy(x);
        self.add_energy_gradient(x, &mut gradient);
        Some(Evaluation {
            free_energy: energy - self.t * entropy,
            energy,
            entropy,
            gradient,
        })
    }

    /// Entropy per cell; adds `scale · ∂S/∂ξ` into `g`. `None` if infeasible.
    fn entropy_and_gradient(&self, x: &[f64], g: &mut [f64], scale: f64) -> Option<f64> {
        let mut p = Vec::new();
        let mut s_total = 0.0;
        for r in &self.regions {
            p.resize(1 << r.n, 0.0);
            if !self.probabilities(r, x, &mut p) {
                return None;
            }
            let mut s = 0.0;
            for q in p.iter_mut() {
                let l = q.ln();
                s -= *q * l;
                *q = l;
            }
            s_total += r.coefficient * s;
            wht(&mut p);
            let f = scale * r.coefficient / (1u64 << r.n) as f64;
            for (mask, &v) in r.vars.iter().enumerate().skip(1) {
                // ∂S/∂ξ_c = −2^-n (W ln p)[c]
                g[v as usize] -= f * p[mask];
            }
        }
        Some(s_total)
    }

    /// The rounding scale of Hessian entries at `x`: `10⁻¹³ Σ_γ T |a_γ| 2^-n max_σ 1/p_γ`.
    /// Entries are sums of terms that large, so eigenvalues smaller than this are noise.
    pub fn hessian_rounding(&self, x: &[f64]) -> f64 {
        let mut p = Vec::new();
        let mut total = 0.0;
        for r in &self.regions {
            p.resize(1 << r.n, 0.0);
            if !self.probabilities(r, x, &mut p) {
                return f64::INFINITY;
            }
            let pmin = p.iter().copied().fold(f64::INFINITY, f64::min);
            total += self.t * r.coefficient.abs() / (1u64 << r.n) as f64 / pmin;
        }
        1e-13 * total
    }

    /// `∇S` (entropy per cell) at `x`.
    pub fn entropy_gradient(&self, x: &[f64]) -> Option<Vec<f64>> {
        let mut g = vec![0.0; self.len()];
        self.entropy_and_gradient(x, &mut g, 1.0)?;
        Some(g)
    }

    /// The Hessian of F restricted to the variables `vars` (`pos[v]` = row of variable v
    /// or `usize::MAX` when v is not in the block). Dense: `Σ_γ 4^{n_γ}` operations.
    pub fn hessian_block(&self, x: &[f64], vars: &[usize], pos: &[usize]) -> Option<DMatrix<f64>> {
        let m = vars.len();
        let mut h = DMatrix::<f64>::zeros(m, m);
        let mut p = Vec::new();
        for r in &self.regions {
            let size = 1usize << r.n;
            p.resize(size, 0.0);
            if !self.probabilities(r, x, &mut p) {
                return None;
            }
            for q in p.iter_mut() {
                *q = 1.0 / *q;
            }
            wht(&mut p);
            // ∂²F/∂ξ_c∂ξ_d = −T a ∂²S = T a 4^-n (W 1/p)[c ⊕ d]
            let f = self.t * r.coefficient / (size as f64 * size as f64);
            let rows: Vec<(usize, usize)> = (1..size)
                .filter_map(|c| {
                    let row = pos[r.vars[c] as usize];
                    (row != usize::MAX).then_some((c, row))
                })
                .collect();
            for &(c, rc) in &rows {
                for &(d, rd) in &rows {
                    h[(rc, rd)] += f * p[c ^ d];
                }
            }
        }
        for b in &self.level.bond_terms {
            if let BondTerm::Factorised { a, b, j } = *b {
                let (pa, pb) = (pos[a], pos[b]);
                if pa != usize::MAX && pb != usize::MAX {
                    h[(pa, pb)] -= j;
                    h[(pb, pa)] -= j;
                }
            }
        }
        Some(h)
    }

    /// Hessian–vector product `H v` over all variables, matrix-free: per region two WHTs
    /// of length 2^n (`H v = T a 4^-n W diag(1/p) W v` gathered onto the variables).
    pub fn hessian_vector(&self, x: &[f64], v: &[f64], out: &mut [f64]) -> Option<()> {
        out.iter_mut().for_each(|o| *o = 0.0);
        let mut p = Vec::new();
        let mut w = Vec::new();
        for r in &self.regions {
            let size = 1usize << r.n;
            p.resize(size, 0.0);
            w.resize(size, 0.0);
            if !self.probabilities(r, x, &mut p) {
                return None;
            }
            w[0] = 0.0;
            for (slot, &var) in w.iter_mut().zip(&r.vars).skip(1) {
                *slot = v[var as usize];
            }
            wht(&mut w);
            for (a, q) in w.iter_mut().zip(&p) {
                *a /= q;
            }
            wht(&mut w);
            let f = self.t * r.coefficient / (size as f64 * size as f64);
            for (mask, &var) in r.vars.iter().enumerate().skip(1) {
                out[var as usize] += f * w[mask];
            }
        }
        for b in &self.level.bond_terms {
            if let BondTerm::Factorised { a, b, j } = *b {
                out[a] -= j * v[b];
                out[b] -= j * v[a];
            }
        }
        Some(())
    }
}

/// A subset of the variables (a sector), with the reverse map.
#[derive(Debug, Clone)]
pub struct Block {
    /// Variables in the block.
    pub vars: Vec<usize>,
    /// Position of each variable in `vars`, `usize::MAX` if absent.
    pub pos: Vec<usize>,
}

impl Block {
    /// The block of variables accepted by `keep`.
    pub fn new(level: &Level, keep: impl Fn(usize) -> bool) -> Block {
        let n = level.variables.len();
        let vars: Vec<usize> = (0..n).filter(|&v| keep(v)).collect();
        let mut pos = vec![usize::MAX; n];
        for (i, &v) in vars.iter().enumerate() {
            pos[v] = i;
        }
        Block { vars, pos }
    }
    /// Every variable.
    pub fn all(level: &Level) -> Block {
        Block::new(level, |_| true)
    }
    /// Variables even under spin reversal (the paramagnetic sector at h = 0).
    pub fn even(level: &Level) -> Block {
        Block::new(level, |v| !level.is_odd(v))
    }
    /// Variables odd under spin reversal.
    pub fn odd(level: &Level) -> Block {
        Block::new(level, |v| level.is_odd(v))
    }
    /// Gather `x[vars]`.
    pub fn gather(&self, x: &[f64]) -> DVector<f64> {
        DVector::from_iterator(self.vars.len(), self.vars.iter().map(|&v| x[v]))
    }
}

//! Transfer matrices on strips of 2D lattice files: `W` cells wide and periodic across,
//! infinite (or periodic with `L` rows) along the transfer direction.
//!
//! **Rows.** A row is the `n = W·n_b` sites of one cell layer: site `(a, x)` (basis `a`,
//! cell `x` across) is row index `x·n_b + a`. Bonds inside a layer are *intra* bonds, bonds
//! to the next layer *inter* bonds; a bond crossing more than one layer is refused. The
//! row-to-row matrix is `T(σ', σ) = exp(−β[E_intra(σ') + E_inter(σ, σ') − h Σ σ'])`, so
//! `Z(W × L torus) = Tr T^L` and the infinite strip has `−βf = ln λ_max / n` per site.
//!
//! **Sparse, site by site.** `T` is never stored. Applying it to a vector replaces the
//! old row's spins by the new row's one site at a time: adding new spin `k` multiplies by
//! `exp(β s'_k (h + Σ J s))` over the spins it bonds to that are live (new spins already
//! placed, old spins not yet summed), and an old spin is summed out right after the last
//! new spin that bonds to it. When old spin `k` is last needed by new spin `k` itself the
//! two steps fuse into one in-place 2×2 update; otherwise new spin `k` waits in an
//! auxiliary slot and moves home once old `k` is summed. The schedule (trying rows in
//! increasing and decreasing order, keeping the one with fewer auxiliary slots) is built
//! once per strip: the square lattice needs none, a triangular or honeycomb strip one. A
//! row application costs `O(n · 2^(n + aux))` and allocates nothing.
//!
//! **Largest eigenvalue.** `T` has positive entries, so its largest eigenvalue is simple
//! with a positive eigenvector (Perron–Frobenius); it is found by power iteration from
//! the uniform vector (even under spin reversal, so at h = 0 the near-degenerate odd
//! eigenvalue below Tc never enters). Each site step is scaled to weights ≤ 1 and the
//! scales accumulated in logarithms, so nothing overflows.
//!
//! Transfer matrices on strips go back to Kramers & Wannier (1941, Phys. Rev. 60, 252)
//! and Onsager (1944, Phys. Rev. 65, 117); the site-by-site product is the standard
//! sparse factorisation (e.g. Nightingale 1990, in *Finite Size Scaling and Numerical
//! Simulation of Statistical Systems*, ed. Privman — from memory).

use std::collections::HashSet;

use rungs_lattice::Lattice;
use thiserror::Error;

/// Most sites in one row for the strip free energy (vectors of `2^(n + aux)` numbers).
pub const MAX_ROW_SITES: usize = 22;

/// Most sites in one row for the finite-torus trace `Tr T^L` (cost grows as `4^n`).
pub const MAX_TRACE_ROW_SITES: usize = 12;

/// Power-iteration limit.
pub const MAX_ITERATIONS: usize = 100_000;

/// Errors of the transfer-matrix method; each says what to change.
#[derive(Debug, Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum TransferError {
    /// Strips are for 2D lattices only.
    #[error("transfer matrices on strips need a 2D lattice; this one is {dimension}D")]
    NotTwoDimensional {
        /// The lattice's dimension.
        dimension: usize,
    },
    /// The transfer axis is not 0 or 1.
    #[error("transfer axis {axis} does not exist: give 0 (along the first vector) or 1 (along the second)")]
    BadAxis {
        /// The axis given.
        axis: usize,
    },
    /// A bond reaching past the next row.
    #[error("bond {index} spans {rows} rows along the transfer direction; strips handle bonds to the next row only — choose the other axis or a larger cell (supercell)")]
    BondTooLong {
        /// Index of the bond in the lattice file.
        index: usize,
        /// Rows spanned.
        rows: i32,
    },
    /// A width at which bonds wrap onto themselves or coincide.
    #[error("width {width}: {detail}")]
    WidthTooSmall {
        /// The width asked for.
        width: usize,
        /// What goes wrong.
        detail: String,
    },
    /// More row sites than supported.
    #[error("a row of {sites} sites is more than the {limit} this computation supports; choose a narrower strip")]
    TooWide {
        /// Sites per row.
        sites: usize,
        /// The limit.
        limit: usize,
    },
    /// A bond endpoint outside the row.
    #[error("row bond {index} names site {site}, but a row has only {sites} sites")]
    SiteOutOfRange {
        /// Position in the list.
        index: usize,
        /// The site.
        site: usize,
        /// Sites per row.
        sites: usize,
    },
    /// A coupling that is NaN or infinite.
    #[error("row bond {index} has coupling {j}; couplings must be finite")]
    NonFiniteCoupling {
        /// Position in the list.
        index: usize,
        /// The value.
        j: f64,
    },
    /// Temperature not positive and finite.
    #[error("temperature {t} is not usable: give a positive, finite temperature")]
    BadTemperature {
        /// The value.
        t: f64,
    },
    /// Field not finite.
    #[error("field {h} is not usable: give a finite field")]
    BadField {
        /// The value.
        h: f64,
    },
    /// A torus length of zero.
    #[error("a torus needs at least one row; give a length ≥ 1")]
    BadLength,
    /// Power iteration did not settle.
    #[error("power iteration did not converge in {iterations} iterations (subdominant eigenvalue too close); try a different temperature or field")]
    NotConverged {
        /// Iterations done.
        iterations: usize,
    },
}

/// One step of the site-by-site row application.
#[derive(Debug, Clone, PartialEq)]
enum Op {
    /// Sum out the (old) spin in `slot`; the slot becomes free.
    SumOut { slot: usize },
    /// Replace the old spin in `slot` by a new one bonded to `nbrs` and, with `j_self`, to
    /// the old spin it replaces.
    Replace {
        slot: usize,
        nbrs: Vec<(usize, f64)>,
        j_self: f64,
    },
    /// Place a new spin bonded to `nbrs` into the free `slot`.
    Add {
        slot: usize,
        nbrs: Vec<(usize, f64)>,
    },
    /// Move the spin in `from` to the free slot `to`.
    Move { from: usize, to: usize },
}

/// The strip free energy per site.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StripFreeEnergy {
    /// Free energy per site `f = −T ln λ_max / n`.
    pub free_energy: f64,
    /// `−βf = ln λ_max / n`.
    pub minus_beta_f: f64,
    /// `ln λ_max` of the row-to-row matrix.
    pub ln_lambda: f64,
    /// Power iterations used.
    pub iterations: usize,
}

/// A strip with its compiled site-by-site schedule.
#[derive(Debug, Clone)]
pub struct Strip {
    n: usize,
    slots: usize,
    ops: Vec<Op>,
}

#[derive(Debug, Clone, Copy, PartialEq)]
enum Var {
    Old(usize),
    New(usize),
}

/// Build the schedule for the rows visited in `order`; returns ops and slot count.
fn schedule(
    n: usize,
    intra: &[(usize, usize, f64)],
    inter: &[(usize, usize, f64)],
    order: &[usize],
) -> (Vec<Op>, usize) {
    let mut pos = vec![0; n];
    for (p, &k) in order.iter().enumerate() {
        pos[k] = p;
    }
    let mut last: Vec<Option<usize>> = vec![None; n];
    for &(j, k, _) in inter {
        last[j] = Some(last[j].map_or(pos[k], |l: usize| l.max(pos[k])));
    }
    let mut occupant: Vec<Option<Var>> = (0..n).map(|j| Some(Var::Old(j))).collect();
    let mut slot_old: Vec<Option<usize>> = (0..n).map(Some).collect();
    let mut slot_new: Vec<Option<usize>> = vec![None; n];
    let mut ops = Vec::new();
    for j in 0..n {
        if last[j].is_none() {
            ops.push(Op::SumOut { slot: j });
            occupant[j] = None;
            slot_old[j] = None;
        }
    }
    for (p, &k) in order.iter().enumerate() {
        let replace = slot_old[k].is_some() && last[k] == Some(p);
        let mut nbrs: Vec<(usize, f64)> = Vec::new();
        let mut j_self = 0.0;
        let mut push = |slot: usize, j: f64| match nbrs.iter_mut().find(|e| e.0 == slot) {
            Some(e) => e.1 += j,
            None => nbrs.push((slot, j)),
        };
        for &(j, kk, c) in inter {
            if kk != k {
                continue;
            }
            if replace && j == k {
                j_self += c;
            } else if let Some(s) = slot_old[j] {
                push(s, c);
            }
        }
        for &(a, b, c) in intra {
            let other = if a == k {
                b
            } else if b == k {
                a
            } else {
                continue;
            };
            if pos[other] < p {
                if let Some(s) = slot_new[other] {
                    push(s, c);
                }
            }
        }
        let slot = if replace {
            let s = slot_old[k].unwrap_or(k);
            ops.push(Op::Replace {
                slot: s,
                nbrs,
                j_self,
            });
            slot_old[k] = None;
            s
        } else {
            let s = if occupant[k].is_none() {
                k
            } else if let Some(free) = (n..occupant.len()).find(|&s| occupant[s].is_none()) {
                free
            } else {
                occupant.push(None);
                occupant.len() - 1
            };
            ops.push(Op::Add { slot: s, nbrs });
            s
        };
        occupant[slot] = Some(Var::New(k));
        slot_new[k] = Some(slot);
        // Sum out old spins needed by no later new spin, then bring displaced spins home.
        for j in 0..n {
            if last[j] == Some(p) {
                if let Some(s) = slot_old[j] {
                    ops.push(Op::SumOut { slot: s });
                    occupant[s] = None;
                    slot_old[j] = None;
                }
            }
        }
        for j in 0..n {
            if let Some(s) = slot_new[j] {
                if s != j && occupant[j].is_none() {
                    ops.push(Op::Move { from: s, to: j });
                    occupant[j] = Some(Var::New(j));
                    occupant[s] = None;
                    slot_new[j] = Some(j);
                }
            }
        }
    }
    (ops, occupant.len())
}

impl Strip {
    /// The strip of `lattice` that is `width` cells wide across the first primitive vector
    /// (periodic) and infinite along the second (the transfer direction).
    pub fn new(lattice: &Lattice, width: usize) -> Result<Strip, TransferError> {
        Strip::along(lattice, width, 1)
    }

    /// As [`Strip::new`] with the transfer direction along primitive vector `axis` (0 or
    /// 1) and the strip periodic across the other.
    pub fn along(lattice: &Lattice, width: usize, axis: usize) -> Result<Strip, TransferError> {
        if lattice.dimension() != 2 {
            return Err(TransferError::NotTwoDimensional {
                dimension: lattice.dimension(),
            });
        }
        if axis > 1 {
            return Err(TransferError::BadAxis { axis });
        }
        let across = 1 - axis;
        let nb = lattice.sites_per_cell();
        let n = width * nb;
        if width == 0 {
            return Err(TransferError::WidthTooSmall {
                width,
                detail: "give a width of at least 1 cell".into(),
            });
        }
        if n > MAX_ROW_SITES {
            return Err(TransferError::TooWide {
                sites: n,
                limit: MAX_ROW_SITES,
            });
        }
        let wi = width as i64;
        let site = |a: usize, x: i64| -> usize { (x.rem_euclid(wi) as usize) * nb + a };
        let (mut intra, mut inter) = (Vec::new(), Vec::new());
        let (mut seen_intra, mut seen_inter) = (HashSet::new(), HashSet::new());
        let too_small = |detail: &str| TransferError::WidthTooSmall {
            width,
            detail: detail.to_string(),
        };
        for (index, b) in lattice.bonds().iter().enumerate() {
            let (dy, dx) = (b.cell[axis], b.cell[across] as i64);
            if dy.abs() > 1 {
                return Err(TransferError::BondTooLong {
                    index,
                    rows: dy.abs(),
                });
            }
            for x in 0..wi {
                let (from, to) = (site(b.from, x), site(b.to, x + dx));
                match dy {
                    0 => {
                        if from == to {
                            return Err(too_small(
                                "a bond wraps onto its own site; make the strip wider",
                            ));
                        }
                        if !seen_intra.insert((from.min(to), from.max(to))) {
                            return Err(too_small("two bonds join the same pair of sites once wrapped; make the strip wider"));
                        }
                        intra.push((from, to, b.j));
                    }
                    1 | -1 => {
                        let (old, new) = if dy == 1 { (from, to) } else { (to, from) };
                        if !seen_inter.insert((old, new)) {
                            return Err(too_small("two bonds join the same pair of sites once wrapped; make the strip wider"));
                        }
                        inter.push((old, new, b.j));
                    }
                    _ => unreachable!("|dy| ≤ 1 checked above"),
                }
            }
        }
        Strip::from_rows(n, &intra, &inter)
    }

    /// A strip given directly by its rows: `n` sites per row, `intra` bonds `(i, j, J)`
    /// within a row and `inter` bonds `(i, j, J)` from site `i` of one row to site `j` of
    /// the next. Zero couplings are dropped.
    pub fn from_rows(
        n: usize,
        intra: &[(usize, usize, f64)],
        inter: &[(usize, usize, f64)],
    ) -> Result<Strip, TransferError> {
        if n == 0 {
            return Err(TransferError::WidthTooSmall {
                width: 0,
                detail: "a row needs at least one site".into(),
            });
        }
        if n > MAX_ROW_SITES {
            return Err(TransferError::TooWide {
                sites: n,
                limit: MAX_ROW_SITES,
            });
        }
        for (index, &(i, j, c)) in intra.iter().chain(inter).enumerate() {
            for site in [i, j] {
                if site >= n {
                    return Err(TransferError::SiteOutOfRange {
                        index,
                        site,
                        sites: n,
                    });
                }
            }
            if !c.is_finite() {
                return Err(TransferError::NonFiniteCoupling { index, j: c });
            }
        }
        let intra: Vec<_> = intra
            .iter()
            .copied()
            .filter(|e| e.2 != 0.0 && e.0 != e.1)
            .collect();
        let inter: Vec<_> = inter.iter().copied().filter(|e| e.2 != 0.0).collect();
        let up: Vec<usize> = (0..n).collect();
        let down: Vec<usize> = (0..n).rev().collect();
        let (ops_up, slots_up) = schedule(n, &intra, &inter, &up);
        let (ops_down, slots_down) = schedule(n, &intra, &inter, &down);
        let (ops, slots) = if slots_down < slots_up {
            (ops_down, slots_down)
        } else {
            (ops_up, slots_up)
        };
        if slots > MAX_ROW_SITES + 2 {
            return Err(TransferError::TooWide {
                sites: slots,
                limit: MAX_ROW_SITES + 2,
            });
        }
        Ok(Strip { n, slots, ops })
    }

    /// Sites per row.
    pub fn row_sites(&self) -> usize {
        self.n
    }

    /// Auxiliary slots the schedule needs beyond the row (0 for the square lattice).
    pub fn auxiliary_slots(&self) -> usize {
        self.slots - self.n
    }

    /// Apply one row-to-row matrix in place; returns the log of the scale factored out.
    fn apply(&self, v: &mut [f64], beta: f64, h: f64) -> f64 {
        let mut log_scale = 0.0;
        let mut table: Vec<f64> = Vec::new();
        for op in &self.ops {
            let top = match op {
                Op::SumOut { slot } => sum_out(v, *slot),
                Op::Move { from, to } => move_slot(v, *from, *to),
                Op::Replace { slot, nbrs, j_self } => {
                    log_scale += fill_table(&mut table, nbrs, *j_self, beta, h);
                    replace(v, *slot, nbrs, &table)
                }
                Op::Add { slot, nbrs } => {
                    log_scale += fill_table(&mut table, nbrs, 0.0, beta, h);
                    add(v, *slot, nbrs, &table)
                }
            };
            if !(1e-200..=1e200).contains(&top) && top > 0.0 {
                let s = 1.0 / top;
                v.iter_mut().for_each(|x| *x *= s);
                log_scale += top.ln();
            }
        }
        log_scale
    }

    fn check(t: f64, h: f64) -> Result<(), TransferError> {
        if !(t > 0.0 && t.is_finite()) {
            return Err(TransferError::BadTemperature { t });
        }
        if !h.is_finite() {
            return Err(TransferError::BadField { h });
        }
        Ok(())
    }

    /// Free energy per site of the infinite strip at temperature `t` and field `h`, from
    /// the largest eigenvalue of the row-to-row matrix by power iteration (module docs).
    pub fn free_energy(&self, t: f64, h: f64) -> Result<StripFreeEnergy, TransferError> {
        Strip::check(t, h)?;
        let beta = 1.0 / t;
        let len = 1usize << self.slots;
        let mut v = vec![1.0 / len as f64; len];
        let mut prev = v.clone();
        let mut ln_prev = f64::NAN;
        for it in 1..=MAX_ITERATIONS {
            prev.copy_from_slice(&v);
            let log_scale = self.apply(&mut v, beta, h);
            let sum: f64 = v.iter().sum();
            let ln_lambda = log_scale + sum.ln();
            let inv = 1.0 / sum;
            let mut diff = 0.0f64;
            let mut top = 0.0f64;
            for (x, p) in v.iter_mut().zip(&prev) {
                *x *= inv;
                diff = diff.max((*x - p).abs());
                top = top.max(*x);
            }
            let settled = (ln_lambda - ln_prev).abs() <= 1e-14 * ln_lambda.abs().max(1.0)
                && diff <= 1e-12 * top;
            ln_prev = ln_lambda;
            if settled {
                let mbf = ln_lambda / self.n as f64;
                return Ok(StripFreeEnergy {
                    free_energy: -t * mbf,
                    minus_beta_f: mbf,
                    ln_lambda,
                    iterations: it,
                });
            }
        }
        Err(TransferError::NotConverged {
            iterations: MAX_ITERATIONS,
        })
    }

    /// `ln Tr T^L`: the exact `ln Z` of the torus `length` rows long (for `length ≥ 3` on
    /// a lattice whose `W × L` torus is valid, the torus that `rungs_lattice::Torus`
    /// builds). One start vector per row state, so rows are limited to
    /// [`MAX_TRACE_ROW_SITES`] sites.
    pub fn torus_ln_z(&self, t: f64, h: f64, length: usize) -> Result<f64, TransferError> {
        Strip::check(t, h)?;
        if length == 0 {
            return Err(TransferError::BadLength);
        }
        if self.n > MAX_TRACE_ROW_SITES {
            return Err(TransferError::TooWide {
                sites: self.n,
                limit: MAX_TRACE_ROW_SITES,
            });
        }
        let beta = 1.0 / t;
        let len = 1usize << self.slots;
        let row_mask = (1usize << self.n) - 1;
        let mut v = vec![0.0; len];
        let mut terms = Vec::with_capacity(1 << self.n);
        for sigma in 0..(1usize << self.n) {
            // e_σ, duplicated along the free auxiliary slots.
            for (i, x) in v.iter_mut().enumerate() {
                *x = if i & row_mask == sigma { 1.0 } else { 0.0 };
            }
            let mut log_scale = 0.0;
            for _ in 0..length {
                log_scale += self.apply(&mut v, beta, h);
            }
            let diag = v[sigma];
            if diag > 0.0 {
                terms.push(log_scale + diag.ln());
            }
        }
        let top = terms.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        Ok(top + terms.iter().map(|x| (x - top).exp()).sum::<f64>().ln())
    }
}

/// Weights `exp(β s' (h + Σ J_m s_m) + β j_self s' s) · e^{−shift}` for every pattern of
/// the neighbour spins (bit m = 1: neighbour m down), laid out `[p][s'][s]` (s' and s:
/// 0 = up, 1 = down). Returns the shift (so every weight is ≤ 1).
fn fill_table(table: &mut Vec<f64>, nbrs: &[(usize, f64)], j_self: f64, beta: f64, h: f64) -> f64 {
    let shift = beta * (h.abs() + nbrs.iter().map(|e| e.1.abs()).sum::<f64>() + j_self.abs());
    let patterns = 1usize << nbrs.len();
    table.clear();
    table.resize(patterns * 4, 0.0);
    for p in 0..patterns {
        let mut local = h;
        for (m, &(_, j)) in nbrs.iter().enumerate() {
            local += if (p >> m) & 1 == 0 { j } else { -j };
        }
        for (sp, spin_new) in [(0, 1.0), (1, -1.0)] {
            for (so, spin_old) in [(0, 1.0), (1, -1.0)] {
                table[p * 4 + sp * 2 + so] =
                    (beta * spin_new * (local + j_self * spin_old) - shift).exp();
            }
        }
    }
    shift
}

#[inline]
fn pattern(i: usize, nbrs: &[(usize, f64)]) -> usize {
    nbrs.iter()
        .enumerate()
        .fold(0, |p, (m, &(s, _))| p | (((i >> s) & 1) << m))
}

/// Indices with bit `slot` clear, in increasing order.
#[inline]
fn low_indices(len: usize, slot: usize) -> impl Iterator<Item = usize> {
    let bit = 1usize << slot;
    (0..len / 2).map(move |r| ((r >> slot) << (slot + 1)) | (r & (bit - 1)))
}

fn replace(v: &mut [f64], slot: usize, nbrs: &[(usize, f64)], table: &[f64]) -> f64 {
    let bit = 1usize << slot;
    let mut top = 0.0f64;
    for i in low_indices(v.len(), slot) {
        let w = &table[pattern(i, nbrs) * 4..][..4];
        let (a, b) = (v[i], v[i | bit]);
        let (up, down) = (w[0] * a + w[1] * b, w[2] * a + w[3] * b);
        v[i] = up;
        v[i | bit] = down;
        top = top.max(up).max(down);
    }
    top
}

fn add(v: &mut [f64], slot: usize, nbrs: &[(usize, f64)], table: &[f64]) -> f64 {
    let bit = 1usize << slot;
    let mut top = 0.0f64;
    for i in low_indices(v.len(), slot) {
        let w = &table[pattern(i, nbrs) * 4..][..4];
        let a = v[i];
        let (up, down) = (w[0] * a, w[2] * a);
        v[i] = up;
        v[i | bit] = down;
        top = top.max(up).max(down);
    }
    top
}

fn sum_out(v: &mut [f64], slot: usize) -> f64 {
    let bit = 1usize << slot;
    let mut top = 0.0f64;
    for i in low_indices(v.len(), slot) {
        let s = v[i] + v[i | bit];
        v[i] = s;
        v[i | bit] = s;
        top = top.max(s);
    }
    top
}

/// Move the spin in slot `from` to the free slot `to`: `v'(i) = v(i with bit from := bit to)`.
fn move_slot(v: &mut [f64], from: usize, to: usize) -> f64 {
    let mut top = 0.0f64;
    for i in 0..v.len() {
        if ((i >> from) & 1) != ((i >> to) & 1) {
            v[i] = v[i ^ (1 << from)];
        }
        top = top.max(v[i]);
    }
    top
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::closed::onsager;
    use crate::enumerate::Enumeration;

    /// Intra-row and inter-row bonds.
    type Rows = (Vec<(usize, usize, f64)>, Vec<(usize, usize, f64)>);

    /// Square strip of width w: intra (x, x+1), inter (x, x).
    fn square_rows(w: usize, j1: f64, j2: f64) -> Rows {
        let intra = (0..w).map(|x| (x, (x + 1) % w, j1)).collect();
        let inter = (0..w).map(|x| (x, x, j2)).collect();
        (intra, inter)
    }

    /// Triangular strip: intra (x, x+1), inter (x → x) and (x → x+1).
    fn triangular_rows(w: usize, j: f64) -> Rows {
        let intra = (0..w).map(|x| (x, (x + 1) % w, j)).collect();
        let inter = (0..w)
            .flat_map(|x| [(x, x, j), (x, (x + 1) % w, j)])
            .collect();
        (intra, inter)
    }

    /// Honeycomb (brick-wall) strip, 2 sites per cell: A(x)–B(x), B(x)–A(x+1) in a row,
    /// B(x) → A(x) of the next row.
    fn honeycomb_rows(w: usize, j: f64) -> Rows {
        let intra = (0..w)
            .flat_map(|x| [(2 * x, 2 * x + 1, j), (2 * x + 1, 2 * ((x + 1) % w), j)])
            .collect();
        let inter = (0..w).map(|x| (2 * x + 1, 2 * x, j)).collect();
        (intra, inter)
    }

    /// The torus with `length` rows built from the same row description.
    fn torus_edges(n: usize, rows: &Rows, length: usize) -> Vec<(usize, usize, f64)> {
        let mut e = Vec::new();
        for r in 0..length {
            let (o, nw) = (r * n, ((r + 1) % length) * n);
            e.extend(rows.0.iter().map(|&(a, b, j)| (o + a, o + b, j)));
            e.extend(rows.1.iter().map(|&(a, b, j)| (o + a, nw + b, j)));
        }
        e
    }

    #[test]
    fn trace_equals_enumeration_on_narrow_tori() {
        let cases = [
            ("square", 4, square_rows(4, 1.0, 1.0), 4),
            ("anisotropic square", 3, square_rows(3, 1.0, 0.4), 5),
            ("triangular", 3, triangular_rows(3, 1.0), 4),
            ("honeycomb", 6, honeycomb_rows(3, 1.0), 3),
        ];
        for (name, n, rows, length) in cases {
            let strip = Strip::from_rows(n, &rows.0, &rows.1).unwrap();
            let e = Enumeration::new(n * length, &torus_edges(n, &rows, length)).unwrap();
            for &(t, h) in &[(1.0, 0.0), (2.5, 0.0), (1.7, 0.3), (4.0, -0.5)] {
                let a = strip.torus_ln_z(t, h, length).unwrap();
                let b = e.thermo(t, h).unwrap().ln_z;
                assert!(
                    (a - b).abs() < 1e-11 * b.abs(),
                    "{name} T={t} h={h}: {a} vs {b}"
                );
            }
        }
    }

    #[test]
    fn schedules_need_few_auxiliary_slots() {
        let (a, b) = square_rows(6, 1.0, 1.0);
        assert_eq!(Strip::from_rows(6, &a, &b).unwrap().auxiliary_slots(), 0);
        let (a, b) = triangular_rows(6, 1.0);
        assert_eq!(Strip::from_rows(6, &a, &b).unwrap().auxiliary_slots(), 1);
        let (a, b) = honeycomb_rows(3, 1.0);
        assert!(Strip::from_rows(6, &a, &b).unwrap().auxiliary_slots() <= 1);
    }

    #[test]
    fn strip_free_energy_is_the_largest_eigenvalue() {
        // For long tori, ln Z / (nL) → ln λ_max / n (common practice).
        let rows = triangular_rows(4, 1.0);
        let strip = Strip::from_rows(4, &rows.0, &rows.1).unwrap();
        let (t, h) = (2.0, 0.1);
        let f = strip.free_energy(t, h).unwrap();
        let l = 200;
        let z = strip.torus_ln_z(t, h, l).unwrap();
        assert!(
            (z / l as f64 - f.ln_lambda).abs() < 1e-9,
            "{} vs {}",
            z / l as f64,
            f.ln_lambda
        );
    }

    #[test]
    fn square_strips_converge_to_onsager_monotonically() {
        // Onsager (1944): −βf of the infinite lattice; strips approach it as W grows.
        let t = 3.0;
        let exact = onsager::square(t, 1.0, 1.0).minus_beta_f;
        let mut prev_err = f64::INFINITY;
        for w in [4, 6, 8, 10] {
            let (a, b) = square_rows(w, 1.0, 1.0);
            let f = Strip::from_rows(w, &a, &b)
                .unwrap()
                .free_energy(t, 0.0)
                .unwrap();
            let err = (f.minus_beta_f - exact).abs();
            assert!(err < prev_err, "W={w}: error {err} not below {prev_err}");
            prev_err = err;
        }
        assert!(prev_err < 1e-4, "W=10 error {prev_err}");
    }

    #[test]
    fn critical_strips_show_the_conformal_anomaly() {
        // At Tc a periodic strip has −βf_W − (−βf_∞) = πc/(6W²) + …, with c = 1/2 for Ising
        // (Blöte, Cardy & Nightingale 1986, Phys. Rev. Lett. 56, 742; Affleck 1986, ibid. 746).
        let tc = 2.0 / std::f64::consts::SQRT_2.ln_1p();
        let exact = onsager::square(tc, 1.0, 1.0).minus_beta_f;
        let target = std::f64::consts::PI / 12.0;
        let mut prev = f64::INFINITY;
        for w in [8, 10, 12] {
            let (a, b) = square_rows(w, 1.0, 1.0);
            let f = Strip::from_rows(w, &a, &b)
                .unwrap()
                .free_energy(tc, 0.0)
                .unwrap();
            let amp = (f.minus_beta_f - exact) * (w * w) as f64;
            assert!((amp - target).abs() < prev, "W={w}: W²Δ = {amp}");
            prev = (amp - target).abs();
        }
        assert!(prev < 2e-3, "W=12 amplitude off by {prev}");
    }

    #[test]
    fn errors_are_typed() {
        assert!(matches!(
            Strip::from_rows(0, &[], &[]),
            Err(TransferError::WidthTooSmall { .. })
        ));
        assert!(matches!(
            Strip::from_rows(40, &[], &[]),
            Err(TransferError::TooWide { .. })
        ));
        assert!(matches!(
            Strip::from_rows(2, &[(0, 2, 1.0)], &[]),
            Err(TransferError::SiteOutOfRange { .. })
        ));
        let s = Strip::from_rows(2, &[(0, 1, 1.0)], &[(0, 0, 1.0)]).unwrap();
        assert!(matches!(
            s.free_energy(-1.0, 0.0),
            Err(TransferError::BadTemperature { .. })
        ));
        assert!(matches!(
            s.torus_ln_z(1.0, 0.0, 0),
            Err(TransferError::BadLength)
        ));
    }
}

//! Rectangular blocks on a square net, solved on their sub-blocks' potentials.
//!
//! On a lattice of one site per cell whose bonds join nearest cells along the two
//! primitive vectors (couplings `J_x`, `J_y`, any signs), the Kikuchi approximation of an
//! `R × C` block (rows along a₂, columns along a₁) has four region kinds: the block
//! `B = R×C` (coefficient +1), its top/bottom `H = (R−1)×C` and left/right
//! `V = R×(C−1)` sub-blocks (−1 each) and their corners `S = (R−1)×(C−1)` (+1); no other
//! intersection survives the Möbius inversion. Per site,
//!
//! `F = Σ_R a_R Σ_x p_R(x) (E_R(x) + T ln p_R(x))`,
//!
//! with `p_H`, `p_V`, `p_S` the marginals of the block distribution `p_B`, translation
//! invariance asking that its top and bottom `H` marginals agree, and its left and right
//! `V` marginals. The stationary points (Lagrange multipliers `μ`, `ν` for those two
//! constraints, the sub-region entropies shared evenly among their positions) are
//!
//! `ln p_B(s) = −βE_B(s) + ½(g_H + d_H)(top s) + ½(g_H − d_H)(bottom s)
//!            + ½(g_V + d_V)(left s) + ½(g_V − d_V)(right s) − ¼ Σ_corners g_S(c) − ln Z`,
//!
//! `g_R = ln p_R + βE_R` (R = H, V, S), and `d_H`, `d_V` the multipliers. This module
//! finds them as the fixed point of `x ← Φ(x)`: `g_R` from the present marginals,
//! `d_H += ln p_bottom − ln p_top`, `d_V += ln p_right − ln p_left`, damped by ½ and
//! accelerated by Anderson mixing ([`anderson`]). Each application of Φ is one pass
//! over the `2^{RC}` block states, in place, with four table look-ups per state; no
//! Hessian, no correlation variable. Memory grows with the sub-blocks' `2^{(R−1)C}`
//! states.
//!
//! The susceptibility `χ = dm/dh` at `h = 0` is the fixed point's linear response: the
//! same mixing solves `δx = DΦ·δx + ∂_hΦ` (each product one pass with the block
//! distribution and its first-order change). Tc is where the paramagnet's `1/χ`
//! crosses zero (the uniform mode's instability), found by the search of every Tc
//! ([`crate::search`]); the amplitude `χ̄ = lim (T − Tc) χ` is `1/(d(1/χ)/dT)` at Tc.
//! Only uniform (point-group-symmetric) order is searched, as on every big level.
//!
//! This is the region form of the cluster variation method (Kikuchi 1951, Phys. Rev. 81,
//! 988; its fixed points as generalised belief propagation: Yedidia, Freeman & Weiss 2005,
//! IEEE Trans. Inf. Theory 51, 2282 — from memory); Anderson mixing: Anderson 1965,
//! J. ACM 12, 547; Walker & Ni 2011, SIAM J. Numer. Anal. 49, 1715.

use std::time::Instant;

use rayon::prelude::*;
use rungs_lattice::Lattice;

use crate::error::SolveError;
use crate::tc::{classify, mean_field_scale, CriticalPoint, TcOptions};

/// The note of every result of this path.
pub const RECT_NOTE: &str = "big level, a rectangular block solved on its sub-blocks' potentials (region fixed point): only uniform order is searched";

/// The smallest sides this path takes (a side of 2 would put the block's bonds between
/// its top and bottom sub-blocks; such blocks are small enough for the dense engine).
const MIN_SIDE: usize = 3;

/// A rectangular block level on a square net: `cols × rows` cells of a lattice of one
/// site per cell whose bonds join nearest cells along a₁ (`jx`) and a₂ (`jy`).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RectBlock {
    /// Cells along a₁.
    pub cols: usize,
    /// Cells along a₂.
    pub rows: usize,
    /// Total coupling per site along a₁ (bonds to cell ±a₁ summed).
    pub jx: f64,
    /// Total coupling per site along a₂.
    pub jy: f64,
}

impl RectBlock {
    /// Level `name` of `lattice` as a rectangular block, when it is one: a 2D lattice of
    /// one site per cell, every bond to a cell ±a₁ or ±a₂, and the level's one shape a
    /// full rectangle of at least 3 × 3 cells. `None` otherwise.
    pub fn detect(lattice: &Lattice, name: &str) -> Option<RectBlock> {
        if lattice.dimension() != 2 || lattice.sites_per_cell() != 1 {
            return None;
        }
        let (mut jx, mut jy) = (0.0, 0.0);
        for b in lattice.bonds() {
            match (b.from, b.to, b.cell) {
                (0, 0, [x, 0, 0]) if x.abs() == 1 => jx += b.j,
                (0, 0, [0, y, 0]) if y.abs() == 1 => jy += b.j,
                _ => return None,
            }
        }
        let spec = lattice.level_specs().iter().find(|l| l.name == name)?;
        let [shape] = spec.shapes.as_slice() else {
            return None;
        };
        if shape.iter().any(|&(a, c)| a != 0 || c[2] != 0) {
            return None;
        }
        let lo = |k: usize| shape.iter().map(|s| s.1[k]).min().unwrap_or(0);
        let hi = |k: usize| shape.iter().map(|s| s.1[k]).max().unwrap_or(0);
        let cols = usize::try_from(hi(0) - lo(0) + 1).ok()?;
        let rows = usize::try_from(hi(1) - lo(1) + 1).ok()?;
        let mut cells: Vec<[i32; 3]> = shape.iter().map(|s| s.1).collect();
        cells.sort_unstable();
        cells.dedup();
        if cells.len() != cols * rows || cols < MIN_SIDE || rows < MIN_SIDE {
            return None;
        }
        Some(RectBlock { cols, rows, jx, jy })
    }

    /// Sites of the block.
    pub fn sites(&self) -> usize {
        self.cols * self.rows
    }

    /// Unknowns of the fixed point: `g_H`, `d_H` on the `H` states, `g_V`, `d_V` on the
    /// `V` states, `g_S` on the `S` states.
    pub fn unknowns(&self) -> usize {
        let (nh, nv, ns) = self.sub_bits();
        2 * (1 << nh) + 2 * (1 << nv) + (1 << ns)
    }

    /// Bits of the H, V and S states.
    fn sub_bits(&self) -> (usize, usize, usize) {
        let (r, c) = (self.rows, self.cols);
        ((r - 1) * c, r * (c - 1), (r - 1) * (c - 1))
    }
}

/// σ of bit `k` of a state: bit clear is +1, set is −1.
fn spin(state: usize, k: usize) -> f64 {
    if (state >> k) & 1 == 0 {
        1.0
    } else {
        -1.0
    }
}

/// `E = −J_x Σ σσ' (along a row) − J_y Σ σσ' (between rows) − h Σ σ` of a `rows × cols`
/// state, bit `j·cols + i` the site in row j, column i.
fn rect_energy(rows: usize, cols: usize, state: usize, jx: f64, jy: f64, h: f64) -> f64 {
    let mut e = 0.0;
    for j in 0..rows {
        for i in 0..cols {
            let k = j * cols + i;
            let s = spin(state, k);
            e -= h * s;
            if i + 1 < cols {
                e -= jx * s * spin(state, k + 1);
            }
            if j + 1 < rows {
                e -= jy * s * spin(state, k + cols);
            }
        }
    }
    e
}

/// Σσ of a state of `bits` sites.
fn spin_sum(bits: usize, state: usize) -> f64 {
    bits as f64 - 2.0 * f64::from(state.count_ones())
}

/// The state of the `rows × (cols − 1)` sub-block starting at column `first` (0 or 1)
/// of a `rows × cols` state.
fn drop_column(rows: usize, cols: usize, state: usize, first: usize) -> usize {
    let mask = (1usize << (cols - 1)) - 1;
    let mut out = 0;
    for j in 0..rows {
        out |= ((state >> (j * cols + first)) & mask) << (j * (cols - 1));
    }
    out
}

/// Sums of one pass: the normaliser and the four sub-block marginals (unnormalised).
struct Sums {
    z: f64,
    top: Vec<f64>,
    bottom: Vec<f64>,
    left: Vec<f64>,
    right: Vec<f64>,
}

impl Sums {
    fn new(nh: usize, nv: usize) -> Sums {
        Sums {
            z: 0.0,
            top: vec![0.0; 1 << nh],
            bottom: vec![0.0; 1 << nh],
            left: vec![0.0; 1 << nv],
            right: vec![0.0; 1 << nv],
        }
    }

    fn clear(&mut self) {
        self.z = 0.0;
        for v in [
            &mut self.top,
            &mut self.bottom,
            &mut self.left,
            &mut self.right,
        ] {
            v.fill(0.0);
        }
    }

    fn add(&mut self, other: &Sums) {
        self.z += other.z;
        let pairs = [
            (&mut self.top, &other.top),
            (&mut self.bottom, &other.bottom),
            (&mut self.left, &other.left),
            (&mut self.right, &other.right),
        ];
        for (a, b) in pairs {
            a.par_iter_mut()
                .zip(b.par_iter())
                .for_each(|(x, y)| *x += y);
        }
    }
}

/// The four look-up tables of a pass: `ln p_B(s) + ln Z − shift` is
/// `top[top s] + bottom[bottom s] + left[left s] + right[right s]`.
struct Tables {
    top: Vec<f64>,
    bottom: Vec<f64>,
    left: Vec<f64>,
    right: Vec<f64>,
}

/// Where the parts of the unknown vector lie.
#[derive(Debug, Clone, Copy)]
struct Layout {
    nh: usize,
    nv: usize,
    ns: usize,
}

impl Layout {
    fn g_h(&self) -> std::ops::Range<usize> {
        0..1 << self.nh
    }
    fn d_h(&self) -> std::ops::Range<usize> {
        1 << self.nh..2 << self.nh
    }
    fn g_v(&self) -> std::ops::Range<usize> {
        let o = 2 << self.nh;
        o..o + (1 << self.nv)
    }
    fn d_v(&self) -> std::ops::Range<usize> {
        let o = (2 << self.nh) + (1 << self.nv);
        o..o + (1 << self.nv)
    }
    fn g_s(&self) -> std::ops::Range<usize> {
        let o = (2 << self.nh) + (2 << self.nv);
        o..o + (1 << self.ns)
    }
    fn len(&self) -> usize {
        (2 << self.nh) + (2 << self.nv) + (1 << self.ns)
    }
    /// Each table's range and its bits.
    fn parts(&self) -> [(std::ops::Range<usize>, usize); 5] {
        [
            (self.g_h(), self.nh),
            (self.d_h(), self.nh),
            (self.g_v(), self.nv),
            (self.d_v(), self.nv),
            (self.g_s(), self.ns),
        ]
    }
}

/// The fixed point of one rectangular block at one temperature and field, with the
/// pass machinery and work space.
pub struct RectSolver {
    block: RectBlock,
    layout: Layout,
    beta: f64,
    h: f64,
    /// Energies of the H, V and S sub-blocks (with the field).
    e_h: Vec<f64>,
    e_v: Vec<f64>,
    e_s: Vec<f64>,
    /// `E_B(s) − E_H(top s)` as a function of the bottom sub-block (its last row and the
    /// bonds to the row above).
    e_last: Vec<f64>,
    /// The S states of an H state's left and right corners.
    h_corner: [Vec<u32>; 2],
    /// Work sums, one per chunk of the state range.
    sums: Vec<Sums>,
    /// Work sums of a linear pass (the block distribution times δ ln p).
    dsums: Vec<Sums>,
    /// Passes over the block states done.
    pub passes: usize,
}

/// The block distribution's marginals after a pass, normalised.
struct Marginals {
    top: Vec<f64>,
    bottom: Vec<f64>,
    left: Vec<f64>,
    right: Vec<f64>,
}

impl RectSolver {
    /// A solver for `block` at temperature `t` and field `h`.
    pub fn new(block: RectBlock, t: f64, h: f64) -> RectSolver {
        let (nh, nv, ns) = block.sub_bits();
        let (r, c) = (block.rows, block.cols);
        let layout = Layout { nh, nv, ns };
        let mut solver = RectSolver {
            block,
            layout,
            beta: 1.0 / t,
            h,
            e_h: Vec::new(),
            e_v: Vec::new(),
            e_s: Vec::new(),
            e_last: Vec::new(),
            h_corner: [
                (0..1usize << nh)
                    .map(|x| drop_column(r - 1, c, x, 0) as u32)
                    .collect(),
                (0..1usize << nh)
                    .map(|x| drop_column(r - 1, c, x, 1) as u32)
                    .collect(),
            ],
            sums: Vec::new(),
            dsums: Vec::new(),
            passes: 0,
        };
        solver.set(t, h);
        let chunks = rayon::current_num_threads().max(1);
        solver.sums = (0..chunks).map(|_| Sums::new(nh, nv)).collect();
        solver
    }

    /// Move to temperature `t` and field `h`.
    pub fn set(&mut self, t: f64, h: f64) {
        let b = self.block;
        let (r, c) = (b.rows, b.cols);
        let (nh, nv, ns) = b.sub_bits();
        self.beta = 1.0 / t;
        self.h = h;
        self.e_h = (0..1usize << nh)
            .map(|x| rect_energy(r - 1, c, x, b.jx, b.jy, h))
            .collect();
        self.e_v = (0..1usize << nv)
            .map(|y| rect_energy(r, c - 1, y, b.jx, b.jy, h))
            .collect();
        self.e_s = (0..1usize << ns)
            .map(|z| rect_energy(r - 1, c - 1, z, b.jx, b.jy, h))
            .collect();
        // The bottom sub-block's last row (row R−2 of it) and its bonds to row R−3.
        self.e_last = (0..1usize << nh)
            .map(|x| {
                let last = (r - 2) * c;
                let mut e = 0.0;
                for i in 0..c {
                    let s = spin(x, last + i);
                    e -= h * s;
                    if i + 1 < c {
                        e -= b.jx * s * spin(x, last + i + 1);
                    }
                    e -= b.jy * s * spin(x, last + i - c);
                }
                e
            })
            .collect();
    }

    /// Length of the unknown vector.
    pub fn len(&self) -> usize {
        self.layout.len()
    }

    /// Whether the unknown vector is empty (never: kept for the `len` convention).
    pub fn is_empty(&self) -> bool {
        false
    }

    /// The tables of `x` (with the block energy when `energy`, else without: a linear
    /// pass's direction), and for a linear pass the field's direction `dh`.
    fn tables(&self, x: &[f64], energy: bool, dh: f64) -> Tables {
        let l = self.layout;
        let (g_h, d_h, g_v, d_v, g_s) = (
            &x[l.g_h()],
            &x[l.d_h()],
            &x[l.g_v()],
            &x[l.d_v()],
            &x[l.g_s()],
        );
        let beta = self.beta;
        let c = self.block.cols;
        let nh = l.nh;
        let corner = |i: usize| {
            0.25 * (g_s[self.h_corner[0][i] as usize] + g_s[self.h_corner[1][i] as usize])
        };
        let top: Vec<f64> = (0..1usize << nh)
            .into_par_iter()
            .map(|i| {
                let mut v = 0.5 * (g_h[i] + d_h[i]) - corner(i);
                if energy {
                    v -= beta * self.e_h[i];
                }
                v + dh * beta * spin_sum(nh, i)
            })
            .collect();
        let bottom: Vec<f64> = (0..1usize << nh)
            .into_par_iter()
            .map(|i| {
                let mut v = 0.5 * (g_h[i] - d_h[i]) - corner(i);
                if energy {
                    v -= beta * self.e_last[i];
                }
                v + dh * beta * spin_sum(c, i >> (nh - c))
            })
            .collect();
        let left: Vec<f64> = (0..1usize << l.nv)
            .into_par_iter()
            .map(|i| 0.5 * (g_v[i] + d_v[i]))
            .collect();
        let right: Vec<f64> = (0..1usize << l.nv)
            .into_par_iter()
            .map(|i| 0.5 * (g_v[i] - d_v[i]))
            .collect();
        Tables {
            top,
            bottom,
            left,
            right,
        }
    }

    /// One pass over the block states: `Σ_s w(s)` and the four marginals of
    /// `w(s) = e.top[top s]·e.bottom[bottom s]·e.left[left s]·e.right[right s]`, which is
    /// proportional to p(s) (see [`Self::exponentiate`]), and with `dt` those of
    /// `w(s)·δ(s)`, `δ(s)` the linear tables' sum. A state costs three multiplications
    /// and no `exp`; the states are visited as (rows 1…R−1, row 0),
    /// so the bottom sub-block is fixed along the inner loop and the other three indices
    /// run over short contiguous stretches. At h = 0 the tables are even (`dt` odd)
    /// under flipping every spin, so only the states with the last spin up are visited
    /// and each marginal is completed from its mirror image: `M(x) = M½(x) ± M½(x̄)`.
    fn pass(&mut self, e: &Tables, dt: Option<&Tables>) -> (Sums, Option<Sums>) {
        let b = self.block;
        let (r, c) = (b.rows, b.cols);
        let n = b.sites();
        let l = self.layout;
        let chunks = self.sums.len();
        if dt.is_some() && self.dsums.len() != chunks {
            self.dsums = (0..chunks).map(|_| Sums::new(l.nh, l.nv)).collect();
        }
        let (et, eb, el, er) = (&e.top, &e.bottom, &e.left, &e.right);
        let symmetric = self.h == 0.0;
        let his = if symmetric {
            1usize << (n - c - 1)
        } else {
            1usize << (n - c)
        };
        let per = his.div_ceil(chunks);
        let low = 1usize << c;
        let lm = (1usize << (c - 1)) - 1;
        let top_hi = (1usize << ((r - 2) * c)) - 1;
        let work = |k: usize, sums: &mut Sums, dsums: Option<&mut Sums>| {
            sums.clear();
            let mut dsums = dsums;
            if let Some(d) = dsums.as_deref_mut() {
                d.clear();
            }
            let range = k * per..((k + 1) * per).min(his);
            for (hi, &wb) in eb.iter().enumerate().take(range.end).skip(range.start) {
                let tb = (hi & top_hi) << c;
                let lb = drop_column(r - 1, c, hi, 0) << (c - 1);
                let rb = drop_column(r - 1, c, hi, 1) << (c - 1);
                let mut zb = 0.0;
                for q in 0..low {
                    let (it, il, ir) = (tb | q, lb | (q & lm), rb | (q >> 1));
                    let w = wb * et[it] * el[il] * er[ir];
                    zb += w;
                    sums.top[it] += w;
                    sums.left[il] += w;
                    sums.right[ir] += w;
                }
                sums.bottom[hi] += zb;
                sums.z += zb;
                if let (Some(d), Some(dt)) = (dsums.as_deref_mut(), dt) {
                    let db = dt.bottom[hi];
                    let mut zd = 0.0;
                    for q in 0..low {
                        let (it, il, ir) = (tb | q, lb | (q & lm), rb | (q >> 1));
                        let w = wb * et[it] * el[il] * er[ir];
                        let wd = w * (db + dt.top[it] + dt.left[il] + dt.right[ir]);
                        zd += wd;
                        d.top[it] += wd;
                        d.left[il] += wd;
                        d.right[ir] += wd;
                    }
                    d.bottom[hi] += zd;
                    d.z += zd;
                }
            }
        };
        match dt {
            None => self
                .sums
                .par_iter_mut()
                .enumerate()
                .for_each(|(k, s)| work(k, s, None)),
            Some(_) => self
                .sums
                .par_iter_mut()
                .zip(self.dsums.par_iter_mut())
                .enumerate()
                .for_each(|(k, (s, d))| work(k, s, Some(d))),
        }
        self.passes += 1;
        let gather = |parts: &[Sums], sign: f64| {
            let mut all = Sums::new(l.nh, l.nv);
            for s in parts {
                all.add(s);
            }
            if symmetric {
                all.z = if sign > 0.0 { 2.0 * all.z } else { 0.0 };
                for (v, bits) in [
                    (&mut all.top, l.nh),
                    (&mut all.bottom, l.nh),
                    (&mut all.left, l.nv),
                    (&mut all.right, l.nv),
                ] {
                    let full = (1usize << bits) - 1;
                    for i in 0..v.len() {
                        let j = i ^ full;
                        if i < j {
                            let (a, b) = (v[i], v[j]);
                            v[i] = a + sign * b;
                            v[j] = b + sign * a;
                        }
                    }
                }
            }
            all
        };
        let all = gather(&self.sums, 1.0);
        let dall = dt.map(|_| gather(&self.dsums, -1.0));
        (all, dall)
    }

    /// The even (`odd`: odd) half of a full unknown vector at h = 0: each table's
    /// entries whose last spin is up.
    fn reduce(&self, full: &[f64]) -> Vec<f64> {
        let l = self.layout;
        let mut out = Vec::with_capacity(full.len() / 2);
        for (range, bits) in l.parts() {
            out.extend_from_slice(&full[range.start..range.start + (1 << (bits - 1))]);
        }
        out
    }

    /// The full vector of a half one ([`Self::reduce`]): `f(x̄) = ±f(x)`.
    fn expand(&self, half: &[f64], odd: bool, full: &mut [f64]) {
        let l = self.layout;
        let sign = if odd { -1.0 } else { 1.0 };
        let mut at = 0;
        for (range, bits) in l.parts() {
            let m = 1usize << (bits - 1);
            let mask = (1usize << bits) - 1;
            let part = &mut full[range];
            part[..m].copy_from_slice(&half[at..at + m]);
            for i in m..2 * m {
                part[i] = sign * half[at + (i ^ mask)];
            }
            at += m;
        }
    }

    /// Anderson mixing of `map` (full vectors) from `x`; at h = 0 on half vectors
    /// (`odd`: the map's values are odd under a global flip, else even).
    fn mix(
        &mut self,
        linear: Option<&Base>,
        x: &mut Vec<f64>,
        options: AndersonOptions,
        iterations: &mut usize,
    ) -> Result<(), AndersonError> {
        let n = self.len();
        let (mut full, mut out) = (vec![0.0; n], vec![0.0; n]);
        let apply = |s: &mut RectSolver, v: &[f64], o: &mut [f64]| match linear {
            Some(base) => s.linear(base, v, 1.0, o, None),
            None => s.map(v, o),
        };
        // The fixed point's differences in single precision, the response's in double.
        let run =
            |map: &mut FixedPointMap<'_>, x: &mut Vec<f64>, iterations: &mut usize| match linear {
                Some(_) => anderson::<f64>(map, x, options, iterations),
                None => anderson::<f32>(map, x, options, iterations),
            };
        if self.h != 0.0 {
            return run(
                &mut |v: &[f64], o: &mut [f64]| apply(self, v, o),
                x,
                iterations,
            );
        }
        let odd = linear.is_some();
        let mut half = self.reduce(x);
        let result = run(
            &mut |v: &[f64], o: &mut [f64]| {
                self.expand(v, odd, &mut full);
                apply(self, &full, &mut out)?;
                o.copy_from_slice(&self.reduce(&out));
                Ok(())
            },
            &mut half,
            iterations,
        );
        let mut back = vec![0.0; n];
        self.expand(&half, odd, &mut back);
        *x = back;
        result
    }

    /// The exponentiated tables of a pass: their product over a state's four sub-blocks
    /// is `exp(ln p(s) + ln Z − shift)`; each table is shifted by its own largest entry
    /// (the last by the rest of `shift`), so no entry overflows.
    fn exponentiate(t: &Tables, shift: f64) -> Tables {
        let max = |v: &[f64]| v.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        let (mt, mb, ml) = (max(&t.top), max(&t.bottom), max(&t.left));
        let mr = shift - mt - mb - ml;
        let ex = |v: &[f64], m: f64| -> Vec<f64> { v.par_iter().map(|a| (a - m).exp()).collect() };
        Tables {
            top: ex(&t.top, mt),
            bottom: ex(&t.bottom, mb),
            left: ex(&t.left, ml),
            right: ex(&t.right, mr),
        }
    }

    /// The shift that keeps every `exp` of a pass finite: the tables' largest sum.
    fn shift(t: &Tables) -> f64 {
        let max = |v: &[f64]| v.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        max(&t.top) + max(&t.bottom) + max(&t.left) + max(&t.right)
    }

    /// The normalised marginals of the block distribution of `x` (one pass), the
    /// exponentiated tables of that pass and their sum over the states, Z.
    fn marginals(&mut self, x: &[f64]) -> Result<(Marginals, Tables, f64), SolveError> {
        let t = self.tables(x, true, 0.0);
        let shift = Self::shift(&t);
        let mut e = Self::exponentiate(&t, shift);
        let (mut s, _) = self.pass(&e, None);
        if s.z > 0.0 && s.z < 1e-200 {
            // The bound was far above the true largest term: once more, shifted by ln Z.
            e = Self::exponentiate(&t, shift + s.z.ln());
            s = self.pass(&e, None).0;
        }
        if !(s.z > 0.0 && s.z.is_finite()) {
            return Err(self.failure("the block distribution cannot be normalised"));
        }
        let z = s.z;
        let norm = |v: Vec<f64>| v.into_iter().map(|a| a / z).collect::<Vec<f64>>();
        Ok((
            Marginals {
                top: norm(s.top),
                bottom: norm(s.bottom),
                left: norm(s.left),
                right: norm(s.right),
            },
            e,
            z,
        ))
    }

    fn failure(&self, detail: &str) -> SolveError {
        SolveError::TcSearch {
            level: format!("block{}x{}", self.block.cols, self.block.rows),
            detail: format!("{detail} (T = {})", 1.0 / self.beta),
        }
    }

    /// The S marginal from the H marginals (average of the four corners).
    fn corners(&self, top: &[f64], bottom: &[f64]) -> Vec<f64> {
        let mut p_s = vec![0.0; 1 << self.layout.ns];
        for (i, (a, b)) in top.iter().zip(bottom).enumerate() {
            for k in 0..2 {
                p_s[self.h_corner[k][i] as usize] += 0.25 * (a + b);
            }
        }
        p_s
    }

    /// `Φ(x)` into `out`: the potentials from the marginals of `x`'s block distribution.
    pub fn map(&mut self, x: &[f64], out: &mut [f64]) -> Result<(), SolveError> {
        let (m, _, _) = self.marginals(x)?;
        let l = self.layout;
        let beta = self.beta;
        let p_s = self.corners(&m.top, &m.bottom);
        let check = |v: f64| v > 0.0 && v.is_finite();
        if !(m
            .top
            .iter()
            .chain(&m.bottom)
            .chain(&m.left)
            .chain(&m.right)
            .all(|&v| check(v))
            && p_s.iter().all(|&v| check(v)))
        {
            return Err(self.failure(
                "a sub-block probability underflowed (temperature too low for this path)",
            ));
        }
        let centre = |v: &mut [f64]| {
            let mean = v.iter().sum::<f64>() / v.len() as f64;
            v.iter_mut().for_each(|a| *a -= mean);
        };
        {
            let g = &mut out[l.g_h()];
            g.par_iter_mut().enumerate().for_each(|(i, g)| {
                *g = (0.5 * (m.top[i] + m.bottom[i])).ln() + beta * self.e_h[i];
            });
            centre(g);
        }
        {
            let g = &mut out[l.g_v()];
            g.par_iter_mut().enumerate().for_each(|(i, g)| {
                *g = (0.5 * (m.left[i] + m.right[i])).ln() + beta * self.e_v[i];
            });
            centre(g);
        }
        {
            let g = &mut out[l.g_s()];
            for (i, g) in g.iter_mut().enumerate() {
                *g = p_s[i].ln() + beta * self.e_s[i];
            }
            centre(g);
        }
        let (xh, xv) = (&x[l.d_h()], &x[l.d_v()]);
        out[l.d_h()].par_iter_mut().enumerate().for_each(|(k, o)| {
            *o = xh[k] + (m.bottom[k] / m.top[k]).ln();
        });
        out[l.d_v()].par_iter_mut().enumerate().for_each(|(k, o)| {
            *o = xv[k] + (m.right[k] / m.left[k]).ln();
        });
        if self.h == 0.0 {
            self.project(out, 1.0);
        }
        Ok(())
    }

    /// At h = 0, the even (`sign` = 1) or odd (`sign` = −1) part of every table,
    /// `f(x) ← ½(f(x) + sign·f(x̄))`, x̄ every spin flipped. Even: spin-flip symmetry held
    /// exactly, so that rounding cannot seed order below Tc, where the paramagnet is a
    /// saddle; odd: the field's response.
    fn project(&self, v: &mut [f64], sign: f64) {
        for (range, bits) in self.layout.parts() {
            let part = &mut v[range];
            let full = (1usize << bits) - 1;
            for i in 0..part.len() {
                let j = i ^ full;
                if i < j {
                    let a = 0.5 * (part[i] + sign * part[j]);
                    part[i] = a;
                    part[j] = sign * a;
                }
            }
        }
    }

    /// The linear response of the fixed point `x` to the field: `δx` solving
    /// `δx = DΦ(x)·δx + ∂_hΦ(x)` (Anderson mixing from `start`), and `dm/dh`.
    pub fn field_response(
        &mut self,
        x: &[f64],
        start: Option<&[f64]>,
        tolerance: f64,
    ) -> Result<(Vec<f64>, f64, usize), SolveError> {
        let (m, e, z) = self.marginals(x)?;
        let p_s = self.corners(&m.top, &m.bottom);
        let base = Base { m, p_s, e, z };
        let n = self.len();
        let mut dx = start.map_or_else(|| vec![0.0; n], <[f64]>::to_vec);
        let mut iterations = 0;
        let mut scratch = vec![0.0; n];
        // Scale of the right-hand side: the map at δx = 0.
        self.linear(&base, &vec![0.0; n], 1.0, &mut scratch, None)?;
        let scale = scratch
            .iter()
            .fold(0.0f64, |a, v| a.max(v.abs()))
            .max(1e-300);
        let result = self.mix(
            Some(&base),
            &mut dx,
            AndersonOptions {
                tolerance: tolerance * scale,
                relative: 1e-11,
                ..AndersonOptions::default()
            },
            &mut iterations,
        );
        match result {
            Ok(()) => {}
            Err(AndersonError::Map(e)) => return Err(e),
            Err(AndersonError::NotConverged { .. }) => {
                return Err(self.failure("the field response did not converge"))
            }
        }
        let mut chi = 0.0;
        self.linear(&base, &dx, 1.0, &mut scratch, Some(&mut chi))?;
        Ok((dx, chi, iterations))
    }

    /// `out = DΦ(x)·v + dh ∂_hΦ(x)` at the fixed point whose pass is `base`; with
    /// `dm`, also the change of m = ⟨σ⟩ (from the S marginal's first site).
    fn linear(
        &mut self,
        base: &Base,
        v: &[f64],
        dh: f64,
        out: &mut [f64],
        dm: Option<&mut f64>,
    ) -> Result<(), SolveError> {
        let dt = self.tables(v, false, dh);
        let (_, d) = self.pass(&base.e, Some(&dt));
        let d = d.ok_or_else(|| self.failure("no linear pass"))?;
        let l = self.layout;
        let beta = self.beta;
        let z = base.z;
        let mean = d.z / z;
        // δp_R = (Σ w δ)/Z − p_R ⟨δ⟩.
        let delta = |sum: &[f64], p: &[f64]| -> Vec<f64> {
            sum.iter().zip(p).map(|(s, p)| s / z - p * mean).collect()
        };
        let m = &base.m;
        let (dt_, db, dl, dr) = (
            delta(&d.top, &m.top),
            delta(&d.bottom, &m.bottom),
            delta(&d.left, &m.left),
            delta(&d.right, &m.right),
        );
        let p_s = &base.p_s;
        let dp_s = self.corners(&dt_, &db);
        let centre = |v: &mut [f64]| {
            let mean = v.iter().sum::<f64>() / v.len() as f64;
            v.iter_mut().for_each(|a| *a -= mean);
        };
        {
            let g = &mut out[l.g_h()];
            for (i, g) in g.iter_mut().enumerate() {
                *g = (dt_[i] + db[i]) / (m.top[i] + m.bottom[i]) - dh * beta * spin_sum(l.nh, i);
            }
            centre(g);
        }
        {
            let g = &mut out[l.g_v()];
            for (i, g) in g.iter_mut().enumerate() {
                *g = (dl[i] + dr[i]) / (m.left[i] + m.right[i]) - dh * beta * spin_sum(l.nv, i);
            }
            centre(g);
        }
        {
            let g = &mut out[l.g_s()];
            for (i, g) in g.iter_mut().enumerate() {
                *g = dp_s[i] / p_s[i] - dh * beta * spin_sum(l.ns, i);
            }
            centre(g);
        }
        for (k, i) in l.d_h().enumerate() {
            out[i] = v[i] + db[k] / m.bottom[k] - dt_[k] / m.top[k];
        }
        for (k, i) in l.d_v().enumerate() {
            out[i] = v[i] + dr[k] / m.right[k] - dl[k] / m.left[k];
        }
        if self.h == 0.0 {
            self.project(out, -1.0);
        }
        if let Some(dm) = dm {
            *dm = dp_s.iter().enumerate().map(|(i, d)| d * spin(i, 0)).sum();
        }
        Ok(())
    }

    /// The fixed point at the present temperature and field from `x` (in place).
    pub fn solve(&mut self, x: &mut Vec<f64>) -> Result<usize, SolveError> {
        if x.len() != self.len() {
            *x = vec![0.0; self.len()];
        }
        let mut iterations = 0;
        let result = self.mix(None, x, AndersonOptions::default(), &mut iterations);
        match result {
            Ok(()) => Ok(iterations),
            Err(AndersonError::Map(e)) => Err(e),
            Err(AndersonError::NotConverged { residual }) => Err(SolveError::NotConverged {
                level: format!("block{}x{}", self.block.cols, self.block.rows),
                t: 1.0 / self.beta,
                h: self.h,
                iterations,
                gradient_norm: residual,
                tolerance: AndersonOptions::default().tolerance,
            }),
        }
    }
}

/// A fixed point's pass, kept for its linear responses.
struct Base {
    m: Marginals,
    /// The S marginal of `m` (the corners' average).
    p_s: Vec<f64>,
    /// The exponentiated tables of its pass.
    e: Tables,
    z: f64,
}

/// Options of [`anderson`].
#[derive(Debug, Clone, Copy)]
pub struct AndersonOptions {
    /// Stop when `max |Φ(x) − x|` is below this.
    pub tolerance: f64,
    /// Differences kept.
    pub depth: usize,
    /// Damping of the underlying iteration `x ← x + β(Φ(x) − x)`.
    pub damping: f64,
    /// Most applications of Φ.
    pub max_iterations: usize,
    /// Stop also when `max |Φ(x) − x|` is below this times `max |x|` (a linear
    /// response near Tc, whose solution grows as 1/(T − Tc), is limited by rounding
    /// relative to its own size).
    pub relative: f64,
}

impl Default for AndersonOptions {
    fn default() -> Self {
        AndersonOptions {
            tolerance: 1e-10,
            depth: 40,
            damping: 0.7,
            max_iterations: 2000,
            relative: 0.0,
        }
    }
}

/// Why [`anderson`] stopped without a fixed point.
#[derive(Debug)]
pub enum AndersonError {
    /// The map failed.
    Map(SolveError),
    /// The iteration cap was reached; the smallest residual met.
    NotConverged {
        /// `max |Φ(x) − x|` at the best x.
        residual: f64,
    },
}

/// A map `x ↦ Φ(x)` written into its second argument, as [`anderson`] takes it.
pub type FixedPointMap<'a> = dyn FnMut(&[f64], &mut [f64]) -> Result<(), SolveError> + 'a;

/// How [`anderson`] stores its differences: `f32` (half the memory read per step; the
/// fixed point's own accuracy is unaffected) or `f64` (a linear response near Tc, whose
/// mixing needs the differences to more digits than single precision keeps).
pub trait Stored: Copy + Send + Sync {
    /// From double precision.
    fn from_f64(v: f64) -> Self;
    /// To double precision.
    fn to_f64(self) -> f64;
}

impl Stored for f32 {
    fn from_f64(v: f64) -> Self {
        v as f32
    }
    fn to_f64(self) -> f64 {
        f64::from(self)
    }
}

impl Stored for f64 {
    fn from_f64(v: f64) -> Self {
        v
    }
    fn to_f64(self) -> f64 {
        self
    }
}

/// Anderson mixing for `x = Φ(x)`: with residuals `f_k = Φ(x_k) − x_k` and the last
/// `depth` differences `ΔF`, `ΔX`, `γ = argmin ‖f_k − ΔF γ‖₂` and
/// `x_{k+1} = x_k + β f_k − (ΔX + β ΔF) γ` (Walker & Ni 2011, SIAM J. Numer. Anal. 49,
/// 1715, eq. (4.1)–(4.2) — from memory). The normal equations are kept up to date at
/// one dot product per stored difference and step (`ΔF_i·f_k = ΔF_i·f_{k−1} + ΔF_i·Δf`,
/// all of a step's in one pass over memory), and `ΔX + βΔF` is stored combined, in the
/// precision `S` ([`Stored`]): the differences only choose the step (x, Φ(x) and the
/// residual stay in double precision), and the mixing's cost is the memory it reads. A residual a thousand times the best
/// one restarts from the best x with an empty history.
pub fn anderson<S: Stored>(
    map: &mut FixedPointMap<'_>,
    x: &mut Vec<f64>,
    options: AndersonOptions,
    iterations: &mut usize,
) -> Result<(), AndersonError> {
    const CHUNK: usize = 1 << 13;
    let n = x.len();
    let beta = options.damping;
    let mut g = vec![0.0; n];
    let mut f = vec![0.0; n];
    let (mut px, mut pf) = (vec![0.0; n], vec![0.0; n]);
    let mut have_prev = false;
    let mut dgs: std::collections::VecDeque<Vec<S>> = Default::default();
    let mut dfs: std::collections::VecDeque<Vec<S>> = Default::default();
    let mut gram: Vec<Vec<f64>> = Vec::new();
    let mut rhs: Vec<f64> = Vec::new();
    let mut best = (f64::INFINITY, x.clone());
    for k in 0..options.max_iterations {
        *iterations = k + 1;
        map(x, &mut g).map_err(AndersonError::Map)?;
        f.par_chunks_mut(CHUNK)
            .zip(g.par_chunks(CHUNK).zip(x.par_chunks(CHUNK)))
            .for_each(|(f, (g, x))| {
                f.iter_mut()
                    .zip(g.iter().zip(x))
                    .for_each(|(f, (g, x))| *f = g - x)
            });
        let res = f.iter().fold(0.0f64, |a, v| a.max(v.abs()));
        if !res.is_finite() {
            return Err(AndersonError::NotConverged { residual: best.0 });
        }
        let size = if options.relative > 0.0 {
            x.iter().fold(0.0f64, |a, v| a.max(v.abs()))
        } else {
            0.0
        };
        if res < options.tolerance + options.relative * size {
            return Ok(());
        }
        if res < best.0 {
            best.0 = res;
            best.1.copy_from_slice(x);
        } else if res > 1e3 * best.0 {
            x.copy_from_slice(&best.1);
            dgs.clear();
            dfs.clear();
            gram.clear();
            rhs.clear();
            have_prev = false;
            continue;
        }
        if have_prev {
            let (mut dg, mut df) = if dfs.len() == options.depth {
                gram.remove(0);
                gram.iter_mut().for_each(|row| {
                    row.remove(0);
                });
                rhs.remove(0);
                (
                    dgs.pop_front().unwrap_or_default(),
                    dfs.pop_front().unwrap_or_default(),
                )
            } else {
                (vec![S::from_f64(0.0); n], vec![S::from_f64(0.0); n])
            };
            dg.resize(n, S::from_f64(0.0));
            df.resize(n, S::from_f64(0.0));
            // The new difference, and its dot products with the stored ones, with
            // itself and with f, in one pass.
            let m = dfs.len();
            let (stored, fr, pfr, xr, pxr) = (&dfs, &f, &pf, &*x, &px);
            let sums = dg
                .par_chunks_mut(CHUNK)
                .zip(df.par_chunks_mut(CHUNK))
                .enumerate()
                .map(|(c, (dg, df))| {
                    let o = c * CHUNK;
                    let mut acc = vec![0.0f64; m + 2];
                    for i in 0..dg.len() {
                        let d = fr[o + i] - pfr[o + i];
                        df[i] = S::from_f64(d);
                        dg[i] = S::from_f64(xr[o + i] - pxr[o + i] + beta * d);
                    }
                    for (j, s) in stored.iter().enumerate() {
                        let sj = &s[o..o + df.len()];
                        acc[j] = sj
                            .iter()
                            .zip(df.iter())
                            .map(|(a, b)| a.to_f64() * b.to_f64())
                            .sum();
                    }
                    acc[m] = df.iter().map(|a| a.to_f64() * a.to_f64()).sum();
                    acc[m + 1] = df
                        .iter()
                        .zip(&fr[o..o + df.len()])
                        .map(|(a, b)| a.to_f64() * b)
                        .sum();
                    acc
                })
                .reduce(
                    || vec![0.0f64; m + 2],
                    |mut a, b| {
                        a.iter_mut().zip(b).for_each(|(x, y)| *x += y);
                        a
                    },
                );
            let row = sums[..m].to_vec();
            for (r, v) in rhs.iter_mut().zip(&row) {
                *r += v;
            }
            rhs.push(sums[m + 1]);
            for (r, v) in gram.iter_mut().zip(&row) {
                r.push(*v);
            }
            let mut last = row;
            last.push(sums[m]);
            gram.push(last);
            dgs.push_back(dg);
            dfs.push_back(df);
        }
        px.copy_from_slice(x);
        pf.copy_from_slice(&f);
        have_prev = true;
        let m = dfs.len();
        let gamma: Vec<f64> = if m == 0 {
            Vec::new()
        } else {
            let a = nalgebra::DMatrix::from_fn(m, m, |i, j| gram[i][j]);
            let b = nalgebra::DVector::from_column_slice(&rhs);
            let svd = a.svd(true, true);
            let cut = svd.singular_values.max() * 1e-12;
            match svd.solve(&b, cut) {
                Ok(s) => s.iter().copied().collect(),
                Err(_) => vec![0.0; m],
            }
        };
        let dgs_ref = &dgs;
        x.par_chunks_mut(CHUNK).enumerate().for_each(|(c, xs)| {
            let o = c * CHUNK;
            for (i, xi) in xs.iter_mut().enumerate() {
                *xi += beta * f[o + i];
            }
            for (j, gj) in gamma.iter().enumerate() {
                let d = &dgs_ref[j][o..o + xs.len()];
                for (xi, di) in xs.iter_mut().zip(d) {
                    *xi -= gj * di.to_f64();
                }
            }
        });
    }
    Err(AndersonError::NotConverged { residual: best.0 })
}

/// The paramagnet's `1/χ` along T (h = 0), with warm starts.
pub struct RectProbe {
    solver: RectSolver,
    /// Per probe: (T, 1/χ, fixed-point iterations, field-response iterations).
    pub log: Vec<(f64, f64, usize, usize)>,
    /// Paramagnets solved: (T, x, 1/χ).
    history: Vec<(f64, Vec<f64>, f64)>,
}

impl RectProbe {
    /// A probe of `block`.
    pub fn new(block: RectBlock) -> RectProbe {
        RectProbe {
            solver: RectSolver::new(block, 1.0, 0.0),
            log: Vec::new(),
            history: Vec::new(),
        }
    }

    /// Passes over the block states so far.
    pub fn passes(&self) -> usize {
        self.solver.passes
    }

    /// `1/χ` (χ = dm/dh) of the paramagnet at `t`: the fixed point warm started from
    /// the two nearest ones (linear in T), its field response from zero (a start from
    /// the nearest response, scaled by the change of χ, cost more passes: its gauge
    /// components are not those of the new fixed point).
    pub fn inverse_susceptibility(&mut self, t: f64) -> Result<f64, SolveError> {
        if let Some(h) = self.history.iter().find(|h| h.0 == t) {
            return Ok(h.2);
        }
        self.solver.set(t, 0.0);
        let mut near: Vec<&(f64, Vec<f64>, f64)> = self.history.iter().collect();
        near.sort_by(|a, b| (a.0 - t).abs().total_cmp(&(b.0 - t).abs()));
        let mut x = match near.as_slice() {
            [a, b, ..] => {
                // Linear in T through the two nearest.
                let s = (t - a.0) / (a.0 - b.0);
                a.1.iter().zip(&b.1).map(|(p, q)| p + s * (p - q)).collect()
            }
            [a] => a.1.clone(),
            [] => vec![0.0; self.solver.len()],
        };
        let iterations = match self.solver.solve(&mut x) {
            Ok(k) => k,
            Err(_) => {
                // A poor extrapolation: from the nearest solution, or cold.
                x = near
                    .first()
                    .map_or_else(|| vec![0.0; self.solver.len()], |a| a.1.clone());
                self.solver.solve(&mut x)?
            }
        };
        let (_, chi, linear) = self.solver.field_response(&x, None, 1e-9)?;
        self.log.push((t, 1.0 / chi, iterations, linear));
        let v = 1.0 / chi;
        if !v.is_finite() {
            return Err(self.solver.failure("the susceptibility is not finite"));
        }
        super::drop_farthest(&mut self.history, 4, t, |h| h.0);
        self.history.push((t, x, v));
        Ok(v)
    }
}

/// The polynomial through `points` (at most four: degree up to 3), in powers of
/// `T − t0`; `None` if the points coincide.
fn interpolate(points: &[(f64, f64)], t0: f64) -> Option<Vec<f64>> {
    let n = points.len();
    let a = nalgebra::DMatrix::from_fn(n, n, |i, j| (points[i].0 - t0).powi(j as i32));
    let y = nalgebra::DVector::from_iterator(n, points.iter().map(|p| p.1));
    let c = a.lu().solve(&y)?;
    c.iter()
        .all(|v| v.is_finite())
        .then(|| c.iter().copied().collect())
}

/// The root of polynomial `c` (powers of `T − t0`) nearest `t0`, by Newton from `t0`.
fn poly_root(c: &[f64], t0: f64) -> Option<f64> {
    let (mut u, scale) = (0.0f64, t0.abs().max(1e-300));
    for _ in 0..60 {
        let (mut f, mut d) = (0.0, 0.0);
        for ck in c.iter().rev() {
            d = d * u + f;
            f = f * u + ck;
        }
        if d == 0.0 || !d.is_finite() {
            return None;
        }
        let step = f / d;
        u -= step;
        if step.abs() < 1e-15 * scale {
            break;
        }
    }
    let _ = &c;
    (u.is_finite()).then_some(t0 + u)
}

/// Tc of rectangular block level `name` of `lattice` at h = 0 (uniform order), from
/// `options.start_below` or `start` (a temperature above Tc). See the module notes.
///
/// The search: `1/χ(T)` is nearly linear near Tc (`(T − Tc)/χ̄` and smooth
/// corrections), so a secant from the start and a point 1 % below it lands within a
/// fraction of a percent of Tc; then probes on both sides of the estimate, at 5·10⁻⁴,
/// 2·10⁻⁴ and 10⁻⁴ of T, and the root of the cubic through the four probes nearest it,
/// until it agrees with the last estimate or with the quadratic's root through the three
/// nearest probes to `options.relative_tolerance`. Probes stay a
/// ten-thousandth of T from Tc, where the field response is still well conditioned;
/// `χ̄ = 1/(d(1/χ)/dT)` at the root of the same cubic.
pub fn critical_temperature_rect(
    lattice: &Lattice,
    name: &str,
    block: RectBlock,
    options: TcOptions,
    start: f64,
    observe: &(dyn Fn(&str) + Sync),
) -> Result<CriticalPoint, SolveError> {
    let clock = Instant::now();
    let scale = mean_field_scale(lattice).max(1e-12);
    let mut t_hi = options
        .start_below
        .filter(|t| t.is_finite() && *t > 0.0)
        .unwrap_or(start);
    let t_min = scale * options.lowest_fraction;
    let mut probe = RectProbe::new(block);
    let mut probe_at = |t: f64| -> Result<f64, SolveError> {
        observe(&format!("region fixed point at T = {t:.8}"));
        let v = probe.inverse_susceptibility(t)?;
        if let Some(&(_, _, a, b)) = probe.log.last() {
            observe(&format!(
                "T = {t:.10}: 1/χ = {v:.6e} ({a} fixed-point and {b} field-response passes)"
            ));
        }
        Ok(v)
    };
    let point = |tc: Option<f64>, down_to: f64, amplitude: Option<f64>, seconds: f64| {
        let (mode, kind) = classify(&[1.0]);
        CriticalPoint {
            level: name.to_string(),
            max_cluster_sites: block.sites(),
            field: options.field,
            tc,
            searched_down_to: down_to,
            mode: if tc.is_some() { mode } else { vec![0.0] },
            kind: if tc.is_some() {
                kind
            } else {
                crate::tc::ModeKind::Hidden
            },
            ordering: tc.map(|_| {
                crate::ordering::Ordering::new(2, [0.0; 3], vec![nalgebra::Complex::new(1.0, 0.0)])
            }),
            amplitude,
            notes: vec![RECT_NOTE.to_string()],
            seconds,
        }
    };
    // A start above Tc.
    let mut v_hi = probe_at(t_hi)?;
    let mut grow = 0;
    while v_hi <= 0.0 {
        if grow == 30 {
            return Err(SolveError::TcSearch {
                level: name.to_string(),
                detail: format!("the paramagnet is unstable even at T = {t_hi}"),
            });
        }
        t_hi *= 1.05;
        v_hi = probe_at(t_hi)?;
        grow += 1;
    }
    let mut points = vec![(t_hi, v_hi)];
    let t1 = t_hi * 0.99;
    points.push((t1, probe_at(t1)?));
    let mut estimate = {
        let (a, b) = (points[0], points[1]);
        let slope = (a.1 - b.1) / (a.0 - b.0);
        if slope <= 0.0 {
            // 1/χ does not fall towards lower T: no uniform order near here.
            return Ok(point(None, t1, None, clock.elapsed().as_secs_f64()));
        }
        b.0 - b.1 / slope
    };
    if estimate < t_min {
        return Ok(point(None, t_min, None, clock.elapsed().as_secs_f64()));
    }
    let offsets = [5e-4, -2e-4, 1e-4, -1e-4, 2e-4, -3e-4, 3e-4, -5e-4];
    let mut amplitude = None;
    let mut converged = false;
    for offset in offsets {
        let t = estimate * (1.0 + offset);
        points.push((t, probe_at(t)?));
        let near = nearest(&points, estimate);
        let c = interpolate(&near, estimate).ok_or_else(|| SolveError::TcSearch {
            level: name.to_string(),
            detail: "coincident probes".into(),
        })?;
        let Some(next) = poly_root(&c, estimate) else {
            continue;
        };
        let slope: f64 = c
            .iter()
            .enumerate()
            .skip(1)
            .map(|(k, ck)| k as f64 * ck * (next - estimate).powi(k as i32 - 1))
            .sum();
        amplitude = (slope > 0.0).then(|| 1.0 / slope);
        // The cubic's root against the last estimate and against the quadratic's
        // through the three probes nearest it: either agreement within the tolerance
        // says the interpolation no longer moves the root.
        let quadratic = {
            let mut three = nearest(&points, next);
            three.truncate(3);
            interpolate(&three, next).and_then(|c| poly_root(&c, next))
        };
        let tol = options.relative_tolerance * next;
        let settled =
            (next - estimate).abs() < tol || quadratic.is_some_and(|q| (q - next).abs() < tol);
        estimate = next;
        if near.len() == 4 && settled {
            converged = true;
            break;
        }
    }
    if !converged {
        return Err(SolveError::TcSearch {
            level: name.to_string(),
            detail: format!(
                "the root of 1/χ did not settle (last estimate {estimate}, {} probes)",
                points.len()
            ),
        });
    }
    let below = points
        .iter()
        .filter(|p| p.1 <= 0.0)
        .map(|p| p.0)
        .fold(estimate, f64::min);
    Ok(point(
        Some(estimate),
        below,
        amplitude,
        clock.elapsed().as_secs_f64(),
    ))
}

/// The (at most) four points nearest `t`.
fn nearest(points: &[(f64, f64)], t: f64) -> Vec<(f64, f64)> {
    let mut p = points.to_vec();
    p.sort_by(|a, b| (a.0 - t).abs().total_cmp(&(b.0 - t).abs()));
    p.truncate(4);
    p
}

#[cfg(test)]
mod tests {
    use super::*;

    fn square(n: [usize; 2]) -> (Lattice, String) {
        let path = concat!(env!("CARGO_MANIFEST_DIR"), "/../../lattices/square.yaml");
        let name = format!("b{}x{}", n[0], n[1]);
        let lattice = Lattice::from_file(std::path::Path::new(path))
            .and_then(|l| l.with_block_level(&name, [n[0], n[1], 1]))
            .expect("the shipped square lattice");
        (lattice, name)
    }

    #[test]
    fn a_square_block_is_detected_and_other_levels_are_not() {
        let (l, name) = square([4, 3]);
        let b = RectBlock::detect(&l, &name).expect("a rectangle");
        assert_eq!((b.cols, b.rows, b.jx, b.jy), (4, 3, 1.0, 1.0));
        assert!(RectBlock::detect(&l, "plaquette").is_none());
        assert!(RectBlock::detect(&l, "pair").is_none());
    }
}

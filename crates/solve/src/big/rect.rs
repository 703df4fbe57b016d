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

/// The weights of one row of a pass, the states (hi, q) for q < 2^C at fixed hi:
/// `w[q] = wb·top[q]·left[q mod 2^{C−1}]·right[q >> 1]` (the slices start at the row's
/// entries). Written over slices of known length so that the loops vectorise.
fn row_weights(wb: f64, top: &[f64], left: &[f64], right: &[f64], w: &mut [f64]) {
    let half = left.len();
    let (lo, hi) = w.split_at_mut(half);
    let (t_lo, t_hi) = top.split_at(half);
    for (q, ((w, t), l)) in lo.iter_mut().zip(t_lo).zip(left).enumerate() {
        *w = wb * t * l * right[q >> 1];
    }
    for (q, ((w, t), l)) in hi.iter_mut().zip(t_hi).zip(left).enumerate() {
        *w = wb * t * l * right[(half + q) >> 1];
    }
}

/// A linear pass's row: `wd[q] = w[q]·(db + top[q] + left[q mod 2^{C−1}] + right[q >> 1])`.
fn row_changes(w: &[f64], db: f64, top: &[f64], left: &[f64], right: &[f64], wd: &mut [f64]) {
    let half = left.len();
    for (q, ((wd, w), t)) in wd.iter_mut().zip(w).zip(top).enumerate() {
        *wd = w * (db + t + left[q % half] + right[q >> 1]);
    }
}

/// Adds a row's weights to the top, left and right marginals (`top[q] += w[q]`,
/// `left[j] += w[j] + w[j + 2^{C−1}]`, `right[j] += w[2j] + w[2j + 1]`); returns their sum.
fn row_scatter(w: &[f64], top: &mut [f64], left: &mut [f64], right: &mut [f64]) -> f64 {
    let half = left.len();
    let (lo, hi) = w.split_at(half);
    for ((l, a), b) in left.iter_mut().zip(lo).zip(hi) {
        *l += a + b;
    }
    // Two sums, so that the additions of a row do not wait on each other.
    let mut z = [0.0; 2];
    for (r, quad) in right.chunks_exact_mut(2).zip(w.chunks_exact(4)) {
        let (s0, s1) = (quad[0] + quad[1], quad[2] + quad[3]);
        r[0] += s0;
        r[1] += s1;
        z[0] += s0;
        z[1] += s1;
    }
    for (t, a) in top.iter_mut().zip(w) {
        *t += a;
    }
    z[0] + z[1]
}

/// Sums of one pass: the normaliser and the four sub-block marginals (unnormalised, or
/// normalised once a pass's sums become the block distribution's marginals).
#[derive(Clone, Default)]
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

    /// Sized for `nh`- and `nv`-bit sub-blocks, kept allocated between passes.
    fn fit(&mut self, nh: usize, nv: usize) {
        fit(&mut self.top, 1 << nh);
        fit(&mut self.bottom, 1 << nh);
        fit(&mut self.left, 1 << nv);
        fit(&mut self.right, 1 << nv);
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

/// A work vector of length `n`, its allocation kept when it already has that length (the
/// 5×5 block's passes would otherwise map ~130 MB of fresh pages each).
fn fit(v: &mut Vec<f64>, n: usize) {
    if v.len() != n {
        v.clear();
        v.resize(n, 0.0);
    }
}

/// `op(v[i], v[len − 1 − i])` for every `i` of the first half, in parallel: at h = 0 a
/// table's entry and that of its mirror state (every spin flipped, `x̄ = x ^ (len − 1)`).
fn mirror_pairs(v: &mut [f64], op: impl Fn(&mut f64, &mut f64) + Sync + Send) {
    let middle = v.len() / 2;
    let (lo, hi) = v.split_at_mut(middle);
    lo.par_iter_mut()
        .zip(hi.par_iter_mut().rev())
        .for_each(|(a, b)| op(a, b));
}

/// `v[i] = f(i)` in parallel; with `mirror` (h = 0, where every table is even or odd under
/// flipping every spin, `i ↦ i ^ (len − 1)`), only the first half is computed and the
/// second is its mirror image, `v[len − 1 − i] = sign·v[i]`, exactly as the full
/// computation gives it (the same operations on the same numbers) at half the `exp`s
/// and `ln`s.
fn fill(v: &mut [f64], mirror: Option<f64>, f: impl Fn(usize) -> f64 + Sync) {
    match mirror {
        None => v.par_iter_mut().enumerate().for_each(|(i, o)| *o = f(i)),
        Some(sign) => {
            let half = v.len() / 2;
            v[..half]
                .par_iter_mut()
                .enumerate()
                .for_each(|(i, o)| *o = f(i));
            mirror_pairs(v, |a, b| *b = sign * *a);
        }
    }
}

/// At h = 0, the even (`sign` = 1) or odd (`sign` = −1) part of a table,
/// `f(x) ← ½(f(x) + sign·f(x̄))`, x̄ every spin flipped (`x̄ = len − 1 − x`). Even:
/// spin-flip symmetry held exactly, so that rounding cannot seed order below Tc, where the
/// paramagnet is a saddle; odd: the field's response. (The tables [`fill`] mirrors are
/// exactly even or odd already; this is for the rest.)
fn project_part(part: &mut [f64], sign: f64) {
    mirror_pairs(part, |x, y| {
        let m = 0.5 * (*x + sign * *y);
        *x = m;
        *y = sign * m;
    });
}

/// The four look-up tables of a pass: `ln p_B(s) + ln Z − shift` is
/// `top[top s] + bottom[bottom s] + left[left s] + right[right s]`.
#[derive(Clone, Default)]
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
    /// The last pass's sums gathered over the chunks (normalised by [`Self::marginals`]),
    /// and those of its linear part.
    all: Sums,
    dall: Sums,
    /// Work tables of a pass: logarithms, their exponentials, a linear pass's direction.
    logs: Tables,
    exps: Tables,
    dlogs: Tables,
    /// Work S marginal and its change.
    p_s: Vec<f64>,
    dp_s: Vec<f64>,
    /// Passes over the block states done.
    pub passes: usize,
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
            all: Sums::default(),
            dall: Sums::default(),
            logs: Tables::default(),
            exps: Tables::default(),
            dlogs: Tables::default(),
            p_s: Vec::new(),
            dp_s: Vec::new(),
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

    /// The tables of `x` into `out` (with the block energy when `energy`, else without: a
    /// linear pass's direction), and for a linear pass the field's direction `dh`.
    fn tables(&self, x: &[f64], energy: bool, dh: f64, out: &mut Tables) {
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
        fit(&mut out.top, 1 << nh);
        fit(&mut out.bottom, 1 << nh);
        fit(&mut out.left, 1 << l.nv);
        fit(&mut out.right, 1 << l.nv);
        // Even tables at h = 0; a linear pass's direction is odd.
        let mirror = (self.h == 0.0).then_some(if energy { 1.0 } else { -1.0 });
        fill(&mut out.top, mirror, |i| {
            let mut v = 0.5 * (g_h[i] + d_h[i]) - corner(i);
            if energy {
                v -= beta * self.e_h[i];
            }
            v + dh * beta * spin_sum(nh, i)
        });
        fill(&mut out.bottom, mirror, |i| {
            let mut v = 0.5 * (g_h[i] - d_h[i]) - corner(i);
            if energy {
                v -= beta * self.e_last[i];
            }
            v + dh * beta * spin_sum(c, i >> (nh - c))
        });
        fill(&mut out.left, mirror, |i| 0.5 * (g_v[i] + d_v[i]));
        fill(&mut out.right, mirror, |i| 0.5 * (g_v[i] - d_v[i]));
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
    /// The sums land in `self.all` (a linear pass's in `self.dall` only).
    fn pass(&mut self, e: &Tables, dt: Option<&Tables>) {
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
        let half = low / 2;
        let top_hi = (1usize << ((r - 2) * c)) - 1;
        // A chunk of the states: its sums of w (plain pass) or of w·δ (linear pass).
        let work = |k: usize, sums: &mut Sums| {
            sums.clear();
            let (mut w, mut wd) = (vec![0.0; low], vec![0.0; low]);
            let range = k * per..((k + 1) * per).min(his);
            for (hi, &wb) in eb.iter().enumerate().take(range.end).skip(range.start) {
                let tb = (hi & top_hi) << c;
                let lb = drop_column(r - 1, c, hi, 0) << (c - 1);
                let rb = drop_column(r - 1, c, hi, 1) << (c - 1);
                let (t, lr) = ((tb, tb + low), ((lb, lb + half), (rb, rb + half)));
                row_weights(
                    wb,
                    &et[t.0..t.1],
                    &el[lr.0 .0..lr.0 .1],
                    &er[lr.1 .0..lr.1 .1],
                    &mut w,
                );
                let add = match dt {
                    None => &w,
                    Some(d) => {
                        row_changes(
                            &w,
                            d.bottom[hi],
                            &d.top[t.0..t.1],
                            &d.left[lr.0 .0..lr.0 .1],
                            &d.right[lr.1 .0..lr.1 .1],
                            &mut wd,
                        );
                        &wd
                    }
                };
                let zb = row_scatter(
                    add,
                    &mut sums.top[t.0..t.1],
                    &mut sums.left[lr.0 .0..lr.0 .1],
                    &mut sums.right[lr.1 .0..lr.1 .1],
                );
                sums.bottom[hi] += zb;
                sums.z += zb;
            }
        };
        match dt {
            None => self
                .sums
                .par_iter_mut()
                .enumerate()
                .for_each(|(k, s)| work(k, s)),
            Some(_) => self
                .dsums
                .par_iter_mut()
                .enumerate()
                .for_each(|(k, d)| work(k, d)),
        }
        self.passes += 1;
        let gather = |parts: &[Sums], all: &mut Sums, sign: f64| {
            all.fit(l.nh, l.nv);
            all.clear();
            for s in parts {
                all.add(s);
            }
            if symmetric {
                all.z = if sign > 0.0 { 2.0 * all.z } else { 0.0 };
                for v in [&mut all.top, &mut all.bottom, &mut all.left, &mut all.right] {
                    mirror_pairs(v, |a, b| (*a, *b) = (*a + sign * *b, *b + sign * *a));
                }
            }
        };
        match dt {
            None => gather(&self.sums, &mut self.all, 1.0),
            Some(_) => gather(&self.dsums, &mut self.dall, -1.0),
        }
    }

    /// The even (`odd`: odd) half of a full unknown vector at h = 0: each table's
    /// entries whose last spin is up.
    fn reduce(&self, full: &[f64]) -> Vec<f64> {
        let mut out = vec![0.0; full.len() / 2];
        self.reduce_into(full, &mut out);
        out
    }

    /// [`Self::reduce`] into `out`.
    fn reduce_into(&self, full: &[f64], out: &mut [f64]) {
        let mut at = 0;
        for (range, bits) in self.layout.parts() {
            let m = 1usize << (bits - 1);
            out[at..at + m].copy_from_slice(&full[range.start..range.start + m]);
            at += m;
        }
    }

    /// The full vector of a half one ([`Self::reduce`]): `f(x̄) = ±f(x)`.
    fn expand(&self, half: &[f64], odd: bool, full: &mut [f64]) {
        let l = self.layout;
        let sign = if odd { -1.0 } else { 1.0 };
        let mut at = 0;
        for (range, bits) in l.parts() {
            let m = 1usize << (bits - 1);
            let part = &mut full[range];
            part[..m].copy_from_slice(&half[at..at + m]);
            mirror_pairs(part, |a, b| *b = sign * *a);
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
                self.reduce_into(&out, o);
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

    /// The exponentiated tables of a pass into `out`: their product over a state's four
    /// sub-blocks is `exp(ln p(s) + ln Z − shift)`; each table is shifted by its own
    /// largest entry (`maxima`, [`Self::maxima`]; the last by the rest of `shift`), so no
    /// entry overflows.
    fn exponentiate(t: &Tables, maxima: [f64; 4], shift: f64, symmetric: bool, out: &mut Tables) {
        let [mt, mb, ml, _] = maxima;
        let mr = shift - mt - mb - ml;
        let mirror = symmetric.then_some(1.0);
        let ex = |v: &[f64], o: &mut Vec<f64>, m: f64| {
            fit(o, v.len());
            fill(o, mirror, |i| (v[i] - m).exp());
        };
        ex(&t.top, &mut out.top, mt);
        ex(&t.bottom, &mut out.bottom, mb);
        ex(&t.left, &mut out.left, ml);
        ex(&t.right, &mut out.right, mr);
    }

    /// Each table's largest entry; their sum, the tables' largest sum, is the shift that
    /// keeps every `exp` of a pass finite.
    fn maxima(t: &Tables) -> [f64; 4] {
        let max = |v: &[f64]| v.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        [max(&t.top), max(&t.bottom), max(&t.left), max(&t.right)]
    }

    /// The block distribution of `x` (one pass): its normalised marginals into
    /// `self.all`, the pass's exponentiated tables into `self.exps`; returns their sum
    /// over the states, Z.
    fn marginals(&mut self, x: &[f64]) -> Result<f64, SolveError> {
        let mut t = std::mem::take(&mut self.logs);
        let mut e = std::mem::take(&mut self.exps);
        self.tables(x, true, 0.0, &mut t);
        let maxima = Self::maxima(&t);
        let shift = maxima[0] + maxima[1] + maxima[2] + maxima[3];
        let symmetric = self.h == 0.0;
        Self::exponentiate(&t, maxima, shift, symmetric, &mut e);
        self.pass(&e, None);
        if self.all.z > 0.0 && self.all.z < 1e-200 {
            // The bound was far above the true largest term: once more, shifted by ln Z.
            Self::exponentiate(&t, maxima, shift + self.all.z.ln(), symmetric, &mut e);
            self.pass(&e, None);
        }
        self.logs = t;
        self.exps = e;
        let z = self.all.z;
        if !(z > 0.0 && z.is_finite()) {
            return Err(self.failure("the block distribution cannot be normalised"));
        }
        for v in [
            &mut self.all.top,
            &mut self.all.bottom,
            &mut self.all.left,
            &mut self.all.right,
        ] {
            v.par_iter_mut().for_each(|a| *a /= z);
        }
        Ok(z)
    }

    fn failure(&self, detail: &str) -> SolveError {
        SolveError::TcSearch {
            level: format!("block{}x{}", self.block.cols, self.block.rows),
            detail: format!("{detail} (T = {})", 1.0 / self.beta),
        }
    }

    /// The S marginal from the H marginals (average of the four corners), into `p_s`.
    fn corners(&self, top: &[f64], bottom: &[f64], p_s: &mut Vec<f64>) {
        fit(p_s, 1 << self.layout.ns);
        p_s.fill(0.0);
        for (i, (a, b)) in top.iter().zip(bottom).enumerate() {
            for k in 0..2 {
                p_s[self.h_corner[k][i] as usize] += 0.25 * (a + b);
            }
        }
    }

    /// `Φ(x)` into `out`: the potentials from the marginals of `x`'s block distribution.
    pub fn map(&mut self, x: &[f64], out: &mut [f64]) -> Result<(), SolveError> {
        self.marginals(x)?;
        let m = std::mem::take(&mut self.all);
        let mut p_s = std::mem::take(&mut self.p_s);
        self.corners(&m.top, &m.bottom, &mut p_s);
        let result = self.map_from(&m, &p_s, x, out);
        self.all = m;
        self.p_s = p_s;
        result
    }

    /// The rest of [`Self::map`], from the marginals `m` and the S marginal `p_s`.
    fn map_from(
        &self,
        m: &Sums,
        p_s: &[f64],
        x: &[f64],
        out: &mut [f64],
    ) -> Result<(), SolveError> {
        let l = self.layout;
        let beta = self.beta;
        let check = |v: &f64| *v > 0.0 && v.is_finite();
        let fine = [&m.top, &m.bottom, &m.left, &m.right]
            .iter()
            .all(|v| v.par_iter().all(check));
        if !(fine && p_s.iter().all(check)) {
            return Err(self.failure(
                "a sub-block probability underflowed (temperature too low for this path)",
            ));
        }
        let centre = |v: &mut [f64]| {
            let mean = v.iter().sum::<f64>() / v.len() as f64;
            v.iter_mut().for_each(|a| *a -= mean);
        };
        // Every output is even at h = 0.
        let mirror = (self.h == 0.0).then_some(1.0);
        {
            let g = &mut out[l.g_h()];
            fill(g, mirror, |i| {
                (0.5 * (m.top[i] + m.bottom[i])).ln() + beta * self.e_h[i]
            });
            centre(g);
        }
        {
            let g = &mut out[l.g_v()];
            fill(g, mirror, |i| {
                (0.5 * (m.left[i] + m.right[i])).ln() + beta * self.e_v[i]
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
        fill(&mut out[l.d_h()], mirror, |k| {
            xh[k] + (m.bottom[k] / m.top[k]).ln()
        });
        fill(&mut out[l.d_v()], mirror, |k| {
            xv[k] + (m.right[k] / m.left[k]).ln()
        });
        if self.h == 0.0 {
            // The rest is even by construction; g_S's sums over corners ran in another
            // order for a state and its mirror image.
            project_part(&mut out[l.g_s()], 1.0);
        }
        Ok(())
    }

    /// The linear response of the fixed point `x` to the field: `δx` solving
    /// `δx = DΦ(x)·δx + ∂_hΦ(x)` (Anderson mixing from zero, to `tolerance` of the
    /// right-hand side), and from it χ = dm/dh; returns χ and the passes it took.
    pub fn field_response(
        &mut self,
        x: &[f64],
        tolerance: f64,
    ) -> Result<(f64, usize), SolveError> {
        let z = self.marginals(x)?;
        let mut p_s = Vec::new();
        self.corners(&self.all.top, &self.all.bottom, &mut p_s);
        let base = Base {
            m: self.all.clone(),
            p_s,
            e: self.exps.clone(),
            z,
        };
        let n = self.len();
        let mut dx = vec![0.0; n];
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
        Ok((chi, iterations))
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
        let mut dt = std::mem::take(&mut self.dlogs);
        self.tables(v, false, dh, &mut dt);
        self.pass(&base.e, Some(&dt));
        self.dlogs = dt;
        let mut d = std::mem::take(&mut self.dall);
        let mut dp_s = std::mem::take(&mut self.dp_s);
        let z = base.z;
        let mean = d.z / z;
        // δp_R = (Σ w δ)/Z − p_R ⟨δ⟩, in place.
        let m = &base.m;
        for (sum, p) in [
            (&mut d.top, &m.top),
            (&mut d.bottom, &m.bottom),
            (&mut d.left, &m.left),
            (&mut d.right, &m.right),
        ] {
            sum.par_iter_mut()
                .zip(p.par_iter())
                .for_each(|(s, p)| *s = *s / z - p * mean);
        }
        self.corners(&d.top, &d.bottom, &mut dp_s);
        self.linear_from(base, &d, &dp_s, v, dh, out, dm);
        self.dall = d;
        self.dp_s = dp_s;
        Ok(())
    }

    /// The rest of [`Self::linear`], from the marginals' changes `d` and `dp_s`.
    #[allow(clippy::too_many_arguments)]
    fn linear_from(
        &self,
        base: &Base,
        d: &Sums,
        dp_s: &[f64],
        v: &[f64],
        dh: f64,
        out: &mut [f64],
        dm: Option<&mut f64>,
    ) {
        let l = self.layout;
        let beta = self.beta;
        let m = &base.m;
        let (dt_, db, dl, dr) = (&d.top, &d.bottom, &d.left, &d.right);
        let p_s = &base.p_s;
        // At h = 0 every output is odd: computed on one half, the other its mirror image,
        // and with no constant part to remove (an odd table sums to zero).
        let odd = self.h == 0.0;
        let mirror = odd.then_some(-1.0);
        let centre = |v: &mut [f64]| {
            if !odd {
                let mean = v.iter().sum::<f64>() / v.len() as f64;
                v.iter_mut().for_each(|a| *a -= mean);
            }
        };
        {
            let g = &mut out[l.g_h()];
            fill(g, mirror, |i| {
                (dt_[i] + db[i]) / (m.top[i] + m.bottom[i]) - dh * beta * spin_sum(l.nh, i)
            });
            centre(g);
        }
        {
            let g = &mut out[l.g_v()];
            fill(g, mirror, |i| {
                (dl[i] + dr[i]) / (m.left[i] + m.right[i]) - dh * beta * spin_sum(l.nv, i)
            });
            centre(g);
        }
        {
            let g = &mut out[l.g_s()];
            for (i, g) in g.iter_mut().enumerate() {
                *g = dp_s[i] / p_s[i] - dh * beta * spin_sum(l.ns, i);
            }
            centre(g);
            if odd {
                // Its sums over corners ran in another order for a state and its mirror.
                project_part(g, -1.0);
            }
        }
        let (vh, vv) = (&v[l.d_h()], &v[l.d_v()]);
        fill(&mut out[l.d_h()], mirror, |k| {
            vh[k] + db[k] / m.bottom[k] - dt_[k] / m.top[k]
        });
        fill(&mut out[l.d_v()], mirror, |k| {
            vv[k] + dr[k] / m.right[k] - dl[k] / m.left[k]
        });
        if let Some(dm) = dm {
            *dm = dp_s.iter().enumerate().map(|(i, d)| d * spin(i, 0)).sum();
        }
    }

    /// The fixed point at the present temperature and field from `x` (in place), to
    /// [`AndersonOptions::default`]'s tolerance.
    pub fn solve(&mut self, x: &mut Vec<f64>) -> Result<usize, SolveError> {
        if x.len() != self.len() {
            *x = vec![0.0; self.len()];
        }
        let mut iterations = 0;
        let options = AndersonOptions::default();
        let result = self.mix(None, x, options, &mut iterations);
        match result {
            Ok(()) => Ok(iterations),
            Err(AndersonError::Map(e)) => Err(e),
            Err(AndersonError::NotConverged { residual }) => Err(SolveError::NotConverged {
                level: format!("block{}x{}", self.block.cols, self.block.rows),
                t: 1.0 / self.beta,
                h: self.h,
                iterations,
                gradient_norm: residual,
                tolerance: options.tolerance,
            }),
        }
    }
}

/// A fixed point's pass, kept for its linear responses.
struct Base {
    /// The normalised marginals.
    m: Sums,
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

/// `Σ a_i b_i` in double precision, in four interleaved sums (so that the additions
/// need not wait on each other and the loop vectorises).
fn dot<A: Stored, B: Stored>(a: &[A], b: &[B]) -> f64 {
    let mut acc = [0.0f64; 4];
    let (ca, cb) = (a.chunks_exact(4), b.chunks_exact(4));
    let tail: f64 = ca
        .remainder()
        .iter()
        .zip(cb.remainder())
        .map(|(x, y)| x.to_f64() * y.to_f64())
        .sum();
    for (x, y) in ca.zip(cb) {
        for k in 0..4 {
            acc[k] += x[k].to_f64() * y[k].to_f64();
        }
    }
    (acc[0] + acc[1]) + (acc[2] + acc[3]) + tail
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
        // f = Φ(x) − x, with max |f| and max |x| in the same pass.
        let (res, size) = f
            .par_chunks_mut(CHUNK)
            .zip(g.par_chunks(CHUNK).zip(x.par_chunks(CHUNK)))
            .map(|(f, (g, x))| {
                let (mut r, mut s) = (0.0f64, 0.0f64);
                for (f, (g, x)) in f.iter_mut().zip(g.iter().zip(x)) {
                    *f = g - x;
                    r = r.max(f.abs());
                    s = s.max(x.abs());
                }
                (r, s)
            })
            .reduce(|| (0.0, 0.0), |a, b| (a.0.max(b.0), a.1.max(b.1)));
        if !res.is_finite() {
            return Err(AndersonError::NotConverged { residual: best.0 });
        }
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
                        acc[j] = dot(&s[o..o + df.len()], df);
                    }
                    acc[m] = dot(df, df);
                    acc[m + 1] = dot(df, &fr[o..o + df.len()]);
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
        // x_k and f_k become the previous ones (x is rewritten from them below, f in the
        // next step): swapped, not copied.
        std::mem::swap(&mut px, x);
        std::mem::swap(&mut pf, &mut f);
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
        let (dgs_ref, xk, fk) = (&dgs, &px, &pf);
        x.par_chunks_mut(CHUNK).enumerate().for_each(|(c, xs)| {
            let o = c * CHUNK;
            for (i, xi) in xs.iter_mut().enumerate() {
                *xi = xk[o + i] + beta * fk[o + i];
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
    /// Paramagnets solved, the four nearest the last probe.
    history: Vec<Solved>,
}

/// One probe's paramagnet: its temperature, potentials and 1/χ.
struct Solved {
    t: f64,
    x: Vec<f64>,
    v: f64,
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

    /// `1/χ` (χ = dm/dh) of the paramagnet at `t`: the fixed point (to
    /// `max |Φ(x) − x| < 10⁻¹⁰`) warm started from the two nearest ones (linear in T),
    /// its field response (to 10⁻⁹ of its size) from zero (a start from the nearest
    /// response, scaled by the change of χ, cost more passes: its gauge components are
    /// not those of the new fixed point).
    pub fn inverse_susceptibility(&mut self, t: f64) -> Result<f64, SolveError> {
        if let Some(h) = self.history.iter().find(|h| h.t == t) {
            return Ok(h.v);
        }
        self.solver.set(t, 0.0);
        let mut near: Vec<&Solved> = self.history.iter().collect();
        near.sort_by(|a, b| (a.t - t).abs().total_cmp(&(b.t - t).abs()));
        let mut x = match near.as_slice() {
            [a, b, ..] => {
                // Linear in T through the two nearest.
                let s = (t - a.t) / (a.t - b.t);
                a.x.iter().zip(&b.x).map(|(p, q)| p + s * (p - q)).collect()
            }
            [a] => a.x.clone(),
            [] => vec![0.0; self.solver.len()],
        };
        let iterations = match self.solver.solve(&mut x) {
            Ok(k) => k,
            Err(_) => {
                // A poor extrapolation: from the nearest solution, or cold.
                x = near
                    .first()
                    .map_or_else(|| vec![0.0; self.solver.len()], |a| a.x.clone());
                self.solver.solve(&mut x)?
            }
        };
        let (chi, linear) = self.solver.field_response(&x, 1e-9)?;
        self.log.push((t, 1.0 / chi, iterations, linear));
        let v = 1.0 / chi;
        if !v.is_finite() {
            return Err(self.solver.failure("the susceptibility is not finite"));
        }
        super::drop_farthest(&mut self.history, 4, t, |h| h.t);
        self.history.push(Solved { t, x, v });
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
/// `χ̄ = 1/(d(1/χ)/dT)` at the root of the same cubic. A probe is not placed within
/// 5·10⁻⁵ T of an earlier one (the next offset is taken).
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
        // Not beside an earlier probe: two nodes closer than 5·10⁻⁵ T would multiply
        // their values' errors (~10⁻⁷ of 1/χ near Tc) in the cubic by their distance's
        // inverse.
        if points.iter().any(|p| (p.0 - t).abs() < 5e-5 * t) {
            continue;
        }
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

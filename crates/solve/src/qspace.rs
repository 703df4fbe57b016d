//! The Hessian of a translation-invariant state at any wavevector: order that breaks
//! the lattice's translations, found without enlarging the cell.
//!
//! Give every cell R its own copy x_c(R) of each variable. At a translation-invariant
//! state the Hessian of the total free energy depends only on R − R', so its Fourier
//! transform is a small Hermitian matrix per wavevector q (units of the reciprocal
//! primitive vectors, so that `e^{2πi q·R}` with R in cell coordinates):
//!
//! ```text
//! H_cd(q) = Σ_γ Σ_{k: var(k)=c} Σ_{l: var(l)=d} K_γ(k, l) e^{2πi q·(t_l − t_k)}
//!         + Σ_{factorised bonds a–b, offset δ} c_ab e^{2πi q·δ}   (+ Hermitian partner)
//! ```
//!
//! where k, l run over the subsets of region γ, `var(k)` is the variable of subset k and
//! `t_k` the cell of its canonical placement inside the region (the cell of its first
//! site), and `K_γ(k, l)` the region's Hessian kernel ([`RegionKernel`]). `H(0)` is the
//! uniform Hessian. The translation-invariant state is stable while every `H(q)` is
//! positive definite; Tc is where the smallest eigenvalue over q reaches zero, that q is
//! the ordering wavevector and the eigenvector the ordering pattern. Site-level check:
//! `λ(q) = T/(1 − m²) − J(q)` (mean field).

use std::sync::{Arc, Mutex, OnceLock};

use nalgebra::{Complex, DMatrix, DVector};
use rungs_lattice::symmetry::{variable_index, SiteMap, VariableIndex};
use rungs_lattice::{Cell, Lattice, Level};

use crate::dd::Dd;
use crate::functional::{upper_pairs, Block, Functional, KernelKind, RegionKernel};
use crate::gram::StateGroups;
use crate::linalg;

/// A wavevector in units of the reciprocal primitive vectors (unused components 0).
pub type Wavevector = [f64; 3];

/// `e^{2πi q·t}`.
#[inline]
pub fn phase(q: &Wavevector, t: &Cell) -> Complex<f64> {
    let a = std::f64::consts::TAU * (q[0] * t[0] as f64 + q[1] * t[1] as f64 + q[2] * t[2] as f64);
    Complex::new(a.cos(), a.sin())
}

/// `cos 2π q·t`, the real part of [`phase`] (the same number), without the sine.
#[inline]
pub fn phase_cos(q: &Wavevector, t: &Cell) -> f64 {
    (std::f64::consts::TAU * (q[0] * t[0] as f64 + q[1] * t[1] as f64 + q[2] * t[2] as f64)).cos()
}

/// Whether `x` (reduced modulo 1) is within 10⁻⁹ of an integer.
pub fn near_integer(x: f64) -> bool {
    let d = x.rem_euclid(1.0);
    !(1e-9..=1.0 - 1e-9).contains(&d)
}

/// Whether every `e^{2πi q·t}` is real (every component of q is 0 or 1/2).
pub fn is_real(q: &Wavevector) -> bool {
    q.iter().all(|&c| {
        let c2 = (2.0 * c).rem_euclid(2.0);
        c2.abs() < 1e-12 || (c2 - 1.0).abs() < 1e-12 || (c2 - 2.0).abs() < 1e-12
    })
}

/// The Fourier-space Hessian of a translation-invariant state, on a block of variables
/// (the odd sector of a paramagnet at h = 0, every variable in a field).
pub struct QHessian<'f> {
    kernels: Vec<RegionKernel<'f>>,
    /// Per region, per subset mask: the cell of the subset's first site.
    offsets: Vec<Vec<Cell>>,
    /// Factorised bonds: (variable a, variable b, coefficient, cell offset of b).
    quad: Vec<(usize, usize, f64, Cell)>,
    block: Block,
    /// `D^{-1/2}` per block row (all ones when unscaled).
    row_scale: Vec<f64>,
    /// Real forms at complex wavevectors (see [`RealForms`]), when given.
    real: Option<&'f RealForms>,
    /// `H(q) − s·I` with its private variables eliminated, per shift s (built on first
    /// use; see [`Condensed`]).
    condensed: Mutex<Vec<(u64, Arc<Reduced>)>>,
}

/// The lowest eigenvalue of `H(q)` and its unit eigenvector (on the block).
#[derive(Debug, Clone)]
pub struct LowestMode {
    /// Smallest eigenvalue.
    pub value: f64,
    /// Its eigenvector, unit norm, on the block's variables.
    pub vector: DVector<Complex<f64>>,
}

impl<'f> QHessian<'f> {
    /// Prepare `H(q)` of functional `f` (on a level of `lattice`) at the
    /// translation-invariant state `x`, on `block`. `None` if `x` is infeasible.
    pub fn new(
        f: &'f Functional,
        lattice: &Lattice,
        x: &[f64],
        block: Block,
        precise: bool,
    ) -> Option<QHessian<'f>> {
        let kernels = f.region_kernels(x, precise)?;
        let offsets = f
            .level()
            .active_regions()
            .map(|r| {
                let n = r.cluster.len();
                (0..1usize << n)
                    .map(|mask| {
                        if mask == 0 {
                            [0; 3]
                        } else {
                            r.cluster.site(mask.trailing_zeros() as usize).1
                        }
                    })
                    .collect()
            })
            .collect();
        let bonds = lattice.bonds();
        let quad = f
            .quadratic_terms()
            .iter()
            .zip(f.quadratic_bonds())
            .map(|(&(a, b, c), &bi)| (a, b, c, bonds[bi].cell))
            .collect();
        let row_scale = vec![1.0; block.vars.len()];
        Some(QHessian {
            kernels,
            offsets,
            quad,
            block,
            row_scale,
            real: None,
            condensed: Mutex::new(Vec::new()),
        })
    }

    /// [`QHessian::new`] for the congruent matrix `D^{-1/2} H(q) D^{-1/2}`, D the diagonal
    /// that the positive (maximal-cluster) regions alone give each variable. Congruence
    /// keeps the inertia, so the wavevectors and temperature where an eigenvalue crosses
    /// zero are those of H(q); but the scaled entries are O(1) at any temperature, where
    /// H(q)'s span the cluster probabilities' range (a field-polarised state at low T has
    /// entries ~1/p ~ 10¹⁴ next to a soft eigenvalue ~10⁻²) and a dense eigensolver's
    /// error `ε‖H‖` would swamp the soft one.
    pub fn scaled(
        f: &'f Functional,
        lattice: &Lattice,
        x: &[f64],
        block: Block,
        precise: bool,
    ) -> Option<QHessian<'f>> {
        let mut qh = QHessian::new(f, lattice, x, block, precise)?;
        let mut diag = vec![0.0; qh.block.vars.len()];
        for k in qh.kernels.iter().filter(|k| k.scale > 0.0) {
            for mask in 1..1usize << k.n {
                let row = qh.block.pos[k.vars[mask] as usize];
                if row != usize::MAX {
                    diag[row] += k.entry(mask, mask);
                }
            }
        }
        if diag.iter().any(|&d| !(d > 0.0 && d.is_finite())) {
            return None;
        }
        qh.row_scale = diag.iter().map(|d| 1.0 / d.sqrt()).collect();
        Some(qh)
    }

    /// The same matrices, factorised and diagonalised in the real forms `forms` (built
    /// on this block) wherever an operation maps q to −q: the same answers for a quarter
    /// of the work at complex wavevectors.
    pub fn with_real_forms(mut self, forms: &'f RealForms) -> QHessian<'f> {
        self.real = Some(forms);
        self
    }

    /// The real basis at a complex wavevector q, when the real forms have one.
    fn real_basis(&self, q: &Wavevector) -> Option<Vec<RealColumn>> {
        self.real.and_then(|r| r.basis(q))
    }

    /// `D^{-1/2}` per row of the block (ones for an unscaled matrix).
    pub fn row_scale(&self) -> &[f64] {
        &self.row_scale
    }

    /// The block the matrices act on.
    pub fn block(&self) -> &Block {
        &self.block
    }

    /// `H(q)` on the block (complex Hermitian).
    pub fn matrix(&self, q: &Wavevector) -> DMatrix<Complex<f64>> {
        let m = self.block.vars.len();
        let mut h = DMatrix::<Complex<f64>>::zeros(m, m);
        let mut rows = Vec::new();
        for (k, offs) in self.kernels.iter().zip(&self.offsets) {
            rows.clear();
            rows.extend(
                self.block_masks(k, offs)
                    .map(|(mask, row, t)| (mask, row, phase(q, t) * self.row_scale[row])),
            );
            hermitian_pairs(&rows, k, &mut h);
        }
        for &(a, b, c, cell) in &self.quad {
            let (pa, pb) = (self.block.pos[a], self.block.pos[b]);
            if pa != usize::MAX && pb != usize::MAX {
                let ph = phase(q, &cell) * (c * self.row_scale[pa] * self.row_scale[pb]);
                add_upper(&mut h, pa, pb, ph);
            }
        }
        mirror_upper(&mut h);
        h
    }

    /// The Rayleigh form `u† H(q) u`. Where every kernel is a plain Walsh one it is
    /// summed without the matrix: per region `T a 4^-n Σ_σ |v(σ)|² / p(σ)` with
    /// `v = W a`, `a_c = e^{2πi q·t_c} D_c^{-1/2} u_{row(c)}` (the Gram form of
    /// [`crate::gram`]; one Walsh–Hadamard transform of 2^n numbers per region instead
    /// of a visit of every pair of masks), plus the factorised bonds'
    /// `2 Re(ū_a h_ab u_b)`.
    pub fn quadratic_form(&self, q: &Wavevector, u: &DVector<Complex<f64>>) -> f64 {
        if !self.kernels.iter().all(RegionKernel::is_plain_walsh) {
            return (u.adjoint() * self.matrix(q) * u)[(0, 0)].re;
        }
        let mut total = 0.0;
        let mut a = Vec::new();
        for (k, offs) in self.kernels.iter().zip(&self.offsets) {
            a.clear();
            a.resize(1usize << k.n, Complex::new(0.0, 0.0));
            for (mask, row, t) in self.block_masks(k, offs) {
                a[mask] = phase(q, t) * (self.row_scale[row] * u[row]);
            }
            crate::subset::walsh(&mut a);
            let sum: f64 = a.iter().zip(&k.inv_p).map(|(v, w)| v.norm_sqr() * w).sum();
            total += k.scale * sum;
        }
        for &(a, b, c, cell) in &self.quad {
            let (pa, pb) = (self.block.pos[a], self.block.pos[b]);
            if pa != usize::MAX && pb != usize::MAX {
                let h = phase(q, &cell) * (c * self.row_scale[pa] * self.row_scale[pb]);
                total += 2.0 * (u[pa].conj() * h * u[pb]).re;
            }
        }
        total
    }

    /// `H(q)` for a wavevector whose phases are all real (see [`is_real`]); summed in
    /// double-double when the kernels are (a paramagnet at low temperature, whose soft
    /// entries are differences of entries 10⁹ times larger).
    /// The masks of kernel `k` whose variable is in the block: (mask, block row, the
    /// mask's cell offset).
    fn block_masks<'s>(
        &'s self,
        k: &'s RegionKernel<'_>,
        offs: &'s [Cell],
    ) -> impl Iterator<Item = (usize, usize, &'s Cell)> + 's {
        offs.iter().enumerate().skip(1).filter_map(|(mask, t)| {
            let row = self.block.pos[k.vars[mask] as usize];
            (row != usize::MAX).then_some((mask, row, t))
        })
    }

    /// [`Self::block_masks`] with the real phase (±1 at a real wavevector) times the row
    /// scale, into `rows`.
    fn real_rows(
        &self,
        k: &RegionKernel<'_>,
        offs: &[Cell],
        q: &Wavevector,
        rows: &mut Vec<(usize, usize, f64)>,
    ) {
        rows.clear();
        rows.extend(
            self.block_masks(k, offs)
                .map(|(mask, row, t)| (mask, row, phase_cos(q, t).signum() * self.row_scale[row])),
        );
    }

    fn real_matrix(&self, q: &Wavevector) -> DMatrix<f64> {
        if self.kernels.iter().any(|k| k.kernel_lo.is_some()) {
            return self.real_matrix_dd(q);
        }
        let m = self.block.vars.len();
        let mut h = DMatrix::<f64>::zeros(m, m);
        let mut rows = Vec::new();
        for (k, offs) in self.kernels.iter().zip(&self.offsets) {
            self.real_rows(k, offs, q, &mut rows);
            symmetric_pairs(&rows, k, &mut h);
        }
        for &(a, b, c, cell) in &self.quad {
            let (pa, pb) = (self.block.pos[a], self.block.pos[b]);
            if pa != usize::MAX && pb != usize::MAX {
                let ph = phase_cos(q, &cell).signum() * c * self.row_scale[pa] * self.row_scale[pb];
                let (lo, hi) = (pa.min(pb), pa.max(pb));
                h[(lo, hi)] += if lo == hi { 2.0 * ph } else { ph };
            }
        }
        h.fill_lower_triangle_with_upper_triangle();
        h
    }

    fn real_matrix_dd(&self, q: &Wavevector) -> DMatrix<f64> {
        let m = self.block.vars.len();
        let mut acc = vec![Dd::ZERO; m * m];
        let mut rows = Vec::new();
        for (k, offs) in self.kernels.iter().zip(&self.offsets) {
            self.real_rows(k, offs, q, &mut rows);
            for &(c, rc, pc) in &rows {
                for &(d, rd, pd) in &rows {
                    acc[rc + m * rd] += k.entry_dd(c, d).mul_f64(pc * pd);
                }
            }
        }
        for &(a, b, c, cell) in &self.quad {
            let (pa, pb) = (self.block.pos[a], self.block.pos[b]);
            if pa != usize::MAX && pb != usize::MAX {
                let ph = phase_cos(q, &cell).signum() * c * self.row_scale[pa] * self.row_scale[pb];
                acc[pa + m * pb] = acc[pa + m * pb].add_f64(ph);
                acc[pb + m * pa] = acc[pb + m * pa].add_f64(ph);
            }
        }
        DMatrix::from_fn(m, m, |i, j| acc[i + m * j].to_f64())
    }

    /// The smallest eigenvalue of `H(q)` and its eigenvector.
    pub fn lowest(&self, q: &Wavevector) -> LowestMode {
        if self.block.vars.is_empty() {
            return LowestMode {
                value: f64::INFINITY,
                vector: DVector::zeros(0),
            };
        }
        let n = self.block.vars.len();
        let failed = || LowestMode {
            value: f64::NAN,
            vector: DVector::zeros(n),
        };
        if is_real(q) {
            match linalg::lowest_real(&self.real_matrix(q)) {
                Some((value, v)) => LowestMode {
                    value,
                    vector: v.map(|x| Complex::new(x, 0.0)),
                },
                None => failed(),
            }
        } else if let Some(cols) = self.real_basis(q) {
            match linalg::lowest_real(&real_form(&self.matrix(q), &cols)) {
                Some((value, y)) => LowestMode {
                    value,
                    vector: complex_vector(&y, &cols, n),
                },
                None => failed(),
            }
        } else {
            match linalg::lowest_complex(&self.matrix(q)) {
                Some((value, vector)) => LowestMode { value, vector },
                None => failed(),
            }
        }
    }

    /// The smallest of [`QHessian::lowest_value`] over `qs`: `min_q λ_min(H(q))` (+∞ for
    /// no wavevector).
    pub fn lowest_over(&self, qs: &[Wavevector]) -> f64 {
        qs.iter()
            .map(|q| self.lowest_value(q))
            .fold(f64::INFINITY, f64::min)
    }

    /// The smallest eigenvalue of `H(q)` only.
    pub fn lowest_value(&self, q: &Wavevector) -> f64 {
        if self.block.vars.is_empty() {
            return f64::INFINITY;
        }
        if is_real(q) {
            linalg::min_eigenvalue_real(&self.real_matrix(q))
        } else if let Some(cols) = self.real_basis(q) {
            linalg::min_eigenvalue_real(&real_form(&self.matrix(q), &cols))
        } else {
            linalg::min_eigenvalue_complex(&self.matrix(q))
        }
    }

    /// Whether `H(q)` is positive definite (one Cholesky factorisation).
    pub fn is_positive_definite(&self, q: &Wavevector) -> bool {
        self.is_positive_definite_above(q, 0.0)
    }

    /// Whether every eigenvalue of `H(q)` exceeds `shift` (Cholesky of `H(q) − shift·I`).
    pub fn is_positive_definite_above(&self, q: &Wavevector, shift: f64) -> bool {
        if self.block.vars.is_empty() {
            return true;
        }
        match &*self.reduced(shift) {
            Reduced::Indefinite => return false,
            Reduced::Condensed(c) => return self.condensed_positive_definite(c, q, shift),
            Reduced::Full => {}
        }
        if is_real(q) {
            let mut m = self.real_matrix(q);
            for i in 0..m.nrows() {
                m[(i, i)] -= shift;
            }
            linalg::positive_definite_real(&m)
        } else if let Some(cols) = self.real_basis(q) {
            let mut m = real_form(&self.matrix(q), &cols);
            for i in 0..m.nrows() {
                m[(i, i)] -= shift;
            }
            linalg::positive_definite_real(&m)
        } else {
            let mut m = self.matrix(q);
            for i in 0..m.nrows() {
                m[(i, i)] -= shift;
            }
            linalg::positive_definite_complex(&m)
        }
    }
}

/// `H(q) − s·I` with its *private* variables eliminated. A variable of the block that
/// occurs in one region at one subset only (in the cube approximation of the simple
/// cubic lattice the 5- and 7-site correlations and the triangles that leave every face:
/// 96 of the odd sector's 109) couples to nothing outside that region's copy in its own
/// cell, so the private block of `H(q)` is `Φ† (K_PP − s·I) Φ`, one region kernel per
/// copy under unit phases Φ, the same at every q. Eliminating it leaves the Schur
/// complement on the shared variables,
///
/// ```text
/// S(q) = Σ_γ B_γ(q)† (K_EE − K_EP (K_PP − s·I)⁻¹ K_PE) B_γ(q) + (energy terms) − s·I,
/// ```
///
/// assembled with the phases `B_γ(q)` of the region's shared subsets exactly as `H(q)` is
/// from `K_EE` alone. By Haynsworth's inertia additivity `In(H − s) = In(K_PP − s) +
/// In(S)`, so `H(q) − s·I` is positive definite exactly when every `K_PP − s·I` (one
/// factorisation per region and shift, at any q) and `S(q)` (13 × 13 for the cube) are.
pub struct Condensed {
    /// Per block row: its row of `S(q)` (`usize::MAX` for a private row).
    shared_row: Vec<usize>,
    /// Order of `S(q)`.
    shared: usize,
    /// Per region kernel: its masks on shared rows and, where it has private masks, the
    /// Schur complement on them (scaled by the rows' `D^{-1/2}`); `None` where the kernel
    /// has no private mask and its own entries are used.
    local: Vec<(Vec<usize>, Option<DMatrix<f64>>)>,
}

/// The scaled kernel entries `K(c, d)·D_c^{-1/2}·D_d^{-1/2}` for the (mask, block row)
/// lists `a` (rows of the result) and `b` (columns).
fn kernel_block(
    k: &RegionKernel<'_>,
    rs: &[f64],
    a: &[(usize, usize)],
    b: &[(usize, usize)],
) -> DMatrix<f64> {
    let (rows, cols) = (a.len(), b.len());
    let mut out = vec![0.0; rows * cols];
    let scaled: Vec<f64> = match k.kind {
        KernelKind::Xor => k.kernel.iter().map(|v| v * k.scale).collect(),
        KernelKind::And => Vec::new(),
    };
    let wa: Vec<(usize, f64)> = a.iter().map(|&(c, r)| (c, rs[r])).collect();
    for (column, &(d, rd)) in out.chunks_exact_mut(rows.max(1)).zip(b) {
        let w = rs[rd];
        if scaled.is_empty() {
            for (o, &(c, v)) in column.iter_mut().zip(&wa) {
                *o = k.entry(c, d) * v * w;
            }
        } else {
            for (o, &(c, v)) in column.iter_mut().zip(&wa) {
                *o = scaled[c ^ d] * v * w;
            }
        }
    }
    DMatrix::from_vec(rows, cols, out)
}

/// The scaled Schur complement of a region's private block, unshifted, from the
/// inverse of its kernel: in correlations a region's kernel over all its masks is
/// `K = T a 4^-n W diag(1/p) W` (W the Walsh matrix, `W² = 2^n I`), whose inverse is the
/// moment matrix `K⁻¹[c, d] = ξ_{c⊕d} / (T a)` (`ξ_c = Σ_σ p(σ) χ_c(σ)`, `ξ_0 = 1`).
/// Eliminating the empty mask (not a variable) leaves on the non-empty ones the
/// covariance `K_NN⁻¹[c, d] = (ξ_{c⊕d} − ξ_c ξ_d / ξ_0) / (T a)`, and the Schur complement
/// of the private masks P within the block's masks O = P ∪ E is
/// `K_EE − K_EP K_PP⁻¹ K_PE = ((K_OO⁻¹)_EE)⁻¹ = T a · Cov_EE⁻¹`: one inversion of
/// order |E| (32 for the cube, whose 96 private masks the direct elimination factorises).
/// The identity needs `K_OO⁻¹ = (K_NN⁻¹)_OO`: O is every non-empty mask (a field), or
/// the odd masks at a state with no odd correlation (h = 0, where K has no odd–even
/// entries). `K_PP` is definite with the sign of a (all p > 0): `Some(None)` for a
/// negative region with private masks (indefinite at every q). `None` where the identity
/// does not apply (the caller eliminates directly).
fn moment_schur(
    k: &RegionKernel<'_>,
    rs: &[f64],
    e: &[(usize, usize)],
    p: &[(usize, usize)],
) -> Option<Option<DMatrix<f64>>> {
    if !k.is_plain_walsh() {
        return None;
    }
    let size = 1usize << k.n;
    let block_masks = e.len() + p.len();
    let mut xi: Vec<f64> = k.inv_p.iter().map(|w| 1.0 / w).collect();
    crate::subset::walsh(&mut xi);
    let all = block_masks == size - 1;
    let odd_only = block_masks == size / 2
        && e.iter().chain(p).all(|&(c, _)| c.count_ones() % 2 == 1)
        && (1..size)
            .filter(|c| c.count_ones() % 2 == 1)
            .all(|c| xi[c].abs() <= 1e-13 * xi[0]);
    if !(all || odd_only) {
        return None;
    }
    // T a, from the kernel's scale T a 4^-n.
    let ta = k.scale * (size * size) as f64;
    if ta < 0.0 {
        return Some(None);
    }
    let n = e.len();
    let cov = DMatrix::from_fn(n, n, |i, j| {
        let (c, d) = (e[i].0, e[j].0);
        xi[c ^ d] - xi[c] * xi[d] / xi[0]
    });
    let inverse = linalg::spd_inverse(&cov)?;
    Some(Some(DMatrix::from_fn(n, n, |i, j| {
        ta * inverse[(i, j)] * rs[e[i].1] * rs[e[j].1]
    })))
}

/// One end of a bond on a symmetric subspace: (column, coefficient).
type ProjectedEnd = (usize, Complex<f64>);

/// What the elimination of private variables gives for one shift.
pub(crate) enum Reduced {
    /// No private variable (or kernels kept in double-double): factorise `H(q)` itself.
    Full,
    /// Some `K_PP − s·I` is not positive definite: neither is `H(q) − s·I`, at any q.
    Indefinite,
    /// Factorise `S(q)` instead of `H(q)`.
    Condensed(Condensed),
}

impl QHessian<'_> {
    /// The elimination of private variables for shift `s`, built once per shift (under
    /// the lock: threads checking wavevectors side by side wait for one build instead of
    /// each factorising the private blocks).
    fn reduced(&self, s: f64) -> Arc<Reduced> {
        let key = s.to_bits();
        let Ok(mut cache) = self.condensed.lock() else {
            return Arc::new(self.condense(s));
        };
        if let Some((_, r)) = cache.iter().find(|(k, _)| *k == key) {
            return Arc::clone(r);
        }
        let r = Arc::new(self.condense(s));
        cache.push((key, Arc::clone(&r)));
        r
    }

    /// The order of the matrix that the definiteness tests factorise: the number of
    /// shared variables after the private ones are eliminated (see [`Condensed`]), or the
    /// block's order where nothing is eliminated.
    pub fn factorised_order(&self) -> usize {
        self.factorised_order_above(0.0)
    }

    /// [`QHessian::factorised_order`] for the tests of [`QHessian::is_positive_definite_above`]
    /// with `shift` (the elimination is built per shift, and kept).
    pub fn factorised_order_above(&self, shift: f64) -> usize {
        match &*self.reduced(shift) {
            Reduced::Condensed(c) => c.shared,
            _ => self.block.vars.len(),
        }
    }

    fn condense(&self, s: f64) -> Reduced {
        if self.kernels.iter().any(|k| k.kernel_lo.is_some()) {
            return Reduced::Full;
        }
        let m = self.block.vars.len();
        let mut count = vec![0usize; m];
        for (k, offs) in self.kernels.iter().zip(&self.offsets) {
            for (_, row, _) in self.block_masks(k, offs) {
                count[row] += 1;
            }
        }
        for &(a, b, _, _) in &self.quad {
            for v in [a, b] {
                if let Some(c) = count.get_mut(self.block.pos[v]) {
                    *c += 2;
                }
            }
        }
        let mut shared = 0;
        let shared_row: Vec<usize> = count
            .iter()
            .map(|&c| {
                if c == 1 {
                    usize::MAX
                } else {
                    shared += 1;
                    shared - 1
                }
            })
            .collect();
        if shared == m {
            return Reduced::Full;
        }
        let rs = &self.row_scale;
        let mut local = Vec::with_capacity(self.kernels.len());
        for (k, offs) in self.kernels.iter().zip(&self.offsets) {
            let (mut e, mut p) = (Vec::new(), Vec::new());
            for (mask, row, _) in self.block_masks(k, offs) {
                if shared_row[row] == usize::MAX {
                    p.push((mask, row));
                } else {
                    e.push((mask, row));
                }
            }
            let masks: Vec<usize> = e.iter().map(|&(c, _)| c).collect();
            if p.is_empty() {
                local.push((masks, None));
                continue;
            }
            if s == 0.0 {
                match moment_schur(k, rs, &e, &p) {
                    Some(Some(g)) => {
                        local.push((masks, Some(g)));
                        continue;
                    }
                    Some(None) => return Reduced::Indefinite,
                    None => {}
                }
            }
            let mut kpp = kernel_block(k, rs, &p, &p);
            for i in 0..p.len() {
                kpp[(i, i)] -= s;
            }
            let kpe = kernel_block(k, rs, &p, &e);
            let kee = kernel_block(k, rs, &e, &e);
            let Some(g) = linalg::schur_complement(&kpp, &kpe, &kee) else {
                return Reduced::Indefinite;
            };
            local.push((masks, Some(g)));
        }
        Reduced::Condensed(Condensed {
            shared_row,
            shared,
            local,
        })
    }

    /// Whether `S(q)` of `c` (see [`Condensed`]) is positive definite.
    fn condensed_positive_definite(&self, c: &Condensed, q: &Wavevector, s: f64) -> bool {
        let n = c.shared;
        let mut h = DMatrix::<Complex<f64>>::zeros(n, n);
        let rs = &self.row_scale;
        let mut rows: Vec<(usize, usize, Complex<f64>)> = Vec::new();
        for ((k, offs), (masks, g)) in self.kernels.iter().zip(&self.offsets).zip(&c.local) {
            rows.clear();
            // A kernel's own entries are read by mask and scaled here; the local Schur
            // complement is read by position and carries the rows' scale already.
            rows.extend(masks.iter().enumerate().map(|(i, &mask)| {
                let row = self.block.pos[k.vars[mask] as usize];
                let ph = phase(q, &offs[mask]);
                match g {
                    None => (mask, c.shared_row[row], ph * rs[row]),
                    Some(_) => (i, c.shared_row[row], ph),
                }
            }));
            match g {
                None => hermitian_pairs(&rows, k, &mut h),
                Some(g) => hermitian_pairs_by(&rows, |i, j| g[(i, j)], &mut h),
            }
        }
        for &(a, b, coef, cell) in &self.quad {
            let (pa, pb) = (self.block.pos[a], self.block.pos[b]);
            if pa != usize::MAX && pb != usize::MAX {
                let ph = phase(q, &cell) * (coef * rs[pa] * rs[pb]);
                add_upper(&mut h, c.shared_row[pa], c.shared_row[pb], ph);
            }
        }
        for i in 0..n {
            h[(i, i)] -= s;
        }
        mirror_upper(&mut h);
        if is_real(q) {
            linalg::positive_definite_real(&h.map(|z| z.re))
        } else {
            linalg::positive_definite_complex(&h)
        }
    }
}

/// The modes at q that every operation of the little group of q leaves unchanged: one
/// column per orbit of variables, `b_O = Σ_{v∈O} a_v e_v / √|O|` with the phases
/// `a_{g(v)} = a_v e^{−2πi q·t}` (t the cell translation that brings the image cluster
/// to its canonical place). Orbits on which two operations disagree carry no symmetric
/// mode and are dropped. The ferromagnetic, Néel and layered orders lie in this subspace;
/// every search on it is checked on the full `H(q)` afterwards.
#[derive(Debug, Clone)]
pub struct Projection {
    /// Per row of the block: (column, coefficient), column `usize::MAX` when dropped.
    rows: Vec<(usize, Complex<f64>)>,
    columns: usize,
    /// The cluster states grouped for the projected matrix in the grouped Gram form at
    /// a real wavevector (built on first use; `None` where grouping does not pay).
    groups: OnceLock<Option<StateGroups>>,
}

impl Projection {
    /// The symmetric subspace of `block` (a block of `level`'s variables) at q under the
    /// operations `ops` (the level's point group).
    pub fn new(
        level: &Level,
        ops: &[SiteMap],
        q: &Wavevector,
        block: &crate::functional::Block,
    ) -> Projection {
        let index = variable_index(level);
        let mut buf = Vec::new();
        let little: Vec<&SiteMap> = ops.iter().filter(|op| sends_q(&op.rot, q, 1)).collect();
        let mut rows = vec![(usize::MAX, Complex::new(0.0, 0.0)); block.vars.len()];
        let mut done = vec![false; level.variables.len()];
        let mut columns = 0;
        for &v0 in &block.vars {
            if done[v0] {
                continue;
            }
            let mut members: Vec<(usize, Complex<f64>)> = Vec::new();
            let mut consistent = true;
            for op in &little {
                let Some((w, t)) = variable_image(level, &index, op, v0, &mut buf) else {
                    consistent = false;
                    break;
                };
                let a = phase(q, &t).conj();
                match members.iter().find(|m| m.0 == w) {
                    Some(m) => {
                        if (m.1 - a).norm() > 1e-9 {
                            consistent = false;
                        }
                    }
                    None => members.push((w, a)),
                }
            }
            for &(w, _) in &members {
                done[w] = true;
            }
            if !consistent || members.iter().any(|m| block.pos[m.0] == usize::MAX) {
                continue;
            }
            let norm = 1.0 / (members.len() as f64).sqrt();
            for (w, a) in members {
                rows[block.pos[w]] = (columns, a * norm);
            }
            columns += 1;
        }
        Projection {
            rows,
            columns,
            groups: OnceLock::new(),
        }
    }

    /// Number of symmetric modes.
    pub fn len(&self) -> usize {
        self.columns
    }

    /// Whether there is none.
    pub fn is_empty(&self) -> bool {
        self.columns == 0
    }

    /// A vector of the subspace written on the block's rows.
    pub fn expand(&self, y: &DVector<Complex<f64>>) -> DVector<Complex<f64>> {
        DVector::from_iterator(
            self.rows.len(),
            self.rows.iter().map(|&(c, a)| {
                if c == usize::MAX {
                    Complex::new(0.0, 0.0)
                } else {
                    a * y[c]
                }
            }),
        )
    }
}

/// Whether the operation with cell matrix `r` maps q to `sign·q` modulo reciprocal
/// lattice vectors (q ↦ R⁻ᵀ q): the test `q·(R n − sign·n) ∈ ℤ` on the unit cells n is
/// equivalent. `sign = 1`: r fixes q (the little group); `sign = −1`: r reverses it.
pub(crate) fn sends_q(r: &[[i32; 3]; 3], q: &Wavevector, sign: i32) -> bool {
    (0..3).all(|k| {
        let e = |i: usize| sign * i32::from(i == k);
        let d = q[0] * f64::from(r[0][k] - e(0))
            + q[1] * f64::from(r[1][k] - e(1))
            + q[2] * f64::from(r[2][k] - e(2));
        near_integer(d)
    })
}

/// The image of variable `v` (placed with its first site in cell 0) under `op`: the
/// variable `w` and the cell `t` of its first site, `op(v@0) = w@t`. `None` when the
/// image is not a variable of the level. `buf` is scratch space.
fn variable_image(
    level: &Level,
    index: &VariableIndex<'_>,
    op: &SiteMap,
    v: usize,
    buf: &mut Vec<(Cell, usize)>,
) -> Option<(usize, Cell)> {
    let t = op.image_into(&level.variables[v], buf);
    index.get(buf.as_slice()).map(|&w| (w, t))
}

/// Real symmetric forms of `H(q)` at complex wavevectors, from the point-group
/// operations that map q to −q (inversion maps every q so).
///
/// The Hessian in real space is real, so `H(q)* = H(−q)`; an operation g with
/// `g(v@0) = w_v@t_v` and `Rᵀ⁻¹q ≡ −q` gives `H_cd(q) = φ_c φ_d* H_{w_c w_d}(q)*` with
/// `φ_c = e^{−2πi q·t_c}`, i.e. `H = U H* U†` for `U_{c,w_c} = φ_c`. The antiunitary
/// `Θx = U x*` then commutes with H; where `Θ² = 1` (g an involution on the variables,
/// `φ_c = φ_{w_c}`) its fixed vectors form a real basis,
///
/// ```text
/// w_c = c:  √φ_c e_c;       w_c = d ≠ c:  (e_c + φ_d e_d)/√2,  i(e_c − φ_d e_d)/√2,
/// ```
///
/// and `V† H(q) V` in that basis is real symmetric with the spectrum of H(q): a real
/// Cholesky factorisation or eigensolve, a quarter of the complex one's work.
#[derive(Debug, Clone, Default)]
pub struct RealForms {
    /// The usable operations.
    maps: Vec<Involution>,
}

/// An operation that exchanges the block's variables in pairs (or fixes them).
#[derive(Debug, Clone)]
struct Involution {
    /// Its matrix on cells.
    rot: [[i32; 3]; 3],
    /// Per block row: the image row and the cell of the image variable's first site.
    rows: Vec<(usize, Cell)>,
}

/// One column of a real basis: at most two (block row, coefficient) entries.
type RealColumn = [(usize, Complex<f64>); 2];

impl RealForms {
    /// The operations of `ops` (a point group of `level`) that act on `block` as an
    /// involution of its variables (inversion, two-fold rotations, mirrors).
    pub fn new(level: &Level, ops: &[SiteMap], block: &crate::functional::Block) -> RealForms {
        let index = variable_index(level);
        let mut buf = Vec::new();
        let maps: Vec<Involution> = ops
            .iter()
            .filter_map(|op| {
                let rows: Vec<(usize, Cell)> = block
                    .vars
                    .iter()
                    .map(|&v| {
                        let (w, t) = variable_image(level, &index, op, v, &mut buf)?;
                        let row = block.pos[w];
                        (row != usize::MAX).then_some((row, t))
                    })
                    .collect::<Option<_>>()?;
                let involution = rows.iter().enumerate().all(|(j, &(w, _))| rows[w].0 == j);
                involution.then_some(Involution { rot: op.rot, rows })
            })
            .collect();
        RealForms { maps }
    }

    /// Whether `q` has a real form (an operation maps it to −q with `Θ² = 1`).
    pub fn applies_at(&self, q: &Wavevector) -> bool {
        self.basis(q).is_some()
    }

    /// A real basis of the block at `q` (see [`RealForms`]), `None` when no operation
    /// maps q to −q with `Θ² = 1`.
    fn basis(&self, q: &Wavevector) -> Option<Vec<RealColumn>> {
        let zero = Complex::new(0.0, 0.0);
        self.maps.iter().find_map(|Involution { rot, rows }| {
            if !sends_q(rot, q, -1) {
                return None;
            }
            let phi: Vec<Complex<f64>> = rows.iter().map(|(_, t)| phase(q, t).conj()).collect();
            if rows
                .iter()
                .enumerate()
                .any(|(j, &(w, _))| (phi[j] - phi[w]).norm() > 1e-9)
            {
                return None;
            }
            let half = std::f64::consts::FRAC_1_SQRT_2;
            let mut cols = Vec::with_capacity(rows.len());
            for (j, &(w, _)) in rows.iter().enumerate() {
                if w == j {
                    cols.push([(j, phi[j].sqrt()), (j, zero)]);
                } else if j < w {
                    cols.push([(j, Complex::new(half, 0.0)), (w, phi[w] * half)]);
                    cols.push([
                        (j, Complex::new(0.0, half)),
                        (w, -phi[w] * Complex::new(0.0, half)),
                    ]);
                }
            }
            Some(cols)
        })
    }
}

/// `V† H V`, real part, for the columns `cols` of a real basis ([`RealForms`]): first
/// `W = H V` (each column a combination of at most two columns of H), then
/// `S_ab = Re Σ_r conj(V_ra) W_rb`; O(m²).
fn real_form(h: &DMatrix<Complex<f64>>, cols: &[RealColumn]) -> DMatrix<f64> {
    let m = cols.len();
    let hs = h.as_slice();
    let mut s = DMatrix::<f64>::zeros(m, m);
    let ss = s.as_mut_slice();
    let mut w = vec![Complex::new(0.0, 0.0); m];
    for (b, col) in cols.iter().enumerate() {
        let [(r0, y0), (r1, y1)] = *col;
        let h0 = &hs[r0 * m..(r0 + 1) * m];
        if y1.re == 0.0 && y1.im == 0.0 {
            for (wi, &a) in w.iter_mut().zip(h0) {
                *wi = a * y0;
            }
        } else {
            let h1 = &hs[r1 * m..(r1 + 1) * m];
            for ((wi, &a), &c) in w.iter_mut().zip(h0).zip(h1) {
                *wi = a * y0 + c * y1;
            }
        }
        // Upper triangle and diagonal of column b; the lower one mirrored below.
        for (a, &[(ra, xa), (sa, za)]) in cols[..=b].iter().enumerate() {
            let (p, q) = (w[ra], w[sa]);
            ss[a + m * b] = xa.re * p.re + xa.im * p.im + za.re * q.re + za.im * q.im;
        }
    }
    for b in 0..m {
        for a in 0..b {
            ss[b + m * a] = ss[a + m * b];
        }
    }
    s
}

/// `Σ_a y_a V_a`: a vector of the real basis written on the block's rows.
fn complex_vector(y: &DVector<f64>, cols: &[RealColumn], m: usize) -> DVector<Complex<f64>> {
    let mut v = DVector::<Complex<f64>>::zeros(m);
    for (ya, col) in y.iter().zip(cols) {
        for &(r, x) in col {
            v[r] += x * *ya;
        }
    }
    v
}

impl QHessian<'_> {
    /// `B† H(q) B` on the symmetric subspace of `proj`.
    pub fn projected_matrix(&self, q: &Wavevector, proj: &Projection) -> DMatrix<Complex<f64>> {
        let m = proj.columns;
        let mut h = DMatrix::<Complex<f64>>::zeros(m, m);
        let mut rows = Vec::new();
        for (k, offs) in self.kernels.iter().zip(&self.offsets) {
            rows.clear();
            for (mask, t) in offs.iter().enumerate().skip(1) {
                let row = self.block.pos[k.vars[mask] as usize];
                if row != usize::MAX {
                    let (col, a) = proj.rows[row];
                    if col != usize::MAX {
                        rows.push((mask, col, phase(q, t) * a * self.row_scale[row]));
                    }
                }
            }
            hermitian_pairs(&rows, k, &mut h);
        }
        for ((ca, aa), (cb, ab), (pa, pb), c, cell) in self.projected_quad(proj) {
            let ph = phase(q, &cell) * self.row_scale[pa] * self.row_scale[pb];
            add_upper(&mut h, ca, cb, aa.conj() * ab * ph * c);
        }
        mirror_upper(&mut h);
        h
    }

    /// The factorised bonds on the symmetric subspace of `proj`: ((column, coefficient) of
    /// each end, the ends' block rows, the coefficient c, the bond's cell); bonds with an
    /// end outside the block or the subspace left out.
    fn projected_quad<'s>(
        &'s self,
        proj: &'s Projection,
    ) -> impl Iterator<Item = (ProjectedEnd, ProjectedEnd, (usize, usize), f64, Cell)> + 's {
        self.quad.iter().filter_map(move |&(a, b, c, cell)| {
            let (pa, pb) = (self.block.pos[a], self.block.pos[b]);
            if pa == usize::MAX || pb == usize::MAX {
                return None;
            }
            let (ea, eb) = (proj.rows[pa], proj.rows[pb]);
            (ea.0 != usize::MAX && eb.0 != usize::MAX).then_some((ea, eb, (pa, pb), c, cell))
        })
    }

    /// [`Self::projected_matrix`] at a wavevector whose phases are all real (see
    /// [`is_real`]), where the symmetric modes' coefficients are real too: a real
    /// symmetric matrix, summed in real arithmetic.
    fn projected_real_matrix(&self, q: &Wavevector, proj: &Projection) -> DMatrix<f64> {
        if let Some(h) = self.projected_real_grouped(q, proj) {
            return h;
        }
        let m = proj.columns;
        let mut h = DMatrix::<f64>::zeros(m, m);
        let mut rows = Vec::new();
        for (k, offs) in self.kernels.iter().zip(&self.offsets) {
            rows.clear();
            rows.extend(self.block_masks(k, offs).filter_map(|(mask, row, t)| {
                let (col, a) = proj.rows[row];
                (col != usize::MAX).then(|| {
                    (
                        mask,
                        col,
                        phase_cos(q, t).signum() * a.re * self.row_scale[row],
                    )
                })
            }));
            symmetric_pairs(&rows, k, &mut h);
        }
        self.add_projected_quad_real(q, proj, &mut h);
        h.fill_lower_triangle_with_upper_triangle();
        h
    }

    /// The factorised bonds on the symmetric subspace at a real wavevector, into the
    /// upper triangle of `h`.
    fn add_projected_quad_real(&self, q: &Wavevector, proj: &Projection, h: &mut DMatrix<f64>) {
        for ((ca, aa), (cb, ab), (pa, pb), c, cell) in self.projected_quad(proj) {
            let ph = phase_cos(q, &cell).signum() * self.row_scale[pa] * self.row_scale[pb];
            let (lo, hi) = (ca.min(cb), ca.max(cb));
            let v = aa.re * ab.re * ph * c;
            h[(lo, hi)] += if lo == hi { 2.0 * v } else { v };
        }
    }

    /// [`Self::projected_real_matrix`] in the grouped Gram form (see [`crate::gram`]):
    /// `B†H(q)B = Σ_γ T a_γ 4^-n Σ_g (Σ_{σ∈g} 1/p_γ(σ)) u_g u_gᵀ` with
    /// `u_g = Σ_c ±b_c χ_c(σ)` over the masks on the subspace (the sign the phase's at the
    /// real q times the mode coefficient's), each column scaled by the `D^{-1/2}` of its
    /// first row (the rows of one symmetric mode are images of one another under the
    /// point group, at a symmetric state, so they share `D` to rounding). `None` where
    /// the kernels are not plain Walsh ones (double-double, flip probabilities) or
    /// grouping does not pay: the caller then visits the pairs of masks.
    fn projected_real_grouped(&self, q: &Wavevector, proj: &Projection) -> Option<DMatrix<f64>> {
        if !self.kernels.iter().all(RegionKernel::is_plain_walsh) {
            return None;
        }
        let m = proj.columns;
        // Each column's coefficient magnitude and row scale, from its first row.
        let mut norm = vec![f64::NAN; m];
        let mut scale = vec![f64::NAN; m];
        for (row, &(col, a)) in proj.rows.iter().enumerate() {
            if col != usize::MAX && norm[col].is_nan() {
                norm[col] = a.re.abs();
                scale[col] = self.row_scale[row];
            }
        }
        let groups = proj
            .groups
            .get_or_init(|| {
                let regions = self.kernels.iter().zip(&self.offsets).map(|(k, offs)| {
                    let masks = self
                        .block_masks(k, offs)
                        .filter_map(|(mask, row, t)| {
                            let (col, a) = proj.rows[row];
                            let sign = phase_cos(q, t).signum() * a.re.signum();
                            (col != usize::MAX).then_some((mask, col, sign as i32))
                        })
                        .collect();
                    (k.n, masks)
                });
                StateGroups::new(m, &norm, regions)
            })
            .as_ref()?;
        let mut h = DMatrix::<f64>::zeros(m, m);
        for (ri, k) in self.kernels.iter().enumerate() {
            groups.add_region(ri, &k.inv_p, k.scale, h.as_mut_slice());
        }
        for j in 0..m {
            for i in 0..=j {
                h[(i, j)] *= scale[i] * scale[j];
            }
        }
        self.add_projected_quad_real(q, proj, &mut h);
        h.fill_lower_triangle_with_upper_triangle();
        Some(h)
    }

    /// The smallest eigenvalue on the symmetric subspace and its eigenvector written on
    /// the block.
    pub fn projected_lowest(&self, q: &Wavevector, proj: &Projection) -> LowestMode {
        if proj.is_empty() {
            return LowestMode {
                value: f64::INFINITY,
                vector: DVector::zeros(self.block.vars.len()),
            };
        }
        let lowest = if is_real(q) {
            // Real phases and coefficients: a real symmetric matrix (a quarter of the work).
            linalg::lowest_real(&self.projected_real_matrix(q, proj))
                .map(|(v, y)| (v, y.map(|x| Complex::new(x, 0.0))))
        } else {
            linalg::lowest_complex(&self.projected_matrix(q, proj))
        };
        match lowest {
            Some((value, y)) => LowestMode {
                value,
                vector: proj.expand(&y),
            },
            None => LowestMode {
                value: f64::NAN,
                vector: DVector::zeros(self.block.vars.len()),
            },
        }
    }

    /// [`Self::projected_lowest_value`] at a real wavevector where some eigenvalue is at
    /// or below `s`; `None` (one Cholesky factorisation of `B†H(q)B − s·I`, no
    /// eigensolve) where every one exceeds it.
    pub fn projected_lowest_value_below(
        &self,
        q: &Wavevector,
        proj: &Projection,
        s: f64,
    ) -> Option<f64> {
        if proj.is_empty() {
            return None;
        }
        let m = self.projected_real_matrix(q, proj);
        let shifted = DMatrix::from_fn(m.nrows(), m.ncols(), |i, j| {
            m[(i, j)] - if i == j { s } else { 0.0 }
        });
        (!linalg::positive_definite_real(&shifted)).then(|| linalg::min_eigenvalue_real(&m))
    }

    /// The smallest eigenvalue on the symmetric subspace.
    pub fn projected_lowest_value(&self, q: &Wavevector, proj: &Projection) -> f64 {
        if proj.is_empty() {
            return f64::INFINITY;
        }
        if is_real(q) {
            linalg::min_eigenvalue_real(&self.projected_real_matrix(q, proj))
        } else {
            linalg::min_eigenvalue_complex(&self.projected_matrix(q, proj))
        }
    }
}

/// `Σ_{c,d} conj(p_c) p_d K(c, d)` into rows (r_c, r_d) of the upper triangle of `h`,
/// each unordered pair of masks visited once (the matrix is Hermitian; the lower
/// triangle is filled by [`mirror_upper`]).
fn hermitian_pairs(
    rows: &[(usize, usize, Complex<f64>)],
    k: &RegionKernel<'_>,
    h: &mut DMatrix<Complex<f64>>,
) {
    hermitian_pairs_by(rows, |c, d| k.entry(c, d), h);
}

/// [`hermitian_pairs`] with the entries `K(c, d)` given by `entry` for the first members
/// c, d of `rows` (a kernel's masks, or positions in a dense local matrix).
fn hermitian_pairs_by(
    rows: &[(usize, usize, Complex<f64>)],
    entry: impl Fn(usize, usize) -> f64,
    h: &mut DMatrix<Complex<f64>>,
) {
    for (i, &(c, rc, pc)) in rows.iter().enumerate() {
        h[(rc, rc)] += pc.norm_sqr() * entry(c, c);
        let pc = pc.conj();
        for &(d, rd, pd) in &rows[i + 1..] {
            add_upper(h, rc, rd, pc * pd * entry(c, d));
        }
    }
}

/// The real counterpart of [`hermitian_pairs`], on the upper triangle alone (the caller
/// mirrors it).
fn symmetric_pairs(rows: &[(usize, usize, f64)], k: &RegionKernel<'_>, h: &mut DMatrix<f64>) {
    let m = h.nrows();
    let hs = h.as_mut_slice();
    upper_pairs(
        rows,
        |r| r.1,
        m,
        |at, twice, (c, _, pc), (d, _, pd)| {
            let v = pc * pd * k.entry(c, d);
            hs[at] += if twice { 2.0 * v } else { v };
        },
    );
}

/// Add `v` at (r, s) and its conjugate at (s, r), written on the upper triangle only.
#[inline]
fn add_upper(h: &mut DMatrix<Complex<f64>>, r: usize, s: usize, v: Complex<f64>) {
    if r < s {
        h[(r, s)] += v;
    } else if r > s {
        h[(s, r)] += v.conj();
    } else {
        h[(r, r)] += Complex::new(2.0 * v.re, 0.0);
    }
}

/// Fill the lower triangle of a Hermitian matrix from its upper triangle.
fn mirror_upper(h: &mut DMatrix<Complex<f64>>) {
    for j in 0..h.ncols() {
        for i in 0..j {
            h[(j, i)] = h[(i, j)].conj();
        }
    }
}

/// The mean-field coupling matrix at q, `J_ab(q) = Σ_{bonds a–b, offset δ} J e^{2πi q·δ}`
/// (+ Hermitian partner); its largest eigenvalue over q is the site-level Tc at h = 0.
pub fn coupling_matrix(lattice: &Lattice, q: &Wavevector) -> DMatrix<Complex<f64>> {
    let n = lattice.sites_per_cell();
    let mut m = DMatrix::<Complex<f64>>::zeros(n, n);
    for b in lattice.bonds() {
        let ph = phase(q, &b.cell);
        m[(b.from, b.to)] += ph * b.j;
        m[(b.to, b.from)] += ph.conj() * b.j;
    }
    m
}

/// The largest eigenvalue of `J(q)`.
pub fn coupling_top(lattice: &Lattice, q: &Wavevector) -> f64 {
    if lattice.sites_per_cell() == 1 {
        // One site per cell: J(q) = Σ_bonds 2J cos(2π q·δ) is its own eigenvalue.
        return lattice
            .bonds()
            .iter()
            .map(|b| 2.0 * b.j * phase_cos(q, &b.cell))
            .sum();
    }
    coupling_matrix(lattice, q)
        .symmetric_eigenvalues()
        .iter()
        .copied()
        .fold(f64::NEG_INFINITY, f64::max)
}

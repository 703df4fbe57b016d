//! Dense Hermitian kernels on faer (blocked, vectorised): the smallest eigenpair and the
//! positive-definiteness test that every stability question comes down to. Matrices are
//! built with nalgebra elsewhere and copied in (the copy is O(n²), the work O(n³)).
//!
//! Matrices below [`PARALLEL_ORDER`] are factorised on the calling thread: the dense
//! Tc search factorises hundreds of matrices of order ~100, where handing blocks to
//! worker threads costs more than it saves (and the workers spin while they wait, which
//! on a shared machine is CPU time taken from everyone else).

use faer::diag::Diag;
use faer::dyn_stack::{MemBuffer, MemStack};
use faer::linalg::cholesky::llt::factor::{cholesky_in_place, cholesky_in_place_scratch};
use faer::linalg::evd::{self_adjoint_evd, self_adjoint_evd_scratch, ComputeEigenvectors};
use faer::linalg::triangular_solve::{
    solve_lower_triangular_in_place, solve_upper_triangular_in_place,
};
use faer::traits::ComplexField;
use faer::{Mat, Par};
use nalgebra::{Complex, DMatrix, DVector};

/// Order from which factorisations use faer's global (multi-threaded) parallelism.
pub const PARALLEL_ORDER: usize = 256;

fn par(n: usize) -> Par {
    if n < PARALLEL_ORDER {
        Par::Seq
    } else {
        faer::get_global_parallelism()
    }
}

/// The Cholesky factor `L` (lower triangle of the result) of a Hermitian matrix given
/// by its lower triangle, `None` when it is not positive definite.
fn cholesky<T: ComplexField>(mut a: Mat<T>) -> Option<Mat<T>> {
    let n = a.nrows();
    let par = par(n);
    let mut mem = MemBuffer::new(cholesky_in_place_scratch::<T>(n, par, Default::default()));
    cholesky_in_place(
        a.as_mut(),
        Default::default(),
        par,
        MemStack::new(&mut mem),
        Default::default(),
    )
    .ok()?;
    Some(a)
}

/// Eigenvalues (ascending) and, with `vectors`, the eigenvectors of a Hermitian matrix
/// given by its lower triangle.
fn eigen<T: ComplexField>(a: &Mat<T>, vectors: bool) -> Option<(Vec<T>, Option<Mat<T>>)> {
    let n = a.nrows();
    let par = par(n);
    let compute = if vectors {
        ComputeEigenvectors::Yes
    } else {
        ComputeEigenvectors::No
    };
    let mut s = Diag::<T>::zeros(n);
    let mut u = vectors.then(|| Mat::<T>::zeros(n, n));
    let mut mem = MemBuffer::new(self_adjoint_evd_scratch::<T>(
        n,
        compute,
        par,
        Default::default(),
    ));
    self_adjoint_evd(
        a.as_ref(),
        s.as_mut(),
        u.as_mut().map(|u| u.as_mut()),
        par,
        MemStack::new(&mut mem),
        Default::default(),
    )
    .ok()?;
    let values = (0..n).map(|i| s[i].clone()).collect();
    Some((values, u))
}

fn to_faer<T: Copy>(m: &DMatrix<T>) -> Mat<T> {
    Mat::from_fn(m.nrows(), m.ncols(), |i, j| m[(i, j)])
}

/// The smallest eigenvalue of a real symmetric matrix and its unit eigenvector.
pub fn lowest_real(m: &DMatrix<f64>) -> Option<(f64, DVector<f64>)> {
    let n = m.nrows();
    if n == 0 {
        return None;
    }
    let (values, u) = eigen(&to_faer(m), true)?;
    let u = u?;
    Some((values[0], DVector::from_fn(n, |i, _| u[(i, 0)])))
}

/// The smallest eigenvalue of a complex Hermitian matrix and its unit eigenvector.
pub fn lowest_complex(m: &DMatrix<Complex<f64>>) -> Option<(f64, DVector<Complex<f64>>)> {
    let n = m.nrows();
    if n == 0 {
        return None;
    }
    let (values, u) = eigen(&to_faer(m), true)?;
    let u = u?;
    Some((values[0].re, DVector::from_fn(n, |i, _| u[(i, 0)])))
}

/// The smallest eigenvalue of a real symmetric matrix (+∞ for an empty one).
pub fn min_eigenvalue_real(m: &DMatrix<f64>) -> f64 {
    if m.nrows() == 0 {
        return f64::INFINITY;
    }
    eigen(&to_faer(m), false)
        .and_then(|(v, _)| v.first().copied())
        .unwrap_or(f64::NAN)
}

/// The smallest eigenvalue of a complex Hermitian matrix (+∞ for an empty one).
pub fn min_eigenvalue_complex(m: &DMatrix<Complex<f64>>) -> f64 {
    if m.nrows() == 0 {
        return f64::INFINITY;
    }
    eigen(&to_faer(m), false)
        .and_then(|(v, _)| v.first().map(|c| c.re))
        .unwrap_or(f64::NAN)
}

/// The smallest eigenvalue of `D^{-1/2} M D^{-1/2}` (D = diag M) for a real symmetric
/// matrix with a positive diagonal: its curvature relative to its own scale, whose
/// rounding floor is ~10⁻¹⁶ however widely the diagonal spans (flip-basis Hessians at
/// low T span 40 decades). `None` for a non-positive diagonal or a failed solve.
pub fn lowest_scaled_real(m: &DMatrix<f64>) -> Option<f64> {
    let d: Vec<f64> = (0..m.nrows()).map(|i| m[(i, i)]).collect();
    if d.iter().any(|&v| !(v > 0.0 && v.is_finite())) {
        return None;
    }
    let s: Vec<f64> = d.iter().map(|v| 1.0 / v.sqrt()).collect();
    let scaled = DMatrix::from_fn(m.nrows(), m.ncols(), |i, j| m[(i, j)] * s[i] * s[j]);
    let lowest = min_eigenvalue_real(&scaled);
    lowest.is_finite().then_some(lowest)
}

/// The Cholesky factor `M = L Lᵀ` of a real symmetric positive definite matrix, kept
/// to solve with it again.
#[derive(Debug, Clone)]
pub struct SpdFactor {
    l: Mat<f64>,
}

impl SpdFactor {
    /// Factorise `m`; `None` when it is not positive definite.
    pub fn new(m: &DMatrix<f64>) -> Option<SpdFactor> {
        Some(SpdFactor {
            l: cholesky(to_faer(m))?,
        })
    }

    /// `x = M⁻¹ rhs`: `L y = rhs`, then `Lᵀ x = y`.
    pub fn solve(&self, rhs: &[f64]) -> Vec<f64> {
        let n = self.l.nrows();
        let mut b = Mat::from_fn(rhs.len(), 1, |i, _| rhs[i]);
        // Only the lower triangle of `l` is read.
        solve_lower_triangular_in_place(self.l.as_ref(), b.as_mut(), par(n));
        solve_upper_triangular_in_place(self.l.as_ref().transpose(), b.as_mut(), par(n));
        (0..rhs.len()).map(|i| b[(i, 0)]).collect()
    }
}

/// Solve `M x = rhs` for a real symmetric positive definite M (blocked Cholesky);
/// `None` when M is not positive definite.
pub fn solve_spd(m: &DMatrix<f64>, rhs: &[f64]) -> Option<Vec<f64>> {
    Some(SpdFactor::new(m)?.solve(rhs))
}

/// The inverse of a real symmetric positive definite matrix, `M⁻¹ = L⁻ᵀ L⁻¹` from its
/// Cholesky factor; `None` when M is not positive definite.
pub fn spd_inverse(m: &DMatrix<f64>) -> Option<DMatrix<f64>> {
    let n = m.nrows();
    let l = cholesky(to_faer(m))?;
    let mut out = Mat::<f64>::zeros(n, n);
    let mut mem =
        MemBuffer::new(faer::linalg::cholesky::llt::inverse::inverse_scratch::<f64>(n, par(n)));
    faer::linalg::cholesky::llt::inverse::inverse(
        out.as_mut(),
        l.as_ref(),
        par(n),
        MemStack::new(&mut mem),
    );
    // Only the lower triangle is written.
    Some(DMatrix::from_fn(n, n, |i, j| {
        if i >= j {
            out[(i, j)]
        } else {
            out[(j, i)]
        }
    }))
}

/// The Schur complement `C − Bᵀ A⁻¹ B` of a real symmetric positive definite `A`:
/// with `A = L Lᵀ` and `Y = L⁻¹ B`, it is `C − Yᵀ Y`. `None` when A is not positive
/// definite.
pub fn schur_complement(
    a: &DMatrix<f64>,
    b: &DMatrix<f64>,
    c: &DMatrix<f64>,
) -> Option<DMatrix<f64>> {
    let l = cholesky(to_faer(a))?;
    let mut y = to_faer(b);
    solve_lower_triangular_in_place(l.as_ref(), y.as_mut(), par(a.nrows()));
    let y = DMatrix::from_fn(b.nrows(), b.ncols(), |i, j| y[(i, j)]);
    Some(c - y.transpose() * y)
}

/// Whether a real symmetric matrix is positive definite (Cholesky succeeds).
pub fn positive_definite_real(m: &DMatrix<f64>) -> bool {
    m.nrows() == 0 || cholesky(to_faer(m)).is_some()
}

/// Whether a complex Hermitian matrix is positive definite (Cholesky succeeds).
pub fn positive_definite_complex(m: &DMatrix<Complex<f64>>) -> bool {
    m.nrows() == 0 || cholesky(to_faer(m)).is_some()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn lowest_pair_of_a_small_hermitian_matrix() {
        // [[2, i], [−i, 2]] has eigenvalues 1 and 3.
        let m = DMatrix::from_row_slice(
            2,
            2,
            &[
                Complex::new(2.0, 0.0),
                Complex::new(0.0, 1.0),
                Complex::new(0.0, -1.0),
                Complex::new(2.0, 0.0),
            ],
        );
        let (v, u) = lowest_complex(&m).unwrap();
        assert!((v - 1.0).abs() < 1e-12);
        let r = &m * &u - u.map(|c| c * v);
        assert!(r.norm() < 1e-12);
        assert!((min_eigenvalue_complex(&m) - 1.0).abs() < 1e-12);
        assert!(positive_definite_complex(&m));
        let shifted = m.map(|c| c - Complex::new(0.0, 0.0))
            - DMatrix::identity(2, 2).map(|x: f64| Complex::new(1.5 * x, 0.0));
        assert!(!positive_definite_complex(&shifted));
        let r = DMatrix::from_row_slice(2, 2, &[2.0, 1.0, 1.0, 2.0]);
        assert!((min_eigenvalue_real(&r) - 1.0).abs() < 1e-12);
        assert!(positive_definite_real(&r));
        assert!((lowest_real(&r).unwrap().0 - 1.0).abs() < 1e-12);
    }
}

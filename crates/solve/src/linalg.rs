//! Dense Hermitian kernels on faer (blocked, vectorised): the smallest eigenpair and the
//! positive-definiteness test that every stability question comes down to. Matrices are
//! built with nalgebra elsewhere and copied in (the copy is O(n²), the work O(n³)).

use faer::{Mat, Side};
use nalgebra::{Complex, DMatrix, DVector};

fn to_faer<T: Copy>(m: &DMatrix<T>) -> Mat<T> {
    Mat::from_fn(m.nrows(), m.ncols(), |i, j| m[(i, j)])
}

/// The smallest eigenvalue of a real symmetric matrix and its unit eigenvector.
pub fn lowest_real(m: &DMatrix<f64>) -> Option<(f64, DVector<f64>)> {
    let n = m.nrows();
    if n == 0 {
        return None;
    }
    let eig = to_faer(m).self_adjoint_eigen(Side::Lower).ok()?;
    let value = eig.S()[0];
    let u = eig.U();
    Some((value, DVector::from_fn(n, |i, _| u[(i, 0)])))
}

/// The smallest eigenvalue of a complex Hermitian matrix and its unit eigenvector.
pub fn lowest_complex(m: &DMatrix<Complex<f64>>) -> Option<(f64, DVector<Complex<f64>>)> {
    let n = m.nrows();
    if n == 0 {
        return None;
    }
    let eig = to_faer(m).self_adjoint_eigen(Side::Lower).ok()?;
    let value = eig.S()[0].re;
    let u = eig.U();
    Some((value, DVector::from_fn(n, |i, _| u[(i, 0)])))
}

/// The smallest eigenvalue of a real symmetric matrix (+∞ for an empty one).
pub fn min_eigenvalue_real(m: &DMatrix<f64>) -> f64 {
    if m.nrows() == 0 {
        return f64::INFINITY;
    }
    to_faer(m)
        .self_adjoint_eigenvalues(Side::Lower)
        .ok()
        .and_then(|v| v.first().copied())
        .unwrap_or(f64::NAN)
}

/// The smallest eigenvalue of a complex Hermitian matrix (+∞ for an empty one).
pub fn min_eigenvalue_complex(m: &DMatrix<Complex<f64>>) -> f64 {
    if m.nrows() == 0 {
        return f64::INFINITY;
    }
    to_faer(m)
        .self_adjoint_eigenvalues(Side::Lower)
        .ok()
        .and_then(|v| v.first().copied())
        .unwrap_or(f64::NAN)
}

/// Solve `M x = rhs` for a real symmetric positive definite M (blocked Cholesky);
/// `None` when M is not positive definite.
pub fn solve_spd(m: &DMatrix<f64>, rhs: &[f64]) -> Option<Vec<f64>> {
    use faer::linalg::solvers::Solve;
    let llt = to_faer(m).llt(Side::Lower).ok()?;
    let mut b = Mat::from_fn(rhs.len(), 1, |i, _| rhs[i]);
    llt.solve_in_place(b.as_mut());
    Some((0..rhs.len()).map(|i| b[(i, 0)]).collect())
}

/// Whether a real symmetric matrix is positive definite (Cholesky succeeds).
pub fn positive_definite_real(m: &DMatrix<f64>) -> bool {
    m.nrows() == 0 || to_faer(m).llt(Side::Lower).is_ok()
}

/// Whether a complex Hermitian matrix is positive definite (Cholesky succeeds).
pub fn positive_definite_complex(m: &DMatrix<Complex<f64>>) -> bool {
    m.nrows() == 0 || to_faer(m).llt(Side::Lower).is_ok()
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

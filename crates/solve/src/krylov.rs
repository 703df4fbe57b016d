//! Krylov methods on a symmetric operator given only as products `v ↦ A v`:
//! preconditioned conjugate gradients for `A x = b`, and LOBPCG for the lowest eigenpair
//! of `A u = λ B u` with B diagonal and positive.
//!
//! * PCG (Hestenes & Stiefel 1952, J. Res. Natl. Bur. Stand. 49, 409) with a diagonal
//!   preconditioner; it stops on negative curvature `pᵀAp ≤ 0` and says so, which is
//!   how a truncated Newton method learns that A is not positive definite there.
//! * LOBPCG with block size one (Knyazev 2001, SIAM J. Sci. Comput. 23, 517): the
//!   Rayleigh–Ritz step on span{x, T r, p}, each basis vector B-orthonormalised, one
//!   product `A v` per iteration.

use nalgebra::{DMatrix, SymmetricEigen};

/// A symmetric linear operator: `out = A v`.
pub type Operator<'a> = dyn FnMut(&[f64], &mut [f64]) + 'a;

/// The diagonal preconditioner `z = d ⊙ r`.
pub fn diagonal(d: &[f64]) -> impl FnMut(&[f64], &mut [f64]) + '_ {
    move |r: &[f64], z: &mut [f64]| {
        z.iter_mut()
            .zip(r.iter().zip(d))
            .for_each(|(z, (r, d))| *z = r * d)
    }
}

fn dot(a: &[f64], b: &[f64]) -> f64 {
    a.iter().zip(b).map(|(x, y)| x * y).sum()
}

/// What PCG returned.
#[derive(Debug, Clone)]
pub struct CgResult {
    /// The approximate solution.
    pub x: Vec<f64>,
    /// Products with A spent.
    pub iterations: usize,
    /// `‖b − A x‖ / ‖b‖` at exit.
    pub relative_residual: f64,
    /// Whether a direction with `pᵀAp ≤ 0` was met (A not positive definite).
    pub negative_curvature: bool,
}

/// Solve `A x = b` by conjugate gradients with the symmetric positive definite
/// preconditioner `precond` (`z = M⁻¹ r`), from `x0` (zero when `None`), until
/// `‖r‖ ≤ rtol ‖b‖` or `max_iter` products.
pub fn pcg(
    apply: &mut Operator,
    precond: &mut Operator,
    b: &[f64],
    x0: Option<&[f64]>,
    rtol: f64,
    max_iter: usize,
) -> CgResult {
    let n = b.len();
    let bn = dot(b, b).sqrt();
    let mut x = x0.map_or_else(|| vec![0.0; n], <[f64]>::to_vec);
    let mut r = b.to_vec();
    let mut q = vec![0.0; n];
    let mut iterations = 0;
    if x0.is_some() {
        apply(&x, &mut q);
        iterations += 1;
        r.iter_mut().zip(&q).for_each(|(r, q)| *r -= q);
    }
    if bn == 0.0 {
        return CgResult {
            x: vec![0.0; n],
            iterations,
            relative_residual: 0.0,
            negative_curvature: false,
        };
    }
    let mut z = vec![0.0; n];
    precond(&r, &mut z);
    let mut p = z.clone();
    let mut rz = dot(&r, &z);
    let mut negative_curvature = false;
    while iterations < max_iter {
        let rn = dot(&r, &r).sqrt();
        if rn <= rtol * bn {
            break;
        }
        apply(&p, &mut q);
        iterations += 1;
        let pq = dot(&p, &q);
        if pq <= 0.0 || !pq.is_finite() {
            negative_curvature = true;
            break;
        }
        let alpha = rz / pq;
        x.iter_mut().zip(&p).for_each(|(x, p)| *x += alpha * p);
        r.iter_mut().zip(&q).for_each(|(r, q)| *r -= alpha * q);
        precond(&r, &mut z);
        let rz_new = dot(&r, &z);
        let beta = rz_new / rz;
        rz = rz_new;
        p.iter_mut().zip(&z).for_each(|(p, z)| *p = z + beta * *p);
    }
    CgResult {
        relative_residual: dot(&r, &r).sqrt() / bn,
        x,
        iterations,
        negative_curvature,
    }
}

/// The lowest eigenpair found by [`lobpcg_lowest`].
#[derive(Debug, Clone)]
pub struct Eigen {
    /// λ.
    pub value: f64,
    /// u, with `uᵀ B u = 1`.
    pub vector: Vec<f64>,
    /// Products with A spent.
    pub iterations: usize,
    /// `‖A u − λ B u‖_{B⁻¹}` at exit.
    pub residual: f64,
}

/// B-inner product with a diagonal B.
fn bdot(b: &[f64], x: &[f64], y: &[f64]) -> f64 {
    b.iter()
        .zip(x.iter().zip(y))
        .map(|(b, (x, y))| b * x * y)
        .sum()
}

/// Lowest eigenpair of `A u = λ B u` (B = diag(b) > 0), with the preconditioner `t`
/// (`w = T r`), from `x0`, until `‖A u − λ B u‖_{B⁻¹} ≤ tol` or `max_iter` products.
pub fn lobpcg_lowest(
    apply: &mut Operator,
    b: &[f64],
    t: &mut Operator,
    x0: &[f64],
    tol: f64,
    max_iter: usize,
) -> Eigen {
    let n = b.len();
    let mut x = x0.to_vec();
    let nx = bdot(b, &x, &x).sqrt();
    if nx > 0.0 {
        x.iter_mut().for_each(|v| *v /= nx);
    } else {
        x = vec![1.0 / (b.iter().sum::<f64>()).sqrt(); n];
    }
    let mut ax = vec![0.0; n];
    apply(&x, &mut ax);
    let mut iterations = 1;
    let mut lambda = dot(&x, &ax);
    let mut p: Option<(Vec<f64>, Vec<f64>)> = None;
    let mut residual;
    loop {
        let r: Vec<f64> = (0..n).map(|i| ax[i] - lambda * b[i] * x[i]).collect();
        residual = r.iter().zip(b).map(|(r, b)| r * r / b).sum::<f64>().sqrt();
        if residual <= tol || iterations >= max_iter {
            break;
        }
        // Basis [x, w, p], B-orthonormal (Gram–Schmidt twice), A-images alongside.
        let mut basis: Vec<(Vec<f64>, Option<Vec<f64>>)> = vec![(x.clone(), Some(ax.clone()))];
        let mut w = vec![0.0; n];
        t(&r, &mut w);
        let mut cands: Vec<(Vec<f64>, Option<Vec<f64>>)> = vec![(w, None)];
        if let Some((pv, apv)) = p.take() {
            cands.push((pv, Some(apv)));
        }
        for (mut v, mut av) in cands {
            let n0 = bdot(b, &v, &v).sqrt();
            if n0 == 0.0 || !n0.is_finite() {
                continue;
            }
            for _ in 0..2 {
                for (u, au) in &basis {
                    let c = bdot(b, u, &v);
                    v.iter_mut().zip(u).for_each(|(v, u)| *v -= c * u);
                    if let (Some(av), Some(au)) = (av.as_mut(), au.as_ref()) {
                        av.iter_mut().zip(au).for_each(|(a, u)| *a -= c * u);
                    }
                }
            }
            let nv = bdot(b, &v, &v).sqrt();
            if nv <= 1e-10 * n0 {
                continue;
            }
            v.iter_mut().for_each(|e| *e /= nv);
            let av = match av {
                Some(mut av) => {
                    av.iter_mut().for_each(|e| *e /= nv);
                    av
                }
                None => {
                    let mut av = vec![0.0; n];
                    apply(&v, &mut av);
                    iterations += 1;
                    av
                }
            };
            basis.push((v, Some(av)));
        }
        let k = basis.len();
        if k == 1 {
            break;
        }
        let gram = DMatrix::from_fn(k, k, |i, j| {
            let (ai, aj) = (basis[i].1.as_deref(), basis[j].1.as_deref());
            let (Some(ai), Some(aj)) = (ai, aj) else {
                return 0.0;
            };
            0.5 * (dot(&basis[i].0, aj) + dot(&basis[j].0, ai))
        });
        let eig = SymmetricEigen::new(gram);
        let (m, &theta) = eig
            .eigenvalues
            .iter()
            .enumerate()
            .min_by(|a, b| a.1.total_cmp(b.1))
            .unwrap_or((0, &lambda));
        let c = eig.eigenvectors.column(m);
        let mut xn = vec![0.0; n];
        let mut axn = vec![0.0; n];
        let mut pn = vec![0.0; n];
        let mut apn = vec![0.0; n];
        for (i, (v, av)) in basis.iter().enumerate() {
            let av = av.as_deref().unwrap_or(&[]);
            for j in 0..n {
                xn[j] += c[i] * v[j];
                axn[j] += c[i] * av[j];
                if i > 0 {
                    pn[j] += c[i] * v[j];
                    apn[j] += c[i] * av[j];
                }
            }
        }
        let nrm = bdot(b, &xn, &xn).sqrt();
        xn.iter_mut().for_each(|v| *v /= nrm);
        axn.iter_mut().for_each(|v| *v /= nrm);
        x = xn;
        ax = axn;
        lambda = theta;
        p = Some((pn, apn));
    }
    // The Rayleigh quotient of the final vector (exact for the returned pair).
    lambda = dot(&x, &ax);
    Eigen {
        value: lambda,
        vector: x,
        iterations,
        residual,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A symmetric positive matrix with known spectrum: the 1D Laplacian plus a shift.
    fn laplacian(n: usize, shift: f64) -> impl FnMut(&[f64], &mut [f64]) {
        move |v: &[f64], out: &mut [f64]| {
            for i in 0..n {
                let left = if i > 0 { v[i - 1] } else { 0.0 };
                let right = if i + 1 < n { v[i + 1] } else { 0.0 };
                out[i] = (2.0 + shift) * v[i] - left - right;
            }
        }
    }

    #[test]
    fn cg_solves_the_laplacian() {
        let n = 50;
        let mut a = laplacian(n, 0.1);
        let b: Vec<f64> = (0..n).map(|i| (i as f64).sin()).collect();
        let d = vec![1.0 / 2.1; n];
        let res = pcg(&mut a, &mut diagonal(&d), &b, None, 1e-12, 500);
        assert!(!res.negative_curvature);
        let mut ax = vec![0.0; n];
        a(&res.x, &mut ax);
        let err = ax
            .iter()
            .zip(&b)
            .map(|(p, q)| (p - q).abs())
            .fold(0.0, f64::max);
        assert!(err < 1e-10, "{err}");
    }

    #[test]
    fn lobpcg_finds_the_lowest_laplacian_eigenvalue() {
        // Eigenvalues of the Dirichlet Laplacian: 2 − 2 cos(kπ/(n+1)) (common practice).
        let n = 40;
        let shift = -0.05;
        let mut a = laplacian(n, shift);
        let exact = 2.0 - 2.0 * (std::f64::consts::PI / (n as f64 + 1.0)).cos() + shift;
        let x0: Vec<f64> = (0..n).map(|i| 1.0 + 0.1 * (i as f64).cos()).collect();
        let ones = vec![1.0; n];
        let e = lobpcg_lowest(&mut a, &ones, &mut diagonal(&ones), &x0, 1e-10, 400);
        assert!((e.value - exact).abs() < 1e-12, "{} vs {exact}", e.value);
    }

    #[test]
    fn cg_reports_negative_curvature() {
        let n = 30;
        let mut a = laplacian(n, -0.5);
        let b = vec![1.0; n];
        let ones = vec![1.0; n];
        let res = pcg(&mut a, &mut diagonal(&ones), &b, None, 1e-12, 100);
        assert!(res.negative_curvature);
    }
}

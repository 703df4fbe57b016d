//! Double-double arithmetic: a value `hi + lo` with |lo| ≤ ulp(hi)/2, about 106 bits.
//!
//! Used where a sum of O(1) terms cancels to a tiny result whose relative precision
//! matters: the cluster probabilities of a state written as a reference plus a small
//! offset (`p = p_ref + T δ`), and the Hessian entries of a paramagnet at low
//! temperature, where a maximal cluster's `1/p` and its overlaps' `1/p` cancel to the
//! soft mode's stiffness (on the chain at T = 0.1 J the odd-sector Hessian is
//! `T (1 − ξ)/(1 + ξ) ≈ 2·10⁻¹⁰` from terms of order 1).
//!
//! The error-free transformations are Knuth's TwoSum and the fused-multiply-add
//! TwoProd (Dekker 1971, Numer. Math. 18, 224; Shewchuk 1997, Discrete Comput. Geom.
//! 18, 305); division is one Newton correction of the double quotient.

use std::ops::{Add, AddAssign, Mul, Neg, Sub};

/// A double-double number `hi + lo`.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Dd {
    /// Leading part (the value rounded to f64).
    pub hi: f64,
    /// Trailing part.
    pub lo: f64,
}

/// `a + b = s + e` exactly (Knuth's TwoSum).
#[inline]
pub fn two_sum(a: f64, b: f64) -> (f64, f64) {
    let s = a + b;
    let bb = s - a;
    let e = (a - (s - bb)) + (b - bb);
    (s, e)
}

/// `a · b = p + e` exactly (TwoProd with a fused multiply-add).
#[inline]
pub fn two_prod(a: f64, b: f64) -> (f64, f64) {
    let p = a * b;
    (p, a.mul_add(b, -p))
}

impl Dd {
    /// Zero.
    pub const ZERO: Dd = Dd { hi: 0.0, lo: 0.0 };

    /// The double `x`, exactly.
    #[inline]
    pub fn from_f64(x: f64) -> Dd {
        Dd { hi: x, lo: 0.0 }
    }

    /// Rounded to the nearest double.
    #[inline]
    pub fn to_f64(self) -> f64 {
        self.hi + self.lo
    }

    #[inline]
    fn renormalise(hi: f64, lo: f64) -> Dd {
        let (s, e) = two_sum(hi, lo);
        Dd { hi: s, lo: e }
    }

    /// `self + x` for a double `x`.
    #[inline]
    pub fn add_f64(self, x: f64) -> Dd {
        let (s, e) = two_sum(self.hi, x);
        Dd::renormalise(s, e + self.lo)
    }

    /// `self · x` for a double `x`.
    #[inline]
    pub fn mul_f64(self, x: f64) -> Dd {
        let (p, e) = two_prod(self.hi, x);
        Dd::renormalise(p, e + self.lo * x)
    }

    /// `1 / self`: the double quotient plus one Newton correction.
    #[inline]
    pub fn recip(self) -> Dd {
        let q = 1.0 / self.hi;
        // r = 1 − q·self, computed in double-double.
        let r = Dd::from_f64(1.0) - self.mul_f64(q);
        Dd::from_f64(q) + r.mul_f64(q)
    }
}

impl Dd {
    /// `√self` (one Newton correction of the double square root; 0 for 0).
    pub fn sqrt(self) -> Dd {
        if self.hi <= 0.0 {
            return Dd::ZERO;
        }
        let r = self.hi.sqrt();
        // r + (self − r²)/(2r)
        let e = self - Dd::from_f64(r) * Dd::from_f64(r);
        Dd::from_f64(r) + e.mul_f64(0.5 / r)
    }

    /// `self / o`.
    pub fn quotient(self, o: Dd) -> Dd {
        self * o.recip()
    }
}

/// `vᵀ H⁻¹ v` for a symmetric positive definite `m × m` matrix H given in double-double
/// (column-major), by Cholesky in double-double: `|L⁻¹ v|²`. `None` when H is not
/// positive definite. With entries and factorisation both at ~10⁻³² relative, a
/// Hessian of condition 10²⁵ (a paramagnet's soft mode at low temperature next to
/// entries 1/p of its rarest states) still gives the form to full double precision.
pub fn inverse_form(h: &[Dd], m: usize, v: &[f64]) -> Option<f64> {
    let mut l = h.to_vec();
    for j in 0..m {
        let mut d = l[j + m * j];
        for k in 0..j {
            d = d - l[j + m * k] * l[j + m * k];
        }
        if d.hi <= 0.0 {
            return None;
        }
        let d = d.sqrt();
        l[j + m * j] = d;
        let inv = d.recip();
        for i in j + 1..m {
            let mut s = l[i + m * j];
            for k in 0..j {
                s = s - l[i + m * k] * l[j + m * k];
            }
            l[i + m * j] = s * inv;
        }
    }
    // Forward substitution L y = v.
    let mut y = vec![Dd::ZERO; m];
    let mut total = Dd::ZERO;
    for i in 0..m {
        let mut s = Dd::from_f64(v[i]);
        for k in 0..i {
            s = s - l[i + m * k] * y[k];
        }
        y[i] = s.quotient(l[i + m * i]);
        total += y[i] * y[i];
    }
    Some(total.to_f64())
}

impl Add for Dd {
    type Output = Dd;
    #[inline]
    fn add(self, o: Dd) -> Dd {
        let (s, e) = two_sum(self.hi, o.hi);
        let (t, f) = two_sum(self.lo, o.lo);
        let r = Dd::renormalise(s, e + t);
        Dd::renormalise(r.hi, r.lo + f)
    }
}

impl AddAssign for Dd {
    #[inline]
    fn add_assign(&mut self, o: Dd) {
        *self = *self + o;
    }
}

impl Neg for Dd {
    type Output = Dd;
    #[inline]
    fn neg(self) -> Dd {
        Dd {
            hi: -self.hi,
            lo: -self.lo,
        }
    }
}

impl Sub for Dd {
    type Output = Dd;
    #[inline]
    fn sub(self, o: Dd) -> Dd {
        self + (-o)
    }
}

impl Mul for Dd {
    type Output = Dd;
    #[inline]
    fn mul(self, o: Dd) -> Dd {
        let (p, e) = two_prod(self.hi, o.hi);
        Dd::renormalise(p, e + (self.hi * o.lo + self.lo * o.hi))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cancellation_keeps_the_small_difference() {
        // 2/(2 + δ) − 1 = −δ/(2 + δ): the chain's soft-mode stiffness.
        let delta = -4.0e-9;
        let p = Dd::from_f64(2.0).add_f64(delta);
        let r = Dd::from_f64(2.0) * p.recip() - Dd::from_f64(1.0);
        let exact = -delta / (2.0 + delta);
        assert!((r.to_f64() / exact - 1.0).abs() < 1e-15);
    }

    #[test]
    fn quadratic_form_of_an_ill_conditioned_matrix() {
        // H = [[a, a − ε], [a − ε, a]] with a = 10¹², ε = 10⁻³: eigenvalues ≈ 2a and ε,
        // condition 2·10¹⁵; vᵀH⁻¹v for v = (1, −1) is 2/ε exactly... to O(ε/a).
        let (a, eps) = (1e12, 1e-3);
        let off = Dd::from_f64(a).add_f64(-eps);
        let h = [Dd::from_f64(a), off, off, Dd::from_f64(a)];
        let q = inverse_form(&h, 2, &[1.0, -1.0]).unwrap();
        assert!((q / (2.0 / eps) - 1.0).abs() < 1e-12, "{q}");
        assert!(inverse_form(&[Dd::from_f64(-1.0)], 1, &[1.0]).is_none());
    }

    #[test]
    fn sums_and_products_are_exact_to_double_double() {
        let a = Dd::from_f64(1.0).add_f64(1e-20);
        let b = a * a;
        // (1 + 1e-20)² = 1 + 2e-20 + 1e-40
        assert_eq!(b.hi, 1.0);
        assert!((b.lo / 2e-20 - 1.0).abs() < 1e-12);
        let third = Dd::from_f64(3.0).recip();
        let one = third.mul_f64(3.0);
        assert!((one.hi - 1.0).abs() + one.lo.abs() < 1e-31);
    }
}

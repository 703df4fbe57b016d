//! Locating points on a path: the root of a function that changes sign in a bracket
//! (a crossing of free energies, a zero of the stability), by the Brent search of
//! [`crate::search::refine`]; and the end of a branch, by bisection.

use std::cell::RefCell;

use crate::error::SolveError;
use crate::search::{refine, Probe};

/// Relative tolerance handed to the root finder on the shifted variable.
const RELATIVE: f64 = 1e-12;

/// `f` seen by [`refine`] on the variable `u = x + shift`, chosen so that refine's
/// relative tolerance at the bracket's top is `tol` in x (so a bracket around 0, as in
/// h, is refined as well as any other).
struct Shifted<'f> {
    f: &'f dyn Fn(f64) -> Option<f64>,
    shift: f64,
    failed: RefCell<bool>,
}

impl Probe for Shifted<'_> {
    fn value(&mut self, u: f64) -> Result<f64, SolveError> {
        match (self.f)(u - self.shift) {
            Some(v) if v.is_finite() => Ok(v),
            _ => {
                *self.failed.borrow_mut() = true;
                Err(SolveError::TcSearch {
                    level: String::new(),
                    detail: "a branch could not be evaluated inside the bracket".into(),
                })
            }
        }
    }
    fn name(&self) -> &str {
        "phase boundary"
    }
}

/// The root of `f` in `[lo, hi]` to the absolute tolerance `tol`, given the values at
/// the ends (of opposite signs, or one of them zero). `None` when `f` cannot be
/// evaluated inside the bracket.
pub fn root(
    f: &dyn Fn(f64) -> Option<f64>,
    lo: f64,
    hi: f64,
    f_lo: f64,
    f_hi: f64,
    tol: f64,
) -> Option<f64> {
    if f_lo == 0.0 {
        return Some(lo);
    }
    if f_hi == 0.0 {
        return Some(hi);
    }
    if f_lo.signum() == f_hi.signum() {
        return None;
    }
    let s = tol / RELATIVE;
    let shift = s - hi;
    let mut probe = Shifted {
        f,
        shift,
        failed: RefCell::new(false),
    };
    let u = refine(&mut probe, lo + shift, hi + shift, RELATIVE).ok()?;
    if *probe.failed.borrow() {
        return None;
    }
    Some((u - shift).clamp(lo.min(hi), hi.max(lo)))
}

/// Bisection for the last point where `exists` holds between `good` (where it holds)
/// and `bad` (where it does not), to `tol`: returns the last good point and what
/// `exists` returned there. `exists(from, x)` continues from the state at the last good
/// point.
pub fn last_good<S, E: Copy>(
    mut good: (f64, S),
    mut bad: (f64, E),
    tol: f64,
    exists: &dyn Fn(&S, f64) -> Result<S, E>,
) -> ((f64, S), E) {
    for _ in 0..200 {
        if (bad.0 - good.0).abs() <= tol {
            break;
        }
        let mid = 0.5 * (good.0 + bad.0);
        match exists(&good.1, mid) {
            Ok(s) => good = (mid, s),
            Err(e) => bad = (mid, e),
        }
    }
    (good, bad.1)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn roots_near_zero_and_far_from_it() {
        let f = |x: f64| Some(x - 1e-3);
        let r = root(&f, -0.05, 0.05, -0.051, 0.049, 1e-12).unwrap();
        assert!((r - 1e-3).abs() < 1e-11, "{r}");
        let g = |x: f64| Some((x - 1.8872).powi(3) + (x - 1.8872));
        let r = root(&g, 1.85, 1.9, g(1.85).unwrap(), g(1.9).unwrap(), 1e-10).unwrap();
        assert!((r - 1.8872).abs() < 1e-9, "{r}");
        assert!(root(&f, 0.5, 1.0, 0.499, 0.999, 1e-9).is_none());
    }

    #[test]
    fn bisection_finds_the_end_of_existence() {
        let exists = |_: &f64, x: f64| if x < 0.3 { Ok(x) } else { Err(()) };
        let ((x, s), ()) = last_good((0.0, 0.0), (1.0, ()), 1e-9, &exists);
        assert!(x < 0.3 && 0.3 - x <= 1e-9 && s == x);
    }
}

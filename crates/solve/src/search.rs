//! The one temperature search behind every Tc: step down from a stable temperature
//! until a stability function changes sign, then refine the root with Brent's method.
//!
//! A [`Probe`] is anything that, given T, says how stable the disordered state is: the
//! smallest eigenvalue of the Hessian over the wavevectors (dense levels, `tc.rs`), or
//! the lowest odd-sector eigenvalue on point-group orbits (big levels, `big/search.rs`).
//! It is positive above Tc and crosses zero at Tc. The search steps down along the
//! secant of the probe (nearly linear near Tc), aiming a little below the predicted
//! zero, and hands the bracket to Brent (argmin's `BrentRoot`). The two paths differ
//! only in their [`StepRules`]: a dense probe costs milliseconds and steps boldly, a big
//! one costs seconds and creeps down from a start just above Tc.

use std::cell::RefCell;

use argmin::core::{CostFunction, Executor};
use argmin::solver::brent::BrentRoot;

use crate::error::SolveError;

/// A stability function of temperature.
pub trait Probe {
    /// The function at T: positive where the disordered state is stable. Mutable: a
    /// probe may keep warm starts and caches between temperatures.
    fn value(&mut self, t: f64) -> Result<f64, SolveError>;
    /// Values with |f| below this at T are rounding noise and cannot tell the side of
    /// Tc (e.g. the chain, whose eigenvalue vanishes only as e^{−2J/T}).
    fn noise(&self, _t: f64) -> f64 {
        0.0
    }
    /// Whether the disordered state at `t` (already probed) is unstable although the
    /// value is positive: the value is then a smooth function for the root finder
    /// whose sign alone does not decide stability (e.g. `1/(bᵀH⁻¹b)`, positive while a
    /// mode orthogonal to b is already soft). The step-down counts such a T as below Tc.
    fn unstable(&self, _t: f64) -> bool {
        false
    }
    /// A label for errors.
    fn name(&self) -> &str;
}

/// How the step-down moves.
#[derive(Debug, Clone, Copy)]
pub struct StepRules {
    /// Never step below this fraction of the current T in one step.
    pub min_ratio: f64,
    /// Always step at least to this fraction of the current T.
    pub max_ratio: f64,
    /// Aim this fraction of T below the secant's predicted zero.
    pub margin: f64,
    /// Grow the start temperature by this factor while the probe is not positive.
    pub grow: f64,
    /// At most this many growth steps.
    pub max_grow: usize,
    /// The first step, before a secant exists, goes to this fraction of T.
    pub first_ratio: f64,
}

impl StepRules {
    /// The rules of big levels, whose probe costs a Newton solve and an eigenproblem:
    /// the start is the Tc of a smaller cluster, just above this one's, so the search
    /// grows by 5 % steps, steps down by 1 % first and aims 0.1 % below the secant's
    /// zero (a bracket within a fraction of a percent saves Brent iterations).
    pub fn creeping() -> StepRules {
        StepRules {
            min_ratio: 0.7,
            max_ratio: 0.999,
            margin: 1e-3,
            grow: 1.05,
            max_grow: 30,
            first_ratio: 0.99,
        }
    }
}

impl Default for StepRules {
    fn default() -> Self {
        StepRules {
            min_ratio: 0.5,
            max_ratio: 0.98,
            margin: 0.01,
            grow: 1.5,
            max_grow: 20,
            first_ratio: 0.9,
        }
    }
}

/// Where the step-down ended.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Bracket {
    /// The probe is positive at `hi` and not positive at `lo`.
    Found {
        /// Below Tc.
        lo: f64,
        /// Above Tc.
        hi: f64,
        /// The probe's value at `lo` and at `hi` (handed to [`refine_known`], which then
        /// need not probe the ends again).
        values: (f64, f64),
    },
    /// Positive down to `down_to` (the lowest temperature searched): no Tc above it.
    Stable {
        /// Lowest temperature probed.
        down_to: f64,
    },
    /// The probe fell within its rounding noise at `at` (its sign cannot be trusted).
    Noise {
        /// Where.
        at: f64,
    },
}

/// Step down from `t_start` (raised until the probe is positive) to `t_min`.
pub fn step_down(
    probe: &mut dyn Probe,
    t_start: f64,
    t_min: f64,
    rules: StepRules,
) -> Result<Bracket, SolveError> {
    let mut t_hi = t_start;
    let mut f_hi = probe.value(t_hi)?;
    let mut grow = 0;
    while (f_hi <= 0.0 || probe.unstable(t_hi)) && grow < rules.max_grow {
        t_hi *= rules.grow;
        f_hi = probe.value(t_hi)?;
        grow += 1;
    }
    if f_hi <= 0.0 || probe.unstable(t_hi) {
        return Err(SolveError::TcSearch {
            level: probe.name().to_string(),
            detail: format!("the disordered state is unstable even at T = {t_hi}"),
        });
    }
    let mut prev: Option<(f64, f64)> = None;
    let mut t = t_hi;
    while t > t_min {
        let mut next = t * rules.first_ratio;
        if let Some((tp, fp)) = prev {
            let slope = (fp - f_hi) / (tp - t);
            if slope > 0.0 {
                let zero = t - f_hi / slope;
                next = (zero - rules.margin * t).clamp(rules.min_ratio * t, rules.max_ratio * t);
            }
        }
        let mut next = next.max(t_min);
        // A step too far below Tc may land where the disordered state cannot be
        // followed: halve it (up to four times) before giving up.
        let mut f = probe.value(next);
        for _ in 0..4 {
            if f.is_ok() {
                break;
            }
            next = t - 0.5 * (t - next);
            f = probe.value(next);
        }
        let f = f.map_err(|e| SolveError::TcSearch {
            level: probe.name().to_string(),
            detail: format!(
                "stable down to T = {t}, but the disordered state could not be followed below it ({e}); no Tc can be claimed either way"
            ),
        })?;
        if f.abs() < probe.noise(next) {
            return Ok(Bracket::Noise { at: next });
        }
        if f <= 0.0 || probe.unstable(next) {
            return Ok(Bracket::Found {
                lo: next,
                hi: t,
                values: (f, f_hi),
            });
        }
        prev = Some((t, f_hi));
        t = next;
        f_hi = f;
        if next <= t_min {
            break;
        }
    }
    Ok(Bracket::Stable { down_to: t })
}

/// The root of the probe in `[lo, hi]` to a relative tolerance (Brent's method).
pub fn refine(probe: &mut dyn Probe, lo: f64, hi: f64, relative: f64) -> Result<f64, SolveError> {
    refine_known(probe, lo, hi, (f64::NAN, f64::NAN), relative)
}

/// [`refine`] with the probe's values at `lo` and `hi` already known (from the
/// step-down's [`Bracket::Found`]; NaN where not known): Brent starts from them
/// instead of probing both ends again.
pub fn refine_known(
    probe: &mut dyn Probe,
    lo: f64,
    hi: f64,
    values: (f64, f64),
    relative: f64,
) -> Result<f64, SolveError> {
    let name = probe.name().to_string();
    let root = Root {
        probe: RefCell::new(probe),
        error: RefCell::new(None),
        known: [(lo, values.0), (hi, values.1)],
    };
    let solver = BrentRoot::new(lo, hi, relative * hi);
    let result = Executor::new(&root, solver)
        .configure(|s| s.max_iters(200))
        .run();
    match result {
        Ok(r) => Ok(r.state.best_param.unwrap_or(0.5 * (lo + hi))),
        Err(e) => Err(root
            .error
            .borrow_mut()
            .take()
            .unwrap_or(SolveError::TcSearch {
                level: name,
                detail: e.to_string(),
            })),
    }
}

/// The root finder's view of a probe.
struct Root<'p> {
    probe: RefCell<&'p mut dyn Probe>,
    error: RefCell<Option<SolveError>>,
    /// Values already known at two temperatures (NaN: unknown).
    known: [(f64, f64); 2],
}

impl CostFunction for &Root<'_> {
    type Param = f64;
    type Output = f64;
    fn cost(&self, t: &f64) -> Result<f64, argmin::core::Error> {
        if let Some(&(_, v)) = self.known.iter().find(|k| k.0 == *t && !k.1.is_nan()) {
            return Ok(v);
        }
        let value = self.probe.borrow_mut().value(*t);
        match value {
            Ok(v) => Ok(v),
            Err(e) => {
                let msg = e.to_string();
                *self.error.borrow_mut() = Some(e);
                Err(argmin::core::Error::msg(msg))
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    struct Line(f64);
    impl Probe for Line {
        fn value(&mut self, t: f64) -> Result<f64, SolveError> {
            Ok((t - self.0) * (1.0 + 0.1 * t))
        }
        fn name(&self) -> &str {
            "line"
        }
    }

    #[test]
    fn finds_the_root_of_a_smooth_probe() {
        for rules in [StepRules::default(), StepRules::creeping()] {
            let mut p = Line(2.269);
            let Bracket::Found { lo, hi, values } = step_down(&mut p, 4.0, 0.1, rules).unwrap()
            else {
                panic!("no bracket");
            };
            let tc = refine_known(&mut p, lo, hi, values, 1e-12).unwrap();
            assert!((tc - 2.269).abs() < 1e-10);
            assert!(matches!(
                step_down(&mut Line(0.01), 4.0, 0.1, rules).unwrap(),
                Bracket::Stable { .. }
            ));
            // Started below the root, the search first climbs above it.
            let mut p = Line(2.269);
            let Bracket::Found { lo, hi, .. } = step_down(&mut p, 2.0, 0.1, rules).unwrap() else {
                panic!("no bracket from below");
            };
            assert!(lo <= 2.269 && 2.269 < hi, "{lo} {hi}");
        }
    }
}

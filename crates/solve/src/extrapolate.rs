//! Extrapolation of Tc across the rungs of the ladder.
//!
//! * Coherent-anomaly method (Suzuki 1986, J. Phys. Soc. Jpn. 55, 4205): the critical
//!   amplitudes of successive approximations diverge as the approximate Tc_n approach the
//!   true Tc*, `χ̄_n = A (Tc_n − Tc*)^{−ψ}`, and the true exponent is `γ = 1 + ψ`. Fitted
//!   by least squares in `ln χ̄` with Tc* profiled (for each Tc* the best `ln A`, ψ are a
//!   linear regression; Tc* minimises the residual).
//! * Inverse size (Kikuchi & Brush 1967, J. Chem. Phys. 47, 195 observed near-linear
//!   behaviour): `Tc_n = Tc* + b / N_n`, N_n the sites of the largest cluster, by linear
//!   least squares.
//!
//! Uncertainties are honest about how little data a ladder has: the statistical error of
//! the fit where it has degrees of freedom, combined in quadrature with the shift of the
//! estimate when the smallest rung is left out (the series' own systematic drift).

use argmin::core::{CostFunction, Executor};
use argmin::solver::brent::BrentOpt;
use thiserror::Error;

/// One rung's data.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Rung {
    /// Sites of the largest cluster.
    pub sites: usize,
    /// The rung's critical temperature.
    pub tc: f64,
    /// Its critical amplitude χ̄.
    pub amplitude: f64,
}

/// An extrapolated critical point.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Extrapolation {
    /// Extrapolated Tc*.
    pub tc: f64,
    /// Its uncertainty.
    pub tc_error: f64,
    /// Susceptibility exponent γ = 1 + ψ (coherent-anomaly only).
    pub gamma: Option<f64>,
    /// Uncertainty of γ.
    pub gamma_error: Option<f64>,
}

/// Why an extrapolation could not be made.
#[derive(Debug, Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum ExtrapolationError {
    /// Fewer rungs than the method needs.
    #[error("{method} extrapolation needs at least {needed} cluster levels with a finite Tc (pair and larger, distinct sizes), got {got}; add larger clusters to the lattice file")]
    TooFewLevels {
        /// Method name.
        method: &'static str,
        /// Rungs needed.
        needed: usize,
        /// Rungs available.
        got: usize,
    },
    /// The data do not follow the model (e.g. Tc not decreasing with cluster size).
    #[error("{method} extrapolation: {detail}")]
    BadData {
        /// Method name.
        method: &'static str,
        /// What is wrong.
        detail: String,
    },
}

/// Linear least squares `y = a + b x`: (a, b, σ_a, σ_b, residual sum of squares).
fn linear_fit(x: &[f64], y: &[f64]) -> (f64, f64, f64, f64, f64) {
    let n = x.len() as f64;
    let mx = x.iter().sum::<f64>() / n;
    let my = y.iter().sum::<f64>() / n;
    let sxx: f64 = x.iter().map(|v| (v - mx).powi(2)).sum();
    let sxy: f64 = x.iter().zip(y).map(|(a, b)| (a - mx) * (b - my)).sum();
    let b = sxy / sxx;
    let a = my - b * mx;
    let rss: f64 = x
        .iter()
        .zip(y)
        .map(|(xi, yi)| (yi - a - b * xi).powi(2))
        .sum();
    let dof = x.len().saturating_sub(2);
    let (sa, sb) = if dof > 0 {
        let s2 = rss / dof as f64;
        ((s2 * (1.0 / n + mx * mx / sxx)).sqrt(), (s2 / sxx).sqrt())
    } else {
        (0.0, 0.0)
    };
    (a, b, sa, sb, rss)
}

/// Cluster rungs sorted by size, one per size (the smallest Tc kept).
fn prepare(rungs: &[Rung]) -> Vec<Rung> {
    let mut v: Vec<Rung> = rungs
        .iter()
        .copied()
        .filter(|r| r.sites >= 2 && r.tc.is_finite() && r.tc > 0.0)
        .collect();
    v.sort_by(|a, b| a.sites.cmp(&b.sites).then(a.tc.total_cmp(&b.tc)));
    v.dedup_by(|b, a| a.sites == b.sites);
    v
}

/// `Tc_n = Tc* + b/N_n` over the cluster rungs (needs 2; an uncertainty needs 3).
pub fn inverse_size(rungs: &[Rung]) -> Result<Extrapolation, ExtrapolationError> {
    let v = prepare(rungs);
    const METHOD: &str = "inverse-size";
    if v.len() < 3 {
        return Err(ExtrapolationError::TooFewLevels {
            method: METHOD,
            needed: 3,
            got: v.len(),
        });
    }
    let fit = |r: &[Rung]| {
        let x: Vec<f64> = r.iter().map(|r| 1.0 / r.sites as f64).collect();
        let y: Vec<f64> = r.iter().map(|r| r.tc).collect();
        linear_fit(&x, &y)
    };
    let (a, _, sa, _, _) = fit(&v);
    let (a_drop, ..) = fit(&v[1..]);
    Ok(Extrapolation {
        tc: a,
        tc_error: (sa * sa + (a - a_drop).powi(2)).sqrt(),
        gamma: None,
        gamma_error: None,
    })
}

/// Profiled residual of the coherent-anomaly model at a trial Tc*.
struct CamResidual<'a>(&'a [Rung]);

impl CamResidual<'_> {
    fn fit(&self, tc_star: f64) -> (f64, f64, f64, f64, f64) {
        let x: Vec<f64> = self.0.iter().map(|r| (r.tc - tc_star).ln()).collect();
        let y: Vec<f64> = self.0.iter().map(|r| r.amplitude.ln()).collect();
        linear_fit(&x, &y)
    }
}

impl CostFunction for CamResidual<'_> {
    type Param = f64;
    type Output = f64;
    fn cost(&self, tc_star: &f64) -> Result<f64, argmin::core::Error> {
        Ok(self.fit(*tc_star).4)
    }
}

/// Fit `χ̄_n = A (Tc_n − Tc*)^{−ψ}`: (Tc*, ψ, σ_ψ, residual).
fn cam_fit(v: &[Rung]) -> Result<(f64, f64, f64), ExtrapolationError> {
    const METHOD: &str = "coherent-anomaly";
    let lowest = v.iter().map(|r| r.tc).fold(f64::INFINITY, f64::min);
    let highest = v.iter().map(|r| r.tc).fold(0.0, f64::max);
    let span = (highest - lowest).max(1e-12);
    // Tc* below every rung's Tc; search a generous window under the lowest one.
    let lo = (lowest - 20.0 * span).max(1e-9 * lowest);
    let hi = lowest - 1e-9 * span;
    let problem = CamResidual(v);
    // Scan first (the residual can have several local minima), then refine with Brent.
    let n = 400;
    let (mut best_t, mut best_r) = (hi, f64::INFINITY);
    for k in 0..=n {
        let t = lo + (hi - lo) * k as f64 / n as f64;
        let r = problem.fit(t).4;
        if r < best_r {
            best_r = r;
            best_t = t;
        }
    }
    let step = (hi - lo) / n as f64;
    let (a, b) = ((best_t - step).max(lo), (best_t + step).min(hi));
    let tc_star = match Executor::new(CamResidual(v), BrentOpt::new(a, b))
        .configure(|s| s.max_iters(200))
        .run()
    {
        Ok(r) => r.state.best_param.unwrap_or(best_t),
        Err(e) => {
            return Err(ExtrapolationError::BadData {
                method: METHOD,
                detail: e.to_string(),
            })
        }
    };
    let (_, slope, _, s_slope, _) = problem.fit(tc_star);
    let psi = -slope;
    if !(psi.is_finite() && psi > 0.0) {
        return Err(ExtrapolationError::BadData {
            method: METHOD,
            detail: "the amplitudes do not grow as Tc approaches the limit (ψ ≤ 0)".into(),
        });
    }
    Ok((tc_star, psi, s_slope))
}

/// Coherent-anomaly extrapolation over the cluster rungs (needs 3; an uncertainty
/// from dropping the smallest rung needs 4, otherwise the spread to the inverse-size fit
/// is used).
pub fn coherent_anomaly(rungs: &[Rung]) -> Result<Extrapolation, ExtrapolationError> {
    const METHOD: &str = "coherent-anomaly";
    let v: Vec<Rung> = prepare(rungs)
        .into_iter()
        .filter(|r| r.amplitude.is_finite() && r.amplitude > 0.0)
        .collect();
    if v.len() < 3 {
        return Err(ExtrapolationError::TooFewLevels {
            method: METHOD,
            needed: 3,
            got: v.len(),
        });
    }
    let (tc, psi, s_psi) = cam_fit(&v)?;
    let (tc_error, gamma_error) = if v.len() >= 4 {
        let (tc_d, psi_d, _) = cam_fit(&v[1..])?;
        (
            (tc - tc_d).abs(),
            (s_psi * s_psi + (psi - psi_d).powi(2)).sqrt(),
        )
    } else {
        // No degrees of freedom: the honest error is how far the two methods disagree.
        let lin = prepare(&v);
        let x: Vec<f64> = lin.iter().map(|r| 1.0 / r.sites as f64).collect();
        let y: Vec<f64> = lin.iter().map(|r| r.tc).collect();
        let a = linear_fit(&x, &y).0;
        let e = (tc - a).abs();
        (e, psi * e / (v[0].tc - tc).max(1e-12))
    };
    Ok(Extrapolation {
        tc,
        tc_error,
        gamma: Some(1.0 + psi),
        gamma_error: Some(gamma_error),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn recovers_a_synthetic_power_law() {
        // Synthetic data obeying the model exactly: Tc* = 2, ψ = 0.75, A = 1.3.
        let rungs: Vec<Rung> = [(2, 2.9), (4, 2.45), (9, 2.3), (16, 2.2)]
            .iter()
            .map(|&(sites, tc)| Rung {
                sites,
                tc,
                amplitude: 1.3 * (tc - 2.0f64).powf(-0.75),
            })
            .collect();
        let e = coherent_anomaly(&rungs).unwrap();
        // A residual minimum is flat to second order: Tc* to ~√ε-level accuracy.
        assert!((e.tc - 2.0).abs() < 1e-4, "{e:?}");
        assert!((e.gamma.unwrap() - 1.75).abs() < 1e-3);
        assert!(e.tc_error < 1e-4);
    }

    #[test]
    fn inverse_size_recovers_a_line() {
        let rungs: Vec<Rung> = [2usize, 4, 9, 16]
            .iter()
            .map(|&n| Rung {
                sites: n,
                tc: 2.0 + 1.5 / n as f64,
                amplitude: 1.0,
            })
            .collect();
        let e = inverse_size(&rungs).unwrap();
        assert!((e.tc - 2.0).abs() < 1e-12 && e.tc_error < 1e-10);
    }

    #[test]
    fn too_few_levels_is_a_clear_error() {
        let rungs = [
            Rung {
                sites: 2,
                tc: 2.9,
                amplitude: 1.4,
            },
            Rung {
                sites: 4,
                tc: 2.4,
                amplitude: 2.0,
            },
        ];
        assert!(matches!(
            coherent_anomaly(&rungs),
            Err(ExtrapolationError::TooFewLevels {
                needed: 3,
                got: 2,
                ..
            })
        ));
        assert!(matches!(
            inverse_size(&rungs),
            Err(ExtrapolationError::TooFewLevels { .. })
        ));
    }
}

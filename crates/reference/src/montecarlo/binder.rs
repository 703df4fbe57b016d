//! The critical temperature from crossings of Binder-cumulant curves U4(T) of
//! successive torus sizes (Binder 1981, Z. Phys. B 43, 119): U4 is scale invariant at
//! Tc, so curves of different sizes cross there, up to corrections that shrink with L.
//!
//! For each pair of successive sizes, the difference `d(T) = U4_large(T) - U4_small(T)`
//! is followed over the temperatures both sizes share; where it changes sign between
//! T_a and T_b the crossing is placed by linear interpolation,
//! `T* = T_a + (T_b - T_a) d_a / (d_a - d_b)`, with the U4 error bars propagated:
//! `σ_T*² = (T_b - T_a)² (d_b² σ_a² + d_a² σ_b²) / (d_a - d_b)⁴`, σ_a² the sum of both
//! sizes' squared U4 errors at T_a. Several sign changes in one pair (noise) are
//! averaged and half their range is added to the error.
//!
//! Only a crossing of an ordering transition counts: below Tc the larger torus is the
//! more ordered (d > 0), above it the less (d < 0). A sign change from d > 0 (colder) to
//! d ≤ 0 (warmer) is kept only when the curves really separate on both sides — some
//! temperature at or below it with d > [`SIGNIFICANCE`]·σ_d and some at or above it with
//! d < −[`SIGNIFICANCE`]·σ_d. Curves that merely touch within their noise (a
//! frustrated lattice whose curves meet at T → 0, or temperatures all on one side of
//! Tc) give no crossing rather than a false one.
//!
//! The estimate is the crossing of the largest pair of sizes, and there is none when that
//! pair brackets no crossing (a crossing of smaller tori that the largest do not
//! confirm is not taken for a transition); its error
//! adds in quadrature the statistical error and the finite-size drift still left, bounded
//! by the shift from the next smaller pair's crossing (crossings approach Tc with shifts
//! that shrink with L) — or by that shift's own noise when the noise is larger, since a
//! drift smaller than its noise cannot be told from zero.

use super::run::McPoint;

/// The crossing of the U4 curves of two sizes.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Crossing {
    /// The smaller linear size.
    pub size_small: usize,
    /// The larger linear size.
    pub size_large: usize,
    /// Crossing temperature.
    pub tc: f64,
    /// Its uncertainty.
    pub tc_error: f64,
}

/// The Binder-crossing estimate of Tc.
#[derive(Debug, Clone, PartialEq)]
pub struct TcEstimate {
    /// Estimated critical temperature.
    pub tc: f64,
    /// Its uncertainty: statistical and finite-size drift in quadrature (module docs).
    pub tc_error: f64,
    /// Always `"binder-crossing"`.
    pub method: &'static str,
    /// The crossing of every pair of successive sizes that brackets one.
    pub crossings: Vec<Crossing>,
}

/// How many standard errors the U4 curves of two sizes must differ by, on each side of
/// a crossing, for it to count (common practice: a 2σ separation).
pub const SIGNIFICANCE: f64 = 2.0;

/// Tc from the Binder crossings of `points` (any order); `None` when the largest pair of
/// successive sizes has no crossing inside the temperatures simulated.
pub fn binder_crossing(points: &[McPoint]) -> Option<TcEstimate> {
    let mut sizes: Vec<usize> = points.iter().map(|p| p.size).collect();
    sizes.sort_unstable();
    sizes.dedup();
    let crossings: Vec<Crossing> = sizes
        .windows(2)
        .filter_map(|w| {
            let curve = |size: usize| {
                let mut c: Vec<(f64, f64, f64)> = points
                    .iter()
                    .filter(|p| p.size == size)
                    .map(|p| (p.temperature, p.estimates.binder, p.estimates.binder_error))
                    .collect();
                c.sort_by(|a, b| a.0.total_cmp(&b.0));
                c
            };
            let (tc, tc_error) = pair_crossing(&curve(w[0]), &curve(w[1]))?;
            Some(Crossing {
                size_small: w[0],
                size_large: w[1],
                tc,
                tc_error,
            })
        })
        .collect();
    // The crossing must persist up to the largest sizes: a crossing of small tori only
    // (a finite-size artefact, or a frozen low-temperature run) is no estimate.
    let largest = sizes.len().checked_sub(1).map(|k| sizes[k])?;
    let (last, rest) = crossings.split_last()?;
    if last.size_large != largest {
        return None;
    }
    let drift = rest.last().map_or(0.0, |prev| {
        (last.tc - prev.tc)
            .abs()
            .max(last.tc_error.hypot(prev.tc_error))
    });
    Some(TcEstimate {
        tc: last.tc,
        tc_error: last.tc_error.hypot(drift),
        method: "binder-crossing",
        crossings,
    })
}

/// What a run says about Tc: the estimate, if one may be reported, and a note when
/// there is none or it is withheld.
#[derive(Debug, Clone, PartialEq)]
pub struct TcAssessment {
    /// The Binder-crossing estimate, `None` when there is no crossing or it is withheld.
    pub tc_estimate: Option<TcEstimate>,
    /// Why there is no estimate (no crossing, or a crossing withheld), if so.
    pub note: Option<String>,
}

/// Decide what to report as Tc from a run's crossing `estimate`. `caution` names a
/// reason the measured order parameter is not known to be the one that orders (e.g. the
/// coupling's Fourier transform is maximal along a line, so the measured wavevector is
/// one of a degenerate family): a crossing found is then withheld and named in the note
/// only. No crossing gives a note saying no ordering transition was found.
///
/// ```
/// use rungs_reference::montecarlo::assess_tc;
/// let none = assess_tc(None, None);
/// assert!(none.tc_estimate.is_none());
/// assert!(none.note.unwrap().contains("no ordering transition"));
/// ```
pub fn assess_tc(estimate: Option<&TcEstimate>, caution: Option<&str>) -> TcAssessment {
    match (estimate, caution) {
        (None, _) => TcAssessment {
            tc_estimate: None,
            note: Some(
                "no Binder-cumulant crossing of the order parameter between the temperatures given (the larger torus \
                 is not significantly more ordered below and less ordered above any temperature): no ordering \
                 transition found there; if one is expected, widen the temperatures around it or add sizes"
                    .into(),
            ),
        },
        (Some(e), Some(why)) => TcAssessment {
            tc_estimate: None,
            note: Some(format!(
                "{why}; the Binder cumulants of the measured order parameter cross at T = {:.4} ± {:.1e}, which is \
                 not reported as Tc",
                e.tc, e.tc_error
            )),
        },
        (Some(e), None) => TcAssessment {
            tc_estimate: Some(e.clone()),
            note: None,
        },
    }
}

/// Crossing of two curves given as (T, U4, σ) sorted by T; only temperatures present in
/// both count, and only an ordering crossing separated by [`SIGNIFICANCE`] σ on both
/// sides (module docs). Returns (T*, σ_T*).
pub fn pair_crossing(small: &[(f64, f64, f64)], large: &[(f64, f64, f64)]) -> Option<(f64, f64)> {
    let diff: Vec<(f64, f64, f64)> = large
        .iter()
        .filter_map(|&(t, u, s)| {
            let &(_, u0, s0) = small.iter().find(|p| p.0.to_bits() == t.to_bits())?;
            Some((t, u - u0, s.hypot(s0)))
        })
        .collect();
    let found: Vec<(f64, f64)> = diff
        .windows(2)
        .enumerate()
        .filter(|(k, w)| {
            let below = diff[..=*k].iter().any(|d| d.1 > SIGNIFICANCE * d.2);
            let above = diff[k + 1..].iter().any(|d| d.1 < -SIGNIFICANCE * d.2);
            w[0].1 > 0.0 && w[1].1 <= 0.0 && below && above
        })
        .map(|(_, w)| {
            let ((ta, da, sa), (tb, db, sb)) = (w[0], w[1]);
            let dt = tb - ta;
            let denom = da - db;
            let t = ta + dt * da / denom;
            let var = dt * dt * (db * db * sa * sa + da * da * sb * sb) / denom.powi(4);
            (t, var.sqrt())
        })
        .collect();
    if found.is_empty() {
        return None;
    }
    let n = found.len() as f64;
    let t = found.iter().map(|c| c.0).sum::<f64>() / n;
    let stat = (found.iter().map(|c| c.1 * c.1).sum::<f64>() / n).sqrt();
    let lo = found.iter().map(|c| c.0).fold(f64::INFINITY, f64::min);
    let hi = found.iter().map(|c| c.0).fold(f64::NEG_INFINITY, f64::max);
    Some((t, stat.hypot(0.5 * (hi - lo))))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn straight_lines_cross_where_algebra_says() {
        // U_small = 0.5 - (T - 2), U_large = 0.5 - 2 (T - 2): they cross at T = 2.
        let temps = [1.8, 1.9, 2.05, 2.2];
        let small: Vec<_> = temps.iter().map(|&t| (t, 0.5 - (t - 2.0), 0.01)).collect();
        let large: Vec<_> = temps
            .iter()
            .map(|&t| (t, 0.5 - 2.0 * (t - 2.0), 0.01))
            .collect();
        let (t, err) = pair_crossing(&small, &large).unwrap();
        assert!((t - 2.0).abs() < 1e-12, "{t}");
        // d = -(T - 2): d_a = 0.1, d_b = -0.05, σ = 0.01·√2 each; ΔT = 0.15.
        let s = 0.01 * 2f64.sqrt();
        let expected = 0.15 * ((0.05f64 * s).powi(2) + (0.1 * s).powi(2)).sqrt() / 0.15f64.powi(2);
        assert!((err - expected).abs() < 1e-12, "{err} vs {expected}");
        // No bracket: only temperatures below the crossing.
        assert!(pair_crossing(&small[..2], &large[..2]).is_none());
        // Curves the wrong way round (the larger torus less ordered when colder) are no
        // ordering transition; curves that only touch within their noise neither.
        assert!(pair_crossing(&large, &small).is_none());
        let noisy: Vec<_> = temps
            .iter()
            .zip([0.005, -0.005, 0.005, -0.005])
            .map(|(&t, d)| (t, 0.5 + d, 0.01))
            .collect();
        let flat: Vec<_> = temps.iter().map(|&t| (t, 0.5, 0.01)).collect();
        assert!(pair_crossing(&flat, &noisy).is_none());
    }

    #[test]
    fn tc_is_the_largest_pair_with_drift_in_the_error() {
        // Straight U4 lines: sizes 4 and 8 cross at T = 2.0, sizes 8 and 16 at T = 2.1.
        let u4 = |t: f64| 0.6 - 0.1 * (t - 2.0);
        let u8 = |t: f64| 0.6 - 0.2 * (t - 2.0);
        let u16 = |t: f64| u8(2.1) - 0.4 * (t - 2.1);
        let mut points = Vec::new();
        for t in [1.7, 1.9, 2.05, 2.15, 2.3] {
            for (size, u) in [(4, u4(t)), (8, u8(t)), (16, u16(t))] {
                let binder_error = 0.001;
                points.push(McPoint {
                    size,
                    temperature: t,
                    estimates: crate::montecarlo::Estimates {
                        binder: u,
                        binder_error,
                        ..Default::default()
                    },
                    ..McPoint::default()
                });
            }
        }
        let est = binder_crossing(&points).unwrap();
        assert_eq!(est.method, "binder-crossing");
        let found: Vec<_> = est
            .crossings
            .iter()
            .map(|c| (c.size_small, c.size_large))
            .collect();
        assert_eq!(found, vec![(4, 8), (8, 16)]);
        assert!((est.crossings[0].tc - 2.0).abs() < 1e-12);
        assert!((est.tc - 2.1).abs() < 1e-12, "{est:?}");
        // The error holds the 0.1 shift between the two crossings.
        assert!(est.tc_error >= 0.1 && est.tc_error < 0.11, "{est:?}");
        // No bracket at all: temperatures on one side only.
        let low: Vec<McPoint> = points
            .iter()
            .filter(|p| p.temperature < 2.0)
            .cloned()
            .collect();
        assert!(binder_crossing(&low).is_none());
    }
}

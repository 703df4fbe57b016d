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
//! The estimate is the crossing of the largest pair of sizes that brackets one; its error
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

/// Tc from the Binder crossings of `points` (any order); `None` when no pair of
/// successive sizes has a crossing inside the temperatures simulated.
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
                    .map(|p| (p.temperature, p.binder, p.binder_error))
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
    let (last, rest) = crossings.split_last()?;
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

/// Crossing of two curves given as (T, U4, σ) sorted by T; only temperatures present in
/// both count. Returns (T*, σ_T*).
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
        .filter(|w| (w[0].1 > 0.0) != (w[1].1 > 0.0) || w[0].1 == 0.0)
        .map(|w| {
            let ((ta, da, sa), (tb, db, sb)) = (w[0], w[1]);
            let dt = tb - ta;
            if da == db {
                // Both zero: the curves coincide over the interval.
                return (0.5 * (ta + tb), 0.5 * dt);
            }
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
                    binder: u,
                    binder_error,
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

//! Climbing the ladder: the critical point of every level, then the extrapolations and
//! the notes about single rungs.
//!
//! Each level's Tc is where the paramagnet's odd-sector Hessian loses positivity, and
//! its critical amplitude χ̄ (in χ ≈ χ̄/(T − Tc)) comes from the slope of that eigenvalue
//! (see `rungs_solve::tc`); the levels are searched by `rungs_solve::levels`. Over the
//! cluster rungs (pair and larger) two extrapolations are tried: the coherent-anomaly method, `χ̄_n = A (Tc_n − Tc*)^(−ψ)`, γ = 1 + ψ
//! (Suzuki 1986, J. Phys. Soc. Jpn. 55, 4205), and the inverse-size line
//! `Tc_n = Tc* + b/N_n` (Kikuchi & Brush 1967, J. Chem. Phys. 47, 195). An extrapolation
//! that cannot be made is explained in a note; it never fails the ladder.

use rungs_lattice::{Lattice, LatticeError, Level};
use rungs_solve::extrapolate::{coherent_anomaly, inverse_size, Extrapolation, Rung};
use rungs_solve::levels::{
    tc_levels, LevelEvent, LevelTc, LevelsError, Refusal, Schedule, TcOutcome,
};
use rungs_solve::ModeKind;

use super::LadderError;

/// The result of one level.
#[derive(Debug, Clone, PartialEq)]
pub struct RungResult {
    /// Level name.
    pub level: String,
    /// Sites of the largest maximal cluster.
    pub max_cluster_sites: usize,
    /// Correlation variables of the level (the size of the computation).
    pub variables: usize,
    /// Critical temperature; `None` when none was found or the level was skipped.
    pub tc: Option<f64>,
    /// Critical amplitude χ̄ in χ ≈ χ̄/(T − Tc) just above Tc, per site.
    pub amplitude: Option<f64>,
    /// Which order sets in at Tc.
    pub mode: Option<ModeKind>,
    /// Lowest temperature searched when no Tc was found.
    pub searched_down_to: Option<f64>,
    /// Wall-clock seconds for this level.
    pub seconds: f64,
    /// Why the level was not computed (too large, no convergence).
    pub skipped: Option<String>,
}

/// An extrapolated Tc*.
#[derive(Debug, Clone, PartialEq)]
pub struct Extrapolated {
    /// `coherent-anomaly` or `inverse-size`.
    pub method: &'static str,
    /// Extrapolated Tc*.
    pub tc: f64,
    /// Its uncertainty.
    pub tc_error: f64,
    /// γ = 1 + ψ (coherent-anomaly only).
    pub gamma: Option<f64>,
    /// Uncertainty of γ.
    pub gamma_error: Option<f64>,
    /// Slope b of `Tc_n = Tc* + b/N_n` (inverse-size only; for a figure).
    pub slope: Option<f64>,
    /// The levels the fit used (for a figure's coherent-anomaly view).
    pub fitted: Vec<String>,
}

/// The levels to climb, sorted by the size of their largest cluster (file order among
/// equal sizes); with `up_to`, only those with at most that many sites.
pub fn rung_names(
    lattice: &Lattice,
    up_to: Option<u32>,
    notes: &mut Vec<String>,
) -> Result<Vec<String>, LatticeError> {
    let mut sized = Vec::new();
    for name in Level::names(lattice) {
        let sites = Level::max_cluster_sites_of(lattice, &name)?;
        sized.push((sites, name));
    }
    sized.sort_by_key(|(sites, _)| *sites);
    if let Some(n) = up_to {
        let n = n as usize;
        let left_out: Vec<String> = sized
            .iter()
            .filter(|(s, _)| *s > n)
            .map(|(s, name)| format!("`{name}` ({s} sites)"))
            .collect();
        if !left_out.is_empty() {
            notes.push(format!("up to {n} sites: left out {}", left_out.join(", ")));
        }
        sized.retain(|(s, _)| *s <= n);
    }
    Ok(sized.into_iter().map(|(_, name)| name).collect())
}

/// A level's critical point as a rung.
fn rung(row: LevelTc) -> RungResult {
    let base = RungResult {
        level: row.level,
        max_cluster_sites: row.max_cluster_sites,
        variables: row.variables,
        tc: None,
        amplitude: None,
        mode: None,
        searched_down_to: None,
        seconds: row.seconds,
        skipped: None,
    };
    match row.outcome {
        TcOutcome::Searched(cp) => RungResult {
            tc: cp.tc.filter(|t| t.is_finite()),
            amplitude: cp.amplitude.filter(|a| a.is_finite()),
            mode: cp.tc.map(|_| cp.kind),
            searched_down_to: cp.tc.is_none().then_some(cp.searched_down_to),
            ..base
        },
        TcOutcome::Refused { kind, why } => RungResult {
            skipped: Some(match kind {
                Refusal::FieldUnsupported => format!("not searched in a field: {why}"),
                Refusal::TooLarge => format!("too large for the engine: {why}"),
            }),
            ..base
        },
        TcOutcome::Failed(why) => RungResult {
            skipped: Some(format!("not computed: {why}")),
            ..base
        },
    }
}

/// Build and solve every level in `names`, one at a time in order
/// ([`Schedule::Chained`]: each search starts just above the lowest Tc of the smaller
/// cluster rungs). A level the engine cannot do is kept as skipped; if no level gives a
/// result at all, that is an error.
pub fn climb(
    lattice: &Lattice,
    names: &[String],
    field: f64,
    observe: &(dyn Fn(LevelEvent<'_>) + Sync),
) -> Result<Vec<RungResult>, LadderError> {
    match tc_levels(lattice, names, field, Schedule::Chained, observe) {
        Ok(rows) => Ok(rows.into_iter().map(rung).collect()),
        Err(LevelsError::Lattice(e)) => Err(LadderError::Lattice(e)),
        Err(LevelsError::NothingComputed { reasons }) => {
            let reasons: Vec<String> = reasons
                .iter()
                .map(|(level, why)| format!("{level}: {why}"))
                .collect();
            Err(LadderError::NothingComputed(format!(
                "no level of the ladder could be computed ({})",
                reasons.join("; ")
            )))
        }
        Err(e) => Err(LadderError::NothingComputed(e.to_string())),
    }
}

/// The cluster rungs an extrapolation may use: a finite Tc, two sites or more, one per
/// size (the lowest Tc), sorted by size — the same selection as `rungs_solve::extrapolate`
/// — and none that repeats the Tc of a smaller rung (e.g. a tree-like block, which is
/// no better than the pair level): such a rung adds no information and would make the
/// fits look more certain than they are. Each one left out is named in `notes`.
fn cluster_rungs<'r>(rungs: &'r [RungResult], notes: &mut Vec<String>) -> Vec<(&'r str, Rung)> {
    let mut named: Vec<(&str, Rung)> = rungs
        .iter()
        .filter(|r| r.max_cluster_sites >= 2)
        .filter_map(|r| {
            let tc = r.tc.filter(|t| t.is_finite() && *t > 0.0)?;
            let amplitude = r.amplitude.unwrap_or(f64::NAN);
            Some((
                r.level.as_str(),
                Rung {
                    sites: r.max_cluster_sites,
                    tc,
                    amplitude,
                },
            ))
        })
        .collect();
    named.sort_by(|a, b| a.1.sites.cmp(&b.1.sites).then(a.1.tc.total_cmp(&b.1.tc)));
    named.dedup_by(|b, a| a.1.sites == b.1.sites);
    let mut kept: Vec<(&str, Rung)> = Vec::new();
    for (name, rung) in named {
        match kept.iter().find(|(_, k)| (rung.tc / k.tc - 1.0).abs() < 1e-8) {
            Some((same, _)) => notes.push(format!(
                "level `{name}` repeats the Tc of the smaller level `{same}` (its cluster adds no new loop): \
                 left out of the extrapolations"
            )),
            None => kept.push((name, rung)),
        }
    }
    kept
}

/// Slope of the least-squares line `Tc = a + b/N` through the cluster rungs.
fn inverse_size_slope(v: &[Rung]) -> Option<f64> {
    let n = v.len() as f64;
    let x: Vec<f64> = v.iter().map(|r| 1.0 / r.sites as f64).collect();
    let mx = x.iter().sum::<f64>() / n;
    let my = v.iter().map(|r| r.tc).sum::<f64>() / n;
    let sxx: f64 = x.iter().map(|xi| (xi - mx).powi(2)).sum();
    let sxy: f64 = x.iter().zip(v).map(|(xi, r)| (xi - mx) * (r.tc - my)).sum();
    let b = sxy / sxx;
    b.is_finite().then_some(b)
}

/// Both extrapolations over the cluster rungs; what cannot be made becomes a note.
pub fn extrapolate(rungs: &[RungResult], notes: &mut Vec<String>) -> Vec<Extrapolated> {
    let named = cluster_rungs(rungs, notes);
    let v: Vec<Rung> = named.iter().map(|(_, r)| *r).collect();
    let names = |with_amplitude: bool| -> Vec<String> {
        named
            .iter()
            .filter(|(_, r)| !with_amplitude || (r.amplitude.is_finite() && r.amplitude > 0.0))
            .map(|(n, _)| n.to_string())
            .collect()
    };
    let mut out = Vec::new();
    if v.is_empty() {
        notes.push(
            "no cluster rung (pair or larger) has a Tc: there is nothing to extrapolate".into(),
        );
        return out;
    }
    for (method, result, slope, fitted) in [
        ("coherent-anomaly", coherent_anomaly(&v), None, names(true)),
        (
            "inverse-size",
            inverse_size(&v),
            inverse_size_slope(&v),
            names(false),
        ),
    ] {
        match result {
            Ok(Extrapolation {
                tc,
                tc_error,
                gamma,
                gamma_error,
            }) if tc.is_finite() && tc_error.is_finite() => {
                out.push(Extrapolated {
                    method,
                    tc,
                    tc_error,
                    gamma: gamma.filter(|g| g.is_finite()),
                    gamma_error: gamma_error.filter(|g| g.is_finite()),
                    slope,
                    fitted,
                });
            }
            Ok(_) => notes.push(format!(
                "{method} extrapolation gave no finite Tc* with these rungs"
            )),
            Err(e) => notes.push(e.to_string()),
        }
    }
    reject_runaway(&v, &mut out, notes);
    let with_amplitude = v
        .iter()
        .filter(|r| r.amplitude.is_finite() && r.amplitude > 0.0)
        .count();
    let cam = out.iter().any(|e| e.method == "coherent-anomaly");
    if with_amplitude == 3 && cam {
        notes.push(
            "coherent-anomaly: three rungs leave the fit no degree of freedom, so its uncertainty is the \
             distance to the inverse-size extrapolation"
                .into(),
        );
    } else if with_amplitude > 3 && cam {
        notes.push(
            "coherent-anomaly: its uncertainty is twice the largest shift of Tc* among the fit's variants (each \
             rung left out, a correction-to-scaling term from five rungs on, the inverse-size line through \
             the three largest rungs): the ladder converges from one side and the variants share that bias"
                .into(),
        );
    }
    if cam {
        notes.push(
            "coherent-anomaly: γ = 1 + ψ is the effective exponent of these rungs, not the limit: it \
             moves steeply with Tc* (a shift of Tc* within its ± changes the slope of ln χ̄ between the \
             two largest rungs by tenths) and approaches the true γ slowly, so its ± (the fit's variants) \
             does not bound the distance to the true exponent (square lattice, pair to 4×4 block: 1.62 ± \
             0.03, where the exact γ is 7/4)"
                .into(),
        );
    }
    out
}

/// Drop a coherent-anomaly Tc* that ran off to the edge of the fit's search window.
///
/// When the amplitudes grow too slowly as Tc falls, no `(Tc_n − Tc*)^(−ψ)` fits and the
/// profiled residual keeps falling toward Tc* → 0; the fit then returns its window edge.
/// A Tc* more than ten times the rungs' own spread below the lowest rung, or one whose
/// uncertainty is as large as itself, says nothing and is replaced by a note.
fn reject_runaway(v: &[Rung], out: &mut Vec<Extrapolated>, notes: &mut Vec<String>) {
    let lowest = v.iter().map(|r| r.tc).fold(f64::INFINITY, f64::min);
    let highest = v.iter().map(|r| r.tc).fold(f64::NEG_INFINITY, f64::max);
    let span = highest - lowest;
    out.retain(|e| {
        let runaway = e.method == "coherent-anomaly" && (e.tc <= 0.0 || e.tc < lowest - 10.0 * span || e.tc_error >= e.tc);
        if runaway {
            notes.push(format!(
                "coherent-anomaly extrapolation rejected: the fit ran to the edge of its search window \
                 (Tc* = {:.3e}, far below every rung): the amplitudes χ̄ grow too slowly as Tc falls to follow \
                 χ̄ ∝ (Tc_n − Tc*)^(−ψ); larger clusters are needed",
                e.tc
            ));
        }
        !runaway
    });
}

/// Notes about individual rungs: skipped levels, levels without a transition, and
/// critical modes that are not uniform.
pub fn rung_notes(lattice: &Lattice, rungs: &[RungResult]) -> Vec<String> {
    let mut notes = Vec::new();
    for r in rungs {
        if let Some(why) = &r.skipped {
            notes.push(format!(
                "level `{}` ({} sites) skipped: {why}",
                r.level, r.max_cluster_sites
            ));
        } else if r.tc.is_none() {
            let searched = r.searched_down_to.filter(|t| t.is_finite());
            let below = searched.map_or(String::new(), |t| format!(" down to T = {}", round4(t)));
            notes.push(format!(
                "level `{}`: the paramagnet stays stable{below}: no transition found at this level",
                r.level
            ));
            // A smaller cluster ordering below where this search stopped means the search
            // gave up early, not that this level has no transition.
            let smaller = rungs
                .iter()
                .filter(|o| o.max_cluster_sites < r.max_cluster_sites && o.max_cluster_sites >= 2)
                .filter_map(|o| o.tc.map(|t| (o.level.as_str(), t)))
                .find(|(_, t)| searched.is_some_and(|s| s > *t));
            if let Some((other, t)) = smaller {
                notes.push(format!(
                    "level `{}`: caution: the search stopped above the Tc = {} of the smaller level `{other}`, \
                     so it most likely gave up early (an engine limitation), not found a stable paramagnet",
                    r.level,
                    round4(t)
                ));
            }
        }
        match r.mode {
            Some(ModeKind::Staggered) => notes.push(format!(
                "level `{}` orders in a staggered mode; χ̄ is the amplitude of the susceptibility of \
                 that mode (the staggered susceptibility for Néel order)",
                r.level
            )),
            Some(ModeKind::Hidden) => notes.push(format!(
                "level `{}`: the critical mode has no site component (order in multi-spin correlations)",
                r.level
            )),
            _ => {}
        }
    }
    notes.push(
        "for ferromagnets (all J ≥ 0) the `site` and `pair` Tc are rigorous upper bounds on the exact Tc \
         (Griffiths 1967, Commun. Math. Phys. 6, 121; Fisher 1967); larger clusters are approximations, not \
         bounds: their Tc may lie on either side of the exact one (for ferromagnets they usually lie above it \
         and fall toward it as the clusters grow)"
            .into(),
    );
    if lattice.dimension() == 1 {
        notes.push(
            "one-dimensional lattice: the exact model has no order at any T > 0 (Ising 1925, Z. Phys. 31, 253); \
             a finite Tc on a rung is an artefact of that approximation"
                .into(),
        );
    }
    notes
}

/// Round to four decimals for notes.
fn round4(x: f64) -> f64 {
    (x * 1e4).round() / 1e4
}

#[cfg(test)]
mod tests {
    use super::*;

    fn rung(level: &str, sites: usize, tc: Option<f64>, amplitude: Option<f64>) -> RungResult {
        RungResult {
            level: level.into(),
            max_cluster_sites: sites,
            variables: 1,
            tc,
            amplitude,
            mode: tc.map(|_| ModeKind::Uniform),
            searched_down_to: None,
            seconds: 0.0,
            skipped: None,
        }
    }

    #[test]
    fn too_few_rungs_give_notes_not_errors() {
        let rungs = [
            rung("site", 1, Some(4.0), Some(1.0)),
            rung("pair", 2, Some(2.9), Some(1.4)),
        ];
        let mut notes = Vec::new();
        assert!(extrapolate(&rungs, &mut notes).is_empty());
        assert_eq!(notes.len(), 2, "{notes:?}");
        assert!(
            notes.iter().all(|n| n.contains("needs at least 3")),
            "{notes:?}"
        );
    }

    #[test]
    fn inverse_size_line_is_recovered_with_its_slope() {
        // Tc_n = 2 + 1.5/N exactly.
        let rungs: Vec<RungResult> = [2usize, 4, 9]
            .iter()
            .map(|&n| rung("x", n, Some(2.0 + 1.5 / n as f64), None))
            .collect();
        let mut notes = Vec::new();
        let e = extrapolate(&rungs, &mut notes);
        let lin = e.iter().find(|e| e.method == "inverse-size").unwrap();
        assert!((lin.tc - 2.0).abs() < 1e-12 && (lin.slope.unwrap() - 1.5).abs() < 1e-12);
        // No amplitudes: the coherent-anomaly method explains why it is missing.
        assert!(
            notes.iter().any(|n| n.contains("coherent-anomaly")),
            "{notes:?}"
        );
    }

    #[test]
    fn repeated_and_runaway_rungs_are_left_out_with_notes() {
        // A tree-like block repeating the pair's Tc adds nothing: left out, named.
        let rungs = [
            rung("pair", 2, Some(2.9), Some(1.4)),
            rung("chain4", 3, Some(2.9), Some(1.4)),
            rung("plaquette", 4, Some(2.5), Some(3.0)),
        ];
        let mut notes = Vec::new();
        assert!(extrapolate(&rungs, &mut notes).is_empty());
        assert!(
            notes
                .iter()
                .any(|n| n.contains("`chain4` repeats the Tc of the smaller level `pair`")),
            "{notes:?}"
        );
        // Amplitudes that barely grow: the coherent-anomaly fit runs away and is rejected.
        let rungs = [
            rung("pair", 2, Some(4.93), Some(1.233)),
            rung("plaquettes", 4, Some(4.61), Some(1.844)),
            rung("cube", 8, Some(4.58), Some(1.892)),
        ];
        let mut notes = Vec::new();
        let e = extrapolate(&rungs, &mut notes);
        assert!(e.iter().all(|e| e.method != "coherent-anomaly"), "{e:?}");
        assert!(notes.iter().any(|n| n.contains("rejected")), "{notes:?}");
    }

    #[test]
    fn skipped_levels_and_early_stops_are_explained() {
        let lattice = rungs_lattice::Lattice::from_yaml_str(
            "name: sq\ndimension: 2\nvectors: [[1.0, 0.0], [0.0, 1.0]]\nbasis: [{name: a}]\n\
             couplings: {J: 1.0}\nbonds: [{from: a, to: a, cell: [1, 0], coupling: J}, \
             {from: a, to: a, cell: [0, 1], coupling: J}]\n",
            "sq.yaml",
        )
        .unwrap();
        let mut big = rung("big", 16, None, None);
        big.skipped = Some("too large for the dense engine".into());
        let mut early = rung("ring", 6, None, None);
        early.searched_down_to = Some(3.1);
        let notes = rung_notes(
            &lattice,
            &[rung("pair", 2, Some(2.9), Some(1.4)), early, big],
        );
        assert!(
            notes
                .iter()
                .any(|n| n.contains("`big` (16 sites) skipped: too large")),
            "{notes:?}"
        );
        assert!(
            notes.iter().any(|n| n.contains("`ring`: caution")),
            "{notes:?}"
        );
        assert!(!notes.iter().any(|n| n.contains("one-dimensional")));
    }
}

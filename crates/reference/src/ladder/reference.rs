//! What the rungs are judged against, in order of preference:
//!
//! 1. the exact Tc of a closed form recognised from the lattice's bonds (Onsager,
//!    Houtappel, Syozi, ...; `rungs_reference::closed`);
//! 2. the file's `reference: {tc, source}`;
//! 3. when asked for ([`LadderOptions::monte_carlo`], `rungs ladder --mc`), and only when
//!    neither exists, a Monte Carlo estimate made on the spot:
//!    Wolff (or Metropolis) runs on three torus sizes around the best rung's Tc and the
//!    crossing of their Binder cumulants (Binder 1981, Z. Phys. B 43, 119), with its error.
//!
//! A chain (or any lattice whose closed form has no transition at T > 0) has no
//! reference Tc, and no Monte Carlo run is made for it.

use rungs_lattice::Lattice;
use rungs_solve::order_parameter::{expected, OrderParameter};
use serde::{Serialize, Serializer};

use super::climb::{Extrapolated, RungResult};
use super::{LadderEvent, LadderOptions};
use crate::closed::ClosedForm;
use crate::montecarlo::report::fit_sizes;
use crate::montecarlo::{self, assess_tc, McConfig, Order, TcEstimate};

/// A number for notes: the shortest text that reads back to the same `f64`.
fn num(x: f64) -> String {
    format!("{x}")
}

/// Where a reference Tc comes from (JSON: `exact`, `file`, `monte-carlo`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ReferenceKind {
    /// An exact closed form.
    Exact,
    /// The lattice file's `reference:` (published, e.g. Monte Carlo or series).
    File,
    /// A Monte Carlo estimate made by this command (`--mc`).
    MonteCarlo,
}

impl ReferenceKind {
    /// A lower-case word for reports: `exact`, `file`, `monte-carlo`.
    pub fn as_str(self) -> &'static str {
        match self {
            ReferenceKind::Exact => "exact",
            ReferenceKind::File => "file",
            ReferenceKind::MonteCarlo => "monte-carlo",
        }
    }
}

impl Serialize for ReferenceKind {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(self.as_str())
    }
}

/// The reference critical temperature (JSON: `tc`, `source`, `kind`, and `tc_error` for a
/// Monte Carlo estimate).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ReferenceTc {
    /// Critical temperature (units of the file's couplings, k_B = 1).
    pub tc: f64,
    /// Uncertainty, for a Monte Carlo estimate.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub tc_error: Option<f64>,
    /// Published source or how it was computed.
    pub source: String,
    /// Where it comes from.
    pub kind: ReferenceKind,
}

/// Choose the reference (module docs); explain any choice or absence in `notes`.
/// `observe` hears the progress of a Monte Carlo run.
pub fn choose(
    lattice: &Lattice,
    rungs: &[RungResult],
    extrapolations: &[Extrapolated],
    options: LadderOptions,
    notes: &mut Vec<String>,
    observe: &(dyn Fn(LadderEvent<'_>) + Sync),
) -> Option<ReferenceTc> {
    if options.field != 0.0 {
        notes.push(format!(
            "h = {}: reference values are for h = 0, so none is used{}",
            num(options.field),
            if lattice.bonds().iter().all(|b| b.j >= 0.0) {
                "; a ferromagnet has no phase transition in a uniform field (common practice)"
            } else {
                ""
            }
        ));
        return None;
    }
    let closed = ClosedForm::recognise(lattice);
    let file = lattice.reference();
    if let Some(form) = closed {
        match form.tc() {
            Some(tc) => {
                // The file's source text is kept when it states the same number.
                let source = match file {
                    Some(r) if (r.tc / tc - 1.0).abs() < 1e-9 => r.source.clone(),
                    Some(r) => {
                        notes.push(format!(
                            "the file's reference Tc = {} ({}) differs from the exact {} lattice value {}; the exact value is used",
                            num(r.tc),
                            r.source,
                            form.name(),
                            num(tc)
                        ));
                        form.source().to_string()
                    }
                    None => form.source().to_string(),
                };
                if options.monte_carlo {
                    notes.push(
                        "Monte Carlo reference: no Monte Carlo run, the exact Tc is known".into(),
                    );
                }
                return Some(ReferenceTc {
                    tc,
                    tc_error: None,
                    source,
                    kind: ReferenceKind::Exact,
                });
            }
            None => {
                notes.push(format!(
                    "reference: the exact {} model has no transition at T > 0 ({}); no reference Tc",
                    form.name(),
                    form.source()
                ));
                if options.monte_carlo {
                    notes.push(
                        "Monte Carlo reference: no Monte Carlo run, there is no transition to locate"
                            .into(),
                    );
                }
                return None;
            }
        }
    }
    if let Some(r) = file {
        if options.monte_carlo {
            notes.push(
                "Monte Carlo reference: no Monte Carlo run, the file gives a reference Tc".into(),
            );
        }
        return Some(ReferenceTc {
            tc: r.tc,
            tc_error: None,
            source: r.source.clone(),
            kind: ReferenceKind::File,
        });
    }
    if !options.monte_carlo {
        notes.push(
            "no reference: no closed form applies and the file has no `reference:`; ask for a Monte \
             Carlo estimate (`rungs ladder --mc`)"
                .into(),
        );
        return None;
    }
    match monte_carlo(lattice, rungs, extrapolations, observe) {
        Ok(reference) => Some(reference),
        Err(why) => {
            notes.push(format!("no Monte Carlo reference: {why}"));
            None
        }
    }
}

/// Linear torus sizes for the Monte Carlo reference, by dimension (a few thousand sites
/// at most, so the run takes seconds).
fn sizes(dimension: usize) -> Option<[usize; 3]> {
    match dimension {
        2 => Some([8, 16, 32]),
        3 => Some([4, 8, 12]),
        _ => None,
    }
}

/// `n` evenly spaced temperatures from `lo` to `hi`.
fn grid(lo: f64, hi: f64, n: usize) -> Vec<f64> {
    (0..n)
        .map(|k| lo + (hi - lo) * k as f64 / (n - 1) as f64)
        .collect()
}

/// A Binder-crossing estimate around the best rung's Tc, in two passes: a coarse scan of
/// the two smaller sizes over [0.70, 1.02] × T_best, then all three sizes over ±4 % of
/// the coarse crossing.
fn monte_carlo(
    lattice: &Lattice,
    rungs: &[RungResult],
    extrapolations: &[Extrapolated],
    observe: &(dyn Fn(LadderEvent<'_>) + Sync),
) -> Result<ReferenceTc, String> {
    let sizes = sizes(lattice.dimension()).ok_or_else(|| {
        format!(
            "Monte Carlo references are made for 2D and 3D lattices, not {}D",
            lattice.dimension()
        )
    })?;
    let best = rungs
        .iter()
        .filter_map(|r| r.tc.map(|t| (r.max_cluster_sites, t)))
        .max_by_key(|(sites, _)| *sites)
        .map(|(_, t)| t)
        .ok_or("no rung has a Tc to centre the temperatures on")?;
    // A cluster rung usually lies above the exact Tc; an extrapolation may lie lower still.
    let low = extrapolations
        .iter()
        .map(|e| e.tc - 3.0 * e.tc_error)
        .fold(0.70 * best, f64::min)
        .max(0.3 * best);
    let lattice = lattice.with_field(0.0);
    // The lattice's own order parameter (staggered for Néel order), on sizes its
    // pattern tiles.
    let parameter = expected(&lattice);
    let order = Order::from_weights(&lattice, parameter.period, parameter.components.clone())
        .map_err(|e| e.to_string())?;
    let sizes = fit_sizes(&order, &sizes, &mut Vec::new());
    if sizes.len() < 3 {
        return Err(format!(
            "the ordering pattern repeats every {} cells, too many for the quick reference sizes",
            order.period()
        ));
    }
    let decide =
        |estimate: Option<&TcEstimate>| assess_tc(estimate, parameter.degenerate.as_deref());
    let coarse = McConfig {
        temperatures: grid(low, 1.02 * best, 15),
        sweeps: 1_000,
        warmup: 200,
        ..McConfig::default()
    };
    let scan = |done, total| {
        observe(LadderEvent::MonteCarlo {
            pass: "scan",
            done,
            total,
        })
    };
    let first = montecarlo::run(&lattice, &sizes[..2], &coarse, &order, Some(&scan))
        .map_err(|e| e.to_string())?;
    let first_tc = decide(first.tc_estimate.as_ref());
    let centre = match (&first_tc.tc_estimate, &first_tc.note) {
        (Some(e), _) => e.tc,
        (None, Some(why)) if first.tc_estimate.is_some() => return Err(why.clone()),
        _ => {
            return Err(format!(
                "the Binder cumulants of the {} order parameter of L = {} and {} do not cross between T = {} and {}: \
                 Monte Carlo found no ordering transition there, so no reference is drawn",
                parameter.pattern(),
                sizes[0],
                sizes[1],
                num(round4(low)),
                num(round4(1.02 * best))
            ))
        }
    };
    let fine = McConfig {
        temperatures: grid(0.96 * centre, 1.04 * centre, 9),
        sweeps: 4_000,
        warmup: 400,
        ..coarse
    };
    let refine = |done, total| {
        observe(LadderEvent::MonteCarlo {
            pass: "refine",
            done,
            total,
        })
    };
    let second = montecarlo::run(&lattice, &sizes, &fine, &order, Some(&refine))
        .map_err(|e| e.to_string())?;
    let (estimate, config, used) = match decide(second.tc_estimate.as_ref()).tc_estimate {
        Some(e) => (e, &fine, &sizes[..]),
        None => (
            first_tc.tc_estimate.ok_or("no Binder crossing")?,
            &coarse,
            &sizes[..2],
        ),
    };
    Ok(ReferenceTc {
        tc: estimate.tc,
        tc_error: Some(estimate.tc_error),
        source: describe(&estimate, config, used, &parameter),
        kind: ReferenceKind::MonteCarlo,
    })
}

/// How a Monte Carlo estimate was made, for the report.
fn describe(
    estimate: &TcEstimate,
    config: &McConfig,
    sizes: &[usize],
    parameter: &OrderParameter,
) -> String {
    let pair = estimate.crossings.last().map_or(String::new(), |c| {
        format!(" of L = {} and {} tori", c.size_small, c.size_large)
    });
    let all: Vec<String> = sizes.iter().map(|s| s.to_string()).collect();
    format!(
        "Monte Carlo, this run: Binder-cumulant crossing{pair} of the {} order parameter (sizes {}; {} sweeps per point after {} warm-up; seed {}; Binder 1981, Z. Phys. B 43, 119)",
        parameter.pattern(),
        all.join(", "),
        config.sweeps,
        config.warmup,
        config.seed
    )
}

/// Cautions that depend on the reference and the extrapolations: what γ to compare with.
pub fn cautions(
    lattice: &Lattice,
    extrapolations: &[Extrapolated],
    reference: Option<&ReferenceTc>,
) -> Vec<String> {
    let mut notes = Vec::new();
    let ferro = lattice.bonds().iter().all(|b| b.j >= 0.0);
    let has_gamma = extrapolations.iter().any(|e| e.gamma.is_some());
    if has_gamma && ferro {
        match lattice.dimension() {
            2 => notes.push(
                "γ of the 2D Ising class is exactly 7/4 (Barouch, McCoy & Wu 1973, Phys. Rev. Lett. 31, 1409; Wu, McCoy, Tracy & Barouch 1976, Phys. Rev. B 13, 316)".into(),
            ),
            3 => notes.push(
                "γ of the 3D Ising class is 1.2371(1) (Butera & Comi 2002, Phys. Rev. B 65, 144431, high-temperature series)"
                    .into(),
            ),
            _ => {}
        }
    }
    if let Some(r) = reference {
        if r.kind == ReferenceKind::MonteCarlo {
            notes.push(
                "the Monte Carlo reference is a quick finite-size estimate; its error bar includes the drift between \
                 successive size pairs"
                    .into(),
            );
        }
    }
    notes
}

/// Round to four decimals for notes.
fn round4(x: f64) -> f64 {
    (x * 1e4).round() / 1e4
}

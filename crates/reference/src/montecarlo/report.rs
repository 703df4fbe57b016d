//! A Monte Carlo run as a reportable result: what `rungs mc --format json` prints and the
//! Python package returns, in one place. [`McReport`] serializes ([`serde::Serialize`])
//! to the keys of the `mc` JSON contract: `lattice`, `seed`, `sizes`, `points` (one per
//! size and temperature: `size`, `sites`, `temperature`, `energy`, `abs_magnetization`,
//! `binder`, `specific_heat`, `susceptibility`, each with its `_error`, `algorithm`,
//! `errors_converged`, `spins_flipped`, `seconds`), `tc_estimate` (`tc`, `tc_error`,
//! `method`, `crossings`) and `definitions`. A number that is not finite is `null`.

use std::collections::BTreeMap;

use serde::{Serialize, Serializer};

use super::McResult;

/// What the specific heat and the susceptibility of a Monte Carlo run are (JSON
/// `definitions`): C from energy fluctuations, χ′ from fluctuations of |m|
/// (common practice in finite-size Monte Carlo).
pub const DEFINITIONS: [(&str, &str); 2] = [
    ("specific_heat", "N(<e^2> - <e>^2)/T^2, from energy fluctuations; the same quantity as sweep's C = dU/dT"),
    ("susceptibility", "N(<m^2> - <|m|>^2)/T, from fluctuations of |m| (chi prime); not sweep's dm/dh, which is larger above Tc"),
];

/// A Monte Carlo run of one lattice, ready to report.
#[derive(Debug, Clone, PartialEq)]
pub struct McReport {
    /// Lattice name.
    pub lattice: String,
    /// Spatial dimension.
    pub dimension: usize,
    /// The run.
    pub result: McResult,
}

/// A number, `None` (JSON `null`) when not finite.
fn finite(x: f64) -> Option<f64> {
    x.is_finite().then_some(x)
}

#[derive(Serialize)]
struct PointJson {
    size: usize,
    sites: usize,
    temperature: f64,
    energy: Option<f64>,
    energy_error: Option<f64>,
    abs_magnetization: Option<f64>,
    abs_magnetization_error: Option<f64>,
    binder: Option<f64>,
    binder_error: Option<f64>,
    specific_heat: Option<f64>,
    susceptibility: Option<f64>,
    specific_heat_error: Option<f64>,
    susceptibility_error: Option<f64>,
    algorithm: &'static str,
    errors_converged: bool,
    spins_flipped: u64,
    seconds: f64,
}

#[derive(Serialize)]
struct CrossingJson {
    size_small: usize,
    size_large: usize,
    tc: Option<f64>,
    tc_error: Option<f64>,
}

#[derive(Serialize)]
struct EstimateJson {
    tc: Option<f64>,
    tc_error: Option<f64>,
    method: &'static str,
    crossings: Vec<CrossingJson>,
}

#[derive(Serialize)]
struct McJson<'a> {
    lattice: &'a str,
    seed: u64,
    sizes: &'a [usize],
    points: Vec<PointJson>,
    tc_estimate: Option<EstimateJson>,
    definitions: BTreeMap<&'static str, &'static str>,
}

impl Serialize for McReport {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        let r = &self.result;
        McJson {
            lattice: &self.lattice,
            seed: r.seed,
            sizes: &r.sizes,
            points: r
                .points
                .iter()
                .map(|p| PointJson {
                    size: p.size,
                    sites: p.sites,
                    temperature: p.temperature,
                    energy: finite(p.energy),
                    energy_error: finite(p.energy_error),
                    abs_magnetization: finite(p.abs_magnetization),
                    abs_magnetization_error: finite(p.abs_magnetization_error),
                    binder: finite(p.binder),
                    binder_error: finite(p.binder_error),
                    specific_heat: finite(p.specific_heat),
                    susceptibility: finite(p.susceptibility),
                    specific_heat_error: finite(p.specific_heat_error),
                    susceptibility_error: finite(p.susceptibility_error),
                    algorithm: p.algorithm.name(),
                    errors_converged: p.errors_converged,
                    spins_flipped: p.spins_flipped,
                    seconds: p.seconds,
                })
                .collect(),
            tc_estimate: r.tc_estimate.as_ref().map(|t| EstimateJson {
                tc: finite(t.tc),
                tc_error: finite(t.tc_error),
                method: t.method,
                crossings: t
                    .crossings
                    .iter()
                    .map(|c| CrossingJson {
                        size_small: c.size_small,
                        size_large: c.size_large,
                        tc: finite(c.tc),
                        tc_error: finite(c.tc_error),
                    })
                    .collect(),
            }),
            definitions: DEFINITIONS.into_iter().collect(),
        }
        .serialize(s)
    }
}

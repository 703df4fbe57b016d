//! A Monte Carlo run as a reportable result: what `rungs mc --format json` prints and the
//! Python package returns, in one place, and the whole `mc` job ([`prepare`] then
//! [`Prepared::run`]): choose the order parameter, fit the sizes to its pattern, plan,
//! run, and decide whether a Tc may be reported.
//!
//! [`McReport`] serializes ([`serde::Serialize`]) to the keys of the `mc` JSON contract:
//! `lattice`, `seed`, `sizes`, `points` (one per size and temperature: `size`, `sites`,
//! `temperature`, `energy`, `abs_magnetization`, `binder`, `specific_heat`,
//! `susceptibility`, each with its `_error`, measured on the order parameter M, plus
//! `order_parameter`, `binder_order`, `susceptibility_order`, `uniform_magnetization`,
//! `algorithm`, `gauged`, `errors_converged`, `spins_flipped`, `seconds`), `tc_estimate`
//! (`tc`, `tc_error`, `method`, `crossings`; null when there is no crossing or it is
//! withheld, with `note` saying why), `order` (the measured pattern), `wavevector`,
//! `algorithm`, `notes` and `definitions`. A number that is not finite is `null`.

use rungs_lattice::Lattice;
use rungs_solve::order_parameter::{expected, OrderParameter};
use serde::{Serialize, Serializer};
use serde_json::{json, Value};

use super::{
    assess_tc, plan, run, Algorithm, McConfig, McError, McResult, Order, Progress, RunPlan,
    TcAssessment,
};

/// What the specific heat, the susceptibility and the order parameter of `mc` are (JSON
/// `definitions`): C from energy fluctuations, χ′ from fluctuations of |M| (common
/// practice in finite-size Monte Carlo).
pub const DEFINITIONS: [(&str, &str); 4] = [
    ("specific_heat", "N(<e^2> - <e>^2)/T^2, from energy fluctuations; the same quantity as sweep's C = dU/dT"),
    ("susceptibility", "N(<M^2> - <|M|>^2)/T, from fluctuations of the order parameter |M| (chi prime; for uniform order M = m, N(<m^2> - <|m|>^2)/T); not sweep's dm/dh, which is larger above Tc"),
    ("abs_magnetization", "<|M|>, the order parameter: M_c = (1/N) sum_i w_c,i s_i projected on the ordering pattern (`order`), |M| the length over its components; |m| for uniform order. Also given as order_parameter; uniform_magnetization is <|m|> of the plain magnetisation"),
    ("binder", "U4 = 1 - <M^4>/(3<M^2>^2) of the order parameter (Binder 1981); also given as binder_order"),
];

/// Which order parameter a run measures.
#[derive(Debug, Clone, PartialEq, Default)]
pub enum OrderChoice {
    /// The lattice's own ordering ([`expected`]).
    #[default]
    Auto,
    /// The uniform magnetisation.
    Uniform,
    /// The ordering at this wavevector, in units of the reciprocal primitive vectors
    /// (unused components 0).
    Wavevector([f64; 3]),
}

/// The order parameter `choice` asks for on `lattice`.
///
/// # Errors
/// [`McError::BadOrder`] when a wavevector has components beyond the lattice's dimension.
pub fn order_parameter(lattice: &Lattice, choice: &OrderChoice) -> Result<OrderParameter, McError> {
    Ok(match choice {
        OrderChoice::Auto => expected(lattice),
        OrderChoice::Uniform => OrderParameter::uniform(lattice),
        OrderChoice::Wavevector(q) => {
            let d = lattice.dimension();
            if q[d..].iter().any(|&c| c != 0.0) {
                return Err(McError::BadOrder {
                    detail: format!(
                        "the lattice is {d}-dimensional; give {d} wavevector components"
                    ),
                });
            }
            OrderParameter::at_wavevector(lattice, q)
        }
    })
}

/// Each size rounded up to a multiple of the order's period (sorted, duplicates
/// dropped), with a note when any changed.
pub fn fit_sizes(order: &Order, sizes: &[usize], notes: &mut Vec<String>) -> Vec<usize> {
    let mut fitted: Vec<usize> = sizes.iter().map(|&l| order.fit_size(l)).collect();
    fitted.sort_unstable();
    fitted.dedup();
    let changed: Vec<String> = sizes
        .iter()
        .filter(|&&l| order.fit_size(l) != l)
        .map(|&l| format!("{l} → {}", order.fit_size(l)))
        .collect();
    if !changed.is_empty() {
        notes.push(format!(
            "sizes rounded up to multiples of {} cells, the period of the ordering pattern measured: {}",
            order.period(),
            changed.join(", ")
        ));
    }
    fitted
}

/// The update of one point in words: `wolff`, `wolff (sublattice gauge)`, `metropolis`.
pub fn point_algorithm(algorithm: Algorithm, gauged: bool) -> String {
    if gauged {
        format!("{} (sublattice gauge)", algorithm.name())
    } else {
        algorithm.name().to_string()
    }
}

/// Which updates ran, in words, a comma list when sizes differ.
pub fn algorithm_summary(result: &McResult) -> String {
    let mut names: Vec<String> = Vec::new();
    for p in &result.points {
        let name = point_algorithm(p.algorithm, p.gauged);
        if !names.contains(&name) {
            names.push(name);
        }
    }
    names.join(", ")
}

/// A run checked and planned, not yet started: the order parameter, the fitted sizes
/// and the memory/time plan (for a progress label or a refusal).
#[derive(Debug, Clone)]
pub struct Prepared {
    /// The order parameter measured.
    pub parameter: OrderParameter,
    /// Its projection weights on the tori.
    pub order: Order,
    /// The sizes run (rounded up to the pattern's period).
    pub sizes: Vec<usize>,
    /// Notes so far (rounded sizes, the order parameter's own notes).
    pub notes: Vec<String>,
    /// Peak memory and work.
    pub plan: RunPlan,
}

/// Check a run of `lattice` at `sizes` with `config`, measuring `choice`, and plan it on
/// the current rayon pool's threads — without building any torus.
///
/// # Errors
/// Whatever [`plan`] refuses (bad sizes, temperatures, sweeps, too much memory) and a bad
/// wavevector.
pub fn prepare(
    lattice: &Lattice,
    sizes: &[usize],
    config: &McConfig,
    choice: &OrderChoice,
) -> Result<Prepared, McError> {
    let parameter = order_parameter(lattice, choice)?;
    let order = Order::from_weights(lattice, parameter.period, parameter.components.clone())?;
    let mut notes = parameter.notes.clone();
    let sizes = fit_sizes(&order, sizes, &mut notes);
    let plan = plan(
        lattice,
        &sizes,
        config,
        &order,
        rayon::current_num_threads(),
    )?;
    Ok(Prepared {
        parameter,
        order,
        sizes,
        notes,
        plan,
    })
}

impl Prepared {
    /// Run the prepared job and decide whether its Binder crossing may be reported as Tc
    /// ([`assess_tc`]: withheld when the ordering is degenerate, e.g. frustration).
    ///
    /// # Errors
    /// Whatever [`run()`] refuses.
    pub fn run(
        self,
        lattice: &Lattice,
        config: &McConfig,
        progress: Option<Progress>,
    ) -> Result<McReport, McError> {
        let result = run(lattice, &self.sizes, config, &self.order, progress)?;
        let assessment = assess_tc(
            result.tc_estimate.as_ref(),
            self.parameter.degenerate.as_deref(),
        );
        Ok(McReport {
            lattice: lattice.name().to_string(),
            dimension: lattice.dimension(),
            algorithm: algorithm_summary(&result),
            parameter: self.parameter,
            assessment,
            notes: self.notes,
            result,
        })
    }
}

/// A Monte Carlo run of one lattice, ready to report.
#[derive(Debug, Clone)]
pub struct McReport {
    /// Lattice name.
    pub lattice: String,
    /// Spatial dimension.
    pub dimension: usize,
    /// Which updates ran ([`algorithm_summary`]).
    pub algorithm: String,
    /// The order parameter measured.
    pub parameter: OrderParameter,
    /// The Tc that may be reported, or why none.
    pub assessment: TcAssessment,
    /// Notes (rounded sizes, the order parameter's notes).
    pub notes: Vec<String>,
    /// The run.
    pub result: McResult,
}

impl McReport {
    /// The measured wavevector, `dimension` components.
    pub fn wavevector(&self) -> Vec<f64> {
        self.parameter.wavevector[..self.dimension].to_vec()
    }

    /// The JSON document of the `mc` contract.
    ///
    /// # Errors
    /// A point that does not serialize (never expected).
    pub fn to_json(&self) -> Result<Value, serde_json::Error> {
        let points = self
            .result
            .points
            .iter()
            .map(|p| {
                let mut v = serde_json::to_value(p)?;
                if let Value::Object(map) = &mut v {
                    let e = &p.estimates;
                    for (key, value) in [
                        ("order_parameter", e.abs_magnetization),
                        ("order_parameter_error", e.abs_magnetization_error),
                        ("binder_order", e.binder),
                        ("binder_order_error", e.binder_error),
                        ("susceptibility_order", e.susceptibility),
                        ("susceptibility_order_error", e.susceptibility_error),
                    ] {
                        map.insert(key.into(), json!(value));
                    }
                }
                Ok(v)
            })
            .collect::<Result<Vec<Value>, serde_json::Error>>()?;
        let tc = self.assessment.tc_estimate.as_ref().map(|t| {
            json!({"tc": t.tc, "tc_error": t.tc_error, "method": t.method,
                   "crossings": t.crossings.iter().map(|c| json!({
                       "size_small": c.size_small, "size_large": c.size_large, "tc": c.tc, "tc_error": c.tc_error,
                   })).collect::<Vec<_>>()})
        });
        let d = self.dimension;
        let op = &self.parameter;
        let order = json!({
            "wavevector": self.wavevector(),
            "star": op.star.iter().map(|q| q[..d].to_vec()).collect::<Vec<_>>(),
            "pattern": op.pattern(),
            "components": op.components(),
            "period": op.period,
            "source": op.source.as_str(),
            "degenerate": op.degenerate,
            "description": op.describe(),
        });
        Ok(json!({
            "lattice": self.lattice, "seed": self.result.seed, "sizes": self.result.sizes,
            "points": points, "tc_estimate": tc, "note": self.assessment.note,
            "order": order, "wavevector": self.wavevector(), "algorithm": self.algorithm,
            "notes": self.notes,
            "definitions": DEFINITIONS.iter().map(|(k, v)| ((*k).to_string(), json!(v))).collect::<serde_json::Map<_, _>>(),
        }))
    }
}

impl Serialize for McReport {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        self.to_json()
            .map_err(serde::ser::Error::custom)?
            .serialize(s)
    }
}

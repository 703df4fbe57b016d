//! The critical temperature at each level beside the lattice's reference: what
//! `rungs tc` prints and the Python package returns, in one place. Its JSON
//! ([`serde::Serialize`]) has the keys of the `tc --format json` contract (`lattice`,
//! `reference`, `levels` with `level`, `max_cluster_sites`, `tc`, `seconds`,
//! `wavevector`, `supercell`, `note`; `field` at the top), plus `deviation`, `mode`,
//! `mode_kind`, `amplitude`, `searched_down_to`, `variables` and `notes`. A level with no
//! transition has `"tc": null` and a note, never NaN.
//!
//! The reference is the file's `reference:`, else the exact Tc of a closed form
//! recognised from the bonds ([`ClosedForm`]); it is taken from the lattice as written,
//! before any supercell, since enlarging the cell does not change the model, and only at
//! h = 0. `deviation = tc / reference − 1`.

use rungs_lattice::Lattice;
use rungs_solve::cautions::{field_note, order_note, NOT_BOUNDS_NOTE, ONE_D_NOTE, ONE_D_ROW};
use rungs_solve::levels::{tc_levels, LevelEvent, LevelTc, LevelsError, Schedule, TcOutcome};
use serde::Serialize;

use crate::closed::ClosedForm;

/// A reference critical temperature and where it comes from.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Reference {
    /// Critical temperature (units of the file's couplings, k_B = 1).
    pub tc: f64,
    /// Published source.
    pub source: String,
}

/// The reference Tc of a lattice as written in its file: its `reference:`, else the exact
/// Tc of the closed form recognised from its bonds.
///
/// ```
/// let square = rungs_lattice::Lattice::from_yaml_str(
///     "name: sq\ndimension: 2\nvectors: [[1, 0], [0, 1]]\nbasis: [{name: a}]\n\
///      couplings: {J: 1}\nbonds: [{from: a, to: a, cell: [1, 0], coupling: J},\n\
///      {from: a, to: a, cell: [0, 1], coupling: J}]\n",
///     "sq.yaml",
/// )?;
/// let r = rungs_reference::tc_report::reference_tc(&square).unwrap();
/// // Onsager (1944), Phys. Rev. 65, 117: Tc = 2 / ln(1 + √2).
/// assert!((r.tc - 2.0 / (1.0 + 2f64.sqrt()).ln()).abs() < 1e-12);
/// # Ok::<(), rungs_lattice::LatticeError>(())
/// ```
pub fn reference_tc(lattice: &Lattice) -> Option<Reference> {
    if let Some(r) = lattice.reference() {
        return Some(Reference {
            tc: r.tc,
            source: r.source.clone(),
        });
    }
    let form = ClosedForm::recognise(lattice)?;
    let tc = form.tc().filter(|t| t.is_finite())?;
    Some(Reference {
        tc,
        source: format!("exact Tc of the {} lattice: {}", form.name(), form.source()),
    })
}

/// One level's row.
#[derive(Debug, Clone, Serialize)]
pub struct TcRow {
    /// Level name.
    pub level: String,
    /// Sites of the largest maximal cluster.
    pub max_cluster_sites: usize,
    /// Correlation variables of the level (the size of the computation).
    pub variables: usize,
    /// Critical temperature; `None` when there is no transition or no result.
    pub tc: Option<f64>,
    /// `tc / reference − 1`.
    pub deviation: Option<f64>,
    /// Wall-clock seconds (building the level and searching).
    pub seconds: f64,
    /// Ordering wavevector in units of the reciprocal primitive vectors (one component
    /// per dimension, in [0, 1)).
    pub wavevector: Option<Vec<f64>>,
    /// The smallest diagonal supercell that holds the order.
    pub supercell: Option<Vec<usize>>,
    /// Whether the wavevector is an exact fraction (not an approximated incommensurate q).
    pub wavevector_exact: Option<bool>,
    /// Site components of the critical mode (largest |·| = 1).
    pub mode: Option<Vec<f64>>,
    /// `uniform`, `staggered` or `hidden`.
    pub mode_kind: Option<&'static str>,
    /// Critical amplitude χ̄ in χ ≈ χ̄/(T − Tc) just above Tc, per site.
    pub amplitude: Option<f64>,
    /// Lowest temperature searched.
    pub searched_down_to: Option<f64>,
    /// Why the level has no Tc or what to beware of; `None` when nothing.
    pub note: Option<String>,
    /// The search's own cautions.
    pub notes: Vec<String>,
    /// The engine's result, in full (ordering, mode, ...).
    #[serde(skip)]
    pub computed: LevelTc,
}

impl TcRow {
    /// A short note for a table, where long reasons go to the footer.
    pub fn brief_note(&self, dimension: usize) -> Option<String> {
        row_note(&self.computed, dimension, true)
    }
}

/// The critical temperature at each level of a lattice, beside its reference.
#[derive(Debug, Clone, Serialize)]
pub struct TcReport {
    /// Lattice name (as written in the file).
    pub lattice: String,
    /// Spatial dimension.
    #[serde(skip)]
    pub dimension: usize,
    /// The uniform field of the search.
    pub field: f64,
    /// The supercell the levels were built on (one factor per dimension), if any.
    pub supercell: Option<Vec<usize>>,
    /// Sites per cell of the lattice computed on.
    pub sites_per_cell: usize,
    /// The reference Tc (`None` in a field or when none is known).
    pub reference: Option<Reference>,
    /// One row per level, in the order computed.
    pub levels: Vec<TcRow>,
    /// Conventions and cautions.
    pub notes: Vec<String>,
}

/// The Tc of every level in `names` of `lattice`, beside the reference of `primitive`
/// (the lattice as written; `lattice` is it on `supercell`, or the same): the levels are
/// searched with [`tc_levels`] ([`Schedule::Parallel`]) and assembled by
/// [`TcReport::new`]. `observe` hears each level's stages.
///
/// # Errors
/// As [`tc_levels`]: a level that cannot be built, or no level with a result.
///
/// ```
/// use rungs_reference::tc_report::tc_report;
/// let square = rungs_lattice::Lattice::from_yaml_str(
///     "name: sq\ndimension: 2\nvectors: [[1, 0], [0, 1]]\nbasis: [{name: a}]\n\
///      couplings: {J: 1}\nbonds: [{from: a, to: a, cell: [1, 0], coupling: J},\n\
///      {from: a, to: a, cell: [0, 1], coupling: J}]\n",
///     "sq.yaml",
/// )?;
/// let report = tc_report(&square, &square, None, &["pair".into()], 0.0, &|_| {})?;
/// // Bethe: Tc = 2 / ln 2 for z = 4 (Bethe 1935, Proc. R. Soc. A 150, 552), 27 % above
/// // Onsager's 2.269 (Onsager 1944, Phys. Rev. 65, 117).
/// let pair = &report.levels[0];
/// assert!((pair.tc.unwrap() - 2.0 / 2f64.ln()).abs() < 1e-6);
/// assert!((pair.deviation.unwrap() - 0.2715).abs() < 1e-3);
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
pub fn tc_report(
    primitive: &Lattice,
    lattice: &Lattice,
    supercell: Option<Vec<usize>>,
    names: &[String],
    field: f64,
    observe: &(dyn Fn(LevelEvent<'_>) + Sync),
) -> Result<TcReport, LevelsError> {
    let levels = tc_levels(lattice, names, field, Schedule::Parallel, observe)?;
    Ok(TcReport::new(primitive, lattice, supercell, field, levels))
}

impl TcReport {
    /// Assemble the report: `primitive` is the lattice as written (for the reference),
    /// `lattice` the one computed on (after a supercell, given as `supercell`).
    pub fn new(
        primitive: &Lattice,
        lattice: &Lattice,
        supercell: Option<Vec<usize>>,
        field: f64,
        levels: Vec<LevelTc>,
    ) -> TcReport {
        // A reference Tc is a zero-field value.
        let reference = if field == 0.0 {
            reference_tc(primitive)
        } else {
            None
        };
        let mut notes = Vec::new();
        notes.push(match &reference {
            Some(r) => format!(
                "reference Tc = {} ({}); deviation = Tc / reference − 1.",
                r.tc, r.source
            ),
            None if field != 0.0 => "no reference: reference values are for h = 0.".into(),
            None => "no reference Tc is known for this lattice (add `reference:` to the file to compare).".into(),
        });
        notes.extend(field_note(primitive, field));
        notes.push(order_note(lattice));
        notes.push(NOT_BOUNDS_NOTE.into());
        if lattice.dimension() == 1 {
            notes.push(ONE_D_NOTE.into());
        }
        notes.push(
            "mode: site components of the critical eigenvector, one per basis site (largest |·| = 1); \
             uniform = every site orders alike, staggered = the pattern changes sign from site to site \
             or cell to cell, hidden = order in multi-spin correlations only."
                .into(),
        );
        let d = lattice.dimension();
        let rows = levels
            .into_iter()
            .map(|computed| row(computed, d, reference.as_ref()))
            .collect();
        TcReport {
            lattice: primitive.name().to_string(),
            dimension: d,
            field,
            supercell,
            sites_per_cell: lattice.sites_per_cell(),
            reference,
            levels: rows,
            notes,
        }
    }
}

/// A finite number, else `None`.
fn finite(x: Option<f64>) -> Option<f64> {
    x.filter(|v| v.is_finite())
}

/// The reportable row of one level.
fn row(computed: LevelTc, d: usize, reference: Option<&Reference>) -> TcRow {
    let cp = computed.critical();
    let found = cp.filter(|cp| cp.tc.is_some());
    let ordering = found.and_then(|cp| cp.ordering.as_ref());
    let tc = finite(computed.tc());
    TcRow {
        level: computed.level.clone(),
        max_cluster_sites: computed.max_cluster_sites,
        variables: computed.variables,
        tc,
        deviation: reference.and_then(|r| finite(tc.map(|t| t / r.tc - 1.0))),
        seconds: computed.seconds,
        wavevector: ordering.map(|o| o.wavevector[..d].to_vec()),
        supercell: ordering.map(|o| o.supercell()[..d].to_vec()),
        wavevector_exact: ordering.map(|o| o.exact),
        mode: found.map(|cp| cp.mode.clone()),
        mode_kind: found.map(|cp| cp.kind.as_str()),
        amplitude: finite(found.and_then(|cp| cp.amplitude)),
        searched_down_to: finite(cp.map(|cp| cp.searched_down_to)),
        note: row_note(&computed, d, false),
        notes: cp.map_or_else(Vec::new, |cp| cp.notes.clone()),
        computed,
    }
}

/// The note of one row, if any; `brief` for a table, where long reasons go to the
/// footer.
fn row_note(row: &LevelTc, dimension: usize, brief: bool) -> Option<String> {
    match &row.outcome {
        TcOutcome::Refused { .. } if brief => Some("not computed (see notes)".into()),
        TcOutcome::Refused { why: reason, .. } => Some(format!("not computed: {reason}")),
        TcOutcome::Failed(_) if brief => Some("search failed (see notes)".into()),
        TcOutcome::Failed(reason) => Some(format!("search failed: {reason}")),
        TcOutcome::Searched(cp) => {
            let mut parts: Vec<String> = Vec::new();
            if cp.tc.is_none() {
                parts.push(format!(
                    "no transition found down to T = {:.4} (disordered phase stable)",
                    cp.searched_down_to
                ));
            } else if dimension == 1 {
                parts.push(ONE_D_ROW.into());
            }
            if brief {
                if !cp.notes.is_empty() {
                    parts.push("see notes".into());
                }
            } else {
                parts.extend(cp.notes.iter().cloned());
            }
            (!parts.is_empty()).then(|| parts.join("; "))
        }
    }
}

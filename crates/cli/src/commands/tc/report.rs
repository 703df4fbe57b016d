//! The `rungs tc` report: one row per level with Tc, deviation from the reference, the
//! critical mode and time, as a table (with the caution notes), CSV and JSON (keys of
//! the command contract, plus `deviation`, `mode`, `mode_kind`, `amplitude`,
//! `searched_down_to` and `note`; `tc` is null, never NaN, when no transition was found).

use rungs_lattice::Lattice;
use rungs_solve::CriticalPoint;
use serde_json::{json, Value};

use super::{
    field_note, order_note, reference_tc, LevelTc, TcOutcome, NOT_BOUNDS_NOTE, ONE_D_NOTE,
    ONE_D_ROW,
};
use crate::args::Supercell;
use crate::output::{fixed, num, Block, Grid, Report, TextDoc};

/// The full `tc` result.
#[derive(Debug, Clone)]
pub struct TcReport {
    lattice: String,
    dimension: usize,
    sites_per_cell: usize,
    supercell: Option<Supercell>,
    field: f64,
    reference: Option<(f64, String)>,
    /// One row per level, in ladder order.
    pub levels: Vec<LevelTc>,
    notes: Vec<String>,
}

impl TcReport {
    /// Assemble the report: `primitive` is the lattice as written (for the reference),
    /// `lattice` the one computed on (after `--supercell`).
    pub fn new(
        primitive: &Lattice,
        lattice: &Lattice,
        supercell: Option<Supercell>,
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
            Some((tc, source)) => format!("reference Tc = {} ({source}); deviation = Tc / reference − 1.", num(*tc)),
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
        TcReport {
            lattice: primitive.name().to_string(),
            dimension: lattice.dimension(),
            sites_per_cell: lattice.sites_per_cell(),
            supercell,
            field,
            reference,
            levels,
            notes,
        }
    }

    fn deviation(&self, row: &LevelTc) -> Option<f64> {
        let (reference, _) = self.reference.as_ref()?;
        Some(row.tc()? / reference - 1.0).filter(|d| d.is_finite())
    }

    /// The note of one row, if any; `brief` for the table, where long reasons go to the
    /// footer.
    fn row_note(&self, row: &LevelTc, brief: bool) -> Option<String> {
        match &row.outcome {
            TcOutcome::Refused(_) if brief => {
                Some("not computed: too large for the engine (see notes)".into())
            }
            TcOutcome::Refused(reason) => Some(format!("not computed: {reason}")),
            TcOutcome::Failed(_) if brief => Some("search failed (see notes)".into()),
            TcOutcome::Failed(reason) => Some(format!("search failed: {reason}")),
            TcOutcome::Searched(cp) => {
                let mut parts: Vec<String> = Vec::new();
                if cp.tc.is_none() {
                    parts.push(format!(
                        "no transition found down to T = {} (disordered phase stable)",
                        fixed(cp.searched_down_to, 4)
                    ));
                } else if self.dimension == 1 {
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

    /// Wavevector as `(0.5, 0.5)` for the table.
    fn wavevector_cell(&self, cp: &CriticalPoint) -> String {
        match &cp.ordering {
            Some(o) if cp.tc.is_some() => format!(
                "({})",
                o.wavevector[..self.dimension]
                    .iter()
                    .map(|v| trim(*v))
                    .collect::<Vec<_>>()
                    .join(", ")
            ),
            _ => String::new(),
        }
    }
}

/// A wavevector component for the table: 4 decimals, trailing zeros dropped.
fn trim(v: f64) -> String {
    let s = format!("{v:.4}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    if s.is_empty() || s == "-" {
        "0".into()
    } else {
        s.to_string()
    }
}

/// The mode for a table cell: its kind, with the site components when the cell has
/// several sites.
fn mode_cell(cp: &CriticalPoint) -> String {
    if cp.tc.is_none() {
        return String::new();
    }
    if cp.mode.len() <= 1 {
        return cp.kind.as_str().to_string();
    }
    let shown: Vec<String> = cp.mode.iter().take(8).map(|c| format!("{c:+.2}")).collect();
    let more = if cp.mode.len() > 8 { " …" } else { "" };
    format!("{} [{}{more}]", cp.kind.as_str(), shown.join(" "))
}

/// A finite number as JSON, else null.
fn finite(x: Option<f64>) -> Value {
    x.filter(|v| v.is_finite())
        .map_or(Value::Null, |v| json!(v))
}

impl Report for TcReport {
    fn json(&self) -> Result<Value, serde_json::Error> {
        let d = self.dimension;
        let levels: Vec<Value> = self
            .levels
            .iter()
            .map(|row| {
                let cp = match &row.outcome {
                    TcOutcome::Searched(cp) => Some(cp),
                    TcOutcome::Refused(_) | TcOutcome::Failed(_) => None,
                };
                let found = cp.filter(|cp| cp.tc.is_some());
                let ordering = found.and_then(|cp| cp.ordering.as_ref());
                json!({
                    "level": row.level,
                    "max_cluster_sites": row.max_cluster_sites,
                    "tc": finite(row.tc()),
                    "seconds": row.seconds,
                    "wavevector": ordering.map(|o| json!(o.wavevector[..d])),
                    "supercell": ordering.map(|o| json!(o.supercell()[..d])),
                    "wavevector_exact": ordering.map(|o| o.exact),
                    "deviation": finite(self.deviation(row)),
                    "mode": found.map(|cp| json!(cp.mode)),
                    "mode_kind": found.map(|cp| cp.kind.as_str()),
                    "amplitude": finite(found.and_then(|cp| cp.amplitude)),
                    "searched_down_to": finite(cp.map(|cp| cp.searched_down_to)),
                    "note": self.row_note(row, false),
                    "notes": cp.map_or_else(Vec::new, |cp| cp.notes.clone()),
                })
            })
            .collect();
        Ok(json!({
            "lattice": self.lattice,
            "field": self.field,
            "supercell": self.supercell.map(|sc| sc.factors[..sc.given].to_vec()),
            "sites_per_cell": self.sites_per_cell,
            "reference": self.reference.as_ref().map(|(tc, source)| json!({"tc": tc, "source": source})),
            "levels": levels,
            "notes": self.notes,
        }))
    }

    fn csv(&self) -> Grid {
        let d = self.dimension;
        let mut grid = Grid::new([
            "level",
            "max_cluster_sites",
            "tc",
            "deviation",
            "seconds",
            "wavevector",
            "supercell",
        ]);
        for row in &self.levels {
            let ordering = match &row.outcome {
                TcOutcome::Searched(cp) if cp.tc.is_some() => cp.ordering.as_ref(),
                _ => None,
            };
            grid.push([
                row.level.clone(),
                row.max_cluster_sites.to_string(),
                row.tc().map(num).unwrap_or_default(),
                self.deviation(row).map(num).unwrap_or_default(),
                num(row.seconds),
                ordering
                    .map(|o| {
                        o.wavevector[..d]
                            .iter()
                            .map(|v| num(*v))
                            .collect::<Vec<_>>()
                            .join(" ")
                    })
                    .unwrap_or_default(),
                ordering
                    .map(|o| {
                        o.supercell()[..d]
                            .iter()
                            .map(usize::to_string)
                            .collect::<Vec<_>>()
                            .join("x")
                    })
                    .unwrap_or_default(),
            ]);
        }
        grid
    }

    fn table(&self) -> TextDoc {
        let mut grid = Grid::new([
            "level",
            "cluster sites",
            "Tc",
            "deviation (%)",
            "q",
            "mode",
            "time (s)",
            "note",
        ]);
        for row in &self.levels {
            let (q, mode) = match &row.outcome {
                TcOutcome::Searched(cp) => (self.wavevector_cell(cp), mode_cell(cp)),
                TcOutcome::Refused(_) | TcOutcome::Failed(_) => (String::new(), String::new()),
            };
            grid.push([
                row.level.clone(),
                row.max_cluster_sites.to_string(),
                row.tc().map(|t| fixed(t, 6)).unwrap_or_default(),
                self.deviation(row)
                    .map(|d| format!("{:+.3}", 100.0 * d))
                    .unwrap_or_default(),
                q,
                mode,
                format!("{:.3}", row.seconds),
                self.row_note(row, true).unwrap_or_default(),
            ]);
        }
        let mut fields = vec![("lattice".to_string(), self.lattice.clone())];
        if let Some(sc) = self.supercell {
            let text: Vec<String> = sc.factors[..sc.given]
                .iter()
                .map(usize::to_string)
                .collect();
            fields.push((
                "supercell".into(),
                format!(
                    "{} ({} sites per cell)",
                    text.join("x"),
                    self.sites_per_cell
                ),
            ));
        }
        fields.push(("field h".into(), num(self.field)));
        fields.push((
            "reference Tc".into(),
            self.reference
                .as_ref()
                .map_or_else(|| "none".into(), |(tc, _)| fixed(*tc, 6)),
        ));
        let mut notes = self.notes.clone();
        // Levels ordering at the same wavevector share one note.
        let mut orders: Vec<(String, Vec<&str>, String)> = Vec::new();
        for row in &self.levels {
            match &row.outcome {
                TcOutcome::Refused(reason) => {
                    notes.push(format!("`{}` not computed: {reason}", row.level))
                }
                TcOutcome::Failed(reason) => {
                    notes.push(format!("`{}` search failed: {reason}", row.level))
                }
                TcOutcome::Searched(cp) => {
                    for n in &cp.notes {
                        notes.push(format!("`{}`: {n}", row.level));
                    }
                    if let Some(o) = cp.ordering.as_ref().filter(|_| cp.tc.is_some()) {
                        if !o.is_uniform_q() {
                            let q = o.wavevector[..self.dimension]
                                .iter()
                                .map(|v| trim(*v))
                                .collect::<Vec<_>>()
                                .join(", ");
                            let n = o.supercell();
                            let cell = format!(
                                "{} ({} sites)",
                                n[..self.dimension]
                                    .iter()
                                    .map(usize::to_string)
                                    .collect::<Vec<_>>()
                                    .join("x"),
                                o.supercell_sites(self.sites_per_cell)
                            );
                            match orders.iter_mut().find(|(k, _, _)| *k == q) {
                                Some((_, names, _)) => names.push(&row.level),
                                None => orders.push((q, vec![&row.level], cell)),
                            }
                        }
                    }
                }
            }
        }
        for (q, names, cell) in orders {
            notes.push(format!(
                "`{}` order{} at q = ({q}): the smallest cell that holds it is {cell}; `rungs sweep` follows the ordered phase on it.",
                names.join("`, `"),
                if names.len() == 1 { "s" } else { "" }
            ));
        }
        TextDoc {
            title: format!(
                "rungs tc: critical temperature at each level, lattice `{}`",
                self.lattice
            ),
            blocks: vec![
                Block::Fields(fields),
                Block::Heading("Levels".into()),
                Block::Table(grid),
            ],
            notes,
        }
    }
}

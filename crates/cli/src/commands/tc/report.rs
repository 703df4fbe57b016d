//! The `rungs tc` report: one row per level with Tc, deviation from the reference, the
//! critical mode and time, as a table (with the caution notes), CSV and JSON (keys of
//! the command contract, plus `deviation`, `mode`, `mode_kind`, `amplitude`,
//! `searched_down_to` and `note`; `tc` is null, never NaN, when no transition was found).

use rungs_lattice::Lattice;
use rungs_solve::CriticalPoint;
use serde_json::{json, Value};

use super::{
    order_note, reference_tc, LevelTc, TcOutcome, NOT_BOUNDS_NOTE, ONE_D_NOTE, ONE_D_ROW, ORBIT_ROW,
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
        levels: Vec<LevelTc>,
    ) -> TcReport {
        let reference = reference_tc(primitive);
        let mut notes = Vec::new();
        notes.push(match &reference {
            Some((tc, source)) => format!("reference Tc = {} ({source}); deviation = Tc / reference − 1.", num(*tc)),
            None => "no reference Tc is known for this lattice (add `reference:` to the file to compare).".into(),
        });
        notes.push(order_note(lattice, supercell, true));
        notes.push(NOT_BOUNDS_NOTE.into());
        if lattice.dimension() == 1 {
            notes.push(ONE_D_NOTE.into());
        }
        notes.push(
            "mode: site components of the critical eigenvector, one per basis site (largest |·| = 1); \
             uniform = every site orders alike, staggered = signs alternate inside the cell, hidden = \
             order in multi-spin correlations only."
                .into(),
        );
        TcReport {
            lattice: primitive.name().to_string(),
            dimension: lattice.dimension(),
            sites_per_cell: lattice.sites_per_cell(),
            supercell,
            reference,
            levels,
            notes,
        }
    }

    fn deviation(&self, row: &LevelTc) -> Option<f64> {
        let (reference, _) = self.reference.as_ref()?;
        Some(row.tc()? / reference - 1.0).filter(|d| d.is_finite())
    }

    /// The note of one row, if any; `brief` for the table, where a refusal's reason
    /// goes to the footer.
    fn row_note(&self, row: &LevelTc, brief: bool) -> Option<String> {
        match &row.outcome {
            TcOutcome::Refused(_) if brief => {
                Some("not computed: too large for the engine (see notes)".into())
            }
            TcOutcome::Refused(reason) => Some(format!("not computed: {reason}")),
            TcOutcome::Searched(cp) if cp.tc.is_none() => Some(format!(
                "no transition found down to T = {} (paramagnet stable)",
                fixed(cp.searched_down_to, 4)
            )),
            TcOutcome::Searched(_) if self.dimension == 1 => Some(ONE_D_ROW.into()),
            TcOutcome::Searched(_) if row.orbit_reduced => Some(ORBIT_ROW.into()),
            TcOutcome::Searched(_) => None,
        }
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
        let levels: Vec<Value> = self
            .levels
            .iter()
            .map(|row| {
                let cp = match &row.outcome {
                    TcOutcome::Searched(cp) => Some(cp),
                    TcOutcome::Refused(_) => None,
                };
                let found = cp.filter(|cp| cp.tc.is_some());
                json!({
                    "level": row.level,
                    "max_cluster_sites": row.max_cluster_sites,
                    "tc": finite(row.tc()),
                    "seconds": row.seconds,
                    "deviation": finite(self.deviation(row)),
                    "mode": found.map(|cp| json!(cp.mode)),
                    "mode_kind": found.map(|cp| cp.kind.as_str()),
                    "amplitude": finite(found.and_then(|cp| cp.amplitude)),
                    "searched_down_to": finite(cp.map(|cp| cp.searched_down_to)),
                    "note": self.row_note(row, false),
                })
            })
            .collect();
        Ok(json!({
            "lattice": self.lattice,
            "supercell": self.supercell.map(|sc| sc.factors[..sc.given].to_vec()),
            "sites_per_cell": self.sites_per_cell,
            "reference": self.reference.as_ref().map(|(tc, source)| json!({"tc": tc, "source": source})),
            "levels": levels,
            "notes": self.notes,
        }))
    }

    fn csv(&self) -> Grid {
        let mut grid = Grid::new(["level", "max_cluster_sites", "tc", "deviation", "seconds"]);
        for row in &self.levels {
            grid.push([
                row.level.clone(),
                row.max_cluster_sites.to_string(),
                row.tc().map(num).unwrap_or_default(),
                self.deviation(row).map(num).unwrap_or_default(),
                num(row.seconds),
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
            "mode",
            "time (s)",
            "note",
        ]);
        for row in &self.levels {
            let mode = match &row.outcome {
                TcOutcome::Searched(cp) => mode_cell(cp),
                TcOutcome::Refused(_) => String::new(),
            };
            grid.push([
                row.level.clone(),
                row.max_cluster_sites.to_string(),
                row.tc().map(|t| fixed(t, 6)).unwrap_or_default(),
                self.deviation(row)
                    .map(|d| format!("{:+.3}", 100.0 * d))
                    .unwrap_or_default(),
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
        fields.push((
            "reference Tc".into(),
            self.reference
                .as_ref()
                .map_or_else(|| "none known".into(), |(tc, _)| fixed(*tc, 6)),
        ));
        let mut notes = self.notes.clone();
        for row in &self.levels {
            if let TcOutcome::Refused(reason) = &row.outcome {
                notes.push(format!("not computed: {reason}"));
            }
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

//! The `rungs tc` report views: one row per level with Tc, deviation from the reference,
//! the critical mode and time, as a table (with the caution notes) and CSV. The JSON is
//! the library result's own serialization (`rungs_reference::tc_report::TcReport`), the
//! same that the Python package returns.

use rungs_reference::tc_report::{TcReport, TcRow};
use rungs_solve::levels::TcOutcome;
use serde_json::Value;

use crate::output::{fixed, num, Block, Grid, Report, TextDoc};

/// Wavevector as `(0.5, 0.5)` for the table, when the level orders.
fn wavevector_cell(row: &TcRow) -> String {
    row.wavevector.as_ref().map_or_else(String::new, |q| {
        format!(
            "({})",
            q.iter().map(|v| trim(*v)).collect::<Vec<_>>().join(", ")
        )
    })
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
fn mode_cell(row: &TcRow) -> String {
    let (Some(kind), Some(mode)) = (row.mode_kind, &row.mode) else {
        return String::new();
    };
    if mode.len() <= 1 {
        return kind.to_string();
    }
    let shown: Vec<String> = mode.iter().take(8).map(|c| format!("{c:+.2}")).collect();
    let more = if mode.len() > 8 { " …" } else { "" };
    format!("{kind} [{}{more}]", shown.join(" "))
}

impl Report for TcReport {
    fn json(&self) -> Result<Value, serde_json::Error> {
        serde_json::to_value(self)
    }

    fn csv(&self) -> Grid {
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
            grid.push([
                row.level.clone(),
                row.max_cluster_sites.to_string(),
                row.tc.map(num).unwrap_or_default(),
                row.deviation.map(num).unwrap_or_default(),
                num(row.seconds),
                row.wavevector
                    .as_ref()
                    .map(|q| q.iter().map(|v| num(*v)).collect::<Vec<_>>().join(" "))
                    .unwrap_or_default(),
                row.supercell
                    .as_ref()
                    .map(|n| n.iter().map(usize::to_string).collect::<Vec<_>>().join("x"))
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
            grid.push([
                row.level.clone(),
                row.max_cluster_sites.to_string(),
                row.tc.map(|t| fixed(t, 6)).unwrap_or_default(),
                row.deviation
                    .map(|d| format!("{:+.3}", 100.0 * d))
                    .unwrap_or_default(),
                wavevector_cell(row),
                mode_cell(row),
                format!("{:.3}", row.seconds),
                row.brief_note(self.dimension).unwrap_or_default(),
            ]);
        }
        let mut fields = vec![("lattice".to_string(), self.lattice.clone())];
        if let Some(sc) = &self.supercell {
            let text: Vec<String> = sc.iter().map(usize::to_string).collect();
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
                .map_or_else(|| "none".into(), |r| fixed(r.tc, 6)),
        ));
        let mut notes = self.notes.clone();
        // Levels ordering at the same wavevector share one note.
        let mut orders: Vec<(String, Vec<&str>, String)> = Vec::new();
        for row in &self.levels {
            match &row.computed.outcome {
                TcOutcome::Refused { why: reason, .. } => {
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

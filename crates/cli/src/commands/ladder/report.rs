//! The ladder as a report: a table for people, CSV rows and the JSON of the command
//! contract (`lattice`, `reference`, `levels`, `extrapolations`, plus `notes`). Unknown
//! numbers are `null` in JSON and empty in CSV, never NaN.

use serde_json::{json, Value};

use super::{Extrapolated, Ladder, ReferenceKind, RungResult};
use crate::output::{fixed, num, Block, Grid, Report, TextDoc};

/// A JSON number, or `null` when unknown or not finite.
fn jnum(x: Option<f64>) -> Value {
    x.filter(|v| v.is_finite())
        .map_or(Value::Null, |v| json!(v))
}

/// A CSV cell: the number, or empty.
fn cnum(x: Option<f64>) -> String {
    x.filter(|v| v.is_finite()).map_or(String::new(), num)
}

/// A deviation in percent with its sign, e.g. `+27.16`.
fn percent(x: Option<f64>) -> String {
    x.map_or(String::new(), |d| format!("{:+.2}", 100.0 * d))
}

/// A table cell with `decimals` places, or empty.
fn cell(x: Option<f64>, decimals: usize) -> String {
    x.filter(|v| v.is_finite())
        .map_or(String::new(), |v| fixed(v, decimals))
}

/// Short status of a rung for the table.
fn status(r: &RungResult) -> String {
    match (&r.skipped, r.tc) {
        (Some(why), _) if why.starts_with("too large") => "skipped: too large".into(),
        (Some(_), _) => "skipped: not computed".into(),
        (None, None) => "no transition".into(),
        (None, Some(_)) => match r.mode {
            Some(m) if m != rungs_solve::ModeKind::Uniform => m.as_str().into(),
            _ => String::new(),
        },
    }
}

impl Ladder {
    fn level_json(&self, r: &RungResult) -> Value {
        json!({
            "level": r.level,
            "max_cluster_sites": r.max_cluster_sites,
            "variables": r.variables,
            "tc": jnum(r.tc),
            "deviation": jnum(self.deviation(r.tc)),
            "amplitude": jnum(r.amplitude),
            "mode": r.mode.map(|m| m.as_str()),
            "seconds": r.seconds,
            "skipped": r.skipped,
        })
    }

    fn extrapolation_json(&self, e: &Extrapolated) -> Value {
        let mut v = json!({
            "method": e.method,
            "tc": e.tc,
            "tc_error": e.tc_error,
            "deviation": jnum(self.deviation(Some(e.tc))),
        });
        if e.method == "coherent-anomaly" {
            v["gamma"] = jnum(e.gamma);
            v["gamma_error"] = jnum(e.gamma_error);
        }
        v
    }

    fn reference_fields(&self) -> Vec<(String, String)> {
        match &self.reference {
            Some(r) => {
                let error = r
                    .tc_error
                    .map_or(String::new(), |e| format!(" ± {}", fixed(e, 4)));
                let kind = match r.kind {
                    ReferenceKind::Exact => "exact closed form",
                    ReferenceKind::File => "from the lattice file",
                    ReferenceKind::MonteCarlo => "Monte Carlo estimate, this run",
                };
                vec![
                    (
                        "reference Tc".into(),
                        format!("{}{error} ({kind})", fixed(r.tc, 6)),
                    ),
                    ("source".into(), r.source.clone()),
                ]
            }
            None => vec![("reference Tc".into(), "none (see notes)".into())],
        }
    }
}

impl Report for Ladder {
    fn json(&self) -> Result<Value, serde_json::Error> {
        let reference = self.reference.as_ref().map(|r| {
            let mut v = json!({"tc": r.tc, "source": r.source, "kind": r.kind.as_str()});
            if let Some(e) = r.tc_error {
                v["tc_error"] = jnum(Some(e));
            }
            v
        });
        Ok(json!({
            "lattice": self.lattice,
            "dimension": self.dimension,
            "reference": reference,
            "levels": self.rungs.iter().map(|r| self.level_json(r)).collect::<Vec<_>>(),
            "extrapolations": self.extrapolations.iter().map(|e| self.extrapolation_json(e)).collect::<Vec<_>>(),
            "notes": self.notes,
        }))
    }

    fn csv(&self) -> Grid {
        let mut grid = Grid::new([
            "lattice",
            "kind",
            "name",
            "max_cluster_sites",
            "tc",
            "tc_error",
            "deviation",
            "amplitude",
            "gamma",
            "gamma_error",
            "seconds",
            "note",
        ]);
        for r in &self.rungs {
            grid.push([
                self.lattice.clone(),
                "level".into(),
                r.level.clone(),
                r.max_cluster_sites.to_string(),
                cnum(r.tc),
                String::new(),
                cnum(self.deviation(r.tc)),
                cnum(r.amplitude),
                String::new(),
                String::new(),
                num(r.seconds),
                r.skipped.clone().unwrap_or_default(),
            ]);
        }
        for e in &self.extrapolations {
            grid.push([
                self.lattice.clone(),
                "extrapolation".into(),
                e.method.into(),
                String::new(),
                num(e.tc),
                num(e.tc_error),
                cnum(self.deviation(Some(e.tc))),
                String::new(),
                cnum(e.gamma),
                cnum(e.gamma_error),
                String::new(),
                String::new(),
            ]);
        }
        if let Some(r) = &self.reference {
            grid.push([
                self.lattice.clone(),
                "reference".into(),
                r.kind.as_str().into(),
                String::new(),
                num(r.tc),
                cnum(r.tc_error),
                String::new(),
                String::new(),
                String::new(),
                String::new(),
                String::new(),
                r.source.clone(),
            ]);
        }
        grid
    }

    fn table(&self) -> TextDoc {
        let mut blocks = vec![Block::Fields(self.reference_fields())];
        let mut rungs = Grid::new([
            "level",
            "sites",
            "variables",
            "Tc",
            "vs reference (%)",
            "χ̄",
            "time (ms)",
            "status",
        ]);
        for r in &self.rungs {
            rungs.push([
                r.level.clone(),
                r.max_cluster_sites.to_string(),
                r.variables.to_string(),
                cell(r.tc, 6),
                percent(self.deviation(r.tc)),
                cell(r.amplitude, 4),
                if r.skipped.is_some() {
                    String::new()
                } else {
                    fixed(1e3 * r.seconds, 1)
                },
                status(r),
            ]);
        }
        blocks.push(Block::Heading(
            "Rungs (Tc in units of J/k_B; χ̄ in χ ≈ χ̄/(T − Tc) just above Tc)".into(),
        ));
        blocks.push(Block::Table(rungs));
        blocks.push(Block::Heading(
            "Extrapolations over the cluster rungs (pair and larger)".into(),
        ));
        if self.extrapolations.is_empty() {
            blocks.push(Block::Line("none could be made (see notes)".into()));
        } else {
            let cam = self.extrapolations.iter().any(|e| e.gamma.is_some());
            let mut header = vec!["method", "Tc*", "±", "vs reference (%)"];
            if cam {
                header.extend(["γ", "± γ"]);
            }
            let mut grid = Grid::new(header);
            for e in &self.extrapolations {
                let mut row = vec![
                    e.method.to_string(),
                    fixed(e.tc, 6),
                    fixed(e.tc_error, 6),
                    percent(self.deviation(Some(e.tc))),
                ];
                if cam {
                    row.extend([cell(e.gamma, 3), cell(e.gamma_error, 3)]);
                }
                grid.push(row);
            }
            blocks.push(Block::Table(grid));
        }
        if let Some(r) = &self.reference {
            if r.kind == ReferenceKind::MonteCarlo {
                blocks.push(Block::Line(
                    "deviations are against the Monte Carlo estimate above".into(),
                ));
            }
        }
        TextDoc {
            title: format!("rungs ladder: lattice `{}`", self.lattice),
            blocks,
            notes: self.notes.clone(),
        }
    }
}

//! The report of `rungs phases` (and `rungs merge`): the boundary table, the branch ends,
//! the phase at each grid point, in the three views; in the alloy language with
//! `--alloy` (x = (1 − m)/2, Δμ = 2h, see `rungs_solve::phases::alloy`).

use rungs_solve::phases::alloy::{chemical_potential, composition, CONVENTION};
use rungs_solve::phases::{Along, PhaseDiagram, Transition};
use serde_json::{json, Value};

use crate::output::{fixed, num, Block, Grid, Report, TextDoc};
use crate::plot::phases::PhaseFigure;

/// CSV columns (the command contract), before the alloy columns and the note.
pub const COLUMNS: [&str; 9] = [
    "level",
    "field",
    "temperature",
    "kind",
    "phase_below",
    "phase_above",
    "latent_heat",
    "magnetization_jump",
    "order_parameter_jump",
];

/// Every level's phase diagram.
#[derive(Debug, Clone)]
pub struct PhasesReport {
    /// The lattice's name.
    pub lattice: String,
    /// Whether to speak the alloy language.
    pub alloy: bool,
    /// One diagram per level, in the order asked for.
    pub diagrams: Vec<PhaseDiagram>,
}

impl PhasesReport {
    /// The report of `diagrams`.
    pub fn new(lattice: &str, alloy: bool, diagrams: Vec<PhaseDiagram>) -> PhasesReport {
        PhasesReport {
            lattice: lattice.to_string(),
            alloy,
            diagrams,
        }
    }

    /// The phase-diagram figure.
    pub fn figure(&self) -> PhaseFigure<'_> {
        PhaseFigure::new(self)
    }

    /// The field of a value, or Δμ in the alloy view.
    fn field_value(&self, h: f64) -> f64 {
        if self.alloy {
            chemical_potential(h)
        } else {
            h
        }
    }

    fn field_name(&self) -> &'static str {
        if self.alloy {
            "chemical_potential"
        } else {
            "field"
        }
    }

    /// One transition as JSON.
    fn transition_json(&self, level: &str, t: &Transition) -> Value {
        let mut v = json!({
            "level": level,
            "temperature": t.temperature,
            "kind": t.kind.as_str(),
            "phase_below": t.below,
            "phase_above": t.above,
            "latent_heat": t.latent_heat,
            "magnetization_jump": t.magnetization_jump(),
            "order_parameter_jump": t.order_parameter_jump(),
            "magnetization_below": t.magnetization_below,
            "magnetization_above": t.magnetization_above,
            "order_parameter_below": t.order_parameter_below,
            "order_parameter_above": t.order_parameter_above,
            "note": t.note,
        });
        v[self.field_name()] = json!(self.field_value(t.field));
        if self.alloy {
            v["field"] = json!(t.field);
            v["composition_below"] = json!(composition(t.magnetization_below));
            v["composition_above"] = json!(composition(t.magnetization_above));
        }
        v
    }

    fn diagram_json(&self, d: &PhaseDiagram) -> Value {
        let level = &d.header.level;
        let phases: Vec<Value> = d
            .header
            .phases
            .iter()
            .map(|p| {
                let dim = d.header.dimension.clamp(1, 3);
                json!({
                    "name": p.name,
                    "origin": p.origin.as_str(),
                    "wavevector": p.wavevectors.first().map(|q| q[..dim].to_vec()),
                    "supercell": p.supercell(),
                })
            })
            .collect();
        let transitions: Vec<Value> = d
            .transitions()
            .map(|t| self.transition_json(level, t))
            .collect();
        let spinodals: Vec<Value> = d
            .spinodals()
            .map(|s| {
                let mut v = json!({
                    "temperature": s.temperature,
                    "phase": s.phase,
                    "side": s.side.as_str(),
                });
                v[self.field_name()] = json!(self.field_value(s.field));
                v
            })
            .collect();
        let grid: Vec<Value> = d
            .paths
            .iter()
            .flat_map(|p| &p.grid)
            .map(|g| {
                let mut v = json!({
                    "temperature": g.temperature,
                    "field": g.field,
                    "phase": g.phase,
                    "free_energy": g.free_energy,
                    "magnetization": g.magnetization,
                });
                if self.alloy {
                    v["chemical_potential"] = json!(chemical_potential(g.field));
                    v["composition"] = json!(g.magnetization.map(composition));
                }
                v
            })
            .collect();
        json!({
            "lattice": self.lattice,
            "level": level,
            "along": d.header.spec.along.as_str(),
            "alloy": self.alloy,
            "tc": d.header.tc,
            "phases": phases,
            "transitions": transitions,
            "spinodals": spinodals,
            "grid": grid,
            "notes": self.notes(d),
        })
    }

    /// Every note of a diagram: how it was built, then per path.
    fn notes(&self, d: &PhaseDiagram) -> Vec<String> {
        let mut notes = d.header.notes.clone();
        notes.extend(d.path_notes());
        notes
    }
}

impl Report for PhasesReport {
    fn table(&self) -> TextDoc {
        let mut doc = TextDoc {
            title: format!("rungs phases — {}", self.lattice),
            ..TextDoc::default()
        };
        let fname = if self.alloy { "Δμ" } else { "h" };
        for d in &self.diagrams {
            let spec = &d.header.spec;
            doc.blocks.push(Block::Heading(format!(
                "level `{}` — paths in {} at each {}",
                d.header.level,
                match spec.along {
                    Along::Temperature => "T",
                    Along::Field => fname,
                },
                match spec.along {
                    Along::Temperature => fname,
                    Along::Field => "T",
                }
            )));
            let phases = d
                .header
                .phases
                .iter()
                .map(|p| {
                    let c = p.supercell();
                    format!(
                        "{} ({}, cell {}x{}x{})",
                        p.name,
                        p.origin.as_str(),
                        c[0],
                        c[1],
                        c[2]
                    )
                })
                .collect::<Vec<_>>()
                .join(", ");
            doc.blocks.push(Block::Fields(vec![
                (
                    "Tc at h = 0".into(),
                    d.header.tc.map_or("none found".into(), |t| fixed(t, 6)),
                ),
                ("phases compared".into(), phases),
            ]));
            let mut g = Grid::new([fname, "T", "kind", "below", "above", "T·ΔS", "Δm", "Δψ"]);
            if self.alloy {
                g.header.push("x below".into());
                g.header.push("x above".into());
            }
            for t in d.transitions() {
                let mut row = vec![
                    fixed(self.field_value(t.field), 6),
                    fixed(t.temperature, 8),
                    t.kind.as_str().to_string(),
                    t.below.clone(),
                    t.above.clone(),
                    fixed(t.latent_heat, 6),
                    fixed(t.magnetization_jump(), 6),
                    fixed(t.order_parameter_jump(), 6),
                ];
                if self.alloy {
                    row.push(fixed(composition(t.magnetization_below), 6));
                    row.push(fixed(composition(t.magnetization_above), 6));
                }
                g.push(row);
            }
            if g.rows.is_empty() {
                doc.blocks
                    .push(Block::Line("no transition met on the grid".into()));
            } else {
                doc.blocks.push(Block::Table(g));
            }
            let mut s = Grid::new([fname, "T", "branch of", "end"]);
            for sp in d.spinodals() {
                s.push([
                    fixed(self.field_value(sp.field), 6),
                    fixed(sp.temperature, 8),
                    sp.phase.clone(),
                    sp.side.as_str().to_string(),
                ]);
            }
            if !s.rows.is_empty() {
                doc.blocks.push(Block::Line(
                    "limits of metastability (spinodals): where a branch ends without a transition"
                        .into(),
                ));
                doc.blocks.push(Block::Table(s));
            }
            for t in d.transitions() {
                if let Some(n) = &t.note {
                    doc.notes.push(format!(
                        "level `{}`, {} at T = {}, {fname} = {}: {n}",
                        d.header.level,
                        t.kind.as_str(),
                        fixed(t.temperature, 6),
                        fixed(self.field_value(t.field), 6)
                    ));
                }
            }
            doc.notes.extend(
                self.notes(d)
                    .into_iter()
                    .map(|n| format!("level `{}`: {n}", d.header.level)),
            );
        }
        doc.notes.push(
            "first order: two branches' free energies cross (T·ΔS the latent heat per site, Δm and Δψ the jumps, above minus below); second order: the disordered state goes unstable where the ordered phase vanishes continuously; the phase at each grid point is in the JSON output"
                .into(),
        );
        if self.alloy {
            doc.notes.push(CONVENTION.into());
        }
        doc
    }

    fn csv(&self) -> Grid {
        let mut header: Vec<String> = COLUMNS.iter().map(|c| c.to_string()).collect();
        header[1] = self.field_name().into();
        if self.alloy {
            header.push("composition_below".into());
            header.push("composition_above".into());
        }
        header.push("note".into());
        let mut g = Grid {
            header,
            rows: Vec::new(),
        };
        for d in &self.diagrams {
            for t in d.transitions() {
                let mut row = vec![
                    d.header.level.clone(),
                    num(self.field_value(t.field)),
                    num(t.temperature),
                    t.kind.as_str().to_string(),
                    t.below.clone(),
                    t.above.clone(),
                    num(t.latent_heat),
                    num(t.magnetization_jump()),
                    num(t.order_parameter_jump()),
                ];
                if self.alloy {
                    row.push(num(composition(t.magnetization_below)));
                    row.push(num(composition(t.magnetization_above)));
                }
                row.push(t.note.clone().unwrap_or_default());
                g.rows.push(row);
            }
        }
        g
    }

    fn json(&self) -> Result<Value, serde_json::Error> {
        if let [d] = self.diagrams.as_slice() {
            return Ok(self.diagram_json(d));
        }
        Ok(json!({
            "lattice": self.lattice,
            "levels": self.diagrams.iter().map(|d| self.diagram_json(d)).collect::<Vec<_>>(),
        }))
    }
}

//! The `rungs sweep` report: a table per level (with the caution notes), CSV with the
//! columns of the command contract, and JSON points carrying also the sublattice
//! magnetisations of the cell followed, the ordering wavevector, the branch, every
//! bond's correlation and a note. Points left out are listed with why.

use rungs_lattice::Lattice;
use rungs_reference::closed::ClosedForm;
use rungs_solve::Observables;
use serde_json::{json, Map, Value};

use super::{LevelSweep, PointInfo, COLUMNS};
use crate::commands::tc::{order_note, NOT_BOUNDS_NOTE, ONE_D_NOTE};
use crate::output::{fixed, num, Block, Grid, Report, TextDoc};
use crate::plot::sweep::{LevelCurves, Quantity, SweepFigure};

/// Table header of the susceptibility: the response to the field, not `mc`'s χ′.
pub const CHI: &str = "χ = ∂m/∂h";

/// What the specific heat and the susceptibility of `sweep` are (JSON `definitions`).
pub const DEFINITIONS: [(&str, &str); 2] = [
    ("specific_heat", "dU/dT at fixed h, per site"),
    (
        "susceptibility",
        "dm/dh at fixed T, per site (the response to the field); not mc's N(<m^2> - <|m|>^2)/T",
    ),
];

/// The full `sweep` result.
#[derive(Debug, Clone)]
pub struct SweepReport {
    lattice: String,
    dimension: usize,
    fields: Vec<f64>,
    exact: Option<ClosedForm>,
    /// One entry per level, in the order asked for.
    pub levels: Vec<LevelSweep>,
    notes: Vec<String>,
}

impl SweepReport {
    /// Assemble the report of `levels` swept on `lattice` at `fields`.
    pub fn new(
        lattice: &Lattice,
        fields: Vec<f64>,
        levels: Vec<LevelSweep>,
        plotted: Option<&[Quantity]>,
    ) -> SweepReport {
        let exact = ClosedForm::recognise(lattice);
        let mut report = SweepReport {
            lattice: lattice.name().to_string(),
            dimension: lattice.dimension(),
            fields,
            exact,
            levels,
            notes: Vec::new(),
        };
        report.notes = report.make_notes(lattice, plotted);
        report
    }

    fn make_notes(&self, lattice: &Lattice, plotted: Option<&[Quantity]>) -> Vec<String> {
        let mut notes = vec![
            "per site, k_B = 1: T in units of J/k_B; m magnetisation, U energy, F free energy (J), \
             S entropy (k_B), C specific heat (k_B), χ = ∂m/∂h (the response to the field; not `mc`'s \
             χ′ = N(⟨m²⟩ − ⟨|m|⟩²)/T, which is about 0.36 χ above Tc), order parameter = amplitude \
             of the level's ordering pattern in the sublattice magnetisations (|m| for uniform order, \
             the staggered magnetisation for Néel order, 0 in the disordered phase)."
                .to_string(),
            "each point continues the branch of the point before it (warm start), in the order the \
             temperatures are given: a path that cools through a first-order transition stays in the \
             disordered phase until it becomes unstable, one that heats stays ordered until that \
             branch ends (hysteresis); the first point takes the lower free energy."
                .to_string(),
            order_note(lattice),
            NOT_BOUNDS_NOTE.to_string(),
        ];
        let d = self.dimension;
        for l in &self.levels {
            if l.cell != [1, 1, 1] {
                let cell: Vec<String> = l.cell[..d].iter().map(usize::to_string).collect();
                notes.push(format!(
                    "level `{}` is followed on the {} cell ({} sites){}.",
                    l.level,
                    cell.join("x"),
                    l.site_names.len(),
                    l.ordering.as_ref().map_or(String::new(), |o| format!(
                        ", which holds its ordering wavevector q = ({})",
                        o.wavevector[..d]
                            .iter()
                            .map(|v| num(*v))
                            .collect::<Vec<_>>()
                            .join(", ")
                    ))
                ));
            }
            for n in &l.notes {
                notes.push(format!("level `{}`: {n}", l.level));
            }
            // One note per kind of caution, with the points it concerns.
            let mut kinds: Vec<(String, Vec<String>, String)> = Vec::new();
            for (p, i) in l.points.iter().zip(&l.info) {
                for n in &i.notes {
                    let kind = n.split(['=', ':']).next().unwrap_or(n).trim().to_string();
                    let at = format!("T = {}, h = {}", num(p.temperature), num(p.field));
                    match kinds.iter_mut().find(|k| k.0 == kind) {
                        Some(k) => k.1.push(at),
                        None => kinds.push((kind, vec![at], n.clone())),
                    }
                }
            }
            for (_, at, first) in kinds {
                let shown = if at.len() > 6 {
                    format!("{} … {} ({} points)", at[0], at[at.len() - 1], at.len())
                } else {
                    at.join("; ")
                };
                notes.push(format!("level `{}` at {shown}: {first}", l.level));
            }
        }
        let ordering: Vec<&str> = self
            .levels
            .iter()
            .filter(|l| {
                l.points
                    .iter()
                    .any(|p| p.field == 0.0 && p.magnetization.abs() > 1e-6)
            })
            .map(|l| l.level.as_str())
            .collect();
        if self.dimension == 1 && !ordering.is_empty() {
            notes.push(format!(
                "level(s) `{}` order spontaneously (m ≠ 0 at h = 0) on this 1D lattice — {ONE_D_NOTE}",
                ordering.join("`, `")
            ));
        }
        for l in &self.levels {
            // One note per reason (the engine's message without its own T and h), with
            // the points it concerns.
            let mut reasons: Vec<(String, Vec<String>)> = Vec::new();
            for o in &l.omitted {
                let at = format!("T = {}, h = {}", num(o.temperature), num(o.field));
                let reason = o
                    .reason
                    .split_once(&format!("{at}: "))
                    .map_or(o.reason.clone(), |(_, r)| r.to_string());
                match reasons.iter_mut().find(|r| r.0 == reason) {
                    Some(r) => r.1.push(at),
                    None => reasons.push((reason, vec![at])),
                }
            }
            for (reason, at) in reasons {
                let shown = if at.len() > 4 {
                    format!("{} … {} ({} points)", at[0], at[at.len() - 1], at.len())
                } else {
                    at.join("; ")
                };
                notes.push(format!("omitted: level `{}` at {shown}: {reason}", l.level));
            }
        }
        if let (Some(panels), Some(form)) = (plotted, &self.exact) {
            notes.extend(self.exact_note(form, panels));
        }
        notes
    }

    /// The note citing the exact curves the figure draws, naming the fields where the
    /// closed form gives none; no note when it draws none.
    fn exact_note(&self, form: &ClosedForm, panels: &[Quantity]) -> Option<String> {
        let drawn = self.figure(panels).exact_fields();
        if drawn.is_empty() {
            return None;
        }
        let list = |hs: &[f64]| hs.iter().map(|h| num(*h)).collect::<Vec<_>>().join(", ");
        let missing: Vec<f64> = self
            .fields
            .iter()
            .copied()
            .filter(|h| !drawn.contains(h))
            .collect();
        let none = if missing.is_empty() {
            String::new()
        } else {
            format!("; none at h = {} (no closed form there)", list(&missing))
        };
        Some(format!(
            "plot: exact curves of the {} lattice at h = {} from {}{none}.",
            form.name(),
            list(&drawn),
            form.source()
        ))
    }

    /// What the plot draws, in `panels`.
    pub fn figure<'a>(&'a self, panels: &'a [Quantity]) -> SweepFigure<'a> {
        SweepFigure {
            lattice: &self.lattice,
            levels: self
                .levels
                .iter()
                .map(|l| LevelCurves {
                    level: &l.level,
                    points: &l.points,
                    tc: l.tc,
                    order: l.info.iter().map(|i| i.order_parameter).collect(),
                })
                .collect(),
            fields: &self.fields,
            exact: self.exact,
            panels,
        }
    }

    fn point_json(&self, l: &LevelSweep, p: &Observables, info: &PointInfo) -> Value {
        let sub: Map<String, Value> = l
            .site_names
            .iter()
            .cloned()
            .zip(p.sublattice_magnetization.iter().map(|m| json!(m)))
            .collect();
        let bonds: Vec<Value> = l
            .bonds
            .iter()
            .zip(&p.bond_correlations)
            .map(|(b, c)| json!({"from": b.from, "to": b.to, "cell": b.cell, "coupling": b.coupling, "correlation": c}))
            .collect();
        let d = self.dimension;
        let wavevector = l
            .ordering
            .as_ref()
            .map_or_else(|| vec![0.0; d], |o| o.wavevector[..d].to_vec());
        let note = (!info.notes.is_empty()).then(|| info.notes.join("; "));
        json!({
            "level": l.level,
            "temperature": p.temperature,
            "field": p.field,
            "magnetization": p.magnetization,
            "energy": p.energy,
            "free_energy": p.free_energy,
            "entropy": p.entropy,
            "specific_heat": p.specific_heat,
            "susceptibility": p.susceptibility,
            "order_parameter": info.order_parameter,
            "branch": info.branch.as_str(),
            "sublattice_magnetizations": p.sublattice_magnetization,
            "sublattice_magnetization": sub,
            "wavevector": wavevector,
            "cell": l.cell[..d],
            "bond_correlations": bonds,
            "note": note,
            "negative_entropy": p.entropy < -1e-10,
        })
    }
}

/// A number for a table: 6 decimals, or 6 significant digits in scientific notation
/// when that would hide it; `-0` printed as `0`.
fn cell(x: f64) -> String {
    let x = x + 0.0;
    let a = x.abs();
    if a != 0.0 && !(1e-4..1e6).contains(&a) {
        format!("{x:.5e}")
    } else {
        fixed(x, 6)
    }
}

/// A magnetisation-like number (|x| ≤ 1) for a table: values below the rounding floor of
/// an average of sublattice magnetisations (|x| < 1e-14, e.g. the cancelling sublattices
/// of an antiferromagnet) print as 0 instead of as noise like `1.38778e-17`.
fn cell_unit(x: f64) -> String {
    cell(if x.abs() < 1e-14 { 0.0 } else { x })
}

impl Report for SweepReport {
    fn json(&self) -> Result<Value, serde_json::Error> {
        let points: Vec<Value> = self
            .levels
            .iter()
            .flat_map(|l| {
                l.points
                    .iter()
                    .zip(&l.info)
                    .map(move |(p, i)| self.point_json(l, p, i))
            })
            .collect();
        let omitted: Vec<Value> = self
            .levels
            .iter()
            .flat_map(|l| {
                l.omitted.iter().map(|o| {
                    json!({"level": l.level, "temperature": o.temperature, "field": o.field, "reason": o.reason})
                })
            })
            .collect();
        Ok(json!({
            "lattice": self.lattice,
            "fields": self.fields,
            "points": points,
            "omitted": omitted,
            "notes": self.notes,
            "definitions": DEFINITIONS.iter().map(|(k, v)| ((*k).to_string(), json!(v))).collect::<Map<_, _>>(),
        }))
    }

    fn csv(&self) -> Grid {
        let mut grid = Grid::new(COLUMNS);
        for l in &self.levels {
            for (p, i) in l.points.iter().zip(&l.info) {
                grid.push([
                    l.level.clone(),
                    num(p.temperature),
                    num(p.field),
                    num(p.magnetization),
                    num(p.energy),
                    num(p.free_energy),
                    num(p.entropy),
                    num(p.specific_heat),
                    num(p.susceptibility),
                    num(i.order_parameter),
                ]);
            }
        }
        grid
    }

    fn table(&self) -> TextDoc {
        let fields: Vec<String> = self.fields.iter().map(|h| num(*h)).collect();
        let mut blocks = vec![Block::Fields(vec![
            ("lattice".into(), self.lattice.clone()),
            ("fields h".into(), fields.join(", ")),
        ])];
        for l in &self.levels {
            blocks.push(Block::Heading(format!(
                "Level `{}` (largest cluster {} site{}), per site",
                l.level,
                l.max_cluster_sites,
                if l.max_cluster_sites == 1 { "" } else { "s" }
            )));
            let mut grid = Grid::new(["T", "h", "m", "order", "U", "F", "S", "C", CHI, "note"]);
            for (p, i) in l.points.iter().zip(&l.info) {
                grid.push([
                    num(p.temperature),
                    num(p.field),
                    cell_unit(p.magnetization),
                    cell_unit(i.order_parameter),
                    cell(p.energy),
                    cell(p.free_energy),
                    cell(p.entropy),
                    cell(p.specific_heat),
                    cell(p.susceptibility),
                    if i.notes.is_empty() {
                        String::new()
                    } else {
                        "*".into()
                    },
                ]);
            }
            blocks.push(Block::Table(grid));
            if !l.omitted.is_empty() {
                blocks.push(Block::Line(format!(
                    "{} point(s) omitted, see the notes",
                    l.omitted.len()
                )));
            }
        }
        TextDoc {
            title: format!(
                "rungs sweep: thermodynamics per site, lattice `{}`",
                self.lattice
            ),
            blocks,
            notes: self.notes.clone(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn table_cells_never_show_minus_zero_and_switch_to_scientific() {
        assert_eq!(cell(-0.0), "0.000000");
        assert_eq!(cell_unit(1.38778e-17), "0.000000");
        assert_eq!(cell_unit(-3e-6), "-3.00000e-6");
        assert_eq!(cell(0.25), "0.250000");
        assert_eq!(cell(2.5e7), "2.50000e7");
        assert_eq!(cell(-3e-6), "-3.00000e-6");
    }
}

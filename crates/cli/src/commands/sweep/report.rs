//! The `rungs sweep` report views: a table per level (with the caution notes) and CSV
//! with the columns of the command contract. The JSON is the library result's own
//! serialization (`rungs_solve::sweep_report::SweepReport`: points with the sublattice
//! magnetisations of the cell followed, the ordering wavevector, the branch, every
//! bond's correlation and a note; points left out with why), the same that the Python
//! package reads its arrays from. With `--plot`, a note cites the exact curves drawn.

use rungs_lattice::Lattice;
use rungs_reference::closed::ClosedForm;
use rungs_solve::sweep_report::{self, COLUMNS};
use serde_json::Value;

use crate::output::{fixed, num, Block, Grid, Report, TextDoc};
use crate::plot::sweep::{LevelCurves, Quantity, SweepFigure};

/// Table header of the susceptibility: the response to the field, not `mc`'s χ′.
pub const CHI: &str = "χ = ∂m/∂h";

/// The `sweep` result as this command shows it: the library's report, and the closed
/// form whose exact curves a figure draws.
#[derive(Debug, Clone)]
pub struct SweepReport {
    /// The library's result (its notes include the figure's, when one is drawn).
    pub report: sweep_report::SweepReport,
    exact: Option<ClosedForm>,
}

impl SweepReport {
    /// Wrap the sweep `report` of `lattice`; when a figure of `plotted` panels is drawn,
    /// a note cites the exact curves it shows.
    pub fn new(
        lattice: &Lattice,
        report: sweep_report::SweepReport,
        plotted: Option<&[Quantity]>,
    ) -> SweepReport {
        let mut view = SweepReport {
            report,
            exact: ClosedForm::recognise(lattice),
        };
        if let (Some(panels), Some(form)) = (plotted, &view.exact) {
            if let Some(note) = view.exact_note(form, panels) {
                view.report.notes.push(note);
            }
        }
        view
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
            .report
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
            lattice: &self.report.lattice,
            levels: self
                .report
                .levels
                .iter()
                .map(|l| LevelCurves {
                    level: &l.level,
                    points: &l.points,
                    tc: l.tc,
                    order: l.info.iter().map(|i| i.order_parameter).collect(),
                })
                .collect(),
            fields: &self.report.fields,
            exact: self.exact,
            panels,
        }
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
        serde_json::to_value(&self.report)
    }

    fn csv(&self) -> Grid {
        let mut grid = Grid::new(COLUMNS);
        for r in self.report.rows() {
            grid.push([
                r.level.to_string(),
                num(r.temperature),
                num(r.field),
                num(r.magnetization),
                num(r.energy),
                num(r.free_energy),
                num(r.entropy),
                num(r.specific_heat),
                num(r.susceptibility),
                num(r.order_parameter),
            ]);
        }
        grid
    }

    fn table(&self) -> TextDoc {
        let fields: Vec<String> = self.report.fields.iter().map(|h| num(*h)).collect();
        let mut blocks = vec![Block::Fields(vec![
            ("lattice".into(), self.report.lattice.clone()),
            ("fields h".into(), fields.join(", ")),
        ])];
        for l in &self.report.levels {
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
                self.report.lattice
            ),
            blocks,
            notes: self.report.notes.clone(),
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

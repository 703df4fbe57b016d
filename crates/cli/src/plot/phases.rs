//! The phase-diagram figure of `rungs phases --plot` (and `rungs merge --plot`): one
//! panel per level, temperature up, field h across (or, with `--alloy`, the composition
//! x of B across).
//!
//! Every grid point is a small dot in its phase's colour, and each phase's name is
//! written at the centre of its points (the region it holds). Transition lines join the
//! transitions between the same two phases on neighbouring paths: solid for first
//! order, dashed for second order; tricritical points are large diamonds, spinodals
//! small grey crosses. In the alloy view a first-order transition is a two-phase
//! field: its two coexisting compositions are both drawn, one line each.

use plotters::coord::Shift;
use plotters::prelude::*;
use rungs_solve::phases::alloy::composition;
use rungs_solve::phases::{Kind, PhaseDiagram, Transition};

use super::file::Figure;
use super::style::{draw_line, marker, nice_range, Dash, Marker, PALETTE};
use crate::commands::phases::PhasesReport;

/// Width of one level's panel.
const PANEL_WIDTH: u32 = 720;
/// Height of the figure.
const HEIGHT: u32 = 560;

/// The figure of a report.
pub struct PhaseFigure<'r> {
    report: &'r PhasesReport,
}

impl<'r> PhaseFigure<'r> {
    /// The figure of `report`.
    pub fn new(report: &'r PhasesReport) -> PhaseFigure<'r> {
        PhaseFigure { report }
    }
}

impl Figure for PhaseFigure<'_> {
    fn size(&self) -> (u32, u32) {
        (
            PANEL_WIDTH * self.report.diagrams.len().max(1) as u32,
            HEIGHT,
        )
    }

    fn draw<DB: DrawingBackend>(
        &self,
        root: &DrawingArea<DB, Shift>,
    ) -> Result<(), DrawingAreaErrorKind<DB::ErrorType>> {
        root.fill(&WHITE)?;
        let n = self.report.diagrams.len().max(1);
        let panels = root.split_evenly((1, n));
        for (area, d) in panels.iter().zip(&self.report.diagrams) {
            draw_panel(area, &self.report.lattice, d, self.report.alloy)?;
        }
        Ok(())
    }
}

/// The horizontal coordinate of a state of field h and magnetisation m.
fn x_of(alloy: bool, h: f64, m: f64) -> f64 {
    if alloy {
        composition(m)
    } else {
        h
    }
}

/// What joins transitions into one line: kind, phase below, phase above, which of
/// the two coexisting compositions.
type LineKey = (Kind, String, String, usize);

/// A line's key and its points: (path index, x, T).
type Line = (LineKey, Vec<(usize, f64, f64)>);

/// The points a transition draws: (x, T) and the line key they join.
fn transition_points(alloy: bool, t: &Transition) -> Vec<(f64, f64, usize)> {
    if alloy && t.kind == Kind::First {
        vec![
            (composition(t.magnetization_below), t.temperature, 0),
            (composition(t.magnetization_above), t.temperature, 1),
        ]
    } else {
        vec![(
            x_of(alloy, t.field, t.magnetization_below),
            t.temperature,
            0,
        )]
    }
}

fn draw_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    lattice: &str,
    d: &PhaseDiagram,
    alloy: bool,
) -> Result<(), DrawingAreaErrorKind<DB::ErrorType>> {
    let grid: Vec<_> = d.paths.iter().flat_map(|p| &p.grid).collect();
    let xs: Vec<f64> = grid
        .iter()
        .filter_map(|g| {
            if alloy {
                g.magnetization.map(composition)
            } else {
                Some(g.field)
            }
        })
        .collect();
    let (x0, x1) = if alloy {
        (0.0, 1.0)
    } else {
        let lo = xs.iter().copied().fold(f64::INFINITY, f64::min);
        let hi = xs.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        if hi > lo {
            (lo, hi)
        } else {
            (lo - 1.0, lo + 1.0)
        }
    };
    let temps = &d.header.spec.temperatures;
    let t_lo = temps.first().copied().unwrap_or(0.0);
    let t_hi = temps.last().copied().unwrap_or(1.0);
    let (y0, y1, yt) = nice_range(t_lo.min(t_hi - 1e-9), t_hi, 6);
    let (x0, x1, xt) = nice_range(x0, x1, 6);
    let mut chart = ChartBuilder::on(area)
        .caption(
            format!("{lattice}, level {}", d.header.level),
            ("sans-serif", 20),
        )
        .margin(18)
        .x_label_area_size(55)
        .y_label_area_size(70)
        .build_cartesian_2d(x0..x1, y0..y1)?;
    chart
        .configure_mesh()
        .x_desc(if alloy {
            "x   (fraction of B, (1 − m)/2)"
        } else {
            "h   (units of J)"
        })
        .y_desc("T   (units of J / k_B)")
        .x_labels(xt)
        .y_labels(yt)
        .axis_desc_style(("sans-serif", 17))
        .label_style(("sans-serif", 14))
        .light_line_style(WHITE)
        .bold_line_style(RGBColor(230, 230, 230))
        .draw()?;
    // Grid points by phase, and each phase's name at the centre of its points.
    let mut names: Vec<String> = Vec::new();
    for g in &grid {
        if let Some(p) = &g.phase {
            if !names.contains(p) {
                names.push(p.clone());
            }
        }
    }
    let plot = chart.plotting_area();
    for (k, name) in names.iter().enumerate() {
        let colour = PALETTE[k % PALETTE.len()].mix(0.55);
        let pts: Vec<(f64, f64)> = grid
            .iter()
            .filter(|g| g.phase.as_ref() == Some(name))
            .filter_map(|g| Some((x_of(alloy, g.field, g.magnetization?), g.temperature)))
            .collect();
        for &(x, t) in &pts {
            plot.draw(&Circle::new((x, t), 2, colour.filled()))?;
        }
        if !pts.is_empty() {
            let cx = pts.iter().map(|p| p.0).sum::<f64>() / pts.len() as f64;
            let cy = pts.iter().map(|p| p.1).sum::<f64>() / pts.len() as f64;
            plot.draw(&Text::new(
                name.clone(),
                (cx, cy),
                ("sans-serif", 18)
                    .into_font()
                    .color(&PALETTE[k % PALETTE.len()]),
            ))?;
        }
    }
    // Transition lines: the same two phases and kind on neighbouring paths.
    let black = RGBColor(0, 0, 0);
    let mut lines: Vec<Line> = Vec::new();
    for (pi, p) in d.paths.iter().enumerate() {
        for t in &p.transitions {
            for (x, y, side) in transition_points(alloy, t) {
                let key = (t.kind, t.below.clone(), t.above.clone(), side);
                match lines.iter_mut().find(|(k, _)| *k == key) {
                    Some((_, v)) => v.push((pi, x, y)),
                    None => lines.push((key, vec![(pi, x, y)])),
                }
            }
        }
    }
    for ((kind, _, _, _), pts) in &lines {
        let dash = if *kind == Kind::First {
            Dash::Solid
        } else {
            Dash::Dashed
        };
        let style = ShapeStyle::from(&black).stroke_width(2);
        let mut piece: Vec<(f64, f64)> = Vec::new();
        let mut last: Option<usize> = None;
        for &(pi, x, y) in pts {
            if last.is_some_and(|l| pi > l + 1) {
                if piece.len() > 1 {
                    draw_line(plot, std::mem::take(&mut piece), dash, style)?;
                }
                piece.clear();
            }
            piece.push((x, y));
            last = Some(pi);
        }
        if piece.len() > 1 {
            draw_line(plot, piece, dash, style)?;
        }
        for &(_, x, y) in pts {
            let m = if *kind == Kind::First {
                Marker::Circle
            } else {
                Marker::Ring
            };
            plot.draw(&marker(m, (x, y), 3, black))?;
        }
    }
    for t in &d.tricritical {
        for (x, y, _) in transition_points(alloy, t) {
            plot.draw(&marker(Marker::Diamond, (x, y), 7, RGBColor(213, 94, 0)))?;
        }
    }
    let grey = RGBColor(140, 140, 140);
    for s in d.spinodals() {
        if alloy {
            continue;
        }
        plot.draw(&marker(Marker::Cross, (s.field, s.temperature), 4, grey))?;
    }
    Ok(())
}

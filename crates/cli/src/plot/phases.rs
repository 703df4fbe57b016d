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

/// Where a phase's name goes: at a grid point of the phase far (in plot fractions) from
/// every other phase's points and transition points, so that it sits inside its region
/// rather than on a line; points whose label would run off the plot's right or
/// bottom edge are used only if there are no others. The centre of the points when
/// nothing else is drawn.
fn label_spot(
    own: &[(f64, f64)],
    others: &[(f64, f64)],
    (x0, x1): (f64, f64),
    (y0, y1): (f64, f64),
) -> (f64, f64) {
    let n = own.len().max(1) as f64;
    let centre = (
        own.iter().map(|p| p.0).sum::<f64>() / n,
        own.iter().map(|p| p.1).sum::<f64>() / n,
    );
    if others.is_empty() {
        return centre;
    }
    let (sx, sy) = ((x1 - x0).max(1e-300), (y1 - y0).max(1e-300));
    let clearance = |p: &(f64, f64)| {
        others
            .iter()
            .map(|o| ((p.0 - o.0) / sx).powi(2) + ((p.1 - o.1) / sy).powi(2))
            .fold(f64::INFINITY, f64::min)
    };
    // The text runs right of and below its anchor.
    let fits = |p: &&(f64, f64)| (p.0 - x0) / sx < 0.85 && (p.1 - y0) / sy > 0.08;
    // Of the points at least half as far from everything else as the farthest one, the
    // one nearest the centre: inside the region, not pushed into a corner.
    let best = |cands: &mut dyn Iterator<Item = &(f64, f64)>| {
        let scored: Vec<(f64, (f64, f64))> = cands.map(|p| (clearance(p), *p)).collect();
        let top = scored.iter().map(|s| s.0).fold(0.0, f64::max);
        let to_centre =
            |p: &(f64, f64)| ((p.0 - centre.0) / sx).powi(2) + ((p.1 - centre.1) / sy).powi(2);
        scored
            .iter()
            .filter(|s| s.0 >= 0.25 * top)
            .min_by(|a, b| to_centre(&a.1).total_cmp(&to_centre(&b.1)))
            .map(|s| s.1)
    };
    best(&mut own.iter().filter(fits))
        .or_else(|| best(&mut own.iter()))
        .unwrap_or(centre)
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
            let others: Vec<(f64, f64)> = grid
                .iter()
                .filter(|g| g.phase.as_ref().is_some_and(|p| p != name))
                .filter_map(|g| Some((x_of(alloy, g.field, g.magnetization?), g.temperature)))
                .chain(d.paths.iter().flat_map(|p| {
                    p.transitions
                        .iter()
                        .flat_map(|t| transition_points(alloy, t))
                        .map(|(x, y, _)| (x, y))
                }))
                .collect();
            let (cx, cy) = label_spot(&pts, &others, (x0, x1), (y0, y1));
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

#[cfg(test)]
mod tests {
    use super::label_spot;

    #[test]
    fn a_phase_label_sits_inside_its_region_not_on_its_boundary() {
        // A phase on the 11 × 11 grid left of the line x = 0.6, the line's points and the
        // other phase's points to the right: the label's anchor is well inside the left
        // region (the centre of its points lies 0.3 from the line, and no point of it at
        // the line is taken).
        let mut own = Vec::new();
        let mut others = Vec::new();
        for i in 0..=10 {
            for j in 0..=10 {
                let (x, y) = (i as f64 / 10.0, j as f64 / 10.0);
                if x < 0.55 {
                    own.push((x, y));
                } else {
                    others.push((x, y));
                }
            }
            others.push((0.6, i as f64 / 10.0));
        }
        let (x, y) = label_spot(&own, &others, (0.0, 1.0), (0.0, 1.0));
        assert!(x <= 0.4, "{x}");
        assert!((0.1..=0.9).contains(&y), "{y}");
        // With nothing else drawn, the centre of the points.
        let (cx, cy) = label_spot(&own, &[], (0.0, 1.0), (0.0, 1.0));
        assert!((cx - 0.25).abs() < 1e-12 && (cy - 0.5).abs() < 1e-12);
    }
}

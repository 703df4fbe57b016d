//! The sweep figure: m, C, χ and F per site against T in a 2×2 grid, one curve per level
//! (and per field when several are swept), the exact curve where a closed form is known,
//! and a dashed vertical line at each level's Tc (h = 0).
//!
//! Curves differ in colour and in marker shape ([`super::style`]), so the figure reads in
//! greyscale; exact curves are solid black without markers. The χ panel has a log axis
//! spanning at most six decades, cut at the top where χ diverges near a Tc (the axis
//! label says so); the C panel is cut at 1.5 × the largest level value when the exact
//! curve's logarithmic divergence (Onsager 1944) would squash the levels. Curves are
//! clipped to each panel. The SVG is rendered to a string (plotters' `SVGBackend`) and
//! written atomically.

use std::ops::Range;
use std::path::Path;

use plotters::coord::ranged1d::ValueFormatter;
use plotters::coord::types::RangedCoordf64;
use plotters::coord::Shift;
use plotters::prelude::*;
use rungs_reference::closed::ClosedForm;
use rungs_solve::Observables;

use super::style::{
    clip, curve_style, linear_range, log_range, marker, short_source, tick, Marker, EXACT,
};
use crate::error::CliError;
use crate::output::write::write_atomic;

/// One level's points and Tc.
#[derive(Debug, Clone)]
pub struct LevelCurves<'a> {
    /// Level name.
    pub level: &'a str,
    /// The sweep's points (any order of fields; temperatures along each field).
    pub points: &'a [Observables],
    /// Tc at h = 0, if known: drawn as a dashed vertical line.
    pub tc: Option<f64>,
}

/// Everything the figure shows.
#[derive(Debug, Clone)]
pub struct SweepFigure<'a> {
    /// Lattice name, for the title.
    pub lattice: &'a str,
    /// The levels, in legend order.
    pub levels: Vec<LevelCurves<'a>>,
    /// The swept fields.
    pub fields: &'a [f64],
    /// The exact solution of the lattice, if one is known.
    pub exact: Option<ClosedForm>,
}

/// Figure size in pixels.
const SIZE: (u32, u32) = (1200, 960);
/// Points of each exact curve.
const EXACT_POINTS: usize = 400;
/// Markers per curve (about).
const MARKS: usize = 12;

/// The four panels.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Quantity {
    M,
    C,
    Chi,
    F,
}

impl Quantity {
    const ALL: [Quantity; 4] = [Quantity::M, Quantity::C, Quantity::Chi, Quantity::F];

    fn of(self, p: &Observables) -> f64 {
        match self {
            Quantity::M => p.magnetization,
            Quantity::C => p.specific_heat,
            Quantity::Chi => p.susceptibility,
            Quantity::F => p.free_energy,
        }
    }

    fn exact(self, form: &ClosedForm, t: f64, h: f64) -> Option<f64> {
        match self {
            Quantity::M => form.magnetization(t, h),
            Quantity::C => form.specific_heat(t, h),
            Quantity::Chi => form.susceptibility(t, h),
            Quantity::F => form.free_energy(t, h),
        }
    }

    fn label(self) -> &'static str {
        match self {
            Quantity::M => "m per site",
            Quantity::C => "C per site (k_B)",
            Quantity::Chi => "χ per site",
            Quantity::F => "F per site (J)",
        }
    }
}

/// One drawn curve: its label, style and points (T, value) per quantity.
struct Curve {
    label: String,
    colour: RGBColor,
    marker: Option<Marker>,
    tc: Option<f64>,
    data: [Vec<(f64, f64)>; 4],
}

/// Render the figure and write it atomically to `path`.
pub fn write(path: &Path, figure: &SweepFigure) -> Result<(), CliError> {
    let svg = render(figure).map_err(|e| CliError::Write {
        path: path.to_path_buf(),
        source: std::io::Error::other(e),
    })?;
    write_atomic(path, svg.as_bytes())
}

/// The SVG text of the figure.
pub fn render(figure: &SweepFigure) -> Result<String, String> {
    let curves = curves(figure);
    let (t0, t1) = temperature_range(figure);
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, SIZE).into_drawing_area();
        root.fill(&WHITE).map_err(|e| e.to_string())?;
        let fields: Vec<String> = figure.fields.iter().map(|h| format!("{h}")).collect();
        let title = format!(
            "lattice `{}`: thermodynamics per site, h = {}",
            figure.lattice,
            fields.join(", ")
        );
        let body = root
            .titled(&title, ("sans-serif", 22))
            .map_err(|e| e.to_string())?;
        let legend_rows = legend_rows(&curves);
        let (_, h) = body.dim_in_pixel();
        let (panels, legend) =
            body.split_vertically(h.saturating_sub(24 * legend_rows as u32 + 16));
        for (area, q) in panels.split_evenly((2, 2)).iter().zip(Quantity::ALL) {
            draw_panel(area, q, &curves, t0..t1).map_err(|e| e.to_string())?;
        }
        draw_legend(&legend, &curves).map_err(|e| e.to_string())?;
        root.present().map_err(|e| e.to_string())?;
    }
    Ok(svg)
}

/// The temperature axis: the swept range, widened when it is a single point.
fn temperature_range(figure: &SweepFigure) -> (f64, f64) {
    let ts = figure
        .levels
        .iter()
        .flat_map(|l| l.points.iter().map(|p| p.temperature));
    let (lo, hi) = ts.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), t| {
        (a.min(t), b.max(t))
    });
    if !(lo.is_finite() && hi.is_finite()) {
        return (0.0, 1.0);
    }
    if hi - lo < 1e-9 {
        return ((lo - 0.5).max(lo / 2.0), hi + 0.5);
    }
    (lo, hi)
}

/// The curves to draw: each (level, field), then each exact (field).
fn curves(figure: &SweepFigure) -> Vec<Curve> {
    let several = figure.fields.len() > 1;
    let mut out = Vec::new();
    for (li, level) in figure.levels.iter().enumerate() {
        for (fi, &h) in figure.fields.iter().enumerate() {
            let pts: Vec<&Observables> = level.points.iter().filter(|p| p.field == h).collect();
            let (colour, mark) = curve_style(li * figure.fields.len() + fi);
            let label = if several {
                format!("{}, h = {h}", level.level)
            } else {
                level.level.to_string()
            };
            let data =
                Quantity::ALL.map(|q| pts.iter().map(|p| (p.temperature, q.of(p))).collect());
            let tc = if fi == 0 { level.tc } else { None };
            out.push(Curve {
                label,
                colour,
                marker: Some(mark),
                tc,
                data,
            });
        }
    }
    if let Some(form) = &figure.exact {
        let (t0, t1) = temperature_range(figure);
        for (fi, &h) in figure.fields.iter().enumerate() {
            let grid: Vec<f64> = (0..EXACT_POINTS)
                .map(|k| t0 + (t1 - t0) * k as f64 / (EXACT_POINTS - 1) as f64)
                .collect();
            let data = Quantity::ALL.map(|q| {
                grid.iter()
                    .filter_map(|&t| {
                        q.exact(form, t, h)
                            .filter(|v| v.is_finite())
                            .map(|v| (t, v))
                    })
                    .collect()
            });
            if data.iter().all(Vec::is_empty) {
                continue;
            }
            let grey = (90 * fi.min(2)) as u8;
            let field = if several {
                format!(", h = {h}")
            } else {
                String::new()
            };
            out.push(Curve {
                label: format!("exact{field} ({})", short_source(form.source())),
                colour: if fi == 0 {
                    EXACT
                } else {
                    RGBColor(grey, grey, grey)
                },
                marker: None,
                tc: None,
                data,
            });
        }
    }
    out
}

/// The y range of a panel and the note for its axis label.
fn y_range(q: Quantity, curves: &[Curve]) -> (f64, f64, String) {
    let i = q as usize;
    let level_values = || {
        curves
            .iter()
            .filter(|c| c.marker.is_some())
            .flat_map(|c| c.data[i].iter().map(|p| p.1))
    };
    let all_values = || curves.iter().flat_map(|c| c.data[i].iter().map(|p| p.1));
    match q {
        Quantity::M => {
            let (lo, hi) = linear_range(all_values(), true);
            (lo, hi, String::new())
        }
        Quantity::F => {
            let (lo, hi) = linear_range(all_values(), false);
            (lo, hi, String::new())
        }
        Quantity::C => {
            let top = level_values()
                .filter(|v| v.is_finite())
                .fold(0.0f64, f64::max);
            let exact_top = all_values()
                .filter(|v| v.is_finite())
                .fold(0.0f64, f64::max);
            if top > 0.0 && exact_top > 1.5 * top {
                let (lo, _) = linear_range(level_values(), true);
                (lo, 1.5 * top, " (cut at the top)".into())
            } else {
                let (lo, hi) = linear_range(all_values(), true);
                (lo, hi, String::new())
            }
        }
        Quantity::Chi => {
            let (lo, hi, cut) = log_range(all_values(), 6.0);
            (
                lo,
                hi,
                if cut {
                    " (log scale, cut at the top)".into()
                } else {
                    " (log scale)".into()
                },
            )
        }
    }
}

/// One panel: axes, each curve clipped to the range, its markers, Tc lines.
fn draw_panel(
    area: &DrawingArea<SVGBackend, Shift>,
    q: Quantity,
    curves: &[Curve],
    x: Range<f64>,
) -> Result<(), DrawingAreaErrorKind<std::io::Error>> {
    let (lo, hi, note) = y_range(q, curves);
    let desc = format!("{}{note}", q.label());
    if q == Quantity::Chi {
        panel(
            area,
            q,
            curves,
            x,
            LogCoord::from((lo..hi).log_scale()),
            &desc,
            true,
            (lo, hi),
        )
    } else {
        panel(
            area,
            q,
            curves,
            x,
            RangedCoordf64::from(lo..hi),
            &desc,
            false,
            (lo, hi),
        )
    }
}

/// A panel on any y axis (linear or log).
#[allow(clippy::too_many_arguments)]
fn panel<Y>(
    area: &DrawingArea<SVGBackend, Shift>,
    q: Quantity,
    curves: &[Curve],
    x: Range<f64>,
    y: Y,
    desc: &str,
    log: bool,
    (lo, hi): (f64, f64),
) -> Result<(), DrawingAreaErrorKind<std::io::Error>>
where
    Y: Ranged<ValueType = f64> + ValueFormatter<f64>,
{
    let mut chart = ChartBuilder::on(area)
        .margin(12)
        .x_label_area_size(48)
        .y_label_area_size(72)
        .build_cartesian_2d(x.clone(), y)?;
    let fmt = |v: &f64| tick(*v);
    chart
        .configure_mesh()
        .x_desc("T (J/k_B)")
        .y_desc(desc)
        .x_label_formatter(&fmt)
        .y_label_formatter(&fmt)
        .label_style(("sans-serif", 14))
        .axis_desc_style(("sans-serif", 16))
        .x_max_light_lines(1)
        .y_max_light_lines(1)
        .light_line_style(RGBColor(240, 240, 240))
        .bold_line_style(RGBColor(200, 200, 200))
        .draw()?;
    let i = q as usize;
    // Exact curves first, a little wider, so the levels stay visible on top of them.
    let exact_first = curves
        .iter()
        .filter(|c| c.marker.is_none())
        .chain(curves.iter().filter(|c| c.marker.is_some()));
    for c in exact_first {
        let style = ShapeStyle::from(c.colour).stroke_width(if c.marker.is_none() { 3 } else { 2 });
        for seg in clip(&c.data[i], lo, hi, log) {
            chart.draw_series(std::iter::once(PathElement::new(seg, style)))?;
        }
        if let Some(kind) = c.marker {
            let pts = &c.data[i];
            let every = pts.len().div_ceil(MARKS).max(1);
            let marks = pts.iter().enumerate().filter(|(k, p)| {
                k % every == 0 && p.1.is_finite() && p.1 >= lo && p.1 <= hi && (!log || p.1 > 0.0)
            });
            for (_, &p) in marks {
                chart.plotting_area().draw(&marker(kind, p, 4, c.colour))?;
            }
        }
        if let Some(tc) = c.tc.filter(|t| x.contains(t)) {
            let style = ShapeStyle::from(c.colour).stroke_width(1);
            chart.draw_series(DashedLineSeries::new([(tc, lo), (tc, hi)], 6, 4, style))?;
        }
    }
    Ok(())
}

/// Legend text size in pixels, and the width of a line sample before the label.
const LEGEND_FONT: f64 = 16.0;
const SAMPLE: i32 = 54;

/// The legend's entries: each curve's label, plus the Tc-line explanation when any Tc is
/// drawn.
fn legend_labels(curves: &[Curve]) -> Vec<String> {
    let mut labels: Vec<String> = curves.iter().map(|c| c.label.clone()).collect();
    if curves.iter().any(|c| c.tc.is_some()) {
        labels.push("dashed vertical: Tc of the level (h = 0)".into());
    }
    labels
}

/// Where each legend entry starts (pixels from the legend's top left), flowing left to
/// right and wrapping at `width`; and the number of rows.
fn legend_layout(labels: &[String], width: i32) -> (Vec<(i32, i32)>, usize) {
    let (mut x, mut row) = (20, 0usize);
    let mut at = Vec::with_capacity(labels.len());
    for label in labels {
        // Rough width of sans-serif text: 0.55 em per character.
        let w = SAMPLE + (0.55 * LEGEND_FONT * label.chars().count() as f64) as i32 + 36;
        if x > 20 && x + w > width - 20 {
            x = 20;
            row += 1;
        }
        at.push((x, 10 + 24 * row as i32));
        x += w;
    }
    (at, row + 1)
}

/// Rows the legend needs.
fn legend_rows(curves: &[Curve]) -> usize {
    legend_layout(&legend_labels(curves), SIZE.0 as i32).1
}

/// The legend under the panels: a line sample with the marker, then the label.
fn draw_legend(
    area: &DrawingArea<SVGBackend, Shift>,
    curves: &[Curve],
) -> Result<(), DrawingAreaErrorKind<std::io::Error>> {
    let (w, _) = area.dim_in_pixel();
    let labels = legend_labels(curves);
    let (at, _) = legend_layout(&labels, w as i32);
    let text = ("sans-serif", LEGEND_FONT).into_font().color(&BLACK);
    for ((c, label), &(x, y)) in curves.iter().zip(&labels).zip(&at) {
        let style = ShapeStyle::from(c.colour).stroke_width(2);
        area.draw(&PathElement::new(vec![(x, y + 8), (x + 44, y + 8)], style))?;
        if let Some(kind) = c.marker {
            area.draw(&marker(kind, (x + 22, y + 8), 4, c.colour))?;
        }
        area.draw(&Text::new(label.clone(), (x + SAMPLE, y), text.clone()))?;
    }
    if let (Some(label), Some(&(x, y))) = (labels.get(curves.len()), at.get(curves.len())) {
        let grey = ShapeStyle::from(RGBColor(100, 100, 100)).stroke_width(1);
        for s in 0..4 {
            area.draw(&PathElement::new(
                vec![(x + 12 * s, y + 8), (x + 12 * s + 7, y + 8)],
                grey,
            ))?;
        }
        area.draw(&Text::new(label.clone(), (x + SAMPLE, y), text))?;
    }
    Ok(())
}

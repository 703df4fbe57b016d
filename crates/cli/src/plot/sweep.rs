//! The sweep figure: per-site quantities against T, one panel each — by default all six,
//! m, U, F (top row) and S, C, χ = ∂m/∂h (bottom row); `--panels` picks some, in the
//! order given — one curve per (level, field), the exact curve where a closed form gives
//! the quantity at that field, and a dashed vertical line at each level's Tc (h = 0).
//! A level whose order is not uniform (an antiferromagnet's Néel order, an alloy
//! superstructure) has m ≈ 0 in its ordered phase, so the m panel also draws its order
//! parameter, dotted, in the level's colour (the axis label says so).
//!
//! Colour says the level; with several fields, the line style and the marker say the
//! field (solid ●, dashed ▲, dotted ■, …), so no two curves look alike. With one field the
//! marker follows the level too, so the figure reads in greyscale. Exact curves are black,
//! in the line style of their field, without markers; a field where the closed form gives
//! nothing (e.g. the square lattice in a field) gets no exact curve, and
//! [`SweepFigure::exact_fields`] tells the report which fields have one. The χ panel has a
//! log axis spanning at most six decades, cut at the top where χ diverges near a Tc (the
//! axis label says so); the C panel is cut at 1.5 × the largest level value when the exact
//! curve's logarithmic divergence (Onsager 1944) would squash the levels. Curves are
//! clipped to each panel.

use std::ops::Range;

use plotters::coord::ranged1d::ValueFormatter;
use plotters::coord::types::RangedCoordf64;
use plotters::coord::Shift;
use plotters::prelude::*;
use rungs_reference::closed::ClosedForm;
use rungs_solve::Observables;

use super::file::Figure;
use super::style::{
    clip, curve_style, draw_line, linear_range, log_range, log_ticks, marker, short_source, tick,
    Dash, Marker, DASHES, EXACT, MARKERS, PALETTE,
};

/// One level's points and Tc.
#[derive(Debug, Clone)]
pub struct LevelCurves<'a> {
    /// Level name.
    pub level: &'a str,
    /// The sweep's points (any order of fields; temperatures along each field).
    pub points: &'a [Observables],
    /// Tc at h = 0, if known: drawn as a dashed vertical line.
    pub tc: Option<f64>,
    /// The order parameter at each of `points` (same order), or empty if not known. Drawn
    /// in the m panel when it differs from |m| (non-uniform order).
    pub order: Vec<f64>,
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
    /// The panels to draw, in order.
    pub panels: &'a [Quantity],
}

/// Pixels of one panel.
const PANEL: (u32, u32) = (520, 420);
/// Height of the title band.
const TITLE: u32 = 44;
/// Points of each exact curve.
const EXACT_POINTS: usize = 400;
/// Markers per curve (about).
const MARKS: usize = 12;

/// A quantity with a panel of its own.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Quantity {
    /// Magnetisation m.
    M,
    /// Internal energy U.
    U,
    /// Free energy F.
    F,
    /// Entropy S.
    S,
    /// Specific heat C.
    C,
    /// Susceptibility χ = ∂m/∂h.
    Chi,
}

impl Quantity {
    /// Every panel, in the default order.
    pub const ALL: [Quantity; 6] = [
        Quantity::M,
        Quantity::U,
        Quantity::F,
        Quantity::S,
        Quantity::C,
        Quantity::Chi,
    ];

    /// The name `--panels` takes.
    pub fn name(self) -> &'static str {
        match self {
            Quantity::M => "m",
            Quantity::U => "u",
            Quantity::F => "f",
            Quantity::S => "s",
            Quantity::C => "c",
            Quantity::Chi => "chi",
        }
    }

    fn of(self, p: &Observables) -> f64 {
        match self {
            Quantity::M => p.magnetization,
            Quantity::U => p.energy,
            Quantity::F => p.free_energy,
            Quantity::S => p.entropy,
            Quantity::C => p.specific_heat,
            Quantity::Chi => p.susceptibility,
        }
    }

    fn exact(self, form: &ClosedForm, t: f64, h: f64) -> Option<f64> {
        match self {
            Quantity::M => form.magnetization(t, h),
            Quantity::U => form.energy(t, h),
            Quantity::F => form.free_energy(t, h),
            Quantity::S => form.entropy(t, h),
            Quantity::C => form.specific_heat(t, h),
            Quantity::Chi => form.susceptibility(t, h),
        }
    }

    fn label(self) -> &'static str {
        match self {
            Quantity::M => "m per site",
            Quantity::U => "U per site (J)",
            Quantity::F => "F per site (J)",
            Quantity::S => "S per site (k_B)",
            Quantity::C => "C per site (k_B)",
            Quantity::Chi => "χ = ∂m/∂h per site",
        }
    }
}

/// The panels of `--panels`: a comma list of `m`, `u`, `f`, `s`, `c`, `chi` (any case),
/// or `all`.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Panels(pub Vec<Quantity>);

impl Default for Panels {
    fn default() -> Panels {
        Panels(Quantity::ALL.to_vec())
    }
}

/// Clap value parser of `--panels`.
pub fn parse_panels(text: &str) -> Result<Panels, String> {
    let mut out: Vec<Quantity> = Vec::new();
    for item in text.split(',').map(|s| s.trim().to_ascii_lowercase()) {
        if item == "all" {
            return Ok(Panels::default());
        }
        let q = Quantity::ALL
            .into_iter()
            .find(|q| q.name() == item)
            .ok_or_else(|| {
                format!("`{item}` is not a panel: choose from m, u, f, s, c, chi (or all)")
            })?;
        if !out.contains(&q) {
            out.push(q);
        }
    }
    Ok(Panels(out))
}

/// One drawn curve: its label, style and points (T, value) per quantity.
struct Curve {
    label: String,
    colour: RGBColor,
    marker: Option<Marker>,
    dash: Dash,
    field: f64,
    tc: Option<f64>,
    data: [Vec<(f64, f64)>; 6],
    /// An order-parameter curve (m panel only).
    order: bool,
}

impl Curve {
    fn exact(&self) -> bool {
        self.marker.is_none() && !self.order
    }
}

/// Whether a level's order parameter differs from |m| somewhere (non-uniform order).
fn staggered(level: &LevelCurves) -> bool {
    level.order.len() == level.points.len()
        && level
            .points
            .iter()
            .zip(&level.order)
            .any(|(p, o)| (o - p.magnetization.abs()).abs() > 1e-6)
}

impl SweepFigure<'_> {
    /// The fields at which an exact curve is drawn in at least one panel.
    pub fn exact_fields(&self) -> Vec<f64> {
        curves(self)
            .iter()
            .filter(|c| c.exact())
            .map(|c| c.field)
            .collect()
    }

    /// Panel columns and rows.
    fn grid(&self) -> (u32, u32) {
        match self.panels.len() {
            0 | 1 => (1, 1),
            2 => (2, 1),
            3 => (3, 1),
            4 => (2, 2),
            n => (3, (n as u32).div_ceil(3)),
        }
    }
}

impl Figure for SweepFigure<'_> {
    fn size(&self) -> (u32, u32) {
        let (cols, rows) = self.grid();
        let width = (cols * PANEL.0).max(1000);
        let legend = legend_height(&legend_entries(self, &curves(self)), width);
        (width, TITLE + rows * PANEL.1 + legend)
    }

    fn draw<DB: DrawingBackend>(
        &self,
        root: &DrawingArea<DB, Shift>,
    ) -> Result<(), DrawingAreaErrorKind<DB::ErrorType>> {
        let curves = curves(self);
        let (t0, t1) = temperature_range(self);
        root.fill(&WHITE)?;
        let fields: Vec<String> = self.fields.iter().map(|h| format!("{h}")).collect();
        let title = format!(
            "lattice `{}`: thermodynamics per site, h = {}",
            self.lattice,
            fields.join(", ")
        );
        let body = root.titled(&title, ("sans-serif", 22))?;
        let (cols, rows) = self.grid();
        let (panels, legend) = body.split_vertically(rows * PANEL.1);
        let areas = panels.split_evenly((rows as usize, cols as usize));
        for (area, &q) in areas.iter().zip(self.panels) {
            draw_panel(area, q, &curves, t0..t1)?;
        }
        draw_legend(&legend, &legend_entries(self, &curves))
    }
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

/// Colour, marker and line style of the curve of level `li` at field `fi`: colour by
/// level; line style and marker by field when there are several fields, else the marker
/// by level.
fn style_of(li: usize, fi: usize, fields: usize) -> (RGBColor, Marker, Dash) {
    if fields > 1 {
        (
            PALETTE[li % PALETTE.len()],
            MARKERS[fi % MARKERS.len()],
            DASHES[fi % DASHES.len()],
        )
    } else {
        let (colour, mark) = curve_style(li);
        (colour, mark, Dash::Solid)
    }
}

/// The curves to draw: each (level, field), then each exact (field) that has data in a
/// drawn panel.
fn curves(figure: &SweepFigure) -> Vec<Curve> {
    let several = figure.fields.len() > 1;
    let mut out = Vec::new();
    for (li, level) in figure.levels.iter().enumerate() {
        for (fi, &h) in figure.fields.iter().enumerate() {
            let pts: Vec<&Observables> = level.points.iter().filter(|p| p.field == h).collect();
            let (colour, mark, dash) = style_of(li, fi, figure.fields.len());
            let order_curve = staggered(level).then(|| {
                let mut data: [Vec<(f64, f64)>; 6] = Default::default();
                data[Quantity::M as usize] = level
                    .points
                    .iter()
                    .zip(&level.order)
                    .filter(|(p, _)| p.field == h)
                    .map(|(p, &o)| (p.temperature, o))
                    .collect();
                Curve {
                    label: String::new(),
                    colour,
                    marker: None,
                    dash: Dash::Dotted,
                    field: h,
                    tc: None,
                    data,
                    order: true,
                }
            });
            let label = if several {
                format!("{}, h = {h}", level.level)
            } else {
                level.level.to_string()
            };
            let data =
                Quantity::ALL.map(|q| pts.iter().map(|p| (p.temperature, q.of(p))).collect());
            let order_label = format!("{label}: order parameter");
            out.push(Curve {
                label,
                colour,
                marker: Some(mark),
                dash,
                field: h,
                tc: if h == 0.0 { level.tc } else { None },
                data,
                order: false,
            });
            out.extend(order_curve.map(|c| Curve {
                label: order_label,
                ..c
            }));
        }
    }
    if let Some(form) = &figure.exact {
        let (t0, t1) = temperature_range(figure);
        let grid: Vec<f64> = (0..EXACT_POINTS)
            .map(|k| t0 + (t1 - t0) * k as f64 / (EXACT_POINTS - 1) as f64)
            .collect();
        for (fi, &h) in figure.fields.iter().enumerate() {
            let data = Quantity::ALL.map(|q| {
                if !figure.panels.contains(&q) {
                    return Vec::new();
                }
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
            let field = if several {
                format!(", h = {h}")
            } else {
                String::new()
            };
            out.push(Curve {
                label: format!("exact{field} ({})", short_source(form.source())),
                colour: EXACT,
                marker: None,
                dash: if several {
                    DASHES[fi % DASHES.len()]
                } else {
                    Dash::Solid
                },
                field: h,
                tc: None,
                data,
                order: false,
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
            .filter(|c| !c.exact())
            .flat_map(|c| c.data[i].iter().map(|p| p.1))
    };
    let all_values = || curves.iter().flat_map(|c| c.data[i].iter().map(|p| p.1));
    let plain = |include_zero: bool| {
        let (lo, hi) = linear_range(all_values(), include_zero);
        (lo, hi, String::new())
    };
    match q {
        Quantity::M | Quantity::S => plain(true),
        Quantity::U | Quantity::F => plain(false),
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
                plain(true)
            }
        }
        Quantity::Chi => {
            let (lo, hi, cut) = log_range(all_values(), 6.0);
            let note = if cut {
                " (log scale, cut at the top)"
            } else {
                " (log scale)"
            };
            (lo, hi, note.into())
        }
    }
}

/// One panel: axes, each curve clipped to the range, its markers, Tc lines.
fn draw_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    q: Quantity,
    curves: &[Curve],
    x: Range<f64>,
) -> Result<(), DrawingAreaErrorKind<DB::ErrorType>> {
    let (lo, hi, note) = y_range(q, curves);
    let desc = if q == Quantity::M && curves.iter().any(|c| c.order) {
        format!("{}; dotted: order parameter{note}", q.label())
    } else {
        format!("{}{note}", q.label())
    };
    if q == Quantity::Chi {
        let y = (lo..hi).log_scale().with_key_points(log_ticks(lo, hi));
        panel(area, q, curves, x, y, &desc, true, (lo, hi))
    } else {
        let y = RangedCoordf64::from(lo..hi);
        panel(area, q, curves, x, y, &desc, false, (lo, hi))
    }
}

/// A panel on any y axis (linear or log).
#[allow(clippy::too_many_arguments)]
fn panel<DB: DrawingBackend, Y>(
    area: &DrawingArea<DB, Shift>,
    q: Quantity,
    curves: &[Curve],
    x: Range<f64>,
    y: Y,
    desc: &str,
    log: bool,
    (lo, hi): (f64, f64),
) -> Result<(), DrawingAreaErrorKind<DB::ErrorType>>
where
    Y: Ranged<ValueType = f64> + ValueFormatter<f64>,
{
    let mut chart = ChartBuilder::on(area)
        .margin(12)
        .x_label_area_size(48)
        .y_label_area_size(72)
        .build_cartesian_2d(x.clone(), y)?;
    // On a linear axis a tick within rounding of zero is zero (not "-2e-16").
    let fmt = |v: &f64| {
        if !log && v.abs() < 1e-9 * (hi - lo) {
            tick(0.0)
        } else {
            tick(*v)
        }
    };
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
        .filter(|c| c.exact())
        .chain(curves.iter().filter(|c| !c.exact()));
    for c in exact_first {
        let style = ShapeStyle::from(c.colour).stroke_width(if c.exact() { 3 } else { 2 });
        for seg in clip(&c.data[i], lo, hi, log) {
            draw_line(chart.plotting_area(), seg, c.dash, style)?;
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
/// Height of one legend row.
const LEGEND_ROW: i32 = 24;

/// One legend entry: a line sample (colour, dash, marker) and a label. `tc_line` is the
/// explanation of the dashed vertical Tc lines.
struct Entry {
    label: String,
    colour: RGBColor,
    marker: Option<Marker>,
    dash: Dash,
    tc_line: bool,
}

/// The legend: with one field, one entry per curve; with several, the colours of the
/// levels, then the line style of each field, then the exact curves; plus the Tc-line
/// explanation when any Tc is drawn.
fn legend_entries(figure: &SweepFigure, curves: &[Curve]) -> Vec<Entry> {
    let mut out = Vec::new();
    let several = figure.fields.len() > 1;
    if several {
        for (li, level) in figure.levels.iter().enumerate() {
            out.push(Entry {
                label: level.level.to_string(),
                colour: PALETTE[li % PALETTE.len()],
                marker: None,
                dash: Dash::Solid,
                tc_line: false,
            });
        }
        for (fi, h) in figure.fields.iter().enumerate() {
            out.push(Entry {
                label: format!("h = {h}"),
                colour: RGBColor(90, 90, 90),
                marker: Some(MARKERS[fi % MARKERS.len()]),
                dash: DASHES[fi % DASHES.len()],
                tc_line: false,
            });
        }
    }
    if several && curves.iter().any(|c| c.order) {
        out.push(Entry {
            label: "dotted, in the level's colour: order parameter (m panel)".into(),
            colour: RGBColor(90, 90, 90),
            marker: None,
            dash: Dash::Dotted,
            tc_line: false,
        });
    }
    if several {
        // One entry for the exact curves: black, in the line style of their field.
        if let (Some(form), true) = (&figure.exact, curves.iter().any(Curve::exact)) {
            out.push(Entry {
                label: format!(
                    "exact, in the style of its field ({})",
                    short_source(form.source())
                ),
                colour: EXACT,
                marker: None,
                dash: Dash::Solid,
                tc_line: false,
            });
        }
    } else {
        for c in curves {
            out.push(Entry {
                label: c.label.clone(),
                colour: c.colour,
                marker: c.marker,
                dash: c.dash,
                tc_line: false,
            });
        }
    }
    if curves.iter().any(|c| c.tc.is_some()) {
        out.push(Entry {
            label: "dashed vertical: Tc of the level (h = 0)".into(),
            colour: RGBColor(100, 100, 100),
            marker: None,
            dash: Dash::Solid,
            tc_line: true,
        });
    }
    out
}

/// Where each legend entry starts (pixels from the legend's top left), flowing left to
/// right and wrapping at `width`; and the number of rows.
fn legend_layout(entries: &[Entry], width: i32) -> (Vec<(i32, i32)>, usize) {
    let (mut x, mut row) = (20, 0usize);
    let mut at = Vec::with_capacity(entries.len());
    let font = ("sans-serif", LEGEND_FONT).into_font();
    for e in entries {
        // The label's width in the figure font (0.55 em per character if unmeasurable).
        let text = font.box_size(&e.label).map_or(
            (0.55 * LEGEND_FONT * e.label.chars().count() as f64) as i32,
            |(w, _)| w as i32,
        );
        let w = SAMPLE + text + 30;
        if x > 20 && x + w > width - 20 {
            x = 20;
            row += 1;
        }
        at.push((x, 10 + LEGEND_ROW * row as i32));
        x += w;
    }
    (at, row + 1)
}

/// Pixels the legend needs below the panels.
fn legend_height(entries: &[Entry], width: u32) -> u32 {
    LEGEND_ROW as u32 * legend_layout(entries, width as i32).1 as u32 + 16
}

/// The legend under the panels: a line sample with the marker, then the label.
fn draw_legend<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    entries: &[Entry],
) -> Result<(), DrawingAreaErrorKind<DB::ErrorType>> {
    let (w, _) = area.dim_in_pixel();
    let (at, _) = legend_layout(entries, w as i32);
    let text = ("sans-serif", LEGEND_FONT).into_font().color(&BLACK);
    for (e, &(x, y)) in entries.iter().zip(&at) {
        let sample = vec![(x, y + 8), (x + 44, y + 8)];
        if e.tc_line {
            let grey = ShapeStyle::from(e.colour).stroke_width(1);
            draw_line(area, sample, Dash::Dashed, grey)?;
        } else {
            let style = ShapeStyle::from(e.colour).stroke_width(2);
            draw_line(area, sample, e.dash, style)?;
        }
        if let Some(kind) = e.marker {
            area.draw(&marker(kind, (x + 22, y + 8), 4, e.colour))?;
        }
        area.draw(&Text::new(e.label.clone(), (x + SAMPLE, y), text.clone()))?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn point(t: f64, h: f64) -> Observables {
        Observables {
            temperature: t,
            field: h,
            magnetization: 0.1,
            sublattice_magnetization: vec![0.1],
            energy: -1.0,
            free_energy: -2.0,
            entropy: 0.5,
            specific_heat: 1.0,
            susceptibility: 2.0,
            bond_correlations: vec![],
        }
    }

    #[test]
    fn panels_parse_by_name() {
        assert_eq!(
            parse_panels("m, S,chi").unwrap().0,
            vec![Quantity::M, Quantity::S, Quantity::Chi]
        );
        assert_eq!(parse_panels("all").unwrap(), Panels::default());
        assert!(parse_panels("m,x")
            .unwrap_err()
            .contains("`x` is not a panel"));
    }

    #[test]
    fn no_two_curves_look_alike_and_colour_follows_the_level() {
        let fields = [0.0, 0.1, 0.2];
        let pts: Vec<Observables> = fields
            .iter()
            .flat_map(|&h| (0..5).map(move |k| point(2.0 + 0.1 * k as f64, h)))
            .collect();
        let levels = ["pair", "plaquette", "block3"]
            .map(|level| LevelCurves {
                level,
                points: &pts,
                tc: Some(2.3),
                order: Vec::new(),
            })
            .to_vec();
        let figure = SweepFigure {
            lattice: "square",
            levels,
            fields: &fields,
            exact: None,
            panels: &Quantity::ALL,
        };
        let curves = curves(&figure);
        assert_eq!(curves.len(), 9);
        for (a, ca) in curves.iter().enumerate() {
            for cb in &curves[a + 1..] {
                let same = ca.colour == cb.colour && ca.marker == cb.marker && ca.dash == cb.dash;
                assert!(!same, "`{}` and `{}` look alike", ca.label, cb.label);
            }
        }
        // Same level, same colour; same field, same line style.
        assert_eq!(curves[0].colour, curves[1].colour);
        assert_eq!(curves[0].dash, curves[3].dash);
        assert_ne!(curves[0].dash, curves[1].dash);
        // The Tc line belongs to the h = 0 curve only.
        assert!(curves[0].tc.is_some() && curves[1].tc.is_none());
    }

    #[test]
    fn exact_curves_only_where_the_closed_form_gives_them() {
        let fields = [0.0, 0.1];
        let pts: Vec<Observables> = fields
            .iter()
            .flat_map(|&h| (0..5).map(move |k| point(2.0 + 0.2 * k as f64, h)))
            .collect();
        let figure = |exact| SweepFigure {
            lattice: "l",
            levels: vec![LevelCurves {
                level: "pair",
                points: &pts,
                tc: None,
                order: Vec::new(),
            }],
            fields: &fields,
            exact,
            panels: &Quantity::ALL,
        };
        // Onsager's square lattice: h = 0 only (Onsager 1944, no closed form in a field).
        let square = figure(Some(ClosedForm::Square { j1: 1.0, j2: 1.0 }));
        assert_eq!(square.exact_fields(), vec![0.0]);
        // The chain is solved in any field (Ising 1925).
        let chain = figure(Some(ClosedForm::Chain { j: 1.0 }));
        assert_eq!(chain.exact_fields(), vec![0.0, 0.1]);
    }

    #[test]
    fn staggered_levels_draw_their_order_parameter_in_the_m_panel() {
        let fields = [0.0];
        let pts: Vec<Observables> = (0..5)
            .map(|k| Observables {
                magnetization: 0.0,
                ..point(1.0 + 0.5 * k as f64, 0.0)
            })
            .collect();
        // Néel order: m = 0, order parameter 0.9 … 0.1 (invented demo numbers).
        let order: Vec<f64> = (0..5).map(|k| 0.9 - 0.2 * k as f64).collect();
        let figure = SweepFigure {
            lattice: "demo",
            levels: vec![
                LevelCurves {
                    level: "pair",
                    points: &pts,
                    tc: None,
                    order: order.clone(),
                },
                // A uniform level (order = |m|) gets no extra curve.
                LevelCurves {
                    level: "site",
                    points: &pts,
                    tc: None,
                    order: vec![0.0; 5],
                },
            ],
            fields: &fields,
            exact: None,
            panels: &Quantity::ALL,
        };
        let curves = curves(&figure);
        assert_eq!(curves.len(), 3);
        let o = &curves[1];
        assert!(o.order && !o.exact());
        assert_eq!(o.colour, curves[0].colour);
        assert_eq!(o.data[Quantity::M as usize].len(), 5);
        assert!(o.data[Quantity::U as usize].is_empty());
        assert!(legend_entries(&figure, &curves)
            .iter()
            .any(|e| e.label == "pair: order parameter"));
    }
}

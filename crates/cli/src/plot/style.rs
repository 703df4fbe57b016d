//! Shared look of the figures: a colour-blind-safe palette (Okabe & Ito 2008,
//! "Color Universal Design"), marker shapes and line styles that keep curves apart in
//! greyscale, axis ranges that stay readable near divergences or end on a tick, and
//! clipping of curves to those ranges (plotters draws whatever it is given, also outside
//! the plotting area).

use plotters::coord::CoordTranslate;
use plotters::element::DashedPathElement;
use plotters::prelude::*;

/// Curve colours, in order of use (Okabe–Ito palette; black is kept for exact curves).
pub const PALETTE: [RGBColor; 6] = [
    RGBColor(0, 114, 178),   // blue
    RGBColor(213, 94, 0),    // vermillion
    RGBColor(0, 158, 115),   // bluish green
    RGBColor(204, 121, 167), // reddish purple
    RGBColor(230, 159, 0),   // orange
    RGBColor(86, 180, 233),  // sky blue
];

/// Colour of exact (closed-form) curves.
pub const EXACT: RGBColor = RGBColor(0, 0, 0);

/// Marker shapes; curve `i` gets `MARKERS[i % len]`, so neighbours differ in shape as
/// well as colour and the figure reads in greyscale.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Marker {
    /// Filled circle.
    Circle,
    /// Open triangle, apex up.
    Triangle,
    /// Filled square.
    Square,
    /// Open diamond.
    Diamond,
    /// Diagonal cross.
    Cross,
    /// Open circle.
    Ring,
}

/// Marker of each curve index, cycling.
pub const MARKERS: [Marker; 6] = [
    Marker::Circle,
    Marker::Triangle,
    Marker::Square,
    Marker::Diamond,
    Marker::Cross,
    Marker::Ring,
];

/// A line style: solid or one of three dash patterns.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Dash {
    /// Unbroken.
    Solid,
    /// Medium dashes.
    Dashed,
    /// Dots.
    Dotted,
    /// Long dashes.
    LongDash,
}

/// Line styles in order of use (one per field when several fields are swept).
pub const DASHES: [Dash; 4] = [Dash::Solid, Dash::Dashed, Dash::Dotted, Dash::LongDash];

impl Dash {
    /// Dash and gap lengths in pixels; `None` for a solid line.
    pub fn pattern(self) -> Option<(i32, i32)> {
        match self {
            Dash::Solid => None,
            Dash::Dashed => Some((9, 5)),
            Dash::Dotted => Some((2, 4)),
            Dash::LongDash => Some((20, 6)),
        }
    }
}

/// Draw the polyline `points` on `area` in `style`, solid or dashed.
pub fn draw_line<DB: DrawingBackend, CT: CoordTranslate>(
    area: &DrawingArea<DB, CT>,
    points: Vec<CT::From>,
    dash: Dash,
    style: ShapeStyle,
) -> Result<(), DrawingAreaErrorKind<DB::ErrorType>>
where
    CT::From: Clone,
{
    match dash.pattern() {
        None => area.draw(&PathElement::new(points, style)),
        Some((on, off)) => area.draw(&DashedPathElement::new(points, on, off, style)),
    }
}

/// An axis range around `lo..hi` widened to whole multiples of a 1-2-5 step that gives
/// about `target` intervals, so the first and the last tick sit on the ends of the axis
/// and no point lies beyond the last tick; with the number of ticks.
pub fn nice_range(lo: f64, hi: f64, target: usize) -> (f64, f64, usize) {
    let target = target.max(1);
    if !(lo.is_finite() && hi.is_finite() && hi > lo) {
        return (lo, hi, target + 1);
    }
    let raw = (hi - lo) / target as f64;
    let magnitude = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 5.0, 10.0]
        .iter()
        .map(|m| m * magnitude)
        .find(|s| *s >= raw * (1.0 - 1e-12))
        .unwrap_or(10.0 * magnitude);
    // Tolerate rounding: a value a hair above a multiple of the step stays on it.
    let a = (lo / step + 1e-9).floor() * step;
    let b = (hi / step - 1e-9).ceil() * step;
    let ticks = ((b - a) / step).round() as usize + 1;
    // Plotters places ticks inside the range only: keep the last one a hair inside.
    (a - 1e-9 * step, b + 1e-9 * step, ticks)
}

/// Colour and marker of curve `i`.
pub fn curve_style(i: usize) -> (RGBColor, Marker) {
    (PALETTE[i % PALETTE.len()], MARKERS[i % MARKERS.len()])
}

/// The marker as a drawable element centred at `at`, `r` pixels in radius.
pub fn marker<'a, DB: DrawingBackend + 'a, C: Clone + 'a>(
    kind: Marker,
    at: C,
    r: i32,
    colour: RGBColor,
) -> DynElement<'a, DB, C> {
    let filled = ShapeStyle::from(colour).filled();
    let line = ShapeStyle::from(colour).stroke_width(2);
    let base = EmptyElement::at(at);
    match kind {
        Marker::Circle => (base + Circle::new((0, 0), r, filled)).into_dyn(),
        Marker::Ring => (base + Circle::new((0, 0), r, line)).into_dyn(),
        Marker::Square => {
            (base + Rectangle::new([(-r + 1, -r + 1), (r - 1, r - 1)], filled)).into_dyn()
        }
        Marker::Triangle => (base
            + PathElement::new(
                vec![(0, -r - 1), (r + 1, r), (-r - 1, r), (0, -r - 1)],
                line,
            ))
        .into_dyn(),
        Marker::Diamond => (base
            + PathElement::new(
                vec![
                    (0, -r - 1),
                    (r + 1, 0),
                    (0, r + 1),
                    (-r - 1, 0),
                    (0, -r - 1),
                ],
                line,
            ))
        .into_dyn(),
        Marker::Cross => (base
            + PathElement::new(vec![(-r, -r), (r, r)], line)
            + PathElement::new(vec![(-r, r), (r, -r)], line))
        .into_dyn(),
    }
}

/// Cut a polyline to the band `lo ≤ y ≤ hi`: the parts inside, each ending exactly on
/// the band's edge where the curve leaves it (linear interpolation, in log y when
/// `log`). Points with a non-finite y (or y ≤ 0 on a log axis) break the line.
pub fn clip(points: &[(f64, f64)], lo: f64, hi: f64, log: bool) -> Vec<Vec<(f64, f64)>> {
    let tf = |y: f64| if log { y.ln() } else { y };
    let inv = |y: f64| if log { y.exp() } else { y };
    let ok = |y: f64| y.is_finite() && (!log || y > 0.0);
    let (tlo, thi) = (tf(lo), tf(hi));
    let mut out: Vec<Vec<(f64, f64)>> = Vec::new();
    let mut cur: Vec<(f64, f64)> = Vec::new();
    let inside = |y: f64| (tlo..=thi).contains(&y);
    let mut prev: Option<(f64, f64)> = None; // previous point, transformed y
    for &(x, y) in points {
        if !ok(y) {
            if !cur.is_empty() {
                out.push(std::mem::take(&mut cur));
            }
            prev = None;
            continue;
        }
        let ty = tf(y);
        if let Some((px, py)) = prev {
            // Crossing points of the segment with the edges, in order along it.
            let mut cuts: Vec<(f64, f64)> = [tlo, thi]
                .iter()
                .filter(|&&e| (py - e) * (ty - e) < 0.0)
                .map(|&e| {
                    let s = (e - py) / (ty - py);
                    (s, e)
                })
                .collect();
            cuts.sort_by(|a, b| a.0.total_cmp(&b.0));
            for (s, e) in cuts {
                let cx = px + s * (x - px);
                if inside(py) || !cur.is_empty() {
                    // Leaving the band.
                    cur.push((cx, inv(e)));
                    out.push(std::mem::take(&mut cur));
                } else {
                    // Entering the band.
                    cur.push((cx, inv(e)));
                }
            }
        }
        if inside(ty) {
            cur.push((x, y));
        } else if !cur.is_empty() {
            out.push(std::mem::take(&mut cur));
        }
        prev = Some((x, ty));
    }
    if !cur.is_empty() {
        out.push(cur);
    }
    out.retain(|seg| !seg.is_empty());
    out
}

/// A linear axis range around `values` with 5 % padding; `include_zero` stretches it to
/// 0. Never empty, never NaN.
pub fn linear_range(values: impl IntoIterator<Item = f64>, include_zero: bool) -> (f64, f64) {
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for v in values.into_iter().filter(|v| v.is_finite()) {
        lo = lo.min(v);
        hi = hi.max(v);
    }
    if include_zero {
        lo = lo.min(0.0);
        hi = hi.max(0.0);
    }
    if !(lo.is_finite() && hi.is_finite()) {
        return (0.0, 1.0);
    }
    let span = hi - lo;
    if span <= 1e-12 * lo.abs().max(1.0) {
        return (lo - 0.5, hi + 0.5);
    }
    (lo - 0.05 * span, hi + 0.05 * span)
}

/// A log axis range around the positive `values`, at most `decades` decades wide (the
/// top is cut, where susceptibilities diverge), padded by a factor 1.5; and whether the
/// top was cut.
pub fn log_range(values: impl IntoIterator<Item = f64>, decades: f64) -> (f64, f64, bool) {
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for v in values.into_iter().filter(|v| v.is_finite() && *v > 0.0) {
        lo = lo.min(v);
        hi = hi.max(v);
    }
    if !(lo.is_finite() && hi.is_finite()) {
        return (0.1, 10.0, false);
    }
    let cap = lo * 10f64.powf(decades);
    let cut = hi > cap;
    let hi = hi.min(cap);
    if hi / lo < 10.0 {
        let mid = (hi * lo).sqrt();
        return (mid / 10f64.sqrt(), mid * 10f64.sqrt(), cut);
    }
    (lo / 1.5, hi * 1.5, cut)
}

/// Tick values of a log axis over `[lo, hi]`: 1, 2 and 5 times each power of ten (only
/// the powers of ten when the axis spans more than three decades), so that every decade
/// the curves cross is labelled. (Plotters' own log ticks can leave the lower decades of
/// a susceptibility falling toward zero without a single label.)
pub fn log_ticks(lo: f64, hi: f64) -> Vec<f64> {
    if !(lo > 0.0 && hi > lo && hi.is_finite()) {
        return Vec::new();
    }
    let mantissas: &[f64] = if hi / lo > 1e3 {
        &[1.0]
    } else {
        &[1.0, 2.0, 5.0]
    };
    let (first, last) = (lo.log10().floor() as i32, hi.log10().ceil() as i32);
    (first..=last)
        .flat_map(|k| mantissas.iter().map(move |m| m * 10f64.powi(k)))
        .filter(|&v| v >= lo * (1.0 - 1e-12) && v <= hi * (1.0 + 1e-12))
        .collect()
}

/// A short label for a source string: the "Author (year)" parts of each
/// `;`-separated reference, e.g. "Onsager (1944), Yang (1952)".
pub fn short_source(source: &str) -> String {
    source
        .split(';')
        .map(|part| {
            let part = part.trim();
            match part.find(')') {
                Some(i) => &part[..=i],
                None => part,
            }
        })
        .collect::<Vec<_>>()
        .join(", ")
}

/// A number for axis labels: plain for moderate magnitudes, else scientific.
pub fn tick(v: f64) -> String {
    let a = v.abs();
    if a == 0.0 {
        "0".into()
    } else if (1e-3..1e4).contains(&a) {
        let s = format!("{v:.4}");
        let s = s.trim_end_matches('0').trim_end_matches('.');
        s.to_string()
    } else {
        format!("{v:.0e}")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn clip_cuts_at_the_edges() {
        let pts = [(0.0, 0.5), (1.0, 2.0), (2.0, 0.5)];
        let segs = clip(&pts, 0.0, 1.0, false);
        let close = |a: &[(f64, f64)], b: &[(f64, f64)]| {
            a.len() == b.len()
                && a.iter()
                    .zip(b)
                    .all(|(p, q)| (p.0 - q.0).abs() < 1e-12 && (p.1 - q.1).abs() < 1e-12)
        };
        assert_eq!(segs.len(), 2);
        assert!(close(&segs[0], &[(0.0, 0.5), (1.0 / 3.0, 1.0)]), "{segs:?}");
        assert!(close(&segs[1], &[(5.0 / 3.0, 1.0), (2.0, 0.5)]), "{segs:?}");
        // Entirely inside: one piece, unchanged.
        assert_eq!(clip(&pts, 0.0, 3.0, false), vec![pts.to_vec()]);
        // A NaN breaks the line.
        let segs = clip(
            &[(0.0, 0.5), (1.0, f64::NAN), (2.0, 0.5), (3.0, 0.6)],
            0.0,
            1.0,
            false,
        );
        assert_eq!(segs.len(), 2);
        // Log axis: interpolation in log y.
        let segs = clip(&[(0.0, 1.0), (1.0, 100.0)], 0.1, 10.0, true);
        assert_eq!(segs.len(), 1);
        assert!((segs[0][1].0 - 0.5).abs() < 1e-12 && (segs[0][1].1 - 10.0).abs() < 1e-9);
    }

    #[test]
    fn log_ticks_label_every_decade_crossed() {
        // A susceptibility falling from 0.09 to 0.002: ticks in both decades.
        assert_eq!(
            log_ticks(0.0013, 0.14),
            vec![0.002, 0.005, 0.01, 0.02, 0.05, 0.1]
        );
        // Wide axes: powers of ten only.
        assert_eq!(log_ticks(0.5, 2e4), vec![1.0, 10.0, 100.0, 1000.0, 10000.0]);
        assert!(log_ticks(0.0, 1.0).is_empty());
    }

    #[test]
    fn ranges_are_never_empty_and_log_is_capped() {
        assert_eq!(linear_range([], false), (0.0, 1.0));
        assert_eq!(linear_range([2.0, 2.0], false), (1.5, 2.5));
        let (lo, hi, cut) = log_range([0.01, 1.0, 1e9], 6.0);
        assert!(cut && lo < 0.01 && hi <= 1.5e4);
        assert!(!log_range([0.5, 2.0], 6.0).2);
    }

    #[test]
    fn nice_ranges_end_on_ticks() {
        let (lo, hi, ticks) = nice_range(2.21, 3.97, 5);
        assert!(
            (lo - 2.0).abs() < 1e-6 && (hi - 4.0).abs() < 1e-6,
            "{lo} {hi}"
        );
        assert_eq!(ticks, 5);
        let (lo, hi, ticks) = nice_range(0.0, 1.0, 5);
        assert!(
            lo.abs() < 1e-6 && (hi - 1.0).abs() < 1e-6 && ticks == 6,
            "{lo} {hi} {ticks}"
        );
        assert!(nice_range(1.0, 1.0, 5).2 == 6);
    }

    #[test]
    fn sources_shorten_to_author_and_year() {
        assert_eq!(
            short_source("Onsager (1944), Phys. Rev. 65, 117; Yang (1952), Phys. Rev. 85, 808"),
            "Onsager (1944), Yang (1952)"
        );
        assert_eq!(tick(0.25), "0.25");
        assert_eq!(tick(1e-5), "1e-5");
    }
}

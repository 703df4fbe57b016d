//! The ladder figure: Tc against 1/(cluster sites), and beside it, when the
//! coherent-anomaly extrapolation was made, the view its fit rests on.
//!
//! Left panel: each rung with a Tc is one filled circle labelled with its level name (the
//! only circles in the figure, so a reader — or a test — can count the rungs). The
//! inverse-size extrapolation `Tc = Tc* + b/N` (Kikuchi & Brush 1967) is drawn as its
//! line over the cluster rungs with a band of ± its Tc* uncertainty; the
//! coherent-anomaly Tc* (Suzuki 1986) as a triangle at 1/N = 0 with its error bar; the
//! reference as a horizontal line labelled with its source (a Monte Carlo reference with
//! its error band). The Tc axis ends on ticks ([`nice_range`]).
//!
//! Right panel (coherent anomaly): ln χ̄_n against ln(Tc_n − Tc*) for the rungs of the
//! fit (squares), with the fitted line `ln χ̄ = ln A − ψ ln(Tc_n − Tc*)`, ψ = γ − 1; each
//! rung's horizontal bar shows how far it moves when Tc* runs over Tc* ± its error.

use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::file::Figure;
use super::style::{linear_range, nice_range};
use rungs_reference::ladder::{Extrapolated, Ladder, ReferenceKind, RungResult};

/// Height of the figure and width of each panel, in pixels.
const HEIGHT: u32 = 640;
const MAIN_WIDTH: u32 = 900;
const CAM_WIDTH: u32 = 560;
const RUNG: RGBColor = RGBColor(31, 90, 180);
const LINE: RGBColor = RGBColor(200, 80, 20);
const CAM: RGBColor = RGBColor(20, 140, 60);
const REFERENCE: RGBColor = RGBColor(60, 60, 60);
/// The 1/N axis.
const X_RANGE: (f64, f64) = (-0.05, 1.08);

/// The short form of a source for a label: up to the first " — " or ";".
fn short_source(source: &str) -> &str {
    let end = [source.find(" — "), source.find(';')]
        .into_iter()
        .flatten()
        .min()
        .unwrap_or(source.len());
    source[..end].trim()
}

/// The coherent-anomaly extrapolation, if it was made.
fn coherent_anomaly(ladder: &Ladder) -> Option<&Extrapolated> {
    ladder
        .extrapolations
        .iter()
        .find(|e| e.method == "coherent-anomaly" && e.gamma.is_some())
}

/// The Tc axis: every rung, extrapolation (with its error) and the reference, padded a
/// little, then widened to end on ticks; with the number of ticks.
fn y_range(ladder: &Ladder) -> (f64, f64, usize) {
    let mut ys: Vec<f64> = ladder.rungs.iter().filter_map(|r| r.tc).collect();
    for e in &ladder.extrapolations {
        ys.extend([e.tc - e.tc_error, e.tc + e.tc_error]);
    }
    if let Some(r) = &ladder.reference {
        let e = r.tc_error.unwrap_or(0.0);
        ys.extend([r.tc - e, r.tc + e]);
    }
    let (lo, hi) = linear_range(ys, false);
    // Room above the top rung for its label.
    let hi = hi + 0.04 * (hi - lo);
    nice_range(lo, hi, 6)
}

impl Figure for Ladder {
    fn size(&self) -> (u32, u32) {
        let cam = coherent_anomaly(self).map_or(0, |_| CAM_WIDTH);
        (MAIN_WIDTH + cam, HEIGHT)
    }

    fn draw<DB: DrawingBackend>(
        &self,
        root: &DrawingArea<DB, Shift>,
    ) -> Result<(), DrawingAreaErrorKind<DB::ErrorType>> {
        root.fill(&WHITE)?;
        match coherent_anomaly(self) {
            Some(cam) => {
                let (main, side) = root.split_horizontally(MAIN_WIDTH);
                draw_main(&main, self)?;
                draw_coherent_anomaly(&side, self, cam)
            }
            None => draw_main(root, self),
        }
    }
}

/// The Tc-against-1/N panel.
fn draw_main<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    ladder: &Ladder,
) -> Result<(), DrawingAreaErrorKind<DB::ErrorType>> {
    let (y0, y1, ticks) = y_range(ladder);
    let mut chart = ChartBuilder::on(area)
        .caption(
            format!("Tc across the rungs of the ladder: {}", ladder.lattice),
            ("sans-serif", 22),
        )
        .margin(20)
        .x_label_area_size(60)
        .y_label_area_size(80)
        .build_cartesian_2d(X_RANGE.0..X_RANGE.1, y0..y1)?;
    draw_mesh(
        &mut chart,
        "1 / N   (N = sites of the level's largest cluster)",
        "Tc   (units of J / k_B)",
        ticks,
    )?;
    let referenced = draw_reference(&mut chart, ladder)?;
    let extrapolated = draw_extrapolations(&mut chart, ladder)?;
    // The rungs last, on top: one circle and one label each, placed by `place_labels`
    // so that no label covers another or another rung.
    let font = ("sans-serif", 15).into_font();
    let label = font.color(&RUNG);
    let mut points: Vec<(f64, f64, String)> = ladder
        .rungs
        .iter()
        .filter_map(|r| {
            let tc = r.tc?;
            Some((
                1.0 / r.max_cluster_sites as f64,
                tc,
                format!("{} ({})", r.level, r.max_cluster_sites),
            ))
        })
        .collect();
    points.sort_by(|a, b| b.0.total_cmp(&a.0));
    let offsets = label_offsets(area, &chart, &font, &points)?;
    let leader = ShapeStyle::from(&RUNG.mix(0.6)).stroke_width(1);
    let mut placed = Vec::with_capacity(points.len());
    for ((x, y, text), (offset, lead)) in points.into_iter().zip(offsets) {
        let tail = lead.unwrap_or((0, 0));
        placed.push(
            EmptyElement::at((x, y))
                + PathElement::new(vec![(0, 0), tail], leader)
                + Circle::new((0, 0), 6, RUNG.filled())
                + Text::new(text, offset, label.clone()),
        );
    }
    chart.draw_series(placed)?;
    // Rungs without a Tc have no point: say which, and why, in the lower left corner.
    let listed = |skipped: bool| -> Vec<String> {
        ladder
            .rungs
            .iter()
            .filter(|r| r.tc.is_none() && r.skipped.is_some() == skipped)
            .map(|r: &RungResult| format!("{} ({})", r.level, r.max_cluster_sites))
            .collect()
    };
    let mut lines = Vec::new();
    for (skipped, what) in [(false, "no transition found"), (true, "not computed")] {
        let rungs = listed(skipped);
        if !rungs.is_empty() {
            lines.push(format!("{what}: {}", rungs.join(", ")));
        }
    }
    let style = ("sans-serif", 14)
        .into_font()
        .color(&RGBColor(90, 90, 90))
        .pos(Pos::new(HPos::Left, VPos::Bottom));
    for (i, line) in lines.into_iter().rev().enumerate() {
        chart.draw_series(std::iter::once(
            EmptyElement::at((X_RANGE.0 + 0.01, y0 + 0.02 * (y1 - y0)))
                + Text::new(line, (0, -18 * i as i32), style.clone()),
        ))?;
    }
    // No reference and no extrapolation: no legend (an empty box otherwise).
    if referenced || extrapolated {
        draw_legend(&mut chart, SeriesLabelPosition::UpperLeft)?;
    }
    Ok(())
}

/// The pixel offsets of the labels of `points` (data coordinates, label text) from their
/// points, by [`place_labels`], and of each displaced label's leader-line end.
#[allow(clippy::type_complexity)]
fn label_offsets<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    chart: &Chart<'_, DB>,
    font: &FontDesc<'_>,
    points: &[(f64, f64, String)],
) -> Result<Vec<((i32, i32), Option<(i32, i32)>)>, DrawingAreaErrorKind<DB::ErrorType>> {
    let mut marks = Vec::with_capacity(points.len());
    for (x, y, text) in points {
        let (w, h) = area.estimate_text_size(text, &TextStyle::from(font.clone()))?;
        marks.push((chart.backend_coord(&(*x, *y)), (w as i32, h as i32)));
    }
    let (xr, yr) = chart.plotting_area().get_pixel_range();
    Ok(place_labels(&marks, (xr.start, yr.start, xr.end, yr.end)))
}

/// Places point labels so that none covers another label or another point's marker
/// (6 px): for each point in turn, the first free place of right-above, right-below,
/// left-above, left-below, then the same one, two and three lines farther out (those
/// with a leader line from the point, its end returned beside the offset). A place
/// must also lie inside `bounds` (left, top, right, bottom, pixels). When nothing is
/// free the first place is taken. `marks` are (point, label size) in pixels.
#[allow(clippy::type_complexity)]
fn place_labels(
    marks: &[((i32, i32), (i32, i32))],
    bounds: (i32, i32, i32, i32),
) -> Vec<((i32, i32), Option<(i32, i32)>)> {
    const GAP: i32 = 9;
    const MARK: i32 = 7;
    let overlaps = |a: (i32, i32, i32, i32), b: (i32, i32, i32, i32)| {
        a.0 < b.2 && b.0 < a.2 && a.1 < b.3 && b.1 < a.3
    };
    let mut taken: Vec<(i32, i32, i32, i32)> = Vec::with_capacity(marks.len());
    let mut out = Vec::with_capacity(marks.len());
    for (k, &((px, py), (w, h))) in marks.iter().enumerate() {
        let line = h + 3;
        let mut candidates = Vec::new();
        for far in 0..4 {
            let up = -h - 5 - far * line;
            let down = 6 + far * line;
            for (dx, dy) in [(GAP, up), (GAP, down), (-GAP - w, up), (-GAP - w, down)] {
                candidates.push(((dx, dy), far > 0));
            }
        }
        let free = |&((dx, dy), _): &((i32, i32), bool)| {
            let b = (px + dx, py + dy, px + dx + w, py + dy + h);
            let inside = b.0 >= bounds.0 && b.1 >= bounds.1 && b.2 <= bounds.2 && b.3 <= bounds.3;
            inside
                && !taken.iter().any(|t| overlaps(*t, b))
                && !marks.iter().enumerate().any(|(j, &((qx, qy), _))| {
                    j != k && overlaps((qx - MARK, qy - MARK, qx + MARK, qy + MARK), b)
                })
        };
        let ((dx, dy), lead) = candidates
            .iter()
            .copied()
            .find(free)
            .unwrap_or(candidates[0]);
        taken.push((px + dx, py + dy, px + dx + w, py + dy + h));
        // A displaced label's leader line ends at the middle of its near edge.
        let end = (if dx > 0 { dx } else { dx + w }, dy + h / 2);
        out.push(((dx, dy), lead.then_some(end)));
    }
    out
}

/// A panel's legend box at `position`, sized to its entries.
fn draw_legend<'a, DB: DrawingBackend + 'a>(
    chart: &mut Chart<'a, DB>,
    position: SeriesLabelPosition,
) -> Result<(), DrawingAreaErrorKind<DB::ErrorType>> {
    chart
        .configure_series_labels()
        .position(position)
        .margin(12)
        .legend_area_size(30)
        .label_font(("sans-serif", 14))
        .background_style(WHITE.mix(0.9))
        .border_style(RGBColor(180, 180, 180))
        .draw()
}

/// Axes with descriptions, `y_ticks` ticks on y, light grid.
fn draw_mesh<'a, DB: DrawingBackend + 'a>(
    chart: &mut Chart<'a, DB>,
    x_desc: &str,
    y_desc: &str,
    y_ticks: usize,
) -> Result<(), DrawingAreaErrorKind<DB::ErrorType>> {
    chart
        .configure_mesh()
        .x_desc(x_desc)
        .y_desc(y_desc)
        .y_labels(y_ticks)
        .axis_desc_style(("sans-serif", 17))
        .label_style(("sans-serif", 15))
        .light_line_style(WHITE)
        .bold_line_style(RGBColor(225, 225, 225))
        .draw()
}

type Chart<'a, DB> = ChartContext<
    'a,
    DB,
    Cartesian2d<plotters::coord::types::RangedCoordf64, plotters::coord::types::RangedCoordf64>,
>;

/// The reference as a horizontal line (with its error band for Monte Carlo), labelled;
/// whether there was one (a legend entry).
fn draw_reference<DB: DrawingBackend>(
    chart: &mut Chart<DB>,
    ladder: &Ladder,
) -> Result<bool, DrawingAreaErrorKind<DB::ErrorType>> {
    let Some(r) = &ladder.reference else {
        return Ok(false);
    };
    let (x0, x1) = X_RANGE;
    if let Some(e) = r.tc_error.filter(|e| *e > 0.0) {
        chart.draw_series(std::iter::once(Rectangle::new(
            [(x0, r.tc - e), (x1, r.tc + e)],
            REFERENCE.mix(0.15).filled(),
        )))?;
    }
    let what = match r.kind {
        ReferenceKind::MonteCarlo => format!(
            "Monte Carlo (Binder crossing), this run: Tc = {:.4} ± {:.4}",
            r.tc,
            r.tc_error.unwrap_or(0.0)
        ),
        kind => format!("reference ({}): Tc = {:.6}", kind.as_str(), r.tc),
    };
    // The line's own label, at the right end, just above it.
    let tag = match r.kind {
        ReferenceKind::MonteCarlo => "Monte Carlo (this run)".to_string(),
        kind => format!("{}: {}", kind.as_str(), short_source(&r.source)),
    };
    let style = ("sans-serif", 14)
        .into_font()
        .color(&REFERENCE)
        .pos(Pos::new(HPos::Right, VPos::Bottom));
    chart.draw_series(std::iter::once(
        EmptyElement::at((1.06, r.tc)) + Text::new(tag, (0, -4), style),
    ))?;
    chart
        .draw_series(LineSeries::new(
            [(x0, r.tc), (x1, r.tc)],
            ShapeStyle::from(&REFERENCE).stroke_width(2),
        ))?
        .label(what)
        .legend(|(x, y)| {
            PathElement::new(
                [(x, y), (x + 24, y)],
                ShapeStyle::from(&REFERENCE).stroke_width(2),
            )
        });
    Ok(true)
}

/// The inverse-size line with its band and the coherent-anomaly Tc* with its error bar;
/// whether either was drawn (a legend entry).
fn draw_extrapolations<DB: DrawingBackend>(
    chart: &mut Chart<DB>,
    ladder: &Ladder,
) -> Result<bool, DrawingAreaErrorKind<DB::ErrorType>> {
    let mut drawn = false;
    let x_end = ladder
        .rungs
        .iter()
        .filter(|r| r.max_cluster_sites >= 2 && r.tc.is_some())
        .map(|r| 1.0 / r.max_cluster_sites as f64)
        .fold(0.0, f64::max);
    for e in &ladder.extrapolations {
        match (e.method, e.slope) {
            ("inverse-size", Some(b)) => {
                let line = |shift: f64| move |x: f64| e.tc + shift + b * x;
                let (lo, hi) = (line(-e.tc_error), line(e.tc_error));
                let mut band = vec![(0.0, lo(0.0)), (x_end, lo(x_end))];
                band.extend([(x_end, hi(x_end)), (0.0, hi(0.0))]);
                chart.draw_series(std::iter::once(Polygon::new(band, LINE.mix(0.15).filled())))?;
                chart
                    .draw_series(LineSeries::new(
                        [(0.0, e.tc), (x_end, line(0.0)(x_end))],
                        ShapeStyle::from(&LINE).stroke_width(2),
                    ))?
                    .label(format!(
                        "inverse-size fit: Tc* = {:.4} ± {:.4} (band)",
                        e.tc, e.tc_error
                    ))
                    .legend(|(x, y)| {
                        PathElement::new(
                            [(x, y), (x + 24, y)],
                            ShapeStyle::from(&LINE).stroke_width(2),
                        )
                    });
                drawn = true;
            }
            ("coherent-anomaly", _) => {
                // The error bar: a vertical stroke with caps.
                let style = ShapeStyle::from(&CAM).stroke_width(2);
                let (lo, hi) = (e.tc - e.tc_error, e.tc + e.tc_error);
                chart.draw_series([
                    PathElement::new([(0.0, lo), (0.0, hi)], style),
                    PathElement::new([(-0.012, lo), (0.012, lo)], style),
                    PathElement::new([(-0.012, hi), (0.012, hi)], style),
                ])?;
                let gamma = match (e.gamma, e.gamma_error) {
                    (Some(g), Some(ge)) => format!(", γ = {g:.3} ± {ge:.3}"),
                    _ => String::new(),
                };
                chart
                    .draw_series(std::iter::once(TriangleMarker::new(
                        (0.0, e.tc),
                        8,
                        CAM.filled(),
                    )))?
                    .label(format!(
                        "coherent-anomaly Tc* = {:.4} ± {:.4}{gamma}",
                        e.tc, e.tc_error
                    ))
                    .legend(|(x, y)| TriangleMarker::new((x + 12, y), 7, CAM.filled()));
                drawn = true;
            }
            _ => {}
        }
    }
    Ok(drawn)
}

/// One rung of the coherent-anomaly fit: label, ln(Tc_n − Tc*) at Tc* and at Tc* ± its
/// error (left, right; the left end is missing when Tc* + error reaches Tc_n), ln χ̄_n.
struct CamPoint {
    label: String,
    x: f64,
    x_left: Option<f64>,
    x_right: f64,
    y: f64,
}

/// The rungs of the coherent-anomaly fit as points of the ln–ln view.
fn cam_points(ladder: &Ladder, cam: &Extrapolated) -> Vec<CamPoint> {
    ladder
        .rungs
        .iter()
        .filter(|r| cam.fitted.contains(&r.level))
        .filter_map(|r| {
            let (tc, a) = (r.tc?, r.amplitude?);
            let gap = tc - cam.tc;
            (gap > 0.0 && a > 0.0).then(|| CamPoint {
                label: r.level.clone(),
                x: gap.ln(),
                x_left: Some(gap - cam.tc_error).filter(|g| *g > 0.0).map(f64::ln),
                x_right: (gap + cam.tc_error).ln(),
                y: a.ln(),
            })
        })
        .collect()
}

/// The coherent-anomaly panel: ln χ̄_n against ln(Tc_n − Tc*) with the fitted line.
fn draw_coherent_anomaly<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    ladder: &Ladder,
    cam: &Extrapolated,
) -> Result<(), DrawingAreaErrorKind<DB::ErrorType>> {
    let points = cam_points(ladder, cam);
    let psi = cam.gamma.unwrap_or(1.0) - 1.0;
    // The fitted line through the points: slope −ψ, intercept the mean of ln χ̄ + ψ x
    // (the least-squares intercept at that slope).
    let n = points.len().max(1) as f64;
    let ln_a = points.iter().map(|p| p.y + psi * p.x).sum::<f64>() / n;
    let xs = points
        .iter()
        .flat_map(|p| [Some(p.x), p.x_left, Some(p.x_right)])
        .flatten();
    let (x0, x1) = linear_range(xs, false);
    // Room on the right for the label of the last rung.
    let x1 = x1 + 0.1 * (x1 - x0);
    let (y0, y1) = linear_range(
        points
            .iter()
            .map(|p| p.y)
            .chain([ln_a - psi * x0, ln_a - psi * x1]),
        false,
    );
    let (y0, y1, ticks) = nice_range(y0, y1 + 0.06 * (y1 - y0), 5);
    let mut chart = ChartBuilder::on(area)
        .caption("coherent anomaly: the fit behind Tc*", ("sans-serif", 22))
        .margin(20)
        .x_label_area_size(60)
        .y_label_area_size(70)
        .build_cartesian_2d(x0..x1, y0..y1)?;
    draw_mesh(
        &mut chart,
        "ln(Tc_n − Tc*)",
        "ln χ̄_n   (χ ≈ χ̄_n / (T − Tc_n))",
        ticks,
    )?;
    let line = ShapeStyle::from(&CAM).stroke_width(2);
    chart
        .draw_series(LineSeries::new(
            [(x0, ln_a - psi * x0), (x1, ln_a - psi * x1)],
            line,
        ))?
        .label(format!(
            "fit: slope −ψ = 1 − γ, γ = {:.3} ± {:.3}",
            cam.gamma.unwrap_or(f64::NAN),
            cam.gamma_error.unwrap_or(f64::NAN)
        ))
        .legend(move |(x, y)| PathElement::new([(x, y), (x + 24, y)], line));
    let bar = ShapeStyle::from(&RUNG).stroke_width(1);
    for p in &points {
        let left = p.x_left.unwrap_or(x0);
        chart.draw_series([
            PathElement::new([(left, p.y), (p.x_right, p.y)], bar),
            PathElement::new(
                [
                    (p.x_right, p.y - 0.01 * (y1 - y0)),
                    (p.x_right, p.y + 0.01 * (y1 - y0)),
                ],
                bar,
            ),
        ])?;
        if let Some(l) = p.x_left {
            let cap = 0.01 * (y1 - y0);
            chart.draw_series(std::iter::once(PathElement::new(
                [(l, p.y - cap), (l, p.y + cap)],
                bar,
            )))?;
        }
    }
    let font = ("sans-serif", 15).into_font();
    let label = font.color(&RUNG);
    let labelled: Vec<(f64, f64, String)> =
        points.iter().map(|p| (p.x, p.y, p.label.clone())).collect();
    let offsets = label_offsets(area, &chart, &font, &labelled)?;
    let leader = ShapeStyle::from(&RUNG.mix(0.6)).stroke_width(1);
    chart
        .draw_series(points.iter().zip(offsets).map(|(p, (offset, lead))| {
            EmptyElement::at((p.x, p.y))
                + PathElement::new(vec![(0, 0), lead.unwrap_or((0, 0))], leader)
                + Rectangle::new([(-5, -5), (5, 5)], RUNG.filled())
                + Text::new(p.label.clone(), offset, label.clone())
        }))?
        .label(format!(
            "rungs; bars: Tc* = {:.4} ± {:.4}",
            cam.tc, cam.tc_error
        ))
        .legend(|(x, y)| Rectangle::new([(x + 7, y - 5), (x + 17, y + 5)], RUNG.filled()));
    draw_legend(&mut chart, SeriesLabelPosition::UpperRight)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A rung for figure tests: its level, largest cluster and Tc, nothing else.
    fn rung(level: &str, sites: usize, tc: Option<f64>) -> RungResult {
        RungResult {
            level: level.into(),
            max_cluster_sites: sites,
            variables: 1,
            tc,
            amplitude: None,
            mode: None,
            searched_down_to: None,
            seconds: 0.0,
            skipped: None,
        }
    }

    /// A ladder of `rungs` alone: no reference, no extrapolation, no notes.
    fn bare_ladder(lattice: &str, dimension: usize, rungs: Vec<RungResult>) -> Ladder {
        Ladder {
            lattice: lattice.into(),
            dimension,
            reference: None,
            rungs,
            extrapolations: Vec::new(),
            notes: Vec::new(),
        }
    }

    #[test]
    fn the_tc_axis_ends_on_a_tick_above_the_top_rung() {
        // Figure input only (no physics checked here): the site, pair and plaquette Tc of
        // lattices/square.yaml as `rungs ladder` prints them.
        let ladder = bare_ladder(
            "square",
            2,
            vec![
                rung("site", 1, Some(4.0)),
                rung("pair", 2, Some(2.885)),
                rung("plaquette", 4, Some(2.4257)),
            ],
        );
        let (lo, hi, ticks) = y_range(&ladder);
        let step = (hi - lo) / (ticks - 1) as f64;
        assert!(hi >= 4.0 && lo <= 2.4257, "{lo}..{hi}");
        // The top of the axis is a tick: a whole number of 1-2-5 steps from the bottom,
        // and the bottom a multiple of the step.
        assert!(
            (lo / step - (lo / step).round()).abs() < 1e-6,
            "{lo} {step}"
        );
        let mantissa = step / 10f64.powf(step.log10().floor());
        assert!(
            [1.0, 2.0, 5.0].iter().any(|m| (mantissa - m).abs() < 1e-6),
            "{step}"
        );
        assert!(hi - 4.0 < 2.0 * step, "no needless empty band: {hi}");
    }

    #[test]
    fn a_ladder_without_reference_or_extrapolation_has_no_empty_legend() {
        // Figure input only (no physics checked here): a made-up frustrated lattice whose
        // pair rung finds no transition, and no reference or extrapolation to show.
        let ladder = bare_ladder(
            "made_up",
            3,
            vec![
                rung("site", 1, Some(3.8)),
                rung("pair", 2, None),
                rung("cube", 8, Some(2.32)),
            ],
        );
        let svg = crate::plot::file::render_svg(&ladder).expect("the figure renders");
        // The legend's border colour (180, 180, 180) appears only with a legend.
        assert!(
            !svg.to_uppercase().contains("#B4B4B4"),
            "an empty legend box"
        );
        assert!(svg.contains("no transition found: pair (2)"));
        // A rung that was not computed is not said to have no transition.
        let mut skipped = ladder;
        skipped.rungs[2].tc = None;
        skipped.rungs[2].skipped = Some("too large".into());
        let svg = crate::plot::file::render_svg(&skipped).expect("the figure renders");
        assert!(svg.contains("no transition found: pair (2)"));
        assert!(svg.contains("not computed: cube (8)"));
    }

    #[test]
    fn labels_of_crowded_rungs_do_not_overlap() {
        // Pixel positions as the 3×4, 4×4, 4×5 and 5×5 blocks of the square lattice lie
        // on the ladder figure (1/N from 0.083 to 0.04, Tc within 0.025): close enough
        // that fixed above/below places overlap. Figure geometry only.
        let marks = [
            ((170, 300), (110, 15)),
            ((158, 318), (110, 15)),
            ((150, 330), (110, 15)),
            ((144, 340), (110, 15)),
            ((600, 100), (80, 15)),
        ];
        let placed = place_labels(&marks, (0, 0, 900, 640));
        let boxes: Vec<(i32, i32, i32, i32)> = marks
            .iter()
            .zip(&placed)
            .map(|(((px, py), (w, h)), ((dx, dy), _))| (px + dx, py + dy, px + dx + w, py + dy + h))
            .collect();
        for (i, a) in boxes.iter().enumerate() {
            for b in &boxes[i + 1..] {
                let overlap = a.0 < b.2 && b.0 < a.2 && a.1 < b.3 && b.1 < a.3;
                assert!(!overlap, "{a:?} overlaps {b:?}");
            }
            for (j, ((qx, qy), _)) in marks.iter().enumerate() {
                let inside = *qx > a.0 - 7 && *qx < a.2 + 7 && *qy > a.1 - 7 && *qy < a.3 + 7;
                assert!(j == i || !inside, "label {i} covers point {j}");
            }
        }
        // A lone point keeps the usual place: right, above its point.
        assert_eq!(placed[4], ((9, -20), None));
    }

    #[test]
    fn short_sources() {
        assert_eq!(
            short_source("Onsager (1944), Phys. Rev. 65, 117 — exact, Tc = 2J/ln(1+√2)"),
            "Onsager (1944), Phys. Rev. 65, 117"
        );
        assert_eq!(
            short_source("Houtappel (1950), Physica 16, 425; Potts (1952)"),
            "Houtappel (1950), Physica 16, 425"
        );
        assert_eq!(short_source("plain"), "plain");
    }
}

//! The ladder figure: Tc against 1/(cluster sites).
//!
//! Each rung with a Tc is one filled circle labelled with its level name (the only
//! circles in the figure, so a reader — or a test — can count the rungs). The
//! inverse-size extrapolation `Tc = Tc* + b/N` (Kikuchi & Brush 1967) is drawn as its
//! line over the cluster rungs with a band of ± its Tc* uncertainty; the
//! coherent-anomaly Tc* (Suzuki 1986) as a triangle at 1/N = 0 with its error bar; the
//! reference as a horizontal line labelled with its source (a Monte Carlo reference with
//! its error band). Drawn into a string with plotters' SVG backend, then written
//! atomically like every output file.

use std::path::Path;

use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use crate::commands::ladder::{Ladder, ReferenceKind};
use crate::error::CliError;
use crate::output::write::write_atomic;

/// Figure size in pixels.
const SIZE: (u32, u32) = (960, 640);
const RUNG: RGBColor = RGBColor(31, 90, 180);
const LINE: RGBColor = RGBColor(200, 80, 20);
const CAM: RGBColor = RGBColor(20, 140, 60);
const REFERENCE: RGBColor = RGBColor(60, 60, 60);

/// Draw `ladder` and write it to `path` atomically.
pub fn write(path: &Path, ladder: &Ladder) -> Result<(), CliError> {
    let svg = render(ladder).map_err(|e| CliError::Write {
        path: path.to_path_buf(),
        source: std::io::Error::other(format!("drawing the figure failed: {e}")),
    })?;
    write_atomic(path, svg.as_bytes())
}

/// The short form of a source for a label: up to the first " — " or ";".
fn short_source(source: &str) -> &str {
    let end = [source.find(" — "), source.find(';')]
        .into_iter()
        .flatten()
        .min()
        .unwrap_or(source.len());
    source[..end].trim()
}

/// The y range that shows every rung, extrapolation and the reference, padded.
fn y_range(ladder: &Ladder) -> (f64, f64) {
    let mut ys: Vec<f64> = ladder.rungs.iter().filter_map(|r| r.tc).collect();
    for e in &ladder.extrapolations {
        ys.extend([e.tc - e.tc_error, e.tc + e.tc_error]);
    }
    if let Some(r) = &ladder.reference {
        let e = r.tc_error.unwrap_or(0.0);
        ys.extend([r.tc - e, r.tc + e]);
    }
    let lo = ys
        .iter()
        .copied()
        .filter(|y| y.is_finite())
        .fold(f64::INFINITY, f64::min);
    let hi = ys
        .iter()
        .copied()
        .filter(|y| y.is_finite())
        .fold(f64::NEG_INFINITY, f64::max);
    if !(lo.is_finite() && hi.is_finite()) {
        return (0.0, 1.0);
    }
    let pad = ((hi - lo) * 0.08).max(0.02 * hi.abs()).max(1e-3);
    (lo - pad, hi + 1.5 * pad)
}

/// The SVG text of the figure.
pub fn render(ladder: &Ladder) -> Result<String, Box<dyn std::error::Error>> {
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, SIZE).into_drawing_area();
        root.fill(&WHITE)?;
        let (y0, y1) = y_range(ladder);
        let mut chart = ChartBuilder::on(&root)
            .caption(
                format!("Tc across the rungs of the ladder: {}", ladder.lattice),
                ("sans-serif", 24),
            )
            .margin(20)
            .x_label_area_size(60)
            .y_label_area_size(80)
            .build_cartesian_2d(-0.05f64..1.08f64, y0..y1)?;
        chart
            .configure_mesh()
            .x_desc("1 / N   (N = sites of the level's largest cluster)")
            .y_desc("Tc   (units of J / k_B)")
            .axis_desc_style(("sans-serif", 18))
            .label_style(("sans-serif", 15))
            .light_line_style(WHITE)
            .bold_line_style(RGBColor(225, 225, 225))
            .draw()?;
        draw_reference(&mut chart, ladder)?;
        draw_extrapolations(&mut chart, ladder)?;
        // The rungs last, on top: one circle and one label each. Labels go above-right of
        // their point, or below-right when the next rung to the right is close (so that
        // neighbouring labels do not overlap).
        let label = ("sans-serif", 16).into_font().color(&RUNG);
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
        let mut last: Option<(f64, bool)> = None;
        let mut placed = Vec::with_capacity(points.len());
        for (x, y, text) in points {
            let below = matches!(last, Some((lx, lb)) if lx - x < 0.1 && !lb);
            last = Some((x, below));
            let offset = if below { (9, 6) } else { (9, -20) };
            placed.push(
                EmptyElement::at((x, y))
                    + Circle::new((0, 0), 6, RUNG.filled())
                    + Text::new(text, offset, label.clone()),
            );
        }
        chart.draw_series(placed)?;
        chart
            .configure_series_labels()
            .position(SeriesLabelPosition::UpperLeft)
            .label_font(("sans-serif", 15))
            .background_style(WHITE.mix(0.9))
            .border_style(RGBColor(180, 180, 180))
            .draw()?;
        root.present()?;
    }
    Ok(svg)
}

type Chart<'a, 'b> = ChartContext<
    'a,
    SVGBackend<'b>,
    Cartesian2d<plotters::coord::types::RangedCoordf64, plotters::coord::types::RangedCoordf64>,
>;

/// The reference as a horizontal line (with its error band for Monte Carlo), labelled.
fn draw_reference(chart: &mut Chart, ladder: &Ladder) -> Result<(), Box<dyn std::error::Error>> {
    let Some(r) = &ladder.reference else {
        return Ok(());
    };
    let (x0, x1) = (-0.05, 1.08);
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
        kind => format!(
            "reference ({}): Tc = {:.6}, {}",
            kind.as_str(),
            r.tc,
            short_source(&r.source)
        ),
    };
    // The line's own label, at the right end, just above it.
    let tag = match r.kind {
        ReferenceKind::MonteCarlo => "Monte Carlo (this run)".to_string(),
        kind => format!("{}: {}", kind.as_str(), short_source(&r.source)),
    };
    let style = ("sans-serif", 15)
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
    Ok(())
}

/// The inverse-size line with its band and the coherent-anomaly Tc* with its error bar.
fn draw_extrapolations(
    chart: &mut Chart,
    ladder: &Ladder,
) -> Result<(), Box<dyn std::error::Error>> {
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
                        "inverse-size fit: Tc* = {:.4} ± {:.4}",
                        e.tc, e.tc_error
                    ))
                    .legend(|(x, y)| {
                        PathElement::new(
                            [(x, y), (x + 24, y)],
                            ShapeStyle::from(&LINE).stroke_width(2),
                        )
                    });
            }
            ("coherent-anomaly", _) => {
                // The error bar: a vertical stroke with caps (pixel offsets for the caps).
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
            }
            _ => {}
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

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

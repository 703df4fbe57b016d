//! The `inspect --plot` figure: a patch of the lattice as the file describes it.
//!
//! One panel per named level: a patch of the lattice, sites as black dots (those of cell
//! 0 named), each bond a line coloured by its coupling (one legend entry per coupling,
//! with J), and one translate of every cluster shape of the level drawn near the middle
//! of the patch as a translucent hull in the level's colour (one legend entry per
//! level). It is the quickest way to
//! see what a file really says: a missing bond, a coupling on the wrong bonds, or a
//! level whose shapes cover only part of the lattice show at a glance.
//!
//! Coordinates are Cartesian (`Σ_k n_k v_k + r_a`). 2D lattices are drawn in their
//! plane, 1D lattices along a line, 3D lattices in an oblique (cabinet-style) projection
//! `(x + ½ z cos 30°, y + ½ z sin 30°)`. The legend has a panel of its own on the right. [`draw`] draws on any plotters drawing area
//! (SVG or bitmap); [`write()`] renders SVG and writes it atomically.

use std::path::Path;

use plotters::coord::Shift;
use plotters::prelude::*;

use rungs_lattice::model::cell_add;
use rungs_lattice::{Cell, Cluster, Lattice, Level};

use super::style::PALETTE;
use crate::error::CliError;
use crate::plot::file::Figure;

/// Figure size in pixels.
pub const SIZE: (u32, u32) = (1200, 860);
const MARGIN: u32 = 20;
/// Height of a panel's own caption, in pixels.
const PANEL_CAPTION: u32 = 30;
/// Width of the legend panel on the right, in pixels.
const LEGEND: u32 = 300;
const SITE: RGBColor = RGBColor(20, 20, 20);

/// The lattice patch as a figure: the lattice and its built levels.
pub struct LatticeFigure<'a> {
    /// The lattice.
    pub lattice: &'a Lattice,
    /// Its levels.
    pub levels: &'a [Level],
}

impl Figure for LatticeFigure<'_> {
    fn size(&self) -> (u32, u32) {
        SIZE
    }
    fn draw<DB: DrawingBackend>(
        &self,
        root: &DrawingArea<DB, Shift>,
    ) -> Result<(), DrawingAreaErrorKind<DB::ErrorType>> {
        draw(root, self.lattice, self.levels)
    }
}

/// Draw the figure for `lattice` and its built `levels` and write it to `path` (SVG or
/// PNG by the extension, through [`crate::plot::file::write`]).
pub fn write(path: &Path, lattice: &Lattice, levels: &[Level]) -> Result<(), CliError> {
    crate::plot::file::write(path, &LatticeFigure { lattice, levels })
}

/// The projected 2D position of site `a` in cell `c`.
fn position(lattice: &Lattice, a: usize, c: Cell) -> (f64, f64) {
    let mut r = lattice.basis()[a].position;
    for (n, v) in c.iter().zip(lattice.vectors()) {
        for (x, vx) in r.iter_mut().zip(v) {
            *x += f64::from(*n) * vx;
        }
    }
    match lattice.dimension() {
        3 => {
            let (c30, s30) = (0.5 * 3f64.sqrt() / 2.0, 0.5 * 0.5);
            (r[0] + c30 * r[2], r[1] + s30 * r[2])
        }
        _ => (r[0], r[1]),
    }
}

/// The cells of the patch: `n` along each of the lattice's dimensions.
fn patch_cells(dimension: usize, n: i32) -> Vec<Cell> {
    let span = |k: usize| if k < dimension { 0..n } else { 0..1 };
    let mut cells = Vec::new();
    for z in span(2) {
        for y in span(1) {
            for x in span(0) {
                cells.push([x, y, z]);
            }
        }
    }
    cells
}

/// Cells per side: enough for the widest cluster with a cell to spare on each side.
fn patch_size(lattice: &Lattice, clusters: &[&Cluster]) -> i32 {
    let widest = clusters
        .iter()
        .map(|c| {
            (0..lattice.dimension())
                .map(|k| {
                    let ks: Vec<i32> = c.sites().map(|(_, cell)| cell[k]).collect();
                    ks.iter().max().unwrap_or(&0) - ks.iter().min().unwrap_or(&0) + 1
                })
                .max()
                .unwrap_or(1)
        })
        .max()
        .unwrap_or(1);
    match lattice.dimension() {
        1 => (widest + 2).clamp(8, 12),
        2 => (widest + 2).clamp(4, 8),
        // 3D patches get busy fast in projection: as small as the clusters allow.
        _ => (widest + 1).clamp(2, 4),
    }
}

/// The convex hull of `points` (Andrew's monotone chain), counter-clockwise.
fn hull(mut points: Vec<(f64, f64)>) -> Vec<(f64, f64)> {
    points.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.total_cmp(&b.1)));
    points.dedup_by(|a, b| (a.0 - b.0).abs() < 1e-9 && (a.1 - b.1).abs() < 1e-9);
    if points.len() < 3 {
        return points;
    }
    let cross = |o: (f64, f64), a: (f64, f64), b: (f64, f64)| {
        (a.0 - o.0) * (b.1 - o.1) - (a.1 - o.1) * (b.0 - o.0)
    };
    let mut lower: Vec<(f64, f64)> = Vec::new();
    for &p in &points {
        while lower.len() >= 2 && cross(lower[lower.len() - 2], lower[lower.len() - 1], p) <= 0.0 {
            lower.pop();
        }
        lower.push(p);
    }
    let mut upper: Vec<(f64, f64)> = Vec::new();
    for &p in points.iter().rev() {
        while upper.len() >= 2 && cross(upper[upper.len() - 2], upper[upper.len() - 1], p) <= 0.0 {
            upper.pop();
        }
        upper.push(p);
    }
    lower.pop();
    upper.pop();
    lower.extend(upper);
    lower
}

/// Ranges around `points` with the same scale on both axes in a `w × h` pixel area.
fn equal_aspect(points: &[(f64, f64)], w: f64, h: f64) -> ((f64, f64), (f64, f64)) {
    let (mut x0, mut x1, mut y0, mut y1) = (f64::MAX, f64::MIN, f64::MAX, f64::MIN);
    for &(x, y) in points {
        x0 = x0.min(x);
        x1 = x1.max(x);
        y0 = y0.min(y);
        y1 = y1.max(y);
    }
    if x0 > x1 {
        return ((-1.0, 1.0), (-1.0, 1.0));
    }
    let pad = 0.08 * (x1 - x0).max(y1 - y0).max(1.0);
    let (cx, cy) = (0.5 * (x0 + x1), 0.5 * (y0 + y1));
    let mut half_w = 0.5 * (x1 - x0) + pad;
    let mut half_h = 0.5 * (y1 - y0) + pad;
    if half_w / half_h < w / h {
        half_w = half_h * w / h;
    } else {
        half_h = half_w * h / w;
    }
    ((cx - half_w, cx + half_w), (cy - half_h, cy + half_h))
}

/// The shapes drawn for one level: its maximal clusters of more than two sites.
fn shapes(level: &Level) -> Vec<&Cluster> {
    level.maximal.iter().filter(|m| m.len() > 2).collect()
}

/// One legend entry: a sample (bond line, level patch or site dot) and its text.
enum Entry {
    Bond(RGBColor, String),
    Level(RGBColor, String),
    Site(String),
}

/// The legend, drawn as a column of entries in its own panel.
fn draw_legend<DB: DrawingBackend>(
    panel: &DrawingArea<DB, Shift>,
    entries: &[Entry],
) -> Result<(), DrawingAreaErrorKind<DB::ErrorType>> {
    let font = ("sans-serif", 15).into_font().color(&SITE);
    let mut y = i32::try_from(MARGIN + PANEL_CAPTION).unwrap_or(50);
    for e in entries {
        let text = match e {
            Entry::Bond(c, t) => {
                panel.draw(&PathElement::new(vec![(8, y), (36, y)], c.stroke_width(3)))?;
                t
            }
            Entry::Level(c, t) => {
                panel.draw(&Rectangle::new(
                    [(8, y - 8), (36, y + 8)],
                    c.mix(0.25).filled(),
                ))?;
                panel.draw(&Rectangle::new(
                    [(8, y - 8), (36, y + 8)],
                    c.stroke_width(3),
                ))?;
                t
            }
            Entry::Site(t) => {
                panel.draw(&Circle::new((22, y), 4, SITE.filled()))?;
                t
            }
        };
        // Long entries continue on a second line, after the first ": ".
        let lines: Vec<&str> = match text.split_once(": ") {
            Some((head, tail)) if text.chars().count() > 30 => vec![head, tail],
            _ => vec![text.as_str()],
        };
        for (i, line) in lines.iter().enumerate() {
            let dy = 18 * i32::try_from(i).unwrap_or(0);
            panel.draw(&Text::new(line.to_string(), (44, y - 8 + dy), font.clone()))?;
        }
        y += 8 + 18 * i32::try_from(lines.len()).unwrap_or(1);
    }
    Ok(())
}

/// The level drawn in one panel: its index (for its colour) and the level.
type PanelLevel<'a> = Option<(usize, &'a Level)>;

/// One panel: a patch of the lattice with its bonds and sites, and one translate of each
/// shape of `level` (if any) near the middle.
fn draw_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    lattice: &Lattice,
    level: PanelLevel,
    colour_of: &dyn Fn(usize) -> RGBColor,
) -> Result<(), DrawingAreaErrorKind<DB::ErrorType>> {
    let dims = lattice.dimension();
    let shown: Vec<&Cluster> = level.map(|(_, l)| shapes(l)).unwrap_or_default();
    let n = patch_size(lattice, &shown);
    let cells = patch_cells(dims, n);
    // One translate of every shape, its mean cell moved to the middle of the patch.
    let placed: Vec<Vec<(usize, Cell)>> = shown
        .iter()
        .map(|c| {
            let mut t = [0; 3];
            for (d, x) in t.iter_mut().enumerate().take(dims) {
                let mean =
                    c.sites().map(|(_, cell)| f64::from(cell[d])).sum::<f64>() / c.len() as f64;
                *x = (0.5 * f64::from(n - 1) - mean).round() as i32;
            }
            c.sites().map(|(a, cell)| (a, cell_add(cell, t))).collect()
        })
        .collect();
    let mut sites: Vec<(usize, Cell)> = cells
        .iter()
        .flat_map(|&c| (0..lattice.sites_per_cell()).map(move |a| (a, c)))
        .collect();
    for &site in placed.iter().flatten() {
        if !sites.contains(&site) {
            sites.push(site);
        }
    }
    let points: Vec<(f64, f64)> = sites
        .iter()
        .map(|&(a, c)| position(lattice, a, c))
        .collect();
    let (w, h) = area.dim_in_pixel();
    let plot_w = f64::from(w.saturating_sub(2 * MARGIN).max(1));
    let plot_h = f64::from(h.saturating_sub(2 * MARGIN + PANEL_CAPTION).max(1));
    let ((x0, x1), (y0, y1)) = equal_aspect(&points, plot_w, plot_h);
    let title = match level {
        Some((_, l)) => format!("level `{}`", l.name),
        None => "no cluster levels".to_string(),
    };
    let mut chart = ChartBuilder::on(area)
        .caption(title, ("sans-serif", 18))
        .margin(MARGIN)
        .build_cartesian_2d(x0..x1, y0..y1)?;
    let outlines: Vec<Vec<(f64, f64)>> = placed
        .iter()
        .map(|s| hull(s.iter().map(|&(a, c)| position(lattice, a, c)).collect()))
        .collect();
    let colour = level.map(|(k, _)| colour_of(k)).unwrap_or(SITE);
    // Shapes: translucent hulls under the bonds (lighter in 3D, where projected shapes
    // overlap), outlines over them.
    let fill = if dims == 3 { 0.07 } else { 0.12 };
    chart.draw_series(
        outlines
            .iter()
            .filter(|o| o.len() >= 3)
            .map(|o| Polygon::new(o.clone(), colour.mix(fill).filled())),
    )?;
    for (i, (name, ..)) in lattice.bonds_per_coupling().iter().enumerate() {
        let bond_colour = PALETTE[i % PALETTE.len()];
        let mut lines = Vec::new();
        for b in lattice.bonds().iter().filter(|b| &b.coupling == name) {
            for &(a, c) in &sites {
                let to = (b.to, cell_add(c, b.cell));
                if a == b.from && sites.contains(&to) {
                    lines.push(PathElement::new(
                        vec![position(lattice, a, c), position(lattice, to.0, to.1)],
                        bond_colour.stroke_width(2),
                    ));
                }
            }
        }
        chart.draw_series(lines)?;
    }
    for outline in &outlines {
        let mut closed = outline.clone();
        let width = if outline.len() >= 3 {
            closed.push(outline[0]);
            3
        } else {
            6 // a collinear shape (1D): a thick segment over its bonds
        };
        chart.draw_series(std::iter::once(PathElement::new(
            closed,
            colour.stroke_width(width),
        )))?;
    }
    // Sites on top; those of cell 0 named.
    chart.draw_series(points.iter().map(|&p| Circle::new(p, 3, SITE.filled())))?;
    let font = ("sans-serif", 14).into_font().color(&SITE);
    chart.draw_series((0..lattice.sites_per_cell()).map(|a| {
        EmptyElement::at(position(lattice, a, [0; 3]))
            + Text::new(lattice.basis()[a].name.clone(), (5, -16), font.clone())
    }))?;
    Ok(())
}

/// Draw the figure on `area` (any plotters backend): one panel per named level (the
/// lattice alone when it has none), and a legend panel on the right.
pub fn draw<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    lattice: &Lattice,
    levels: &[Level],
) -> Result<(), DrawingAreaErrorKind<DB::ErrorType>> {
    area.fill(&WHITE)?;
    let (w, _) = area.dim_in_pixel();
    let named: Vec<&Level> = levels
        .iter()
        .filter(|l| l.name != "site" && l.name != "pair" && !shapes(l).is_empty())
        .collect();
    let couplings = lattice.bonds_per_coupling();
    let colour_of = |k: usize| PALETTE[(couplings.len() + k) % PALETTE.len()];
    let view = match lattice.dimension() {
        1 => "along a line",
        2 => "in the plane",
        _ => "in an oblique projection",
    };
    let titled = area.titled(
        &format!("lattice `{}`, {view}", lattice.name()),
        ("sans-serif", 22),
    )?;
    let (body, panel) = titled.split_horizontally(w.saturating_sub(LEGEND));
    let count = named.len().max(1);
    let cols = (1..=count).find(|c| c * c >= count).unwrap_or(1);
    let rows = count.div_ceil(cols);
    let panels = body.split_evenly((rows, cols));
    if named.is_empty() {
        draw_panel(&panels[0], lattice, None, &colour_of)?;
    }
    for (k, level) in named.iter().enumerate() {
        draw_panel(&panels[k], lattice, Some((k, level)), &colour_of)?;
    }

    let mut legend = Vec::new();
    for (k, level) in named.iter().enumerate() {
        let mut sizes: Vec<usize> = shapes(level).iter().map(|c| c.len()).collect();
        let count = sizes.len();
        sizes.sort_unstable();
        sizes.dedup();
        let sizes: Vec<String> = sizes.iter().map(usize::to_string).collect();
        legend.push(Entry::Level(
            colour_of(k),
            format!(
                "level `{}`: {count} shape{} of {} sites",
                level.name,
                if count == 1 { "" } else { "s" },
                sizes.join("/")
            ),
        ));
    }
    for (i, (name, j, _)) in couplings.iter().enumerate() {
        legend.push(Entry::Bond(
            PALETTE[i % PALETTE.len()],
            format!("bond {name} (J = {j})"),
        ));
    }
    legend.push(Entry::Site("site (named in cell 0)".into()));
    draw_legend(&panel, &legend)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hull_of_a_square_with_an_inner_point() {
        let h = hull(vec![
            (0.0, 0.0),
            (1.0, 0.0),
            (0.5, 0.5),
            (1.0, 1.0),
            (0.0, 1.0),
        ]);
        assert_eq!(h, vec![(0.0, 0.0), (1.0, 0.0), (1.0, 1.0), (0.0, 1.0)]);
        // Collinear points keep only the ends.
        assert_eq!(hull(vec![(0.0, 0.0), (1.0, 0.0), (2.0, 0.0)]).len(), 2);
    }

    #[test]
    fn equal_aspect_keeps_one_scale() {
        let ((x0, x1), (y0, y1)) = equal_aspect(&[(0.0, 0.0), (4.0, 1.0)], 800.0, 400.0);
        assert!(((x1 - x0) / (y1 - y0) - 2.0).abs() < 1e-12);
        assert!(x0 < 0.0 && x1 > 4.0 && y0 < 0.0 && y1 > 1.0);
    }
}

//! Table exporter: plain text for people. The title line first; headings, label–value
//! fields and aligned columns (numbers right-aligned, text left-aligned, widths counted
//! in characters); footer notes last.

use super::{Block, Exporter, Grid, Report, TextDoc};
use crate::error::CliError;

/// Writes [`Report::table`].
#[derive(Debug, Clone, Copy)]
pub struct TableExporter;

impl Exporter for TableExporter {
    fn render(&self, report: &dyn Report) -> Result<String, CliError> {
        Ok(render(&report.table()))
    }
}

/// The text of a document.
pub fn render(doc: &TextDoc) -> String {
    let mut out = String::new();
    out.push_str(&doc.title);
    out.push('\n');
    for block in &doc.blocks {
        match block {
            Block::Heading(h) => {
                out.push('\n');
                out.push_str(h);
                out.push('\n');
            }
            Block::Fields(fields) => {
                let w = fields.iter().map(|(k, _)| width(k)).max().unwrap_or(0);
                for (k, v) in fields {
                    out.push_str(&format!("  {}  {}\n", pad_right(k, w), v));
                }
            }
            Block::Table(grid) => out.push_str(&render_grid(grid)),
            Block::Line(line) => {
                out.push_str("  ");
                out.push_str(line);
                out.push('\n');
            }
        }
    }
    if !doc.notes.is_empty() {
        out.push_str("\nNotes\n");
        for note in &doc.notes {
            out.push_str("  * ");
            out.push_str(note);
            out.push('\n');
        }
    }
    out
}

/// Aligned columns with a header and a rule under it, indented by two spaces.
pub fn render_grid(grid: &Grid) -> String {
    let ncol = grid.header.len();
    let mut widths: Vec<usize> = grid.header.iter().map(|h| width(h)).collect();
    let mut numeric = vec![true; ncol];
    for row in &grid.rows {
        for (c, cell) in row.iter().enumerate().take(ncol) {
            widths[c] = widths[c].max(width(cell));
            numeric[c] &= cell.is_empty() || cell.trim().parse::<f64>().is_ok();
        }
    }
    let line = |cells: &[String]| {
        let parts: Vec<String> = (0..ncol)
            .map(|c| {
                let cell = cells.get(c).map(String::as_str).unwrap_or("");
                if numeric[c] {
                    pad_left(cell, widths[c])
                } else {
                    pad_right(cell, widths[c])
                }
            })
            .collect();
        format!("  {}\n", parts.join("  ").trim_end())
    };
    let mut out = line(&grid.header);
    let rule: Vec<String> = widths.iter().map(|&w| "-".repeat(w)).collect();
    out.push_str(&format!("  {}\n", rule.join("  ")));
    for row in &grid.rows {
        out.push_str(&line(row));
    }
    out
}

fn width(s: &str) -> usize {
    s.chars().count()
}

fn pad_right(s: &str, w: usize) -> String {
    format!("{s}{}", " ".repeat(w.saturating_sub(width(s))))
}

fn pad_left(s: &str, w: usize) -> String {
    format!("{}{s}", " ".repeat(w.saturating_sub(width(s))))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_right_text_left() {
        let mut g = Grid::new(["level", "tc"]);
        g.push(["site", "4.0"]);
        g.push(["plaquette", "2.4"]);
        let text = render_grid(&g);
        assert_eq!(
            text,
            "  level       tc\n  ---------  ---\n  site       4.0\n  plaquette  2.4\n"
        );
    }

    #[test]
    fn title_blocks_notes() {
        let doc = TextDoc {
            title: "T".into(),
            blocks: vec![
                Block::Fields(vec![("a".into(), "1".into()), ("long".into(), "2".into())]),
                Block::Heading("H".into()),
                Block::Line("x".into()),
            ],
            notes: vec!["n".into()],
        };
        assert_eq!(
            render(&doc),
            "T\n  a     1\n  long  2\n\nH\n  x\n\nNotes\n  * n\n"
        );
    }
}

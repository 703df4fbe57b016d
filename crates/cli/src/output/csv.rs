//! CSV exporter (RFC 4180): a header row, then one row per record; a cell is quoted
//! when it holds a comma, a double quote, a line break or edge spaces, with inner
//! quotes doubled.

use super::{Exporter, Grid, Report};
use crate::error::CliError;

/// Writes [`Report::csv`].
#[derive(Debug, Clone, Copy)]
pub struct CsvExporter;

impl Exporter for CsvExporter {
    fn render(&self, report: &dyn Report) -> Result<String, CliError> {
        Ok(render(&report.csv()))
    }
}

/// The CSV text of a grid.
pub fn render(grid: &Grid) -> String {
    let mut out = String::new();
    for row in std::iter::once(&grid.header).chain(&grid.rows) {
        let cells: Vec<String> = row.iter().map(|c| quote(c)).collect();
        out.push_str(&cells.join(","));
        out.push('\n');
    }
    out
}

/// One cell, quoted only when needed.
fn quote(cell: &str) -> String {
    let needs =
        cell.contains([',', '"', '\n', '\r']) || cell.starts_with(' ') || cell.ends_with(' ');
    if needs {
        format!("\"{}\"", cell.replace('"', "\"\""))
    } else {
        cell.to_string()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn quotes_only_when_needed() {
        let mut g = Grid::new(["a", "b"]);
        g.push(["1", "x,y"]);
        g.push(["say \"hi\"", "plain"]);
        assert_eq!(render(&g), "a,b\n1,\"x,y\"\n\"say \"\"hi\"\"\",plain\n");
    }
}

//! Reports and how they are written: one exporter per format behind one seam.
//!
//! A command builds a result value that implements [`Report`]: it can describe itself
//! as a [`TextDoc`] (for people), a [`Grid`] (CSV rows) and a JSON value (the contract).
//! An [`Exporter`] per format — [`table`], [`csv`], [`json`] — turns a report into text,
//! and [`Output`] sends that text to standard output or, with `--output FILE`, writes
//! it atomically ([`write::write_atomic`]). Commands never print; they hand a report to
//! [`Output::emit`] once.

pub mod csv;
pub mod json;
pub mod table;
pub mod write;

use std::path::PathBuf;

use crate::args::CommonArgs;
use crate::error::CliError;

/// Output format of every command.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum Format {
    /// Aligned plain-text columns for people (the default).
    Table,
    /// Comma-separated values with a header row, for scripts.
    Csv,
    /// JSON, for scripts; keys as in the command contract.
    Json,
}

impl Format {
    /// The exporter that writes this format.
    pub fn exporter(self) -> &'static dyn Exporter {
        match self {
            Format::Table => &table::TableExporter,
            Format::Csv => &csv::CsvExporter,
            Format::Json => &json::JsonExporter,
        }
    }
}

/// A command's result, viewable in every format.
pub trait Report {
    /// The human-readable document: title, blocks, footer notes.
    fn table(&self) -> TextDoc;
    /// The CSV view: a header and one row per record.
    fn csv(&self) -> Grid;
    /// The JSON view, with the keys of the command contract.
    fn json(&self) -> Result<serde_json::Value, serde_json::Error>;
}

/// Turns a report into the text of one format (cf. hyperfine's `export` modules).
pub trait Exporter {
    /// The full text to write, ending in a newline.
    fn render(&self, report: &dyn Report) -> Result<String, CliError>;
}

/// A header and rows of already formatted cells.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Grid {
    /// Column names.
    pub header: Vec<String>,
    /// One entry per row, each with as many cells as the header.
    pub rows: Vec<Vec<String>>,
}

impl Grid {
    /// An empty grid with these column names.
    pub fn new<S: Into<String>>(header: impl IntoIterator<Item = S>) -> Grid {
        Grid {
            header: header.into_iter().map(Into::into).collect(),
            rows: Vec::new(),
        }
    }
    /// Append one row.
    pub fn push<S: Into<String>>(&mut self, row: impl IntoIterator<Item = S>) {
        self.rows.push(row.into_iter().map(Into::into).collect());
    }
}

/// One piece of a [`TextDoc`].
#[derive(Debug, Clone, PartialEq)]
pub enum Block {
    /// A section heading, preceded by an empty line.
    Heading(String),
    /// Label–value lines with the labels padded to one width.
    Fields(Vec<(String, String)>),
    /// Aligned columns: numbers right-aligned, text left-aligned.
    Table(Grid),
    /// One line of free text.
    Line(String),
}

/// A report for people: a title line, blocks, and footer notes.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct TextDoc {
    /// The first line.
    pub title: String,
    /// The body, in order.
    pub blocks: Vec<Block>,
    /// Footnotes printed at the end (sources, conventions, caveats).
    pub notes: Vec<String>,
}

/// Where a command's report goes, in which format.
#[derive(Debug, Clone)]
pub struct Output {
    format: Format,
    destination: Option<PathBuf>,
}

impl Output {
    /// Write in `format` to `destination` (standard output when `None`).
    pub fn new(format: Format, destination: Option<PathBuf>) -> Output {
        Output {
            format,
            destination,
        }
    }
    /// The `--format` and `--output` of a command.
    pub fn from_args(common: &CommonArgs) -> Output {
        Output::new(common.format, common.output.clone())
    }
    /// The chosen format.
    pub fn format(&self) -> Format {
        self.format
    }
    /// Render `report` in the chosen format and write it: to standard output, or
    /// atomically to the `--output` file. Call once per command.
    pub fn emit(&mut self, report: &dyn Report) -> Result<(), CliError> {
        let text = self.format.exporter().render(report)?;
        match &self.destination {
            Some(path) => write::write_atomic(path, text.as_bytes()),
            None => write::write_stdout(text.as_bytes()),
        }
    }
}

/// A number for CSV and JSON-like text: the shortest form that reads back to the same
/// `f64` (Rust's `Display`), e.g. `2.269185314213022`.
pub fn num(x: f64) -> String {
    format!("{x}")
}

/// A number rounded to `decimals` places, for tables.
pub fn fixed(x: f64, decimals: usize) -> String {
    format!("{x:.decimals$}")
}

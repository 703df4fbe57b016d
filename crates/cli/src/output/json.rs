//! JSON exporter: the report's JSON value, pretty-printed, one trailing newline.
//! Non-finite numbers cannot appear in JSON; serde_json writes them as `null`.

use super::{Exporter, Report};
use crate::error::CliError;

/// Writes [`Report::json`].
#[derive(Debug, Clone, Copy)]
pub struct JsonExporter;

impl Exporter for JsonExporter {
    fn render(&self, report: &dyn Report) -> Result<String, CliError> {
        let mut text = serde_json::to_string_pretty(&report.json()?)?;
        text.push('\n');
        Ok(text)
    }
}

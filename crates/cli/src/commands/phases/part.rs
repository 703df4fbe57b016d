//! The partial result of `rungs phases --shard k/n`: JSON holding, per level, the
//! diagram's header (lattice, level, grid, phases compared, Tc, notes) and the paths
//! this part computed, every number exactly as computed (JSON numbers written in the
//! shortest form that reads back to the same `f64`, and read back exactly).
//!
//! ```text
//! {"rungs_phases_part": 1, "lattice": "square", "shard": {"k": 1, "n": 3},
//!  "alloy": false, "diagrams": [{"header": {...}, "paths": [{...}, ...]}, ...]}
//! ```

use std::path::Path;

use rungs_solve::phases::{DiagramHeader, PathResult};
use serde::{Deserialize, Serialize};

use crate::args::Shard;
use crate::error::CliError;

/// Version of the part format.
pub const VERSION: u32 = 1;

/// One level's share of a part.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct PartDiagram {
    /// What the diagram is of.
    pub header: DiagramHeader,
    /// The paths this part computed.
    pub paths: Vec<PathResult>,
}

/// A whole part file.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Part {
    /// Format version ([`VERSION`]).
    pub rungs_phases_part: u32,
    /// The lattice's name.
    pub lattice: String,
    /// Which part.
    pub shard: ShardId,
    /// Whether the report is in the alloy language.
    pub alloy: bool,
    /// One entry per level.
    pub diagrams: Vec<PartDiagram>,
}

/// `k` of `n`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub struct ShardId {
    /// Part, 1 ..= n.
    pub k: usize,
    /// Parts.
    pub n: usize,
}

/// The text of a part file.
pub fn encode(
    lattice: &str,
    shard: Shard,
    alloy: bool,
    levels: &[(DiagramHeader, Vec<PathResult>)],
) -> Result<String, CliError> {
    let part = Part {
        rungs_phases_part: VERSION,
        lattice: lattice.to_string(),
        shard: ShardId {
            k: shard.k,
            n: shard.n,
        },
        alloy,
        diagrams: levels
            .iter()
            .map(|(h, p)| PartDiagram {
                header: h.clone(),
                paths: p.clone(),
            })
            .collect(),
    };
    let mut text = serde_json::to_string_pretty(&part)?;
    text.push('\n');
    Ok(text)
}

/// Read the part file at `path` (bad file: exit status 2, naming it).
pub fn read(path: &Path) -> Result<Part, CliError> {
    let text = std::fs::read_to_string(path)
        .map_err(|e| CliError::Usage(format!("cannot read the part `{}`: {e}", path.display())))?;
    let part: Part = serde_json::from_str(&text).map_err(|e| {
        CliError::Usage(format!(
            "`{}` is not a partial result of `rungs phases --shard k/n` ({e}); give the files those runs wrote",
            path.display()
        ))
    })?;
    if part.rungs_phases_part != VERSION {
        return Err(CliError::Usage(format!(
            "`{}` is a part of format version {}, this build reads version {VERSION}; recompute it with this build",
            path.display(),
            part.rungs_phases_part
        )));
    }
    Ok(part)
}

//! Lattice-file loading and validation (YAML → [`Lattice`]).
//!
//! Three steps, each in its own file:
//!
//! 1. `yaml`: text → a tree of nodes, each with its line and column (serde-saphyr's
//!    `Spanned`);
//! 2. `schema`: nodes → `LatticeSpec`, plain located values; refuses unknown,
//!    missing and repeated keys and values of the wrong kind;
//! 3. `build` and `levels`: every rule of the lattice-file contract
//!    (`docs/lattice-format.md`), then the resolved [`Lattice`].
//!
//! The first broken rule is returned as a [`LatticeError`] whose message names the file,
//! the line and column, the key path, the offending value and the fix.

mod brackets;
mod build;
mod levels;
mod phases;
mod read;
mod schema;
mod yaml;

#[cfg(test)]
mod tests;

use std::path::Path;

use crate::error::LatticeError;
use crate::model::Lattice;

pub use read::MAX_CELL_OFFSET;
use read::{Ctx, Item, Loc};

/// A lattice file as read, before the rules are checked: every value keeps its location.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct LatticeSpec {
    pub name: Item<String>,
    pub description: Option<Item<String>>,
    pub dimension: Item<i128>,
    pub vectors: Item<Vec<Item<Vec<f64>>>>,
    pub basis: Item<Vec<SiteSpec>>,
    pub couplings: NamedCouplings,
    pub field: Option<Item<f64>>,
    pub bonds: Vec<BondSpec>,
    pub levels: Vec<LevelRaw>,
    pub reference: Option<ReferenceSpec>,
    pub phases: Vec<PhaseRaw>,
}

/// `couplings:` as read: (name, value) in file order.
pub(crate) type NamedCouplings = Vec<(Item<String>, Item<f64>)>;

/// One `basis` entry.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct SiteSpec {
    pub name: Item<String>,
    pub position: Option<Item<Vec<f64>>>,
}

/// A bond's `coupling`: a key of `couplings`, or a bare number (kept as written).
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum CouplingRef {
    Name(String),
    Value { j: f64, written: String },
}

/// One `bonds` entry.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct BondSpec {
    pub loc: Loc,
    pub from: Item<String>,
    pub to: Item<String>,
    pub cell: Item<Vec<i32>>,
    pub coupling: Item<CouplingRef>,
}

/// One cluster site `[name, cell]`.
pub(crate) type ClusterSiteSpec = (Item<String>, Item<Vec<i32>>);

/// The shapes of one level: explicit lists, or the `block` shorthand.
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum Shapes {
    List(Vec<Item<Vec<ClusterSiteSpec>>>),
    Block(Item<Vec<Item<i128>>>),
}

/// One entry of `clusters`.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct LevelRaw {
    pub name: Item<String>,
    pub loc: Loc,
    pub shapes: Shapes,
}

/// One entry of `phases:` as read: name, supercell, signs (each with its location).
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct PhaseRaw {
    pub name: Item<String>,
    pub loc: Loc,
    pub supercell: Item<Vec<Item<i128>>>,
    pub signs: Item<Vec<Item<f64>>>,
}

/// `reference: {tc, source}`.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct ReferenceSpec {
    pub tc: Item<f64>,
    pub source: Item<String>,
}

impl Lattice {
    /// Parse and validate a lattice file's text; `origin` names the file in messages.
    ///
    /// Every rule of the lattice-file contract is checked (see `docs/lattice-format.md`);
    /// the first one broken is returned, located by line and column.
    pub fn from_yaml_str(text: &str, origin: &str) -> Result<Lattice, LatticeError> {
        let ctx = Ctx { file: origin, text };
        let root = yaml::parse(text, origin)?;
        let spec = schema::read(&ctx, &root)?;
        build::build(&ctx, &spec)
    }

    /// Read, parse and validate the lattice file at `path`. A file that cannot be read
    /// (missing, unreadable, not UTF-8) is [`LatticeError::Unreadable`], naming the path.
    pub fn from_file(path: &Path) -> Result<Lattice, LatticeError> {
        let shown = path.display().to_string();
        let bytes = std::fs::read(path).map_err(|e| LatticeError::Unreadable {
            path: shown.clone(),
            reason: e.to_string(),
        })?;
        let text = String::from_utf8(bytes).map_err(|e| LatticeError::Unreadable {
            path: shown.clone(),
            reason: format!(
                "it is not UTF-8 text (invalid byte at offset {})",
                e.utf8_error().valid_up_to()
            ),
        })?;
        Lattice::from_yaml_str(&text, &shown)
    }
}

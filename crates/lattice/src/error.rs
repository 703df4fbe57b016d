//! Typed errors of the lattice crate. Every message names what is wrong and how to fix it.
//!
//! Errors about a lattice file carry a [`Place`]: the file, the line and column the YAML
//! parser reported (when it has one) and the key path inside the file, e.g.
//! `square.yaml:12:9: bonds[3].to`. Their `Display` text is complete on its own: the
//! command-line tool prints it as is.

use std::fmt;

use thiserror::Error;

/// Where in a lattice file a problem sits.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Place {
    /// File name as given to the loader.
    pub file: String,
    /// Line, counted from 1; 0 when the YAML parser gave none.
    pub line: u64,
    /// Column (in characters), counted from 1; 0 when the YAML parser gave none.
    pub column: u64,
    /// Key path inside the file, e.g. `bonds[3].to` (list indices count from 0); empty for
    /// the file's top level.
    pub path: String,
}

impl fmt::Display for Place {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.file)?;
        if self.line > 0 {
            write!(f, ":{}:{}", self.line, self.column)?;
        }
        if !self.path.is_empty() {
            write!(f, ": {}", self.path)?;
        }
        Ok(())
    }
}

/// Everything that can go wrong reading a lattice file or building geometry from it.
#[derive(Debug, Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum LatticeError {
    /// A supercell request that does not fit the lattice.
    #[error("supercell: {detail}")]
    BadSupercell {
        /// What is wrong and what to give instead.
        detail: String,
    },
    /// A maximal cluster larger than the engine can hold.
    #[error("level `{level}`: a maximal cluster has {sites} sites, more than the limit of {limit} here; choose a smaller cluster (levels of up to 25 sites are searched for Tc on point-group orbits by `tc` and `ladder`)")]
    ClusterTooLarge {
        /// Level name.
        level: String,
        /// Sites in the offending cluster.
        sites: usize,
        /// The engine's limit.
        limit: usize,
    },
    /// A level the compact (orbit-reduced) representation cannot hold.
    #[error("level `{level}`: {detail}")]
    CompactLimit {
        /// Level name.
        level: String,
        /// What exceeds the representation and what to do.
        detail: String,
    },
    /// A level name that is reserved or already taken.
    #[error(
        "level name `{name}` is reserved (`site`, `pair`) or already used; choose another name"
    )]
    BadLevelName {
        /// The name.
        name: String,
    },
    /// A level name that the lattice does not define (build it with
    /// [`LatticeError::unknown_level`], which finds the suggestion).
    #[error("no level named `{name}`{suggestion}; the known levels are: {known}")]
    UnknownLevel {
        /// Requested name.
        name: String,
        /// `" (did you mean `x`?)"` or empty.
        suggestion: String,
        /// Comma-separated known level names.
        known: String,
    },
    /// A finite torus that would fold a bond onto itself or a site onto its neighbour.
    #[error("torus {size}: {detail}")]
    BadTorus {
        /// The requested size, e.g. `2x2`.
        size: String,
        /// What goes wrong and the smallest size that works.
        detail: String,
    },

    // ---- reading the file -------------------------------------------------------------
    /// The lattice file could not be read at all.
    #[error("{path}: cannot read the lattice file: {reason}; check the path and that the file is readable UTF-8 text")]
    Unreadable {
        /// The path as given.
        path: String,
        /// What the operating system (or the UTF-8 check) said.
        reason: String,
    },
    /// The text is not valid YAML (or nests deeper than the parser allows).
    #[error("{at}: not valid YAML: {message}")]
    Syntax {
        /// Where the parser stopped.
        at: Box<Place>,
        /// The parser's own description followed by what to fix.
        message: String,
    },
    /// A value of the wrong kind, e.g. text where a number belongs.
    #[error("{at}: expected {expected}, found {found}")]
    WrongType {
        /// Where the value is.
        at: Box<Place>,
        /// What belongs here, with an example.
        expected: String,
        /// What the file has, e.g. "text `two`".
        found: String,
    },
    /// A required key is absent.
    #[error("{at}: missing required key `{key}`; add it, e.g. `{example}`")]
    MissingKey {
        /// The mapping that lacks the key (its path; empty for the top level).
        at: Box<Place>,
        /// The missing key.
        key: String,
        /// A line to copy, e.g. `dimension: 2`.
        example: String,
    },
    /// A key the format does not know (often a typo).
    #[error("{at}: unknown key `{key}`{suggestion}; the keys allowed here are: {allowed}")]
    UnknownKey {
        /// Where the key is, with the path of its mapping.
        at: Box<Place>,
        /// The key as written.
        key: String,
        /// `" (did you mean `x`?)"` or empty.
        suggestion: String,
        /// Comma-separated allowed keys.
        allowed: String,
    },
    /// The same key twice in one mapping.
    #[error("{at}: key `{key}` appears twice in this mapping (first on line {first_line}); keep only one")]
    DuplicateKey {
        /// Where the second occurrence is.
        at: Box<Place>,
        /// The key.
        key: String,
        /// Line of the first occurrence.
        first_line: u64,
    },

    // ---- geometry ---------------------------------------------------------------------
    /// `dimension` outside 1..=3.
    #[error("{at}: dimension {value} is not supported; give 1, 2 or 3")]
    BadDimension {
        /// Where `dimension` is.
        at: Box<Place>,
        /// The value as written.
        value: String,
    },
    /// Not one primitive vector per dimension.
    #[error("{at}: {count} vector(s) given but dimension is {dimension}; give exactly {dimension} primitive vector(s), one per dimension")]
    WrongVectorCount {
        /// Where `vectors` is.
        at: Box<Place>,
        /// Vectors given.
        count: usize,
        /// The file's dimension.
        dimension: usize,
    },
    /// A vector, position, cell offset or block whose length is not the dimension.
    #[error("{at}: this {what} has {len} component(s) but dimension is {dimension}; give exactly {dimension}, e.g. {example}")]
    WrongLength {
        /// Where the list is.
        at: Box<Place>,
        /// "vector", "position", "cell offset" or "block".
        what: String,
        /// Components given.
        len: usize,
        /// The file's dimension.
        dimension: usize,
        /// A list of the right length.
        example: String,
    },
    /// Primitive vectors that do not span the space.
    #[error("{at}: the primitive vectors are linearly dependent (|det| = {det:.3e} of the product of their lengths, tolerance {tolerance:.0e}); give {dimension} independent vectors, none a combination of the others")]
    DependentVectors {
        /// Where `vectors` is.
        at: Box<Place>,
        /// |det| divided by the product of the vector lengths (0 for a zero vector).
        det: f64,
        /// The tolerance the test used.
        tolerance: f64,
        /// The file's dimension.
        dimension: usize,
    },
    /// A cell offset too far away to be meant.
    #[error("{at}: cell offset {value} is out of range; each entry must lie in -{limit}..={limit} (a bond or cluster reaching that far is almost surely a typo)")]
    CellOutOfRange {
        /// Where the entry is.
        at: Box<Place>,
        /// The entry as written.
        value: String,
        /// The largest accepted magnitude.
        limit: i32,
    },

    // ---- basis, couplings, numbers ----------------------------------------------------
    /// `basis: []`.
    #[error("{at}: the basis has no site; list at least one, e.g. `basis: [{{name: a}}]`")]
    EmptyBasis {
        /// Where `basis` is.
        at: Box<Place>,
    },
    /// Two basis sites with one name.
    #[error("{at}: basis site name `{name}` is used twice (first on line {first_line}); give each site its own name")]
    DuplicateSite {
        /// Where the second name is.
        at: Box<Place>,
        /// The name.
        name: String,
        /// Line of the first use.
        first_line: u64,
    },
    /// A `from`, `to` or cluster site that names no basis site.
    #[error("{at}: no basis site named `{name}` (known: {known})")]
    UnknownSite {
        /// Where the name is.
        at: Box<Place>,
        /// The name as written.
        name: String,
        /// Comma-separated basis names.
        known: String,
    },
    /// A bond `coupling` that names no key of `couplings`.
    #[error("{at}: no coupling named `{name}` (known: {known}); use a key of `couplings` or write the value as a bare number, e.g. `coupling: 1.0`")]
    UnknownCoupling {
        /// Where the name is.
        at: Box<Place>,
        /// The name as written.
        name: String,
        /// Comma-separated coupling names, or "none: `couplings` is empty".
        known: String,
    },
    /// NaN or an infinity where a number belongs (couplings, field, vectors, positions, tc).
    #[error("{at}: {value} is not a finite number; give a finite value, e.g. 1.0")]
    NonFinite {
        /// Where the number is.
        at: Box<Place>,
        /// The value as written, e.g. `.nan`.
        value: String,
    },

    // ---- bonds ------------------------------------------------------------------------
    /// A bond from a site to itself in the same cell.
    #[error("{at}: this bond joins site `{site}` to itself in the same cell; give a non-zero `cell` offset or another `to` site")]
    SelfBond {
        /// Where the bond is.
        at: Box<Place>,
        /// The site's name.
        site: String,
    },
    /// A bond listed twice (in the same or the opposite direction).
    #[error(
        "{at}: this bond is bonds[{first}] (line {first_line}) again{how}; list each bond once"
    )]
    DuplicateBond {
        /// Where the repeat is.
        at: Box<Place>,
        /// Index of the first listing.
        first: usize,
        /// Line of the first listing.
        first_line: u64,
        /// Empty, or how the reversal matches, e.g. " in the opposite direction (a→b with cell c is b→a with cell −c)".
        how: String,
    },

    // ---- cluster levels ---------------------------------------------------------------
    /// A level named `site` or `pair`.
    #[error("{at}: level name `{name}` is reserved (the levels `site` and `pair` exist on every lattice); choose another name")]
    ReservedLevel {
        /// Where the name is.
        at: Box<Place>,
        /// The name.
        name: String,
    },
    /// Two levels with one name.
    #[error("{at}: level `{name}` is defined twice (first on line {first_line}); give each level its own name")]
    DuplicateLevel {
        /// Where the second definition is.
        at: Box<Place>,
        /// The name.
        name: String,
        /// Line of the first definition.
        first_line: u64,
    },
    /// A level with no cluster shape.
    #[error("{at}: level `{level}` has no cluster shape; give a list of shapes, e.g. [[[a, [0, 0]], [a, [1, 0]], [a, [0, 1]]]], or `block: [2, 2]`")]
    EmptyLevel {
        /// Where the level is.
        at: Box<Place>,
        /// Level name.
        level: String,
    },
    /// A cluster shape (or block) of fewer than two sites.
    #[error("{at}: this cluster of level `{level}` has {sites} site(s); a cluster needs at least 2 (single sites and bonds are the `site` and `pair` levels)")]
    ClusterTooSmall {
        /// Where the shape is.
        at: Box<Place>,
        /// Level name.
        level: String,
        /// Sites it has.
        sites: usize,
    },
    /// A cluster larger than the engine's limit, refused before it is expanded.
    #[error("{at}: this cluster of level `{level}` has {sites} sites, more than the limit of {limit} (the engine stores 2^n states per cluster); choose a smaller shape or block")]
    ClusterOverLimit {
        /// Where the shape or block is.
        at: Box<Place>,
        /// Level name.
        level: String,
        /// Sites it would have (saturating for absurd blocks).
        sites: u128,
        /// [`crate::MAX_CLUSTER_SITES`].
        limit: usize,
    },
    /// A site listed twice in one shape.
    #[error(
        "{at}: site `{site}` in cell {cell} is listed twice in this cluster; list each site once"
    )]
    RepeatedClusterSite {
        /// Where the second listing is.
        at: Box<Place>,
        /// Basis site name.
        site: String,
        /// Cell offset, e.g. `[1, 0]`.
        cell: String,
    },
    /// A shape whose sites are not all linked by bonds of the lattice.
    #[error("{at}: this cluster of level `{level}` is not connected through bonds of the lattice: {unreached} cannot be reached from {start}; add the sites that link them, or check the cell offsets")]
    DisconnectedCluster {
        /// Where the shape is.
        at: Box<Place>,
        /// Level name.
        level: String,
        /// First site, e.g. "`a` [0, 0]".
        start: String,
        /// Sites not reached, e.g. "`a` [2, 0]".
        unreached: String,
    },
    /// A `block` entry below 1.
    #[error("{at}: block size {value} is not allowed; each entry must be a whole number ≥ 1, e.g. block: [2, 2]")]
    BadBlock {
        /// Where the entry is.
        at: Box<Place>,
        /// The entry as written.
        value: String,
    },

    // ---- reference ----------------------------------------------------------------------
    /// A reference critical temperature that is not a positive finite number.
    #[error("{at}: reference tc {value} must be a finite number > 0 (a critical temperature in units of the couplings, k_B = 1)")]
    BadReference {
        /// Where `tc` is.
        at: Box<Place>,
        /// The value as written.
        value: String,
    },
    // ---- declared phases ----------------------------------------------------------------
    /// A `phases` entry whose name is reserved or used twice.
    #[error("{at}: phase name `{name}` {why}; give each declared phase its own name")]
    BadPhaseName {
        /// Where the name is.
        at: Box<Place>,
        /// The name.
        name: String,
        /// What is wrong with it, e.g. "is reserved for the translation-invariant phase".
        why: String,
    },
    /// A declared phase's supercell that does not fit the lattice or the engine.
    #[error("{at}: the supercell of phase `{phase}` {detail}")]
    BadPhaseSupercell {
        /// Where the supercell is.
        at: Box<Place>,
        /// The phase.
        phase: String,
        /// What is wrong and what to give instead.
        detail: String,
    },
    /// Not one sign per site of a declared phase's supercell.
    #[error("{at}: phase `{phase}` lists {given} sign(s) but its {supercell} supercell has {sites} site(s) ({cells} cell(s) × {basis} basis site(s)); give one sign per site, cell by cell (axis 0 fastest), the basis sites in file order within each cell")]
    PhaseSignCount {
        /// Where `signs` is.
        at: Box<Place>,
        /// The phase.
        phase: String,
        /// Signs given.
        given: usize,
        /// The supercell, e.g. `2x1`.
        supercell: String,
        /// Sites of the supercell.
        sites: usize,
        /// Cells of the supercell.
        cells: usize,
        /// Basis sites per primitive cell.
        basis: usize,
    },
    /// A declared sign that is not ±1.
    #[error("{at}: sign {value} of phase `{phase}` is neither +1 nor -1; write +1 or -1")]
    BadPhaseSign {
        /// Where the sign is.
        at: Box<Place>,
        /// The phase.
        phase: String,
        /// The value as written.
        value: String,
    },
}

impl LatticeError {
    /// [`LatticeError::UnknownLevel`] for `name`, with the closest of `known` as a
    /// suggestion when one is near (see [`crate::suggest`]).
    pub fn unknown_level(name: &str, known: &[String]) -> LatticeError {
        let names: Vec<&str> = known.iter().map(String::as_str).collect();
        LatticeError::UnknownLevel {
            name: name.to_string(),
            suggestion: crate::suggest::did_you_mean(name, &names),
            known: known.join(", "),
        }
    }
}

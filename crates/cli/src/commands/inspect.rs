//! `rungs inspect LATTICE`: what the file describes and what each level builds.
//!
//! For every level (`site`, `pair`, then the file's clusters) it builds the regions —
//! maximal clusters closed under intersection — with their Kikuchi coefficients
//! (Kikuchi 1951, Phys. Rev. 81, 988) and reports them grouped by (sites, coefficient):
//! `per_cell` counts the translation orbits in a group, and the entropy per cell is
//! `Σ_orbits coefficient · S_orbit`. Regions with coefficient 0 do not enter the
//! entropy and are not listed. The sum rule
//! `Σ per_cell · coefficient · sites = sites per cell` is checked for each level.
//!
//! It also lists the bonds per coupling and every site's neighbours (what the file's
//! bond list really says), and the warnings of [`rungs_lattice::check`]: levels whose
//! clusters leave bonds as bare pairs or are not closed under the lattice's symmetry.
//! With `--plot FILE.svg` it draws a patch of the lattice ([`crate::plot::inspect`]).

mod report;

use rungs_lattice::check::level_warnings;
use rungs_lattice::symmetry::point_group;
use rungs_lattice::{Lattice, Level};

use crate::args::InspectArgs;
use crate::error::CliError;
use crate::output::Output;

/// Run `rungs inspect`.
pub fn run(args: &InspectArgs, out: &mut Output) -> Result<(), CliError> {
    let lattice = super::load_lattice(&args.common.lattice)?;
    let levels = Level::names(&lattice)
        .iter()
        .map(|name| Level::build(&lattice, name))
        .collect::<Result<Vec<_>, _>>()?;
    let report = InspectReport::new(&lattice, &levels);
    if let Some(path) = &args.plot {
        crate::plot::inspect::write(path, &lattice, &levels)?;
    }
    out.emit(&report)
}

/// One neighbour of a basis site, as shown.
#[derive(Debug, Clone, PartialEq)]
pub struct NeighbourRow {
    /// The neighbour's basis site name.
    pub site: String,
    /// Its cell offset (as many components as the lattice has dimensions).
    pub cell: Vec<i32>,
    /// The bond's coupling name (or literal value).
    pub coupling: String,
    /// The bond's J.
    pub j: f64,
    /// Cartesian distance.
    pub distance: f64,
}

/// Regions of one level sharing (sites, coefficient).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct RegionGroup {
    /// Sites in each region of the group.
    pub sites: usize,
    /// Translation orbits (regions per unit cell) in the group.
    pub per_cell: usize,
    /// Kikuchi coefficient of each region in the group.
    pub coefficient: i64,
}

/// What one level builds.
#[derive(Debug, Clone, PartialEq)]
pub struct LevelSummary {
    /// Level name.
    pub level: String,
    /// Sites of the largest maximal cluster.
    pub max_cluster_sites: usize,
    /// Number of correlation variables (translation orbits of non-empty subsets of the
    /// maximal clusters).
    pub variables: usize,
    /// Region groups with a non-zero coefficient, largest regions first.
    pub regions: Vec<RegionGroup>,
    /// `Σ per_cell · coefficient · sites`; equals the sites per cell when the
    /// coefficients are right.
    pub sum_rule: i64,
}

/// The full `inspect` result.
#[derive(Debug, Clone, PartialEq)]
pub struct InspectReport {
    name: String,
    description: Option<String>,
    dimension: usize,
    sites_per_cell: usize,
    bonds_per_cell: usize,
    /// (basis site name, coordination number z), in basis order.
    coordination: Vec<(String, usize)>,
    bipartite: bool,
    frustrated: bool,
    reference: Option<(f64, String)>,
    /// (coupling, J, bonds per cell), see [`Lattice::bonds_per_coupling`].
    bonds_per_coupling: Vec<(String, f64, usize)>,
    /// (basis site name, its neighbours), in basis order.
    neighbours: Vec<(String, Vec<NeighbourRow>)>,
    /// One entry per level, in [`Level::names`] order.
    pub levels: Vec<LevelSummary>,
    /// Sentences of [`rungs_lattice::check::level_warnings`], every level in order.
    pub warnings: Vec<String>,
}

impl InspectReport {
    /// Describe `lattice` and its built `levels` (in [`Level::names`] order).
    pub fn new(lattice: &Lattice, levels: &[Level]) -> InspectReport {
        let ops = point_group(lattice);
        let d = lattice.dimension();
        let names = |i: usize| lattice.basis()[i].name.clone();
        InspectReport {
            name: lattice.name().to_string(),
            description: lattice.description().map(str::to_string),
            dimension: d,
            sites_per_cell: lattice.sites_per_cell(),
            bonds_per_cell: lattice.bonds().len(),
            coordination: (0..lattice.sites_per_cell())
                .map(names)
                .zip(lattice.coordination())
                .collect(),
            bipartite: lattice.is_bipartite(),
            frustrated: lattice.is_frustrated(),
            reference: lattice.reference().map(|r| (r.tc, r.source.clone())),
            bonds_per_coupling: lattice.bonds_per_coupling(),
            neighbours: (0..lattice.sites_per_cell())
                .map(|i| {
                    let rows = lattice
                        .neighbour_list(i)
                        .into_iter()
                        .map(|n| NeighbourRow {
                            site: names(n.site),
                            cell: n.cell[..d].to_vec(),
                            coupling: n.coupling,
                            j: n.j,
                            distance: n.distance,
                        })
                        .collect();
                    (names(i), rows)
                })
                .collect(),
            levels: levels.iter().map(summarize).collect(),
            warnings: levels
                .iter()
                .flat_map(|l| level_warnings(lattice, l, &ops))
                .collect(),
        }
    }
}

/// Group a level's regions by (sites, coefficient), dropping coefficient 0.
pub fn summarize(level: &Level) -> LevelSummary {
    let mut groups: Vec<RegionGroup> = Vec::new();
    for r in level.regions.iter().filter(|r| r.coefficient != 0) {
        let sites = r.cluster.len();
        match groups
            .iter_mut()
            .find(|g| g.sites == sites && g.coefficient == r.coefficient)
        {
            Some(g) => g.per_cell += 1,
            None => groups.push(RegionGroup {
                sites,
                per_cell: 1,
                coefficient: r.coefficient,
            }),
        }
    }
    groups.sort_by(|a, b| {
        b.sites
            .cmp(&a.sites)
            .then(b.coefficient.cmp(&a.coefficient))
    });
    let sum_rule = groups
        .iter()
        .map(|g| g.per_cell as i64 * g.coefficient * g.sites as i64)
        .sum();
    LevelSummary {
        level: level.name.clone(),
        max_cluster_sites: level.max_cluster_sites(),
        variables: level.variables.len(),
        regions: groups,
        sum_rule,
    }
}

//! `rungs inspect LATTICE`: what the file describes and what each level builds.
//!
//! For every level (`site`, `pair`, then the file's clusters) it builds the regions —
//! maximal clusters closed under intersection — with their Kikuchi coefficients
//! (Kikuchi 1951, Phys. Rev. 81, 988) and reports them grouped by (sites, coefficient):
//! `per_cell` counts the translation orbits in a group, and the entropy per cell is
//! `Σ_orbits coefficient · S_orbit`. Regions with coefficient 0 do not enter the
//! entropy and are not listed. The sum rule
//! `Σ per_cell · coefficient · sites = sites per cell` is checked for each level.

use rungs_lattice::{Lattice, Level};
use serde_json::{json, Value};

use crate::args::InspectArgs;
use crate::error::CliError;
use crate::output::{num, Block, Grid, Output, Report, TextDoc};

/// Run `rungs inspect`.
pub fn run(args: &InspectArgs, out: &mut Output) -> Result<(), CliError> {
    let lattice = super::load_lattice(&args.common.lattice)?;
    let report = InspectReport::build(&lattice)?;
    out.emit(&report)
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
    reference: Option<(f64, String)>,
    /// One entry per level, in [`Level::names`] order.
    pub levels: Vec<LevelSummary>,
}

impl InspectReport {
    /// Describe `lattice` and build each of its levels.
    pub fn build(lattice: &Lattice) -> Result<InspectReport, CliError> {
        let mut levels = Vec::new();
        for name in Level::names(lattice) {
            levels.push(summarize(&Level::build(lattice, &name)?));
        }
        Ok(InspectReport {
            name: lattice.name().to_string(),
            description: lattice.description().map(str::to_string),
            dimension: lattice.dimension(),
            sites_per_cell: lattice.sites_per_cell(),
            bonds_per_cell: lattice.bonds().len(),
            coordination: lattice
                .basis()
                .iter()
                .map(|s| s.name.clone())
                .zip(lattice.coordination())
                .collect(),
            bipartite: lattice.is_bipartite(),
            reference: lattice.reference().map(|r| (r.tc, r.source.clone())),
            levels,
        })
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

impl Report for InspectReport {
    fn json(&self) -> Result<Value, serde_json::Error> {
        let coordination: serde_json::Map<String, Value> = self
            .coordination
            .iter()
            .map(|(n, z)| (n.clone(), json!(z)))
            .collect();
        let levels: Vec<Value> = self
            .levels
            .iter()
            .map(|l| {
                json!({
                    "level": l.level,
                    "max_cluster_sites": l.max_cluster_sites,
                    "variables": l.variables,
                    "sum_rule": l.sum_rule,
                    "regions": l.regions.iter().map(|g| json!({
                        "sites": g.sites, "per_cell": g.per_cell, "coefficient": g.coefficient,
                    })).collect::<Vec<_>>(),
                })
            })
            .collect();
        Ok(json!({
            "name": self.name,
            "description": self.description,
            "dimension": self.dimension,
            "sites_per_cell": self.sites_per_cell,
            "bonds_per_cell": self.bonds_per_cell,
            "coordination": coordination,
            "bipartite": self.bipartite,
            "reference": self.reference.as_ref().map(|(tc, source)| json!({"tc": tc, "source": source})),
            "levels": levels,
        }))
    }

    fn csv(&self) -> Grid {
        let mut grid = Grid::new([
            "lattice",
            "level",
            "max_cluster_sites",
            "variables",
            "sites",
            "per_cell",
            "coefficient",
        ]);
        for l in &self.levels {
            for g in &l.regions {
                grid.push([
                    self.name.clone(),
                    l.level.clone(),
                    l.max_cluster_sites.to_string(),
                    l.variables.to_string(),
                    g.sites.to_string(),
                    g.per_cell.to_string(),
                    g.coefficient.to_string(),
                ]);
            }
        }
        grid
    }

    fn table(&self) -> TextDoc {
        let coordination: Vec<String> = self
            .coordination
            .iter()
            .map(|(n, z)| format!("{n}: {z}"))
            .collect();
        let reference = match &self.reference {
            Some((tc, source)) => format!("Tc = {} ({source})", num(*tc)),
            None => "none given".to_string(),
        };
        let mut blocks = vec![Block::Fields(vec![
            ("name".into(), self.name.clone()),
            (
                "description".into(),
                self.description.clone().unwrap_or_else(|| "-".into()),
            ),
            ("dimension".into(), self.dimension.to_string()),
            ("sites per cell".into(), self.sites_per_cell.to_string()),
            ("bonds per cell".into(), self.bonds_per_cell.to_string()),
            ("coordination".into(), coordination.join(", ")),
            (
                "bipartite".into(),
                if self.bipartite { "yes" } else { "no" }.into(),
            ),
            ("reference".into(), reference),
        ])];
        let mut overview = Grid::new(["level", "largest cluster", "regions", "variables"]);
        for l in &self.levels {
            let orbits: usize = l.regions.iter().map(|g| g.per_cell).sum();
            overview.push([
                l.level.clone(),
                l.max_cluster_sites.to_string(),
                orbits.to_string(),
                l.variables.to_string(),
            ]);
        }
        blocks.push(Block::Heading("Levels".into()));
        blocks.push(Block::Table(overview));
        for l in &self.levels {
            blocks.push(Block::Heading(format!(
                "Level {}: largest cluster {} site(s), {} correlation variable(s)",
                l.level, l.max_cluster_sites, l.variables
            )));
            let mut grid = Grid::new(["sites", "per cell", "coefficient"]);
            for g in &l.regions {
                grid.push([
                    g.sites.to_string(),
                    g.per_cell.to_string(),
                    g.coefficient.to_string(),
                ]);
            }
            blocks.push(Block::Table(grid));
            let mark = if l.sum_rule == self.sites_per_cell as i64 {
                "ok".to_string()
            } else {
                format!("WRONG: expected {}", self.sites_per_cell)
            };
            blocks.push(Block::Line(format!(
                "sum rule: Σ per cell × coefficient × sites = {} ({mark})",
                l.sum_rule
            )));
        }
        TextDoc {
            title: format!("rungs inspect: lattice `{}`", self.name),
            blocks,
            notes: vec![
                "regions = maximal clusters and their intersections; rows group regions of equal size and \
                 coefficient, `per cell` counts their translation orbits; coefficient-0 regions are omitted."
                    .into(),
                "entropy per cell = Σ per cell × coefficient × S(region) (Kikuchi 1951, Phys. Rev. 81, 988); \
                 the sum rule must give the sites per cell."
                    .into(),
                "levels `site` (mean field) and `pair` (Bethe) exist on every lattice; the others come from \
                 the file's `clusters`."
                    .into(),
            ],
        }
    }
}

//! The `rungs inspect` report: the lattice's facts (with bonds per coupling and each
//! site's neighbours), warnings, and each level's region groups, as a table, CSV (one
//! row per level and region group) and JSON (keys of the command contract, plus
//! `bonds_per_coupling`, `neighbours` and `warnings`).

use serde_json::{json, Value};

use super::InspectReport;
use crate::output::{fixed, num, Block, Grid, Report, TextDoc};

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
        let couplings: Vec<Value> = self
            .bonds_per_coupling
            .iter()
            .map(|(c, j, n)| json!({"coupling": c, "j": j, "bonds": n}))
            .collect();
        let neighbours: serde_json::Map<String, Value> = self
            .neighbours
            .iter()
            .map(|(site, rows)| {
                let list: Vec<Value> = rows
                    .iter()
                    .map(|r| {
                        json!({"site": r.site, "cell": r.cell, "coupling": r.coupling,
                               "j": r.j, "distance": r.distance})
                    })
                    .collect();
                (site.clone(), Value::Array(list))
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
            "frustrated": self.frustrated,
            "reference": self.reference.as_ref().map(|(tc, source)| json!({"tc": tc, "source": source})),
            "bonds_per_coupling": couplings,
            "neighbours": neighbours,
            "levels": levels,
            "warnings": self.warnings,
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
            (
                "frustrated".into(),
                if self.frustrated { "yes" } else { "no" }.into(),
            ),
            ("reference".into(), reference),
        ])];
        if !self.warnings.is_empty() {
            blocks.push(Block::Heading("Warnings".into()));
            for w in &self.warnings {
                blocks.push(Block::Line(format!("WARNING: {w}")));
            }
        }
        let mut couplings = Grid::new(["coupling", "J", "bonds per cell"]);
        for (c, j, n) in &self.bonds_per_coupling {
            couplings.push([c.clone(), num(*j), n.to_string()]);
        }
        blocks.push(Block::Heading("Bonds per coupling".into()));
        blocks.push(Block::Table(couplings));
        let mut neighbours = Grid::new(["site", "neighbour", "cell", "coupling", "distance"]);
        for (site, rows) in &self.neighbours {
            for r in rows {
                let cell: Vec<String> = r.cell.iter().map(i32::to_string).collect();
                neighbours.push([
                    site.clone(),
                    r.site.clone(),
                    format!("[{}]", cell.join(", ")),
                    r.coupling.clone(),
                    fixed(r.distance, 4),
                ]);
            }
        }
        blocks.push(Block::Heading("Neighbours".into()));
        blocks.push(Block::Table(neighbours));
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

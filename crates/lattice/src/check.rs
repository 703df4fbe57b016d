//! Checks of a level's clusters against its lattice, as sentences for reports.
//!
//! A level that is not what its author meant still builds and solves: nothing in the
//! Kikuchi construction requires the clusters to be symmetric or to hold every bond. Two
//! slips are common and change the physics silently:
//!
//! * **bonds left out**: a bond that no translate of any shape contains enters the level
//!   only as a pair (Bethe-like); deliberate for a weak coupling, a slip otherwise;
//! * **broken symmetry**: a shape whose images under the lattice's point group
//!   ([`point_group`]) are not all clusters of the level. E.g. on a two-site cell of the
//!   square lattice, one plaquette shape covers only the plaquettes whose corner is on
//!   the first site: half of them, so the level solves a different, less symmetric
//!   approximation (for the antiferromagnet, a plaquette Tc of 2.7708 instead of
//!   Kikuchi's 2.4257).
//!
//! [`level_warnings`] returns one sentence per slip found, naming what to add.

use std::collections::BTreeSet;

use crate::cluster::Cluster;
use crate::level::Level;
use crate::model::{Cell, Lattice};
use crate::symmetry::{point_group, SiteMap};

/// A site written as in a lattice file, `[name, [i, j]]` (as many offsets as dimensions).
fn site_text(lattice: &Lattice, (a, c): (usize, Cell)) -> String {
    let cell: Vec<String> = c[..lattice.dimension()]
        .iter()
        .map(i32::to_string)
        .collect();
    format!("[{}, [{}]]", lattice.basis()[a].name, cell.join(", "))
}

/// A cluster written as a lattice-file shape.
pub fn shape_text(lattice: &Lattice, cluster: &Cluster) -> String {
    let sites: Vec<String> = cluster.sites().map(|s| site_text(lattice, s)).collect();
    format!("[{}]", sites.join(", "))
}

/// Bonds (indices into [`Lattice::bonds`]) that lie in no maximal cluster of more than
/// two sites: at a named level, the bonds its shapes leave to bare pairs. Empty for the
/// `site` and `pair` levels, which are built that way.
pub fn bonds_left_as_pairs(lattice: &Lattice, level: &Level) -> Vec<usize> {
    if level.name == "site" || level.name == "pair" {
        return Vec::new();
    }
    lattice
        .bonds()
        .iter()
        .enumerate()
        .filter(|(_, b)| {
            let bond = Cluster::canonical([(b.from, [0; 3]), (b.to, b.cell)]);
            !level
                .maximal
                .iter()
                .filter(|m| m.len() > 2)
                .any(|m| contains_translate(m, &bond))
        })
        .map(|(i, _)| i)
        .collect()
}

/// Whether some translate of `small` lies in `big`.
fn contains_translate(big: &Cluster, small: &Cluster) -> bool {
    let (a0, c0) = small.site(0);
    big.sites().filter(|&(a, _)| a == a0).any(|(_, c)| {
        let t = crate::model::cell_sub(c, c0);
        small.translated(t).is_subset_of(big)
    })
}

/// The images of the level's maximal clusters under `ops` that are not themselves
/// maximal clusters of the level (one canonical representative each, sorted).
pub fn missing_images(level: &Level, ops: &[SiteMap]) -> Vec<Cluster> {
    let maximal: BTreeSet<&Cluster> = level.maximal.iter().collect();
    let mut missing = BTreeSet::new();
    for op in ops {
        for m in &level.maximal {
            let image = op.image(m);
            if !maximal.contains(&image) {
                missing.insert(image);
            }
        }
    }
    missing.into_iter().collect()
}

/// Warnings about `level` of `lattice`, one sentence each (empty when none): bonds its
/// clusters leave as bare pairs, and cluster shapes missing for the level to be closed
/// under the lattice's symmetry operations `ops` (from [`point_group`]).
pub fn level_warnings(lattice: &Lattice, level: &Level, ops: &[SiteMap]) -> Vec<String> {
    let mut out = Vec::new();
    let left = bonds_left_as_pairs(lattice, level);
    if !left.is_empty() {
        let names: Vec<String> = left
            .iter()
            .map(|&i| {
                let b = &lattice.bonds()[i];
                format!(
                    "{} ({} to {})",
                    b.coupling,
                    site_text(lattice, (b.from, [0; 3])),
                    site_text(lattice, (b.to, b.cell))
                )
            })
            .collect();
        out.push(format!(
            "level `{}`: {} of the {} bonds per cell lie in no cluster of the level and enter only \
             as bare pairs: {}; intended for a weak coupling, otherwise add shapes that hold them",
            level.name,
            left.len(),
            lattice.bonds().len(),
            names.join(", ")
        ));
    }
    let missing = missing_images(level, ops);
    if !missing.is_empty() {
        let shown: Vec<String> = missing
            .iter()
            .take(3)
            .map(|c| shape_text(lattice, c))
            .collect();
        out.push(format!(
            "level `{}` is not closed under the lattice's symmetry: {} image(s) of its clusters \
             under the lattice's symmetry operations are not clusters of the level, so it treats \
             equivalent parts of the lattice differently; add them as shapes, e.g. {}{}",
            level.name,
            missing.len(),
            shown.join("; "),
            if missing.len() > shown.len() {
                " (and more)"
            } else {
                ""
            }
        ));
    }
    out
}

/// [`level_warnings`] for every level of `lattice` (built here), in [`Level::names`]
/// order.
pub fn lattice_warnings(lattice: &Lattice) -> Result<Vec<String>, crate::LatticeError> {
    let ops = point_group(lattice);
    let mut out = Vec::new();
    for name in Level::names(lattice) {
        out.extend(level_warnings(
            lattice,
            &Level::build(lattice, &name)?,
            &ops,
        ));
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The square-lattice antiferromagnet in a √2×√2 cell (a at the origin, b at (1, 0)),
    /// with `shapes` as its plaquette level.
    fn af_square(shapes: &str) -> Lattice {
        let text = format!(
            "name: af\ndimension: 2\nvectors: [[1.0, 1.0], [1.0, -1.0]]\n\
             basis: [{{name: a}}, {{name: b, position: [1.0, 0.0]}}]\ncouplings: {{J: -1.0}}\n\
             bonds:\n  - {{from: a, to: b, cell: [0, 0], coupling: J}}\n\
             \x20 - {{from: a, to: b, cell: [-1, -1], coupling: J}}\n\
             \x20 - {{from: a, to: b, cell: [0, -1], coupling: J}}\n\
             \x20 - {{from: a, to: b, cell: [-1, 0], coupling: J}}\n\
             clusters:\n  plaquette:\n{shapes}"
        );
        Lattice::from_yaml_str(&text, "af.yaml").unwrap()
    }

    const CORNER_A: &str = "    - [[a, [0, 0]], [b, [0, 0]], [b, [0, -1]], [a, [1, 0]]]\n";
    const CORNER_B: &str = "    - [[b, [0, 0]], [a, [1, 1]], [a, [1, 0]], [b, [1, 0]]]\n";

    #[test]
    fn one_plaquette_shape_on_a_two_site_cell_is_not_closed() {
        let lattice = af_square(CORNER_A);
        let warnings = lattice_warnings(&lattice).unwrap();
        assert_eq!(warnings.len(), 1, "{warnings:?}");
        assert!(
            warnings[0].contains("level `plaquette` is not closed"),
            "{warnings:?}"
        );
        // The missing shape is the plaquette with its corner on b, as the user writes it.
        assert!(
            warnings[0].contains("[[b, [0, 0]], [a, [1, 0]], [b, [1, 0]], [a, [1, 1]]]"),
            "{warnings:?}"
        );
        // Every bond is still covered: the symmetry check is what catches this slip.
        let level = Level::build(&lattice, "plaquette").unwrap();
        assert!(bonds_left_as_pairs(&lattice, &level).is_empty());
    }

    #[test]
    fn both_plaquette_shapes_give_no_warning() {
        let lattice = af_square(&format!("{CORNER_A}{CORNER_B}"));
        assert_eq!(lattice_warnings(&lattice).unwrap(), Vec::<String>::new());
    }

    #[test]
    fn bonds_outside_every_shape_are_named() {
        // Square lattice with a next-nearest-neighbour bond that the plaquette holds, and
        // a third-neighbour bond it does not.
        let text = "name: s\ndimension: 2\nvectors: [[1.0, 0.0], [0.0, 1.0]]\nbasis: [{name: a}]\n\
                    couplings: {J: 1.0, J3: 0.1}\nbonds:\n\
                    \x20 - {from: a, to: a, cell: [1, 0], coupling: J}\n\
                    \x20 - {from: a, to: a, cell: [0, 1], coupling: J}\n\
                    \x20 - {from: a, to: a, cell: [2, 0], coupling: J3}\n\
                    \x20 - {from: a, to: a, cell: [0, 2], coupling: J3}\n\
                    clusters:\n  plaquette:\n    - [[a, [0, 0]], [a, [1, 0]], [a, [0, 1]], [a, [1, 1]]]\n";
        let lattice = Lattice::from_yaml_str(text, "s.yaml").unwrap();
        let level = Level::build(&lattice, "plaquette").unwrap();
        assert_eq!(bonds_left_as_pairs(&lattice, &level), vec![2, 3]);
        let w = level_warnings(&lattice, &level, &point_group(&lattice));
        assert_eq!(w.len(), 1, "{w:?}");
        assert!(
            w[0].contains("2 of the 4 bonds per cell")
                && w[0].contains("J3 ([a, [0, 0]] to [a, [2, 0]])"),
            "{w:?}"
        );
    }
}

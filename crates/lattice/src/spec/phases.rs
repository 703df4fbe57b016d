//! The optional `phases:` key: ordered phases a user wants compared in a phase diagram,
//! each a ±1 pattern on a supercell of the lattice's cell.
//!
//! ```yaml
//! phases:
//!   columns:                 # name
//!     supercell: [2, 1]      # primitive cells along each axis
//!     signs: [+1, -1]        # one per supercell site: cell by cell, basis sites in file order
//! ```
//!
//! Rules: a name other than `disordered` (the name of the translation-invariant phase in
//! every report), used once; one supercell entry ≥ 1 per dimension and at most
//! [`MAX_PHASE_SITES`] sites in all (the largest cell the engine follows a phase on);
//! exactly one sign per site, each +1 or −1.

use std::collections::HashMap;

use crate::error::LatticeError;
use crate::model::PhaseSpec;

use super::build::{check_len, example};
use super::read::{self, index_path, key_path, list, loc, number, text, Ctx, Fields, Item};
use super::yaml::Node;
use super::PhaseRaw;

/// Most sites a declared phase's supercell may hold (`Lattice::supercell`'s limit).
pub const MAX_PHASE_SITES: usize = 64;

/// The name every report gives the translation-invariant phase.
pub(crate) const RESERVED_PHASE: &str = "disordered";

const PHASE_KEYS: &[&str] = &["supercell", "signs"];

/// Read `phases:` (a mapping of names to `{supercell, signs}`).
pub(crate) fn read_phases(ctx: &Ctx, node: &Node) -> Result<Vec<PhaseRaw>, LatticeError> {
    let expected = "a mapping of phase names to {supercell: [n1, n2], signs: [+1, -1, ...]}, e.g. {columns: {supercell: [2, 1], signs: [+1, -1]}}";
    let pairs = read::entries(ctx, node, "phases", expected)?;
    let mut out = Vec::with_capacity(pairs.len());
    for (k, v) in pairs {
        let name = text(ctx, k, "phases", "a phase name (text), e.g. columns")?;
        let path = key_path("phases", &name.value);
        let f = Fields::read(
            ctx,
            v,
            &path,
            "a phase: {supercell: [n1, n2], signs: [+1, -1, ...]}",
            PHASE_KEYS,
        )?;
        let sc = f.required(ctx, "supercell", "supercell: [2, 1]")?;
        let spath = f.path("supercell");
        let sizes = read::cell_counts(
            ctx,
            sc,
            &spath,
            "a supercell: one whole number of cells per dimension, e.g. [2, 1]",
        )?;
        let sg = f.required(ctx, "signs", "signs: [+1, -1]")?;
        let gpath = f.path("signs");
        let entries = list(
            ctx,
            sg,
            &gpath,
            "a list of signs, one per supercell site, each +1 or -1, e.g. [+1, -1]",
        )?;
        let signs = entries
            .iter()
            .enumerate()
            .map(|(i, e)| number(ctx, e, &index_path(&gpath, i)))
            .collect::<Result<_, _>>()?;
        out.push(PhaseRaw {
            name,
            loc: loc(v, &path),
            supercell: Item {
                value: sizes,
                loc: loc(sc, &spath),
            },
            signs: Item {
                value: signs,
                loc: loc(sg, &gpath),
            },
        });
    }
    Ok(out)
}

/// Check every declared phase against the lattice (`nb` basis sites, dimension `d`).
pub(crate) fn build_phases(
    ctx: &Ctx,
    raws: &[PhaseRaw],
    nb: usize,
    d: usize,
) -> Result<Vec<PhaseSpec>, LatticeError> {
    let mut first: HashMap<&str, u64> = HashMap::new();
    let mut out = Vec::with_capacity(raws.len());
    for p in raws {
        let name = p.name.value.as_str();
        if name == RESERVED_PHASE {
            return Err(LatticeError::BadPhaseName {
                at: ctx.at(&p.name.loc),
                name: name.to_string(),
                why:
                    "is reserved (every report names the translation-invariant phase `disordered`)"
                        .into(),
            });
        }
        if let Some(&line) = first.get(name) {
            return Err(LatticeError::BadPhaseName {
                at: ctx.at(&p.name.loc),
                name: name.to_string(),
                why: format!("is declared twice (first on line {line})"),
            });
        }
        first.insert(name, p.name.loc.line);
        let sc = &p.supercell;
        check_len(
            ctx,
            &sc.loc,
            "supercell",
            sc.value.len(),
            d,
            example(d, "2", "1"),
        )?;
        let mut supercell = [1usize; 3];
        for (k, e) in sc.value.iter().enumerate() {
            if e.value < 1 || e.value > MAX_PHASE_SITES as i128 {
                return Err(LatticeError::BadPhaseSupercell {
                    at: ctx.at(&e.loc),
                    phase: name.to_string(),
                    detail: format!(
                        "has the entry {}; each entry is a whole number of cells from 1 to {MAX_PHASE_SITES}, e.g. {}",
                        e.value,
                        example(d, "2", "1")
                    ),
                });
            }
            supercell[k] = e.value as usize;
        }
        let cells: usize = supercell.iter().product();
        let sites = cells * nb;
        let shown = supercell[..d]
            .iter()
            .map(usize::to_string)
            .collect::<Vec<_>>()
            .join("x");
        if sites > MAX_PHASE_SITES {
            return Err(LatticeError::BadPhaseSupercell {
                at: ctx.at(&sc.loc),
                phase: name.to_string(),
                detail: format!(
                    "{shown} holds {sites} sites, more than the {MAX_PHASE_SITES} a phase can be followed on; choose a smaller supercell"
                ),
            });
        }
        let signs = &p.signs;
        if signs.value.len() != sites {
            return Err(LatticeError::PhaseSignCount {
                at: ctx.at(&signs.loc),
                phase: name.to_string(),
                given: signs.value.len(),
                supercell: shown,
                sites,
                cells,
                basis: nb,
            });
        }
        for s in &signs.value {
            if s.value != 1.0 && s.value != -1.0 {
                return Err(LatticeError::BadPhaseSign {
                    at: ctx.at(&s.loc),
                    phase: name.to_string(),
                    value: s.value.to_string(),
                });
            }
        }
        out.push(PhaseSpec {
            name: name.to_string(),
            supercell,
            signs: signs.value.iter().map(|s| s.value).collect(),
        });
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use crate::error::LatticeError;
    use crate::model::Lattice;

    const SQUARE: &str = "name: square\ndimension: 2\nvectors: [[1.0, 0.0], [0.0, 1.0]]\n\
                          basis: [{name: a}]\ncouplings: {J: -1.0}\nbonds:\n\
                          \x20 - {from: a, to: a, cell: [1, 0], coupling: J}\n\
                          \x20 - {from: a, to: a, cell: [0, 1], coupling: J}\n";

    fn load(phases: &str) -> Result<Lattice, LatticeError> {
        Lattice::from_yaml_str(&format!("{SQUARE}phases:\n{phases}"), "sq.yaml")
    }

    #[test]
    fn declared_phases_are_read_in_file_order() {
        let l = load(
            "  columns: {supercell: [2, 1], signs: [+1, -1]}\n  \
             stripes: {supercell: [1, 2], signs: [1, -1]}\n",
        )
        .unwrap();
        let p = l.declared_phases();
        assert_eq!(p.len(), 2);
        assert_eq!(p[0].name, "columns");
        assert_eq!(p[0].supercell, [2, 1, 1]);
        assert_eq!(p[0].signs, vec![1.0, -1.0]);
        assert_eq!(p[1].signs, vec![1.0, -1.0]);
        // A supercell of the lattice does not carry them: its cell is another one.
        assert!(l.supercell([2, 2, 1]).unwrap().declared_phases().is_empty());
    }

    /// Each rule: the variant, the line, and the words a user needs.
    #[test]
    fn every_rule_names_the_line_and_the_fix() {
        let cases: [(&str, u64, &[&str]); 6] = [
            (
                "  columns: {supercell: [2, 1], signs: [+1, -1, +1]}\n",
                10,
                &[
                    "phases.columns.signs",
                    "3 sign(s)",
                    "2x1 supercell has 2 site(s)",
                ],
            ),
            (
                "  columns: {supercell: [2, 1], signs: [+1, 0.5]}\n",
                10,
                &["phases.columns.signs[1]", "0.5", "+1 or -1"],
            ),
            (
                "  columns: {supercell: [2], signs: [+1, -1]}\n",
                10,
                &[
                    "phases.columns.supercell",
                    "1 component(s)",
                    "dimension is 2",
                ],
            ),
            (
                "  columns: {supercell: [0, 1], signs: []}\n",
                10,
                &["phases.columns.supercell[0]", "entry 0", "from 1 to 64"],
            ),
            (
                "  disordered: {supercell: [1, 1], signs: [+1]}\n",
                10,
                &["phases", "`disordered`", "reserved"],
            ),
            (
                "  big: {supercell: [9, 8], signs: []}\n",
                10,
                &["phases.big.supercell", "72 sites", "smaller supercell"],
            ),
        ];
        for (text, line, parts) in cases {
            let e = load(text).unwrap_err();
            let msg = e.to_string();
            assert!(msg.contains(&format!("sq.yaml:{line}:")), "{msg}");
            for p in parts {
                assert!(msg.contains(p), "`{p}` missing from: {msg}");
            }
        }
        let e = load(
            "  a1: {supercell: [2, 1], signs: [+1, -1]}\n  a1: {supercell: [2, 1], signs: [+1, -1]}\n",
        )
        .unwrap_err();
        assert!(e.to_string().contains("declared twice"), "{e}");
        let e = load("  a1: {supercell: [2, 1]}\n").unwrap_err();
        assert!(
            e.to_string().contains("missing required key `signs`"),
            "{e}"
        );
        let e = load("  a1: {supercell: [2, 1], sign: [1, 1]}\n").unwrap_err();
        assert!(e.to_string().contains("did you mean `signs`"), "{e}");
    }
}

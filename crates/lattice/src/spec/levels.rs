//! The rules for cluster levels (`clusters:` in a lattice file): reserved and repeated
//! names, shapes of at least two distinct sites that resolve to basis sites, at most
//! [`MAX_CLUSTER_SITES`] sites (checked before a `block` is expanded), connected through
//! bonds of the lattice.

use std::collections::{HashMap, HashSet};

use crate::error::LatticeError;
use crate::level::MAX_CLUSTER_SITES;
use crate::model::{cell_sub, Bond, Cell, LevelSpec};

use super::build::{check_len, example, pad_cell, SiteNames};
use super::read::{Ctx, Item, Loc};
use super::{ClusterSiteSpec, LevelRaw, Shapes};

/// Level names every lattice has; a file cannot redefine them.
pub(crate) const RESERVED: [&str; 2] = ["site", "pair"];

/// Check and resolve every level of the file.
pub(crate) fn build_levels(
    ctx: &Ctx,
    levels: &[LevelRaw],
    names: &SiteNames,
    bonds: &[Bond],
    d: usize,
) -> Result<Vec<LevelSpec>, LatticeError> {
    let mut edges: HashSet<(usize, usize, Cell)> = HashSet::new();
    for b in bonds {
        edges.insert((b.from, b.to, b.cell));
        edges.insert((b.to, b.from, [-b.cell[0], -b.cell[1], -b.cell[2]]));
    }
    let nb = names.count();
    let mut first: HashMap<&str, u64> = HashMap::new();
    let mut out = Vec::with_capacity(levels.len());
    for l in levels {
        let name = l.name.value.as_str();
        if RESERVED.contains(&name) {
            return Err(LatticeError::ReservedLevel {
                at: ctx.at(&l.name.loc),
                name: name.to_string(),
            });
        }
        if let Some(&first_line) = first.get(name) {
            return Err(LatticeError::DuplicateLevel {
                at: ctx.at(&l.name.loc),
                name: name.to_string(),
                first_line,
            });
        }
        first.insert(name, l.name.loc.line);
        let shapes = match &l.shapes {
            Shapes::List(list) => {
                if list.is_empty() {
                    return Err(LatticeError::EmptyLevel {
                        at: ctx.at(&l.loc),
                        level: name.to_string(),
                    });
                }
                list.iter()
                    .map(|s| shape(ctx, name, s, names, d))
                    .collect::<Result<Vec<_>, _>>()?
            }
            Shapes::Block(b) => vec![block(ctx, name, b, nb, d)?],
        };
        for (sites, loc) in &shapes {
            connected(ctx, name, sites, loc, &edges, names, d)?;
        }
        out.push(LevelSpec {
            name: name.to_string(),
            shapes: shapes.into_iter().map(|(s, _)| s).collect(),
        });
    }
    Ok(out)
}

/// Size limits: at least 2 sites, at most [`MAX_CLUSTER_SITES`].
fn check_size(ctx: &Ctx, level: &str, loc: &Loc, sites: u128) -> Result<(), LatticeError> {
    if sites < 2 {
        return Err(LatticeError::ClusterTooSmall {
            at: ctx.at(loc),
            level: level.to_string(),
            sites: sites as usize,
        });
    }
    if sites > MAX_CLUSTER_SITES as u128 {
        return Err(LatticeError::ClusterOverLimit {
            at: ctx.at(loc),
            level: level.to_string(),
            sites,
            limit: MAX_CLUSTER_SITES,
        });
    }
    Ok(())
}

/// An explicit shape: sizes, names, cell lengths, no repeated site.
fn shape(
    ctx: &Ctx,
    level: &str,
    s: &Item<Vec<ClusterSiteSpec>>,
    names: &SiteNames,
    d: usize,
) -> Result<(Vec<(usize, Cell)>, Loc), LatticeError> {
    check_size(ctx, level, &s.loc, s.value.len() as u128)?;
    let mut sites: Vec<(usize, Cell)> = Vec::with_capacity(s.value.len());
    for (name, offset) in &s.value {
        let a = names.resolve(ctx, name)?;
        check_len(
            ctx,
            &offset.loc,
            "cell offset",
            offset.value.len(),
            d,
            example(d, "1", "0"),
        )?;
        let c = pad_cell(&offset.value);
        if sites.contains(&(a, c)) {
            return Err(LatticeError::RepeatedClusterSite {
                at: ctx.at(&name.loc),
                site: names.name(a).to_string(),
                cell: show_cell(c, d),
            });
        }
        sites.push((a, c));
    }
    Ok((sites, s.loc.clone()))
}

/// The `block: [n1, n2(, n3)]` shorthand: every basis site of the n1 × n2 (× n3) block of
/// cells starting at cell 0, refused before expansion if too small or too large.
fn block(
    ctx: &Ctx,
    level: &str,
    b: &Item<Vec<Item<i128>>>,
    nb: usize,
    d: usize,
) -> Result<(Vec<(usize, Cell)>, Loc), LatticeError> {
    check_len(ctx, &b.loc, "block", b.value.len(), d, example(d, "2", "2"))?;
    let mut n = [1i32; 3];
    let mut total: u128 = nb as u128;
    for (k, e) in b.value.iter().enumerate() {
        if e.value < 1 {
            return Err(LatticeError::BadBlock {
                at: ctx.at(&e.loc),
                value: e.value.to_string(),
            });
        }
        total = total.saturating_mul(e.value as u128);
        n[k] = i32::try_from(e.value).unwrap_or(i32::MAX);
    }
    check_size(ctx, level, &b.loc, total)?;
    let mut sites = Vec::with_capacity(total as usize);
    for z in 0..n[2] {
        for y in 0..n[1] {
            for x in 0..n[0] {
                sites.extend((0..nb).map(|a| (a, [x, y, z])));
            }
        }
    }
    Ok((sites, b.loc.clone()))
}

/// [`LatticeError::DisconnectedCluster`] unless every site of `sites` is reached from the
/// first one by steps along bonds of the lattice (breadth-first search).
fn connected(
    ctx: &Ctx,
    level: &str,
    sites: &[(usize, Cell)],
    loc: &Loc,
    edges: &HashSet<(usize, usize, Cell)>,
    names: &SiteNames,
    d: usize,
) -> Result<(), LatticeError> {
    let mut reached = vec![false; sites.len()];
    let mut queue = vec![0usize];
    reached[0] = true;
    while let Some(i) = queue.pop() {
        let (a, ca) = sites[i];
        for (j, &(b, cb)) in sites.iter().enumerate() {
            if !reached[j] && edges.contains(&(a, b, cell_sub(cb, ca))) {
                reached[j] = true;
                queue.push(j);
            }
        }
    }
    if reached.iter().all(|&r| r) {
        return Ok(());
    }
    let show = |&(a, c): &(usize, Cell)| format!("`{}` {}", names.name(a), show_cell(c, d));
    let missing: Vec<String> = sites
        .iter()
        .zip(&reached)
        .filter(|(_, &r)| !r)
        .map(|(s, _)| show(s))
        .collect();
    let mut unreached = missing
        .iter()
        .take(4)
        .cloned()
        .collect::<Vec<_>>()
        .join(", ");
    if missing.len() > 4 {
        unreached.push_str(&format!(" and {} more", missing.len() - 4));
    }
    Err(LatticeError::DisconnectedCluster {
        at: ctx.at(loc),
        level: level.to_string(),
        start: show(&sites[0]),
        unreached,
    })
}

/// `[1, 0]`: the first `d` components of a cell.
fn show_cell(c: Cell, d: usize) -> String {
    let v: Vec<String> = c[..d].iter().map(i32::to_string).collect();
    format!("[{}]", v.join(", "))
}

//! The rules of the lattice-file contract, [`LatticeSpec`] → [`Lattice`]: dimension and
//! lengths, independent vectors, basis names, couplings, bonds (cluster levels are in
//! [`super::levels`]).

use std::collections::HashMap;

use crate::error::LatticeError;
use crate::model::{Bond, Cell, Lattice, Reference, Site};

use super::read::{Ctx, Item, Loc};
use super::{BondSpec, CouplingRef, LatticeSpec};

/// Relative tolerance of the independence test: vectors are dependent when
/// `|det| ≤ DET_TOLERANCE · Π_k |v_k|` (by Hadamard's inequality the ratio lies in [0, 1];
/// the threshold is common practice for double precision input).
pub(crate) const DET_TOLERANCE: f64 = 1e-9;

/// Build the lattice, checking every rule in file order of the keys it concerns.
pub(crate) fn build(ctx: &Ctx, spec: &LatticeSpec) -> Result<Lattice, LatticeError> {
    let d = dimension(ctx, &spec.dimension)?;
    let vectors = vectors(ctx, spec, d)?;
    let basis = basis(ctx, spec, d)?;
    let names = SiteNames::new(&basis);
    let couplings: Vec<(String, f64)> = spec
        .couplings
        .iter()
        .map(|(n, v)| (n.value.clone(), v.value))
        .collect();
    let bonds = bonds(ctx, &spec.bonds, &names, &couplings, d)?;
    let levels = super::levels::build_levels(ctx, &spec.levels, &names, &bonds, d)?;
    let phases = super::phases::build_phases(ctx, &spec.phases, names.count(), d)?;
    let reference = match &spec.reference {
        Some(r) if r.tc.value > 0.0 => Some(Reference {
            tc: r.tc.value,
            source: r.source.value.clone(),
        }),
        Some(r) => {
            return Err(LatticeError::BadReference {
                at: ctx.at(&r.tc.loc),
                value: r.tc.value.to_string(),
            });
        }
        None => None,
    };
    Ok(Lattice {
        name: spec.name.value.clone(),
        description: spec.description.as_ref().map(|d| d.value.clone()),
        dimension: d,
        vectors,
        basis,
        couplings,
        field: spec.field.as_ref().map_or(0.0, |f| f.value),
        bonds,
        levels,
        reference,
        phases,
    })
}

/// Basis-name lookup with the list of known names for messages.
pub(crate) struct SiteNames {
    index: HashMap<String, usize>,
    names: Vec<String>,
}

impl SiteNames {
    fn new(basis: &[Site]) -> Self {
        SiteNames {
            index: basis
                .iter()
                .enumerate()
                .map(|(i, s)| (s.name.clone(), i))
                .collect(),
            names: basis.iter().map(|s| s.name.clone()).collect(),
        }
    }

    /// The basis index of `name`, or [`LatticeError::UnknownSite`].
    pub(crate) fn resolve(&self, ctx: &Ctx, name: &Item<String>) -> Result<usize, LatticeError> {
        self.index
            .get(&name.value)
            .copied()
            .ok_or_else(|| LatticeError::UnknownSite {
                at: ctx.at(&name.loc),
                name: super::yaml::shorten(&name.value),
                known: known_list(&self.names),
            })
    }

    /// Number of basis sites.
    pub(crate) fn count(&self) -> usize {
        self.names.len()
    }

    /// The name of basis site `i`.
    pub(crate) fn name(&self, i: usize) -> &str {
        &self.names[i]
    }
}

/// Up to 20 names, comma-separated.
fn known_list(names: &[String]) -> String {
    let mut s = names
        .iter()
        .take(20)
        .map(String::as_str)
        .collect::<Vec<_>>()
        .join(", ");
    if names.len() > 20 {
        s.push_str(", …");
    }
    s
}

/// A list of `d` entries like `[1.0, 0.0]` (`unit` first, zeros after).
pub(crate) fn example(d: usize, unit: &str, rest: &str) -> String {
    let v: Vec<&str> = (0..d).map(|k| if k == 0 { unit } else { rest }).collect();
    format!("[{}]", v.join(", "))
}

/// [`LatticeError::WrongLength`] unless `len == d`.
pub(crate) fn check_len(
    ctx: &Ctx,
    loc: &Loc,
    what: &str,
    len: usize,
    d: usize,
    ex: String,
) -> Result<(), LatticeError> {
    if len == d {
        return Ok(());
    }
    Err(LatticeError::WrongLength {
        at: ctx.at(loc),
        what: what.to_string(),
        len,
        dimension: d,
        example: ex,
    })
}

/// Zero-pad a cell offset of length ≤ 3.
pub(crate) fn pad_cell(c: &[i32]) -> Cell {
    let mut out = [0; 3];
    for (o, x) in out.iter_mut().zip(c) {
        *o = *x;
    }
    out
}

fn pad(v: &[f64]) -> [f64; 3] {
    let mut out = [0.0; 3];
    for (o, x) in out.iter_mut().zip(v) {
        *o = *x;
    }
    out
}

fn dimension(ctx: &Ctx, d: &Item<i128>) -> Result<usize, LatticeError> {
    match d.value {
        1..=3 => Ok(d.value as usize),
        v => Err(LatticeError::BadDimension {
            at: ctx.at(&d.loc),
            value: v.to_string(),
        }),
    }
}

fn vectors(ctx: &Ctx, spec: &LatticeSpec, d: usize) -> Result<Vec<[f64; 3]>, LatticeError> {
    let vs = &spec.vectors;
    if vs.value.len() != d {
        return Err(LatticeError::WrongVectorCount {
            at: ctx.at(&vs.loc),
            count: vs.value.len(),
            dimension: d,
        });
    }
    for v in &vs.value {
        check_len(
            ctx,
            &v.loc,
            "vector",
            v.value.len(),
            d,
            example(d, "1.0", "0.0"),
        )?;
    }
    let m: Vec<[f64; 3]> = vs.value.iter().map(|v| pad(&v.value)).collect();
    let det = match d {
        1 => m[0][0],
        2 => m[0][0] * m[1][1] - m[0][1] * m[1][0],
        _ => {
            m[0][0] * (m[1][1] * m[2][2] - m[1][2] * m[2][1])
                - m[0][1] * (m[1][0] * m[2][2] - m[1][2] * m[2][0])
                + m[0][2] * (m[1][0] * m[2][1] - m[1][1] * m[2][0])
        }
    };
    let scale: f64 = m
        .iter()
        .map(|v| v.iter().map(|x| x * x).sum::<f64>().sqrt())
        .product();
    let ratio = if scale > 0.0 && scale.is_finite() {
        (det / scale).abs()
    } else {
        0.0
    };
    // A NaN ratio (overflowing products) is refused too.
    if ratio.is_nan() || ratio <= DET_TOLERANCE {
        return Err(LatticeError::DependentVectors {
            at: ctx.at(&vs.loc),
            det: ratio,
            tolerance: DET_TOLERANCE,
            dimension: d,
        });
    }
    Ok(m)
}

fn basis(ctx: &Ctx, spec: &LatticeSpec, d: usize) -> Result<Vec<Site>, LatticeError> {
    let b = &spec.basis;
    if b.value.is_empty() {
        return Err(LatticeError::EmptyBasis { at: ctx.at(&b.loc) });
    }
    let mut first: HashMap<&str, u64> = HashMap::new();
    let mut sites = Vec::with_capacity(b.value.len());
    for s in &b.value {
        if let Some(&first_line) = first.get(s.name.value.as_str()) {
            return Err(LatticeError::DuplicateSite {
                at: ctx.at(&s.name.loc),
                name: s.name.value.clone(),
                first_line,
            });
        }
        first.insert(&s.name.value, s.name.loc.line);
        let position = match &s.position {
            Some(p) => {
                check_len(
                    ctx,
                    &p.loc,
                    "position",
                    p.value.len(),
                    d,
                    example(d, "0.5", "0.0"),
                )?;
                pad(&p.value)
            }
            None => [0.0; 3],
        };
        sites.push(Site {
            name: s.name.value.clone(),
            position,
        });
    }
    Ok(sites)
}

fn bonds(
    ctx: &Ctx,
    specs: &[BondSpec],
    names: &SiteNames,
    couplings: &[(String, f64)],
    d: usize,
) -> Result<Vec<Bond>, LatticeError> {
    let mut seen: HashMap<(usize, usize, Cell), usize> = HashMap::new();
    let mut bonds: Vec<Bond> = Vec::with_capacity(specs.len());
    for (i, b) in specs.iter().enumerate() {
        let from = names.resolve(ctx, &b.from)?;
        let to = names.resolve(ctx, &b.to)?;
        check_len(
            ctx,
            &b.cell.loc,
            "cell offset",
            b.cell.value.len(),
            d,
            example(d, "1", "0"),
        )?;
        let cell = pad_cell(&b.cell.value);
        let (coupling, j) = match &b.coupling.value {
            CouplingRef::Name(n) => match couplings.iter().find(|(c, _)| c == n) {
                Some((c, j)) => (c.clone(), *j),
                None => {
                    let known = if couplings.is_empty() {
                        "none: `couplings` is empty".to_string()
                    } else {
                        couplings
                            .iter()
                            .map(|(c, _)| c.as_str())
                            .collect::<Vec<_>>()
                            .join(", ")
                    };
                    return Err(LatticeError::UnknownCoupling {
                        at: ctx.at(&b.coupling.loc),
                        name: super::yaml::shorten(n),
                        known,
                    });
                }
            },
            CouplingRef::Value { j, written } => (written.clone(), *j),
        };
        if from == to && cell == [0; 3] {
            return Err(LatticeError::SelfBond {
                at: ctx.at(&b.loc),
                site: names.name(from).to_string(),
            });
        }
        let reversed = (to, from, [-cell[0], -cell[1], -cell[2]]);
        let key = (from, to, cell).min(reversed);
        if let Some(&first) = seen.get(&key) {
            let f = &bonds[first];
            let how = if (f.from, f.to, f.cell) == (from, to, cell) {
                String::new()
            } else {
                " in the opposite direction (a bond a→b with cell c is the bond b→a with cell −c)"
                    .to_string()
            };
            return Err(LatticeError::DuplicateBond {
                at: ctx.at(&b.loc),
                first,
                first_line: specs[first].loc.line,
                how,
            });
        }
        seen.insert(key, i);
        bonds.push(Bond {
            from,
            to,
            cell,
            coupling,
            j,
        });
    }
    Ok(bonds)
}

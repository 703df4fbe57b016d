//! The shape of a lattice file: [`Node`] tree → [`LatticeSpec`].
//!
//! Checks only what each key must look like (a mapping with known keys, text, numbers,
//! lists); the rules between values (lengths against `dimension`, names that must
//! resolve, ...) are checked by [`super::build`].

use std::collections::HashMap;

use crate::error::LatticeError;

use super::read::{
    self, cell, index_path, key_path, list, loc, number, numbers, text, Ctx, Fields, Item,
};
use super::yaml::{Kind, Node};
use super::{
    BondSpec, ClusterSiteSpec, CouplingRef, LatticeSpec, LevelRaw, NamedCouplings, ReferenceSpec,
    Shapes, SiteSpec,
};

const TOP_KEYS: &[&str] = &[
    "name",
    "description",
    "dimension",
    "vectors",
    "basis",
    "couplings",
    "field",
    "bonds",
    "clusters",
    "reference",
    "phases",
];
const SITE_KEYS: &[&str] = &["name", "position"];
const BOND_KEYS: &[&str] = &["from", "to", "cell", "coupling"];
const BLOCK_KEYS: &[&str] = &["block"];
const REFERENCE_KEYS: &[&str] = &["tc", "source"];

/// Read the whole file.
pub(crate) fn read(ctx: &Ctx, root: &Node) -> Result<LatticeSpec, LatticeError> {
    if root.kind == Kind::Null {
        return Err(ctx.wrong(root, "", "a lattice: a mapping with the keys name, dimension, vectors, basis, couplings, bonds (the file is empty)"));
    }
    let top = Fields::read(
        ctx,
        root,
        "",
        "a lattice: a mapping with the keys name, dimension, vectors, basis, couplings, bonds",
        TOP_KEYS,
    )?;
    let name = text(
        ctx,
        top.required(ctx, "name", "name: square")?,
        "name",
        "the lattice's name (text), e.g. name: square",
    )?;
    let description = top
        .optional("description")
        .map(|n| text(ctx, n, "description", "a one-line description (text)"))
        .transpose()?;
    let dimension = read::integer(
        ctx,
        top.required(ctx, "dimension", "dimension: 2")?,
        "dimension",
        "the dimension as a whole number 1, 2 or 3",
    )?;
    let vectors = read_vectors(
        ctx,
        top.required(ctx, "vectors", "vectors: [[1.0, 0.0], [0.0, 1.0]]")?,
    )?;
    let basis = read_basis(ctx, top.required(ctx, "basis", "basis: [{name: a}]")?)?;
    let couplings = read_couplings(ctx, top.required(ctx, "couplings", "couplings: {J: 1.0}")?)?;
    let field = top
        .optional("field")
        .map(|n| number(ctx, n, "field"))
        .transpose()?;
    let bonds = read_bonds(
        ctx,
        top.required(
            ctx,
            "bonds",
            "bonds: [{from: a, to: a, cell: [1, 0], coupling: J}]",
        )?,
    )?;
    let levels = match top.optional("clusters") {
        Some(n) => read_levels(ctx, n)?,
        None => Vec::new(),
    };
    let reference = top
        .optional("reference")
        .map(|n| read_reference(ctx, n))
        .transpose()?;
    let phases = match top.optional("phases") {
        Some(n) => super::phases::read_phases(ctx, n)?,
        None => Vec::new(),
    };
    Ok(LatticeSpec {
        name,
        description,
        dimension,
        vectors,
        basis,
        couplings,
        field,
        bonds,
        levels,
        reference,
        phases,
    })
}

fn read_vectors(ctx: &Ctx, node: &Node) -> Result<Item<Vec<Item<Vec<f64>>>>, LatticeError> {
    let expected = "a list of primitive vectors, one per dimension, e.g. [[1.0, 0.0], [0.0, 1.0]]";
    let entries = list(ctx, node, "vectors", expected)?;
    let value = entries
        .iter()
        .enumerate()
        .map(|(i, v)| {
            numbers(
                ctx,
                v,
                &index_path("vectors", i),
                "a vector: a list of numbers, e.g. [1.0, 0.0]",
            )
        })
        .collect::<Result<_, _>>()?;
    Ok(Item {
        value,
        loc: loc(node, "vectors"),
    })
}

fn read_basis(ctx: &Ctx, node: &Node) -> Result<Item<Vec<SiteSpec>>, LatticeError> {
    let entries = list(
        ctx,
        node,
        "basis",
        "a list of sites, e.g. [{name: a, position: [0.0, 0.0]}]",
    )?;
    let mut sites = Vec::with_capacity(entries.len());
    for (i, n) in entries.iter().enumerate() {
        let path = index_path("basis", i);
        let f = Fields::read(
            ctx,
            n,
            &path,
            "a site: a mapping such as {name: a, position: [0.0, 0.0]}",
            SITE_KEYS,
        )?;
        let name = text(
            ctx,
            f.required(ctx, "name", "name: a")?,
            &f.path("name"),
            "the site's name (text), e.g. a",
        )?;
        let position = f
            .optional("position")
            .map(|p| {
                numbers(
                    ctx,
                    p,
                    &f.path("position"),
                    "a position: a list of numbers, e.g. [0.5, 0.0]",
                )
            })
            .transpose()?;
        sites.push(SiteSpec { name, position });
    }
    Ok(Item {
        value: sites,
        loc: loc(node, "basis"),
    })
}

fn read_couplings(ctx: &Ctx, node: &Node) -> Result<NamedCouplings, LatticeError> {
    let expected = "a mapping of coupling names to numbers, e.g. {J: 1.0, J2: -0.5}";
    let pairs = match node.kind {
        // `couplings:` with nothing after it: no named couplings (bonds give numbers).
        Kind::Null => &[][..],
        _ => read::entries(ctx, node, "couplings", expected)?,
    };
    let mut seen: HashMap<String, u64> = HashMap::new();
    let mut out = Vec::with_capacity(pairs.len());
    for (k, v) in pairs {
        let name = match &k.kind {
            Kind::Str(s) if !s.is_empty() => s.clone(),
            _ => {
                return Err(ctx.wrong(
                    k,
                    "couplings",
                    "a coupling name such as J (text; a bare number in a bond is already a literal coupling)",
                ))
            }
        };
        let path = key_path("couplings", &name);
        if let Some(&first_line) = seen.get(&name) {
            return Err(LatticeError::DuplicateKey {
                at: ctx.at_node(k, "couplings"),
                key: name,
                first_line,
            });
        }
        seen.insert(name.clone(), k.line);
        let value = number(ctx, v, &path)?;
        out.push((
            Item {
                value: name,
                loc: loc(k, &path),
            },
            value,
        ));
    }
    Ok(out)
}

fn read_bonds(ctx: &Ctx, node: &Node) -> Result<Vec<BondSpec>, LatticeError> {
    let entries = list(
        ctx,
        node,
        "bonds",
        "a list of bonds, e.g. [{from: a, to: a, cell: [1, 0], coupling: J}]",
    )?;
    let mut bonds = Vec::with_capacity(entries.len());
    for (i, n) in entries.iter().enumerate() {
        let path = index_path("bonds", i);
        let f = Fields::read(
            ctx,
            n,
            &path,
            "a bond: a mapping such as {from: a, to: a, cell: [1, 0], coupling: J}",
            BOND_KEYS,
        )?;
        let site = "a basis site's name, e.g. a";
        let from = text(
            ctx,
            f.required(ctx, "from", "from: a")?,
            &f.path("from"),
            site,
        )?;
        let to = text(ctx, f.required(ctx, "to", "to: a")?, &f.path("to"), site)?;
        let cell = cell(
            ctx,
            f.required(ctx, "cell", "cell: [1, 0]")?,
            &f.path("cell"),
        )?;
        let cn = f.required(ctx, "coupling", "coupling: J")?;
        let cpath = f.path("coupling");
        let coupling = match &cn.kind {
            Kind::Str(s) if !s.is_empty() => Item {
                value: CouplingRef::Name(s.clone()),
                loc: loc(cn, &cpath),
            },
            Kind::Int(_) | Kind::Float(_) => {
                let j = number(ctx, cn, &cpath)?;
                Item {
                    value: CouplingRef::Value {
                        j: j.value,
                        written: cn.raw(ctx.text),
                    },
                    loc: j.loc,
                }
            }
            _ => {
                return Err(ctx.wrong(
                    cn,
                    &cpath,
                    "a key of `couplings` (e.g. J) or a bare number (e.g. 1.0)",
                ))
            }
        };
        bonds.push(BondSpec {
            loc: loc(n, &path),
            from,
            to,
            cell,
            coupling,
        });
    }
    Ok(bonds)
}

fn read_levels(ctx: &Ctx, node: &Node) -> Result<Vec<LevelRaw>, LatticeError> {
    let expected = "a mapping of level names to cluster shapes, e.g. {plaquette: {block: [2, 2]}}";
    let pairs = read::entries(ctx, node, "clusters", expected)?;
    let mut levels = Vec::with_capacity(pairs.len());
    for (k, v) in pairs {
        let name = text(ctx, k, "clusters", "a level name (text), e.g. plaquette")?;
        let path = key_path("clusters", &name.value);
        let shapes = match &v.kind {
            Kind::Map(_) => {
                let f = Fields::read(ctx, v, &path, "`block: [n1, n2]`", BLOCK_KEYS)?;
                let b = f.required(ctx, "block", "block: [2, 2]")?;
                let bpath = f.path("block");
                let sizes = read::cell_counts(
                    ctx,
                    b,
                    &bpath,
                    "a block size: one whole number per dimension, e.g. [2, 2]",
                )?;
                Shapes::Block(Item {
                    value: sizes,
                    loc: loc(b, &bpath),
                })
            }
            _ => Shapes::List(read_shapes(ctx, v, &path)?),
        };
        levels.push(LevelRaw {
            name,
            loc: loc(v, &path),
            shapes,
        });
    }
    Ok(levels)
}

fn read_shapes(
    ctx: &Ctx,
    node: &Node,
    path: &str,
) -> Result<Vec<Item<Vec<ClusterSiteSpec>>>, LatticeError> {
    let expected = "a list of cluster shapes, each a list of [site, cell] pairs, e.g. [[[a, [0, 0]], [a, [1, 0]]]], or `block: [2, 2]`";
    let shapes = list(ctx, node, path, expected)?;
    let mut out = Vec::with_capacity(shapes.len());
    for (s, shape) in shapes.iter().enumerate() {
        let spath = index_path(path, s);
        let sites = list(
            ctx,
            shape,
            &spath,
            "a cluster shape: a list of [site, cell] pairs, e.g. [[a, [0, 0]], [a, [1, 0]]]",
        )?;
        if let Some(first) = sites.first() {
            if !matches!(first.kind, Kind::Seq(_)) {
                return Err(ctx.wrong(
                    shape,
                    &spath,
                    "a cluster shape: a list of [site, cell] pairs (a level is a list of shapes; \
                     for a single shape wrap it in one more list: [[[a, [0, 0]], [a, [1, 0]]]])",
                ));
            }
        }
        let mut pairs = Vec::with_capacity(sites.len());
        for (k, site) in sites.iter().enumerate() {
            let kpath = index_path(&spath, k);
            let pair_expected = "a [site, cell] pair, e.g. [a, [1, 0]]";
            let pair = list(ctx, site, &kpath, pair_expected)?;
            let [name, offset] = pair else {
                return Err(ctx.wrong(site, &kpath, pair_expected));
            };
            let name = text(
                ctx,
                name,
                &index_path(&kpath, 0),
                "a basis site's name, e.g. a",
            )?;
            let offset = cell(ctx, offset, &index_path(&kpath, 1))?;
            pairs.push((name, offset));
        }
        out.push(Item {
            value: pairs,
            loc: loc(shape, &spath),
        });
    }
    Ok(out)
}

fn read_reference(ctx: &Ctx, node: &Node) -> Result<ReferenceSpec, LatticeError> {
    let f = Fields::read(
        ctx,
        node,
        "reference",
        "a mapping {tc: <critical temperature>, source: \"<author (year), journal>\"}",
        REFERENCE_KEYS,
    )?;
    let tc =
        number(ctx, f.required(ctx, "tc", "tc: 2.269")?, &f.path("tc")).map_err(|e| match e {
            LatticeError::NonFinite { at, value } => LatticeError::BadReference { at, value },
            other => other,
        })?;
    let source = text(
        ctx,
        f.required(
            ctx,
            "source",
            "source: \"Onsager (1944), Phys. Rev. 65, 117\"",
        )?,
        &f.path("source"),
        "where tc comes from (text: author, year, journal)",
    )?;
    Ok(ReferenceSpec { tc, source })
}

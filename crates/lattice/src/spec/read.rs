//! Typed reading of [`Node`]s: mappings with known keys, text, numbers, lists, each
//! refused with a located [`LatticeError`] naming what belongs there.

use crate::error::{LatticeError, Place};
use crate::suggest::did_you_mean;

use super::yaml::{shorten, Kind, Node};

/// Largest accepted magnitude of a cell-offset entry.
pub const MAX_CELL_OFFSET: i32 = 1000;

/// Where a value was read: line, column and key path.
#[derive(Debug, Clone, PartialEq, Eq)]
pub(crate) struct Loc {
    pub line: u64,
    pub column: u64,
    pub path: String,
}

/// A value with its location.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Item<T> {
    pub value: T,
    pub loc: Loc,
}

/// The file being read: its name (for messages) and its text (for values as written).
#[derive(Debug, Clone, Copy)]
pub(crate) struct Ctx<'t> {
    pub file: &'t str,
    pub text: &'t str,
}

impl Ctx<'_> {
    /// The [`Place`] of a location.
    pub fn at(&self, loc: &Loc) -> Box<Place> {
        Box::new(Place {
            file: self.file.to_string(),
            line: loc.line,
            column: loc.column,
            path: loc.path.clone(),
        })
    }
    /// The [`Place`] of `node` read at `path`.
    pub fn at_node(&self, node: &Node, path: &str) -> Box<Place> {
        self.at(&loc(node, path))
    }
    /// A [`LatticeError::WrongType`] for `node`.
    pub fn wrong(&self, node: &Node, path: &str, expected: &str) -> LatticeError {
        LatticeError::WrongType {
            at: self.at_node(node, path),
            expected: expected.to_string(),
            found: node.describe(self.text),
        }
    }
}

/// The location of `node` read at `path`.
pub(crate) fn loc(node: &Node, path: &str) -> Loc {
    Loc {
        line: node.line,
        column: node.column,
        path: path.to_string(),
    }
}

/// `parent.key` (or `key` at the top level).
pub(crate) fn key_path(parent: &str, key: &str) -> String {
    if parent.is_empty() {
        key.to_string()
    } else {
        format!("{parent}.{key}")
    }
}

/// `parent[i]`.
pub(crate) fn index_path(parent: &str, i: usize) -> String {
    format!("{parent}[{i}]")
}

/// A mapping whose keys were all checked against a list of allowed keys.
pub(crate) struct Fields<'n> {
    node: &'n Node,
    path: String,
    entries: Vec<(String, &'n Node)>,
}

impl<'n> Fields<'n> {
    /// Read `node` (at `path`) as a mapping whose keys are all in `allowed`, each once.
    pub fn read(
        ctx: &Ctx,
        node: &'n Node,
        path: &str,
        expected: &str,
        allowed: &[&str],
    ) -> Result<Self, LatticeError> {
        let Kind::Map(pairs) = &node.kind else {
            return Err(ctx.wrong(node, path, expected));
        };
        let mut entries: Vec<(String, &'n Node)> = Vec::with_capacity(pairs.len());
        for (k, v) in pairs {
            let key = k.raw(ctx.text);
            if !allowed.contains(&key.as_str()) {
                return Err(LatticeError::UnknownKey {
                    at: ctx.at_node(k, path),
                    key: shorten(&key),
                    suggestion: did_you_mean(&key, allowed),
                    allowed: allowed.join(", "),
                });
            }
            if let Some(first) = pairs
                .iter()
                .map(|(k0, _)| k0)
                .find(|k0| k0.raw(ctx.text) == key)
            {
                if !std::ptr::eq(first, k) {
                    return Err(LatticeError::DuplicateKey {
                        at: ctx.at_node(k, path),
                        key,
                        first_line: first.line,
                    });
                }
            }
            entries.push((key, v));
        }
        Ok(Fields {
            node,
            path: path.to_string(),
            entries,
        })
    }

    /// The value of `key`, if present and not null.
    pub fn optional(&self, key: &str) -> Option<&'n Node> {
        self.entries
            .iter()
            .find(|(k, v)| k == key && v.kind != Kind::Null)
            .map(|(_, v)| *v)
    }

    /// The value of `key`, refused with [`LatticeError::MissingKey`] if absent.
    pub fn required(&self, ctx: &Ctx, key: &str, example: &str) -> Result<&'n Node, LatticeError> {
        match self.entries.iter().find(|(k, _)| k == key) {
            Some((_, v)) => Ok(v),
            None => Err(LatticeError::MissingKey {
                at: ctx.at_node(self.node, &self.path),
                key: key.to_string(),
                example: example.to_string(),
            }),
        }
    }

    /// Path of `key` inside this mapping.
    pub fn path(&self, key: &str) -> String {
        key_path(&self.path, key)
    }
}

/// The entries of a mapping with free keys (couplings, clusters), in file order.
pub(crate) fn entries<'n>(
    ctx: &Ctx,
    node: &'n Node,
    path: &str,
    expected: &str,
) -> Result<&'n [(Node, Node)], LatticeError> {
    match &node.kind {
        Kind::Map(pairs) => Ok(pairs),
        _ => Err(ctx.wrong(node, path, expected)),
    }
}

/// A list's entries.
pub(crate) fn list<'n>(
    ctx: &Ctx,
    node: &'n Node,
    path: &str,
    expected: &str,
) -> Result<&'n [Node], LatticeError> {
    match &node.kind {
        Kind::Seq(v) => Ok(v),
        _ => Err(ctx.wrong(node, path, expected)),
    }
}

/// Non-empty text; a number or boolean is taken as written (so `name: 1` is the name `1`).
pub(crate) fn text(
    ctx: &Ctx,
    node: &Node,
    path: &str,
    expected: &str,
) -> Result<Item<String>, LatticeError> {
    match &node.kind {
        Kind::Str(s) if !s.is_empty() => Ok(Item {
            value: s.clone(),
            loc: loc(node, path),
        }),
        Kind::Bool(_) | Kind::Int(_) | Kind::Float(_) => Ok(Item {
            value: node.raw(ctx.text),
            loc: loc(node, path),
        }),
        _ => Err(ctx.wrong(node, path, expected)),
    }
}

/// A finite number (whole or decimal); NaN and infinities are refused with
/// [`LatticeError::NonFinite`], quoted numbers with a hint to drop the quotes.
pub(crate) fn number(ctx: &Ctx, node: &Node, path: &str) -> Result<Item<f64>, LatticeError> {
    let value = match &node.kind {
        Kind::Int(i) => *i as f64,
        Kind::Float(x) => *x,
        Kind::Str(s) if s.trim().parse::<f64>().is_ok() => {
            return Err(ctx.wrong(node, path, "a number (remove the quotes around it)"));
        }
        _ => return Err(ctx.wrong(node, path, "a number, e.g. 1.0")),
    };
    if !value.is_finite() {
        return Err(LatticeError::NonFinite {
            at: ctx.at_node(node, path),
            value: node.raw(ctx.text),
        });
    }
    Ok(Item {
        value,
        loc: loc(node, path),
    })
}

/// A whole number.
pub(crate) fn integer(
    ctx: &Ctx,
    node: &Node,
    path: &str,
    expected: &str,
) -> Result<Item<i128>, LatticeError> {
    match node.kind {
        Kind::Int(i) => Ok(Item {
            value: i,
            loc: loc(node, path),
        }),
        _ => Err(ctx.wrong(node, path, expected)),
    }
}

/// A list of whole numbers of cells (a block's or a supercell's size), one per entry;
/// `expected` describes the list. Their range is checked by the caller.
pub(crate) fn cell_counts(
    ctx: &Ctx,
    node: &Node,
    path: &str,
    expected: &str,
) -> Result<Vec<Item<i128>>, LatticeError> {
    list(ctx, node, path, expected)?
        .iter()
        .enumerate()
        .map(|(i, e)| integer(ctx, e, &index_path(path, i), "a whole number of cells ≥ 1"))
        .collect()
}

/// A list of finite numbers (a vector or a position), any length.
pub(crate) fn numbers(
    ctx: &Ctx,
    node: &Node,
    path: &str,
    expected: &str,
) -> Result<Item<Vec<f64>>, LatticeError> {
    let entries = list(ctx, node, path, expected)?;
    let value = entries
        .iter()
        .enumerate()
        .map(|(i, n)| number(ctx, n, &index_path(path, i)).map(|x| x.value))
        .collect::<Result<Vec<f64>, _>>()?;
    Ok(Item {
        value,
        loc: loc(node, path),
    })
}

/// A cell offset: a list of whole numbers, each within ±[`MAX_CELL_OFFSET`], any length.
pub(crate) fn cell(ctx: &Ctx, node: &Node, path: &str) -> Result<Item<Vec<i32>>, LatticeError> {
    let expected = "a cell offset: a list of whole numbers, one per dimension, e.g. [1, 0]";
    let entries = list(ctx, node, path, expected)?;
    let mut value = Vec::with_capacity(entries.len());
    for (i, n) in entries.iter().enumerate() {
        let p = index_path(path, i);
        let k = integer(
            ctx,
            n,
            &p,
            "a whole number (a cell offset counts unit cells)",
        )?;
        let lim = i128::from(MAX_CELL_OFFSET);
        if !(-lim..=lim).contains(&k.value) {
            return Err(LatticeError::CellOutOfRange {
                at: ctx.at_node(n, &p),
                value: n.raw(ctx.text),
                limit: MAX_CELL_OFFSET,
            });
        }
        value.push(k.value as i32);
    }
    Ok(Item {
        value,
        loc: loc(node, path),
    })
}

//! YAML text → a tree of [`Node`]s, each with the line and column it came from.
//!
//! serde-saphyr's [`Spanned`] wrapper reports the location of every value it wraps; a
//! self-describing visitor wraps every node of the document in it, so later checks can
//! point at any value, key or list entry. Parser options: YAML 1.2 booleans only (a site
//! named `no` stays text), repeated keys passed through (we report them ourselves, with
//! both lines), NaN and infinities passed through (we refuse them ourselves, naming the
//! key), one document per file, the parser's default budget (nesting depth 64, node
//! count) against hostile input.

use std::fmt;

use serde::de::{self, Deserialize, Deserializer, MapAccess, SeqAccess, Visitor};
use serde_saphyr::options::{DuplicateKeyPolicy, NonFiniteFloatPolicy};
use serde_saphyr::Spanned;

use crate::error::{LatticeError, Place};

/// What a node holds.
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum Kind {
    /// `~`, `null` or an empty value.
    Null,
    /// `true` / `false`.
    Bool(bool),
    /// A whole number (wide enough for any YAML integer the parser yields).
    Int(i128),
    /// A floating-point number, possibly NaN or infinite.
    Float(f64),
    /// Text.
    Str(String),
    /// A sequence.
    Seq(Vec<Node>),
    /// A mapping, entries in file order, repeated keys kept.
    Map(Vec<(Node, Node)>),
}

/// One YAML value with its location.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Node {
    /// The value.
    pub kind: Kind,
    /// Line, from 1 (0 if unknown).
    pub line: u64,
    /// Column in characters, from 1 (0 if unknown).
    pub column: u64,
    /// Byte range of the scalar's source text, when the parser knows it.
    pub bytes: Option<(usize, usize)>,
}

impl Node {
    /// The scalar as written in `text` (e.g. `1.50`, `.nan`), else a rendering of its value.
    pub fn raw(&self, text: &str) -> String {
        let written = self
            .bytes
            .and_then(|(start, len)| text.get(start..start.checked_add(len)?));
        match (&self.kind, written) {
            (Kind::Str(s), _) => s.clone(),
            (_, Some(w)) if !w.is_empty() && !w.starts_with('*') => w.to_string(),
            (Kind::Null, _) => "null".to_string(),
            (Kind::Bool(b), _) => b.to_string(),
            (Kind::Int(i), _) => i.to_string(),
            (Kind::Float(x), _) => x.to_string(),
            (Kind::Seq(_), _) => "[...]".to_string(),
            (Kind::Map(_), _) => "{...}".to_string(),
        }
    }

    /// A short description for "found ..." in messages, e.g. "text `two`", "a list".
    pub fn describe(&self, text: &str) -> String {
        match &self.kind {
            Kind::Null => "nothing (an empty value or null)".to_string(),
            Kind::Bool(b) => format!("the boolean `{b}`"),
            Kind::Int(_) | Kind::Float(_) => format!("the number `{}`", shorten(&self.raw(text))),
            Kind::Str(s) if s.is_empty() => "empty text".to_string(),
            Kind::Str(s) => format!("text `{}`", shorten(s)),
            Kind::Seq(v) => format!(
                "a list of {} entr{}",
                v.len(),
                if v.len() == 1 { "y" } else { "ies" }
            ),
            Kind::Map(_) => "a mapping (`key: value` pairs)".to_string(),
        }
    }
}

/// At most 40 characters of `s`, with an ellipsis when cut.
pub(crate) fn shorten(s: &str) -> String {
    let mut out: String = s.chars().take(40).collect();
    if s.chars().nth(40).is_some() {
        out.push('…');
    }
    out
}

/// Parse `text` into a located tree; `file` names the file in the error.
pub(crate) fn parse(text: &str, file: &str) -> Result<Node, LatticeError> {
    let options = serde_saphyr::options! {
        strict_booleans: true,
        duplicate_keys: DuplicateKeyPolicy::PassThrough,
        non_finite_float_policy: NonFiniteFloatPolicy::PassThrough,
        with_snippet: false,
    };
    serde_saphyr::from_str_with_options::<Node>(text, options)
        .map_err(|e| syntax_error(&e, text, file))
}

/// Turn a parser error into [`LatticeError::Syntax`], moving its location into the place.
/// When a flow bracket opened on an earlier line is still open where the parser stopped,
/// the error points at that bracket instead: a missing `]` or `}` is the likely cause,
/// and the parser's own position is only where it noticed.
fn syntax_error(e: &serde_saphyr::Error, text: &str, file: &str) -> LatticeError {
    let (mut line, mut column) = e.location().map_or((0, 0), |l| (l.line(), l.column()));
    let mut message = e.without_snippet().to_string();
    let suffix = format!(" at line {line}, column {column}");
    if let Some(stripped) = message.strip_suffix(&suffix) {
        message = stripped.to_string();
    }
    if message.starts_with("multiple YAML documents") {
        message = "the file holds more than one YAML document (a second `---`); keep one lattice per file".into();
    } else if message.starts_with("budget breached") {
        message =
            format!("{message}; the file nests too deeply or is far too large for a lattice file");
    } else if let Some(open) = super::brackets::unclosed_before(text, line, column) {
        message = format!(
            "`{}` opened here is never closed: add the missing `{}` (the parser only noticed at \
             line {line}, column {column}: {message})",
            open.bracket,
            open.closer()
        );
        (line, column) = (open.line, open.column);
    } else {
        message
            .push_str("; fix the YAML syntax there (indentation, brackets, quotes, `key: value`)");
    }
    LatticeError::Syntax {
        at: Box::new(Place {
            file: file.to_string(),
            line,
            column,
            path: String::new(),
        }),
        message,
    }
}

impl<'de> Deserialize<'de> for Node {
    fn deserialize<D: Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        let spanned = Spanned::<Kind>::deserialize(deserializer)?;
        let loc = spanned.referenced;
        let span = loc.span();
        let bytes = match (span.byte_offset(), span.byte_len()) {
            (Some(o), Some(l)) => usize::try_from(o).ok().zip(usize::try_from(l).ok()),
            _ => None,
        };
        Ok(Node {
            kind: spanned.value,
            line: loc.line(),
            column: loc.column(),
            bytes,
        })
    }
}

impl<'de> Deserialize<'de> for Kind {
    fn deserialize<D: Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        deserializer.deserialize_any(KindVisitor)
    }
}

/// Accepts any YAML value.
struct KindVisitor;

impl<'de> Visitor<'de> for KindVisitor {
    type Value = Kind;

    fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
        f.write_str("any YAML value")
    }
    fn visit_unit<E>(self) -> Result<Kind, E> {
        Ok(Kind::Null)
    }
    fn visit_none<E>(self) -> Result<Kind, E> {
        Ok(Kind::Null)
    }
    fn visit_some<D: Deserializer<'de>>(self, d: D) -> Result<Kind, D::Error> {
        d.deserialize_any(KindVisitor)
    }
    fn visit_bool<E>(self, v: bool) -> Result<Kind, E> {
        Ok(Kind::Bool(v))
    }
    fn visit_i64<E>(self, v: i64) -> Result<Kind, E> {
        Ok(Kind::Int(i128::from(v)))
    }
    fn visit_u64<E>(self, v: u64) -> Result<Kind, E> {
        Ok(Kind::Int(i128::from(v)))
    }
    fn visit_i128<E>(self, v: i128) -> Result<Kind, E> {
        Ok(Kind::Int(v))
    }
    fn visit_u128<E>(self, v: u128) -> Result<Kind, E> {
        Ok(i128::try_from(v).map_or(Kind::Float(v as f64), Kind::Int))
    }
    fn visit_f64<E>(self, v: f64) -> Result<Kind, E> {
        Ok(Kind::Float(v))
    }
    fn visit_str<E>(self, v: &str) -> Result<Kind, E> {
        Ok(Kind::Str(v.to_string()))
    }
    fn visit_string<E>(self, v: String) -> Result<Kind, E> {
        Ok(Kind::Str(v))
    }
    fn visit_bytes<E: de::Error>(self, v: &[u8]) -> Result<Kind, E> {
        Ok(Kind::Str(String::from_utf8_lossy(v).into_owned()))
    }
    fn visit_seq<A: SeqAccess<'de>>(self, mut seq: A) -> Result<Kind, A::Error> {
        let mut out = Vec::new();
        while let Some(n) = seq.next_element::<Node>()? {
            out.push(n);
        }
        Ok(Kind::Seq(out))
    }
    fn visit_map<A: MapAccess<'de>>(self, mut map: A) -> Result<Kind, A::Error> {
        let mut out = Vec::new();
        while let Some(k) = map.next_key::<Node>()? {
            let v = map.next_value::<Node>()?;
            out.push((k, v));
        }
        Ok(Kind::Map(out))
    }
}

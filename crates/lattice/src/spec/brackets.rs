//! The unclosed flow bracket behind a YAML syntax error.
//!
//! A missing `]` or `}` is rarely reported where it is: the parser reads on, inside the
//! flow collection, until something is illegal there (typically the `:` of the next
//! `key:` line) and reports that. This scan finds the flow brackets still open at the
//! error's position, so the message can point at the one never closed.
//!
//! It is a deliberately small reading of YAML, enough for lattice files: quoted scalars
//! (`'…'` with `''`, `"…"` with `\` escapes) and comments are skipped; a `[` or `{` opens
//! a flow collection only inside another one or where a node starts (line start, after
//! `- ` or `: `), so brackets inside plain text (`description: see [1]`) are not taken
//! for collections; block scalars (`key: >-`, `key: |`) are skipped by indentation.

/// A flow bracket still open at the error's position.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) struct Unclosed {
    /// `[` or `{`.
    pub bracket: char,
    /// Line, from 1.
    pub line: u64,
    /// Column in characters, from 1.
    pub column: u64,
}

impl Unclosed {
    /// The bracket that closes this one.
    pub fn closer(&self) -> char {
        if self.bracket == '[' {
            ']'
        } else {
            '}'
        }
    }
}

/// The innermost flow bracket opened before (`line`, `column`) and still open there,
/// when it was opened on an earlier line (on the same line the parser's own position is
/// already close to it). `None` when the text before that point is balanced, or when a
/// bracket is closed by the wrong kind (the parser reports that one itself).
pub(crate) fn unclosed_before(text: &str, line: u64, column: u64) -> Option<Unclosed> {
    let mut stack: Vec<Unclosed> = Vec::new();
    let mut quote: Option<char> = None;
    // Indentation of the line that introduced a block scalar we are inside of.
    let mut block_scalar: Option<usize> = None;
    for (index, raw) in text.lines().enumerate() {
        let ln = index as u64 + 1;
        if ln > line {
            break;
        }
        let indent = raw.chars().take_while(|c| *c == ' ').count();
        if let Some(parent) = block_scalar {
            if raw.trim().is_empty() || indent > parent {
                continue;
            }
            block_scalar = None;
        }
        let chars: Vec<char> = raw.chars().collect();
        let mut k = 0;
        while k < chars.len() {
            let col = k as u64 + 1;
            if ln == line && col >= column {
                break;
            }
            let c = chars[k];
            match quote {
                Some('\'') => {
                    if c == '\'' {
                        if chars.get(k + 1) == Some(&'\'') {
                            k += 1;
                        } else {
                            quote = None;
                        }
                    }
                }
                Some(_) => {
                    if c == '\\' {
                        k += 1;
                    } else if c == '"' {
                        quote = None;
                    }
                }
                None => {
                    let before = chars[..k].iter().rev().find(|c| !c.is_whitespace());
                    let spaced = k == 0 || chars[k - 1].is_whitespace();
                    let node_start = before.is_none()
                        || (spaced && matches!(before, Some(':') | Some('-')))
                        || (!stack.is_empty() && matches!(before, Some('[' | '{' | ',' | ':')));
                    match c {
                        '#' if spaced => break,
                        '\'' | '"' if node_start => quote = Some(c),
                        '[' | '{' if node_start || !stack.is_empty() => stack.push(Unclosed {
                            bracket: c,
                            line: ln,
                            column: col,
                        }),
                        ']' | '}' if !stack.is_empty() => {
                            let open = stack.pop()?;
                            if open.closer() != c {
                                return None;
                            }
                        }
                        '|' | '>' if stack.is_empty() && node_start => {
                            let rest: String = chars[k + 1..].iter().collect();
                            let rest = rest.split(" #").next().unwrap_or("").trim();
                            if rest.chars().all(|r| matches!(r, '-' | '+' | '0'..='9')) {
                                block_scalar = Some(indent);
                                break;
                            }
                        }
                        _ => {}
                    }
                }
            }
            k += 1;
        }
    }
    stack.pop().filter(|open| open.line < line)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn finds_the_bracket_left_open_on_an_earlier_line() {
        let text = "name: s\nvectors:\n  - [1.0, 0.0\n  - [0.0, 1.0]\nbasis: []\n";
        let open = unclosed_before(text, 5, 6).unwrap();
        assert_eq!((open.bracket, open.line, open.column), ('[', 3, 5));
        assert_eq!(open.closer(), ']');
        let text = "bonds:\n  - {from: a, to: a, cell: [1, 0]\n  - {from: a}\n";
        let open = unclosed_before(text, 3, 3).unwrap();
        assert_eq!((open.bracket, open.line, open.column), ('{', 2, 5));
    }

    #[test]
    fn balanced_text_quotes_comments_and_block_scalars_are_not_flagged() {
        let text = "a: [1, 2]\nb: {c: 'x [', d: \"]\\\" {\"} # [ comment\n\
                    description: >-\n  see [1] and {2\n  more [\nname: see [x\nvectors: x\n";
        assert_eq!(unclosed_before(text, 7, 9), None);
        // Same line: the parser's position is already there.
        assert_eq!(unclosed_before("a: [1, 2\n", 1, 9), None);
        // Closed by the wrong kind: the parser says so itself.
        assert_eq!(unclosed_before("a: [1, 2}\nb: 1\n", 2, 2), None);
    }
}

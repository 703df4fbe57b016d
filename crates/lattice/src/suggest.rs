//! "Did you mean …?": the closest of some known names to a misspelt one, for error
//! messages about file keys and level names alike.

/// The closest of `known` to `word`: the same letters ignoring case, or at most two edits
/// away (Levenshtein distance); `None` when nothing is that close.
///
/// ```
/// use rungs_lattice::suggest::suggest;
/// assert_eq!(suggest("plaquete", &["site", "pair", "plaquette"]), Some("plaquette"));
/// assert_eq!(suggest("hexagon", &["site", "pair", "plaquette"]), None);
/// ```
pub fn suggest<'a>(word: &str, known: &[&'a str]) -> Option<&'a str> {
    let lower = word.to_lowercase();
    known
        .iter()
        .map(|k| {
            let d = if k.to_lowercase() == lower {
                0
            } else {
                edit_distance(&lower, k)
            };
            (d, *k)
        })
        .filter(|&(d, _)| d <= 2)
        .min_by_key(|&(d, _)| d)
        .map(|(_, k)| k)
}

/// `" (did you mean `x`?)"` for the closest of `known` to `word`, or empty.
pub fn did_you_mean(word: &str, known: &[&str]) -> String {
    suggest(word, known).map_or(String::new(), |s| format!(" (did you mean `{s}`?)"))
}

/// Levenshtein distance between two strings, by characters.
pub fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.chars().enumerate() {
        let mut cur = vec![i + 1; b.len() + 1];
        for (j, &cb) in b.iter().enumerate() {
            cur[j + 1] = (prev[j] + usize::from(ca != cb))
                .min(prev[j + 1] + 1)
                .min(cur[j] + 1);
        }
        prev = cur;
    }
    prev[b.len()]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn edit_distance_counts_single_edits() {
        assert_eq!(edit_distance("coupling", "coupling"), 0);
        assert_eq!(edit_distance("couplng", "coupling"), 1);
        assert_eq!(edit_distance("vector", "vectors"), 1);
        assert_eq!(edit_distance("abc", "xyz"), 3);
    }

    #[test]
    fn suggestions_only_for_near_misses() {
        let allowed = ["from", "to", "cell", "coupling"];
        assert_eq!(suggest("From", &allowed), Some("from"));
        assert_eq!(suggest("couplng", &allowed), Some("coupling"));
        assert_eq!(suggest("colour", &allowed), None);
        assert_eq!(did_you_mean("celll", &allowed), " (did you mean `cell`?)");
        assert_eq!(did_you_mean("colour", &allowed), "");
    }
}

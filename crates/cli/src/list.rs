//! Value lists for `--temps`, `--fields` and `--sizes`.
//!
//! One grammar for all three (CLI.md): one value `2.5`, a comma list `2.0,2.5,3.0`, or an
//! inclusive range `start:stop:step` such as `1.5:3.5:0.01`; with start > stop the range
//! runs downward (`3.5:1.5:0.01`, a cooling path; the step may be written negative). A range holds
//! `start + k·step` for `k = 0, 1, …, n` with `n = round((stop − start)/step)` when that
//! lands on `stop` within rounding (relative 1e-9 of a step), else `floor(…)`; the last
//! point is then snapped to `stop` exactly, so `0.1:0.3:0.1` ends at `0.3`, not at
//! `0.30000000000000004`. Points are computed as `start + k·step`, never by repeated
//! addition, and rounded to the decimal places of `start` and `step` as written, so
//! every point prints as the user would write it: `2.2:2.35:0.05` gives 2.2, 2.25, 2.3,
//! 2.35 (not 2.3000000000000003), `1.5:4.5:0.01` ends …, 4.48, 4.49, 4.5.
//!
//! The functions here are clap value parsers: their `Err(String)` becomes clap's
//! "invalid value … for '--temps'" message (exit status 2).

/// Longest list a range may produce.
pub const MAX_POINTS: usize = 100_000;

/// A parsed list of real numbers (temperatures or fields), in the order given.
#[derive(Debug, Clone, PartialEq)]
pub struct RealList(pub Vec<f64>);

/// A parsed list of torus sizes (linear extents in cells), in the order given.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct SizeList(pub Vec<usize>);

/// Parse a list of real numbers (any finite sign): one value, a comma list, or a range.
pub fn parse_reals(text: &str) -> Result<RealList, String> {
    let text = text.trim();
    if text.is_empty() {
        return Err("empty list: give one value (2.5), a comma list (2.0,2.5,3.0) or a range start:stop:step (1.5:3.5:0.01)".into());
    }
    if text.contains(':') {
        if text.contains(',') {
            return Err(format!(
                "`{text}` mixes a range and a comma list: give either start:stop:step or a,b,c"
            ));
        }
        return parse_range(text).map(RealList);
    }
    text.split(',')
        .map(|item| parse_number(item.trim()))
        .collect::<Result<Vec<_>, _>>()
        .map(RealList)
}

/// Parse temperatures: a real list whose every value is positive (k_B T in units of the
/// couplings; T = 0 is a limit the solver does not evaluate).
pub fn parse_temperatures(text: &str) -> Result<RealList, String> {
    let list = parse_reals(text)?;
    if let Some(t) = list.0.iter().find(|t| **t <= 0.0) {
        return Err(format!(
            "temperature {t} is not positive: temperatures must be > 0"
        ));
    }
    Ok(list)
}

/// Parse torus sizes: positive integers as one value, a comma list, or an integer range
/// `start:stop:step` (e.g. `8:32:8` gives 8, 16, 24, 32).
pub fn parse_sizes(text: &str) -> Result<SizeList, String> {
    let list = parse_reals(text)?;
    let sizes = list
        .0
        .iter()
        .map(|&x| {
            if x < 1.0 || x.fract() != 0.0 {
                Err(format!("size {x} is not a positive whole number of cells"))
            } else if x > 1.0e6 {
                Err(format!(
                    "size {x} is too large: give at most 1000000 cells along each direction"
                ))
            } else {
                Ok(x as usize)
            }
        })
        .collect::<Result<Vec<_>, _>>()?;
    Ok(SizeList(sizes))
}

/// One finite number.
fn parse_number(item: &str) -> Result<f64, String> {
    if item.is_empty() {
        return Err("empty entry in the list: remove the extra comma".into());
    }
    let x: f64 = item
        .parse()
        .map_err(|_| format!("`{item}` is not a number"))?;
    if !x.is_finite() {
        return Err(format!("`{item}` is not a finite number"));
    }
    Ok(x)
}

/// An inclusive range `start:stop:step`, robust to rounding at the end (see module docs).
fn parse_range(text: &str) -> Result<Vec<f64>, String> {
    let parts: Vec<&str> = text.split(':').map(str::trim).collect();
    let [start, stop, step] = parts[..] else {
        return Err(format!(
            "`{text}` is not a range: write start:stop:step with three numbers, e.g. 1.5:3.5:0.01"
        ));
    };
    let places = decimals(start).max(decimals(step));
    let (start, stop, step) = (
        parse_number(start)?,
        parse_number(stop)?,
        parse_number(step)?,
    );
    if step == 0.0 {
        return Err(format!("range `{text}`: the step must not be zero"));
    }
    // A range runs from start toward stop: descending when stop < start (a cooling
    // path), with the step's magnitude; a negative step must point that way too.
    let direction = if stop < start { -1.0 } else { 1.0 };
    if step < 0.0 && direction > 0.0 {
        return Err(format!(
            "range `{text}`: the step {step} points away from stop {stop}; give a positive step, or write the larger value first for a descending path"
        ));
    }
    let step = direction * step.abs();
    let too_many =
        || format!("range `{text}` has more than {MAX_POINTS} points: use a larger step");
    let ratio = (stop - start) / step;
    if !ratio.is_finite() || ratio > 2.0 * MAX_POINTS as f64 {
        return Err(too_many());
    }
    let nearest = ratio.round();
    let (last, ends_on_stop) = if (ratio - nearest).abs() <= 1e-9 * ratio.max(1.0) {
        (nearest as usize, true)
    } else {
        (ratio.floor() as usize, false)
    };
    if last >= MAX_POINTS {
        return Err(too_many());
    }
    let mut points: Vec<f64> = (0..=last)
        .map(|k| round_to(start + k as f64 * step, places))
        .collect();
    if ends_on_stop {
        if let Some(end) = points.last_mut() {
            *end = stop;
        }
    }
    Ok(points)
}

/// Decimal places of a number as written: `0.05` → 2, `1e-3` → 3, `2.5e1` → 0, `3` → 0.
fn decimals(item: &str) -> usize {
    let lower = item.trim().to_ascii_lowercase();
    let (mantissa, exponent) = match lower.split_once('e') {
        Some((m, e)) => (m, e.parse::<i64>().unwrap_or(0)),
        None => (lower.as_str(), 0),
    };
    let fraction = mantissa.split_once('.').map_or(0, |(_, f)| f.len()) as i64;
    (fraction - exponent).clamp(0, i64::from(u16::MAX)) as usize
}

/// `x` rounded to `places` decimals: the double nearest to the decimal number, which
/// prints as that number. Beyond 15 places a double holds no more decimals: unchanged.
fn round_to(x: f64, places: usize) -> f64 {
    if places > 15 {
        return x;
    }
    format!("{x:.places$}").parse().unwrap_or(x)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn single_value_and_comma_list() {
        assert_eq!(parse_reals("2.5").unwrap().0, vec![2.5]);
        assert_eq!(
            parse_reals(" 2.0, 2.5,3.0 ").unwrap().0,
            vec![2.0, 2.5, 3.0]
        );
        assert_eq!(parse_reals("-0.1,0,0.1").unwrap().0, vec![-0.1, 0.0, 0.1]);
    }

    #[test]
    fn range_is_inclusive_and_snaps_the_end() {
        let r = parse_reals("0.1:0.3:0.1").unwrap().0;
        assert_eq!(r.len(), 3);
        assert_eq!(r[2], 0.3);
        let r = parse_reals("1.5:3.5:0.01").unwrap().0;
        assert_eq!(r.len(), 201);
        assert_eq!(r[0], 1.5);
        assert_eq!(r[200], 3.5);
        assert!((r[100] - 2.5).abs() < 1e-12);
        // A step that does not divide the interval stops before `stop`.
        assert_eq!(parse_reals("1:2:0.3").unwrap().0.len(), 4);
        // Exactly the largest list allowed.
        assert_eq!(parse_reals("1:100000:1").unwrap().0.len(), MAX_POINTS);
        // A one-point range.
        assert_eq!(parse_reals("2:2:0.1").unwrap().0, vec![2.0]);
        // Descending (cooling) paths, with the step written either way.
        assert_eq!(parse_reals("3:2:0.5").unwrap().0, vec![3.0, 2.5, 2.0]);
        assert_eq!(parse_reals("3:2:-0.5").unwrap().0, vec![3.0, 2.5, 2.0]);
        assert!(parse_reals("2:3:-0.5").is_err());
        assert!(parse_reals("2:3:0").is_err());
    }

    #[test]
    fn range_points_print_as_written() {
        let r = parse_reals("2.2:2.35:0.05").unwrap().0;
        let shown: Vec<String> = r.iter().map(|x| format!("{x}")).collect();
        assert_eq!(shown, ["2.2", "2.25", "2.3", "2.35"]);
        let r = parse_reals("1.5:4.5:0.01").unwrap().0;
        assert_eq!(format!("{}", r[299]), "4.49");
        assert!(r.iter().all(|x| format!("{x}").len() <= 4), "{r:?}");
        // Exponents count: 1e-3 has three places.
        let r = parse_reals("0:0.01:1e-3").unwrap().0;
        assert_eq!(format!("{}", r[7]), "0.007");
        assert_eq!(decimals("2.5e1"), 0);
        assert_eq!(decimals("1.25E-1"), 3);
        assert_eq!(decimals("-0.125"), 3);
    }

    #[test]
    fn bad_lists_are_refused_with_a_reason() {
        for (text, says) in [
            ("", "empty list"),
            ("abc", "not a number"),
            ("1,,2", "extra comma"),
            ("NaN", "not a finite number"),
            ("inf", "not a finite number"),
            ("1:2", "not a range"),
            ("1:2:3:4", "not a range"),
            ("1:2:0", "must not be zero"),
            ("1:2:-0.1", "points away from stop"),
            ("0:1:1e-6", "more than 100000 points"),
            ("0:100000:1", "more than 100000 points"),
            ("1:2:0.5,3", "mixes a range"),
            ("nan:2:0.1", "not a finite number"),
        ] {
            let err = parse_reals(text).unwrap_err();
            assert!(
                err.contains(says),
                "`{text}` gave `{err}`, expected `{says}`"
            );
        }
    }

    #[test]
    fn temperatures_must_be_positive() {
        assert!(parse_temperatures("0:1:0.5")
            .unwrap_err()
            .contains("not positive"));
        assert!(parse_temperatures("-1").is_err());
        assert_eq!(
            parse_temperatures("1:2:0.5").unwrap().0,
            vec![1.0, 1.5, 2.0]
        );
    }

    #[test]
    fn sizes_are_positive_integers() {
        assert_eq!(parse_sizes("8,16,32").unwrap().0, vec![8, 16, 32]);
        assert_eq!(parse_sizes("8:32:8").unwrap().0, vec![8, 16, 24, 32]);
        assert!(parse_sizes("8.5").unwrap_err().contains("whole number"));
        assert!(parse_sizes("0").is_err());
    }
}

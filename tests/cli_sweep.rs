//! `rungs sweep` end to end: the CSV and JSON shapes of the command contract; the chain's
//! pair level against the exact chain in a field (Ising 1925); the square lattice at
//! T = 2 against Onsager's free energy and Yang's magnetisation, with the error shrinking
//! along pair → plaquette → 3×3 block; the figure of `--plot` (SVG structure, PNG
//! signature, `--panels`, exact curves cited only where drawn); range points printed as
//! written; `--output` written atomically; the 1D caution.

use std::f64::consts::PI;

mod common;

use common::ok;
use serde_json::Value;

const HEADER: &str =
    "level,temperature,field,magnetization,energy,free_energy,entropy,specific_heat,susceptibility,order_parameter";

/// CSV rows as (level, values of the other columns).
fn rows(csv: &str) -> Vec<(String, Vec<f64>)> {
    csv.lines()
        .skip(1)
        .map(|l| {
            let mut cells = l.split(',');
            let level = cells.next().unwrap().to_string();
            (level, cells.map(|c| c.parse::<f64>().unwrap()).collect())
        })
        .collect()
}

#[test]
fn csv_header_and_one_row_per_level_temperature_field() {
    let csv = ok(&[
        "sweep",
        "lattices/square.yaml",
        "--levels",
        "pair,plaquette",
        "--temps",
        "2.0:3.0:0.5",
        "--fields",
        "0,0.1",
        "--format",
        "csv",
    ]);
    assert_eq!(csv.lines().next().unwrap(), HEADER);
    let rows = rows(&csv);
    assert_eq!(rows.len(), 2 * 3 * 2, "{csv}");
    // Levels in the order asked, fields outermost, temperatures in order.
    let keys: Vec<(String, f64, f64)> = rows.iter().map(|(l, v)| (l.clone(), v[0], v[1])).collect();
    assert_eq!(keys[0], ("pair".into(), 2.0, 0.0));
    assert_eq!(keys[2], ("pair".into(), 3.0, 0.0));
    assert_eq!(keys[3], ("pair".into(), 2.0, 0.1));
    assert_eq!(keys[6], ("plaquette".into(), 2.0, 0.0));
    for (_, v) in &rows {
        assert_eq!(v.len(), 9);
        // S = (U − F)/T, a thermodynamic identity (common practice).
        assert!((v[5] - (v[3] - v[4]) / v[0]).abs() < 1e-9, "{v:?}");
        assert!(
            v[6] >= 0.0 && v[7] > 0.0,
            "C and χ of a stable state are positive: {v:?}"
        );
    }
}

#[test]
fn json_points_carry_the_contract_keys() {
    let text = ok(&[
        "sweep",
        "lattices/square.yaml",
        "--levels",
        "plaquette",
        "--temps",
        "2.0,2.6",
        "--format",
        "json",
    ]);
    let doc: Value = serde_json::from_str(&text).unwrap();
    assert_eq!(doc["lattice"], "square");
    let points = doc["points"].as_array().unwrap();
    assert_eq!(points.len(), 2);
    for p in points {
        for key in HEADER.split(',') {
            assert!(!p[key].is_null(), "missing `{key}` in {p}");
        }
        assert_eq!(p["level"], "plaquette");
        let sub = p["sublattice_magnetization"].as_object().unwrap();
        assert_eq!(sub.len(), 1);
        assert!((sub["a"].as_f64().unwrap() - p["magnetization"].as_f64().unwrap()).abs() < 1e-12);
        let bonds = p["bond_correlations"].as_array().unwrap();
        assert_eq!(bonds.len(), 2, "one per bond of the file");
        for b in bonds {
            assert_eq!(b["from"], "a");
            assert_eq!(b["to"], "a");
            assert_eq!(b["coupling"], "J");
            assert_eq!(b["cell"].as_array().unwrap().len(), 2);
            let c = b["correlation"].as_f64().unwrap();
            assert!(c > 0.0 && c < 1.0);
        }
        // U = −Σ_bonds J ⟨s s'⟩ per site at h = 0 (two bonds per site, J = 1).
        let sum: f64 = bonds
            .iter()
            .map(|b| b["correlation"].as_f64().unwrap())
            .sum();
        assert!((p["energy"].as_f64().unwrap() + sum).abs() < 1e-12, "{p}");
    }
    // Ordered below the plaquette Tc (≈ 2.43), not above.
    assert!(points[0]["magnetization"].as_f64().unwrap() > 0.5);
    assert!(points[1]["magnetization"].as_f64().unwrap().abs() < 1e-9);
}

/// The infinite chain (Ising 1925, Z. Phys. 31, 253; transfer matrix): with K = J/T,
/// B = h/T, D = √(sinh² B + e^{−4K}), −βf = K + ln(cosh B + D) and m = sinh B / D.
fn chain_exact(t: f64, h: f64) -> (f64, f64) {
    let (k, b) = (1.0 / t, h / t);
    let d = (b.sinh().powi(2) + (-4.0 * k).exp()).sqrt();
    (-t * (k + (b.cosh() + d).ln()), b.sinh() / d)
}

#[test]
fn chain_pair_level_is_the_exact_chain() {
    let csv = ok(&[
        "sweep",
        "lattices/chain.yaml",
        "--levels",
        "pair",
        "--temps",
        "0.7,1.0,2.0,3.5",
        "--fields",
        "-0.2,0,0.3",
        "--format",
        "csv",
    ]);
    let rows = rows(&csv);
    assert_eq!(rows.len(), 12);
    for (_, v) in rows {
        let (t, h, m, f) = (v[0], v[1], v[2], v[4]);
        let (f_exact, m_exact) = chain_exact(t, h);
        assert!(
            (f - f_exact).abs() < 1e-9 * f_exact.abs(),
            "T = {t}, h = {h}: F {f} vs {f_exact}"
        );
        assert!(
            (m - m_exact).abs() < 1e-9,
            "T = {t}, h = {h}: m {m} vs {m_exact}"
        );
    }
}

/// Simpson's rule with `n` (even) intervals.
fn simpson(f: impl Fn(f64) -> f64, a: f64, b: f64, n: usize) -> f64 {
    let h = (b - a) / n as f64;
    let inner: f64 = (1..n)
        .map(|i| f(a + i as f64 * h) * if i % 2 == 1 { 4.0 } else { 2.0 })
        .sum();
    (f(a) + f(b) + inner) * h / 3.0
}

/// Onsager (1944), Phys. Rev. 65, 117, in the single-integral form of Huang (1987),
/// Statistical Mechanics, §15.4: −βf = ln(2 cosh 2K) + (1/2π) ∫₀^π ln[(1 + √(1 − κ² sin² φ))/2] dφ,
/// κ = 2 sinh 2K / cosh² 2K, K = J/T. Returns f per site.
fn onsager_free_energy(t: f64) -> f64 {
    let k = 1.0 / t;
    let kappa = 2.0 * (2.0 * k).sinh() / (2.0 * k).cosh().powi(2);
    let integrand = |phi: f64| (0.5 * (1.0 + (1.0 - (kappa * phi.sin()).powi(2)).sqrt())).ln();
    let minus_beta_f =
        (2.0 * (2.0 * k).cosh()).ln() + simpson(integrand, 0.0, PI, 4000) / (2.0 * PI);
    -t * minus_beta_f
}

/// Yang (1952), Phys. Rev. 85, 808: m = (1 − sinh⁻⁴ 2K)^{1/8} below Tc.
fn yang_magnetization(t: f64) -> f64 {
    (1.0 - (2.0 / t).sinh().powi(-4)).powf(0.125)
}

#[test]
fn square_errors_shrink_up_the_ladder() {
    let csv = ok(&[
        "sweep",
        "lattices/square.yaml",
        "--levels",
        "pair,plaquette,block3",
        "--temps",
        "2.0",
        "--field",
        "0",
        "--format",
        "csv",
    ]);
    let f_exact = onsager_free_energy(2.0);
    let m_exact = yang_magnetization(2.0);
    // Our quadrature against the value it must give (Onsager's f at T = 2 is −2.0515856…,
    // common practice: any converged quadrature of the integral above).
    assert!((f_exact + 2.051_585_6).abs() < 1e-6, "{f_exact}");
    let rows = rows(&csv);
    let names: Vec<&str> = rows.iter().map(|(l, _)| l.as_str()).collect();
    assert_eq!(names, ["pair", "plaquette", "block3"]);
    let df: Vec<f64> = rows.iter().map(|(_, v)| (v[4] - f_exact).abs()).collect();
    let dm: Vec<f64> = rows.iter().map(|(_, v)| (v[2] - m_exact).abs()).collect();
    assert!(df[0] > df[1] && df[1] > df[2], "F errors {df:?}");
    assert!(dm[0] > dm[1] && dm[1] > dm[2], "m errors {dm:?}");
    // Kikuchi's square approximation is within 0.01 % of Onsager's F at T = 2.
    assert!(df[1] < 1e-4 * f_exact.abs(), "plaquette F error {}", df[1]);
}

/// Elements of an XML document as (name, attributes, text), checking that every tag is
/// closed in order (a small well-formedness check: enough for the SVG plotters writes).
fn xml_elements(text: &str) -> Vec<(String, String, String)> {
    let mut stack: Vec<usize> = Vec::new();
    let mut out: Vec<(String, String, String)> = Vec::new();
    let mut rest = text;
    while let Some(open) = rest.find('<') {
        let chars = &rest[..open];
        if let Some(&top) = stack.last() {
            out[top].2.push_str(chars);
        } else {
            assert!(chars.trim().is_empty(), "text outside the root: {chars}");
        }
        let close = rest[open..].find('>').expect("unterminated tag") + open;
        let tag = &rest[open + 1..close];
        rest = &rest[close + 1..];
        if tag.starts_with('?') || tag.starts_with('!') {
            continue;
        }
        if let Some(name) = tag.strip_prefix('/') {
            let top = stack.pop().expect("closing tag without opening");
            assert_eq!(out[top].0, name.trim(), "mismatched closing tag");
            continue;
        }
        let self_closing = tag.ends_with('/');
        let tag = tag.trim_end_matches('/');
        let (name, attrs) = tag.split_once(char::is_whitespace).unwrap_or((tag, ""));
        out.push((name.to_string(), attrs.to_string(), String::new()));
        if !self_closing {
            stack.push(out.len() - 1);
        }
    }
    assert!(stack.is_empty(), "unclosed elements");
    assert!(rest.trim().is_empty());
    out
}

fn attr<'a>(attrs: &'a str, key: &str) -> Option<&'a str> {
    let start = attrs.find(&format!("{key}=\""))? + key.len() + 2;
    let len = attrs[start..].find('"')?;
    Some(&attrs[start..start + len])
}

#[test]
fn plot_is_an_svg_with_a_curve_per_level_and_panel() {
    let dir = tempfile::tempdir().unwrap();
    let svg_path = dir.path().join("sweep.svg");
    let svg_arg = svg_path.to_str().unwrap();
    ok(&[
        "sweep",
        "lattices/square.yaml",
        "--levels",
        "pair,plaquette",
        "--temps",
        "1.9:3.2:0.05",
        "--field",
        "0",
        "--plot",
        svg_arg,
        "--format",
        "csv",
    ]);
    let text = std::fs::read_to_string(&svg_path).unwrap();
    let elements = xml_elements(&text);
    assert_eq!(elements[0].0, "svg", "root element");
    // Curves are polylines of many points; markers and dashes are short ones. Each level
    // has its own colour: at least one long polyline per panel (a curve cut at an axis
    // limit is drawn in pieces).
    let long_by_colour = |colour: &str| {
        elements
            .iter()
            .filter(|(n, a, _)| {
                n == "polyline"
                    && attr(a, "stroke") == Some(colour)
                    && attr(a, "points").is_some_and(|p| p.split_whitespace().count() >= 10)
            })
            .count()
    };
    let colours: Vec<String> = elements
        .iter()
        .filter(|(n, a, _)| {
            n == "polyline" && attr(a, "points").is_some_and(|p| p.split_whitespace().count() >= 10)
        })
        .filter_map(|(_, a, _)| attr(a, "stroke").map(str::to_string))
        .collect();
    let mut distinct = colours.clone();
    distinct.sort();
    distinct.dedup();
    // Two levels and the exact curve (black: Onsager's U, F, S and C, Yang's m; no χ).
    assert_eq!(distinct.len(), 3, "{distinct:?}");
    for c in &distinct {
        let want = if c == "#000000" { 5 } else { 6 };
        assert!(
            long_by_colour(c) >= want,
            "colour {c}: {} curves",
            long_by_colour(c)
        );
    }
    let texts: Vec<String> = elements
        .iter()
        .filter(|(n, _, _)| n == "text")
        .map(|(_, _, t)| t.trim().to_string())
        .collect();
    for label in [
        "pair",
        "plaquette",
        "T (J/k_B)",
        "m per site",
        "U per site (J)",
        "S per site (k_B)",
        "C per site (k_B)",
        "F per site (J)",
    ] {
        assert!(
            texts.iter().any(|t| t == label),
            "no text `{label}` in {texts:?}"
        );
    }
    assert!(texts.iter().any(|t| t.starts_with("χ = ∂m/∂h per site")));
    assert!(
        texts
            .iter()
            .any(|t| t.starts_with("exact") && t.contains("Onsager")),
        "{texts:?}"
    );
    assert!(texts.iter().any(|t| t.contains("Tc of the level")));
}

#[test]
fn output_file_is_written_atomically() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("sweep.csv");
    std::fs::write(&path, "old contents").unwrap();
    let args = [
        "sweep",
        "lattices/square.yaml",
        "--levels",
        "pair",
        "--temps",
        "2.0,3.0",
        "--format",
        "csv",
    ];
    let direct = ok(&args);
    let mut with_output = args.to_vec();
    with_output.extend(["--output", path.to_str().unwrap()]);
    let printed = ok(&with_output);
    assert!(
        printed.is_empty(),
        "nothing on stdout with --output: {printed}"
    );
    assert_eq!(std::fs::read_to_string(&path).unwrap(), direct);
    let names: Vec<_> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name())
        .collect();
    assert_eq!(names.len(), 1, "temporary files left behind: {names:?}");
}

#[test]
fn ordering_on_a_chain_is_flagged_as_an_artefact() {
    let text = ok(&[
        "sweep",
        "lattices/chain.yaml",
        "--levels",
        "site,pair",
        "--temps",
        "1.0,3.0",
    ]);
    assert!(
        text.contains("Level `site`") && text.contains("Level `pair`"),
        "{text}"
    );
    assert!(
        text.contains("`site` order spontaneously") && text.contains("1D lattice"),
        "{text}"
    );
    assert!(text.contains("approximations, not bounds"), "{text}");
}

#[test]
fn a_point_at_a_levels_tc_is_never_reported_with_invalid_response() {
    // Exactly at the pair level's Tc = 2/ln 2 (Bethe 1935, Proc. R. Soc. A 150, 552) the
    // Hessian is singular: C and χ do not exist there. The point is either left out with
    // a note or reported with finite, positive C and χ — never NaN, inf or negative.
    let tc = (2.0 / 2f64.ln()).to_string();
    let temps = format!("2.0,{tc},3.5");
    let text = ok(&[
        "sweep",
        "lattices/square.yaml",
        "--levels",
        "pair",
        "--temps",
        &temps,
        "--format",
        "json",
    ]);
    let doc: Value = serde_json::from_str(&text).unwrap();
    let points = doc["points"].as_array().unwrap();
    let omitted = doc["omitted"].as_array().unwrap();
    assert_eq!(points.len() + omitted.len(), 3, "{doc}");
    for p in points {
        assert!(p["susceptibility"].as_f64().unwrap() > 0.0, "{p}");
        assert!(p["specific_heat"].as_f64().unwrap() >= 0.0, "{p}");
    }
    for o in omitted {
        assert_eq!(o["temperature"].as_f64().unwrap().to_string(), tc);
        let reason = o["reason"].as_str().unwrap();
        let noted = doc["notes"]
            .as_array()
            .unwrap()
            .iter()
            .any(|n| n.as_str().unwrap().contains(reason));
        assert!(noted, "omitted point without a note: {doc}");
    }
}

#[test]
fn range_points_print_as_the_user_wrote_them() {
    let csv = ok(&[
        "sweep",
        "lattices/square.yaml",
        "--levels",
        "pair",
        "--temps",
        "2.2:2.35:0.05",
        "--format",
        "csv",
    ]);
    let temps: Vec<&str> = csv
        .lines()
        .skip(1)
        .map(|l| l.split(',').nth(1).unwrap())
        .collect();
    assert_eq!(temps, ["2.2", "2.25", "2.3", "2.35"], "{csv}");
    let table = ok(&[
        "sweep",
        "lattices/square.yaml",
        "--levels",
        "pair",
        "--temps",
        "1.5:4.5:0.01",
    ]);
    assert!(table.contains("\n  4.49  0  "), "{table}");
    // The susceptibility column says which susceptibility it is (not `mc`'s χ′).
    assert!(table.contains("χ = ∂m/∂h"), "{table}");
    assert!(!table.contains("4.489999"), "{table}");
}

/// The `--plot` of a two-level square sweep, with `extra` arguments; the file's bytes and
/// the report.
fn plot(name: &str, extra: &[&str]) -> (Vec<u8>, String) {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join(name);
    let mut args = vec![
        "sweep",
        "lattices/square.yaml",
        "--levels",
        "pair,plaquette",
        "--temps",
        "1.9:3.2:0.1",
        "--plot",
        path.to_str().unwrap(),
    ];
    args.extend_from_slice(extra);
    let report = ok(&args);
    (std::fs::read(&path).unwrap(), report)
}

#[test]
fn plot_png_by_extension_and_panels_on_request() {
    let (png, _) = plot("sweep.png", &[]);
    assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n", "not a PNG");
    let (svg, _) = plot("sweep.svg", &["--panels", "m,s"]);
    let texts: Vec<String> = xml_elements(&String::from_utf8(svg).unwrap())
        .into_iter()
        .filter(|(n, _, _)| n == "text")
        .map(|(_, _, t)| t.trim().to_string())
        .collect();
    assert!(texts.iter().any(|t| t == "m per site"), "{texts:?}");
    assert!(texts.iter().any(|t| t == "S per site (k_B)"), "{texts:?}");
    assert!(!texts.iter().any(|t| t == "C per site (k_B)"), "{texts:?}");
}

#[test]
fn exact_curves_are_cited_only_where_the_figure_draws_them() {
    // Onsager's square lattice has no closed form in a field (Onsager 1944): at h = 0.1
    // alone no exact curve is drawn, so none is cited.
    let (_, report) = plot("a.svg", &["--field", "0.1"]);
    assert!(!report.contains("plot: exact"), "{report}");
    let (svg, report) = plot("b.svg", &["--fields", "0,0.1"]);
    assert!(
        report.contains("exact curves of the square lattice at h = 0 from Onsager")
            && report.contains("none at h = 0.1"),
        "{report}"
    );
    // The legend keys the levels by colour and the fields by line style.
    let texts: Vec<String> = xml_elements(&String::from_utf8(svg).unwrap())
        .into_iter()
        .filter(|(n, _, _)| n == "text")
        .map(|(_, _, t)| t.trim().to_string())
        .collect();
    for label in ["pair", "plaquette", "h = 0", "h = 0.1"] {
        assert!(
            texts.iter().any(|t| t == label),
            "legend lacks `{label}`: {texts:?}"
        );
    }
}

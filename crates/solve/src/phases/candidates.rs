//! The phases a diagram compares: the disordered phase, the ordered phases built from a
//! level's ordering wavevector, and the patterns a lattice file declares.
//!
//! From the ordering's pattern `P₀` (its mode at the wavevector q, on the smallest cell
//! that holds q) the images under the lattice's point group are formed on a cubic
//! supercell `c × c (× c)` (c the least common multiple of q's denominators), and
//! grouped by their Fourier support: one mode `M_j` per member ±q_j of q's star. Every
//! combination `Σ_j c_j M_j` with `c_j ∈ {−1, 0, 1}` that vanishes on no site gives the
//! ±1 pattern `sign(Σ_j c_j M_j)` — the single-q patterns first, then two-q, three-q,
//! ... (on the fcc lattice, q = X: the CuAu-type layering `M_1` and the Cu3Au-type
//! `±(M_1 + M_2 + M_3)`, one site in four opposite to the others). A pattern and its
//! negative are both kept unless a symmetry (a point-group operation and a translation)
//! maps one onto the other: a field tells them apart. Patterns equivalent under the
//! lattice's symmetries are the same phase and are kept once.
//!
//! A pattern is named by its composition, counted on its cell: `AB` for as many +1
//! (A) as −1 (B) sites, `A3B` for three to one, and so on; uniform order is `up` or
//! `down`. A declared pattern keeps the file's name and replaces a generated one it is
//! a symmetry image of.

use rungs_lattice::symmetry::{point_group, SiteMap};
use rungs_lattice::{Cell, Lattice, PhaseSpec};

use crate::ordering::{Ordering, MAX_SUPERCELL_SITES};
use crate::qspace::Wavevector;

/// Most star members combined into multi-q patterns (3^k combinations).
const MAX_STAR: usize = 6;

/// Largest cell (sites) patterns are compared on.
const MAX_COMPARE_SITES: usize = 4096;

/// Where a phase comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum Origin {
    /// The translation-invariant phase.
    Disordered,
    /// Built from the level's ordering wavevector.
    Ordering,
    /// Declared under `phases:` in the lattice file.
    Declared,
}

impl Origin {
    /// `disordered`, `ordering` or `declared`.
    pub fn as_str(self) -> &'static str {
        match self {
            Origin::Disordered => "disordered",
            Origin::Ordering => "ordering",
            Origin::Declared => "declared",
        }
    }
}

/// A pattern of values on the sites of a diagonal supercell of `cell` primitive cells,
/// numbered as `Lattice::supercell` numbers them (basis sites fastest, then cells along
/// axis 0, 1, 2).
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Pattern {
    /// Cells along each axis (unused axes 1).
    pub cell: [usize; 3],
    /// One value per site.
    pub values: Vec<f64>,
}

impl Pattern {
    /// The index of site `a` of (any) cell `n`, periodically reduced into the cell.
    fn index(cell: [usize; 3], nb: usize, a: usize, n: Cell) -> usize {
        let r = |k: usize| n[k].rem_euclid(cell[k] as i32) as usize;
        a + nb * (r(0) + cell[0] * (r(1) + cell[1] * r(2)))
    }

    /// The value at site `a` of cell `n` (the pattern repeated periodically).
    pub fn value(&self, nb: usize, a: usize, n: Cell) -> f64 {
        self.values[Pattern::index(self.cell, nb, a, n)]
    }

    /// Every site `(a, n)` of a cell, in its numbering.
    fn sites(cell: [usize; 3], nb: usize) -> impl Iterator<Item = (usize, Cell)> {
        (0..cell[2]).flat_map(move |k| {
            (0..cell[1]).flat_map(move |j| {
                (0..cell[0])
                    .flat_map(move |i| (0..nb).map(move |a| (a, [i as i32, j as i32, k as i32])))
            })
        })
    }

    /// The same pattern written on `cell` (a multiple of its own along every axis).
    pub fn on(&self, nb: usize, cell: [usize; 3]) -> Pattern {
        Pattern {
            cell,
            values: Pattern::sites(cell, nb)
                .map(|(a, n)| self.value(nb, a, n))
                .collect(),
        }
    }

    /// The pattern on the smallest diagonal cell that repeats it.
    pub fn minimal(&self, nb: usize) -> Pattern {
        let mut cell = self.cell;
        for k in 0..3 {
            for p in 1..=self.cell[k] {
                if !self.cell[k].is_multiple_of(p) {
                    continue;
                }
                let mut shift = [0; 3];
                shift[k] = p as i32;
                let periodic = Pattern::sites(self.cell, nb).all(|(a, n)| {
                    let m = [n[0] + shift[0], n[1] + shift[1], n[2] + shift[2]];
                    (self.value(nb, a, n) - self.value(nb, a, m)).abs() < 1e-9
                });
                if periodic {
                    cell[k] = p;
                    break;
                }
            }
        }
        let mut out = self.clone();
        out.cell = cell;
        out.values = Pattern::sites(cell, nb)
            .map(|(a, n)| self.value(nb, a, n))
            .collect();
        out
    }

    /// The image under `op` on `cell` (which `op` must map onto itself: a cubic cell):
    /// `Q(g(a, n)) = P(a, n)`.
    fn image(&self, nb: usize, op: &SiteMap, cell: [usize; 3]) -> Pattern {
        let mut values = vec![0.0; nb * cell.iter().product::<usize>()];
        for (a, n) in Pattern::sites(cell, nb) {
            let (b, m) = op.apply(a, n);
            values[Pattern::index(cell, nb, b, m)] = self.value(nb, a, n);
        }
        Pattern { cell, values }
    }

    /// The pattern moved by the cell offset `t`: `Q(a, n + t) = P(a, n)`.
    fn translated(&self, nb: usize, t: Cell) -> Pattern {
        let values = Pattern::sites(self.cell, nb)
            .map(|(a, n)| self.value(nb, a, [n[0] - t[0], n[1] - t[1], n[2] - t[2]]))
            .collect();
        Pattern {
            cell: self.cell,
            values,
        }
    }

    fn close(&self, other: &Pattern) -> bool {
        self.cell == other.cell
            && self
                .values
                .iter()
                .zip(&other.values)
                .all(|(a, b)| (a - b).abs() < 1e-9)
    }

    /// Number of +1 and of −1 entries.
    fn composition(&self) -> (usize, usize) {
        let up = self.values.iter().filter(|&&v| v > 0.0).count();
        (up, self.values.len() - up)
    }

    /// Whether every value is the same.
    pub fn is_uniform(&self) -> bool {
        self.values
            .iter()
            .all(|&v| (v - self.values[0]).abs() < 1e-9)
    }
}

/// Least common multiple.
fn lcm(a: usize, b: usize) -> usize {
    fn gcd(a: usize, b: usize) -> usize {
        if b == 0 {
            a
        } else {
            gcd(b, a % b)
        }
    }
    a / gcd(a, b).max(1) * b
}

/// The cubic cell `c × c (× c)` on the lattice's dimensions.
fn cubic(c: usize, d: usize) -> [usize; 3] {
    let mut cell = [1; 3];
    for k in cell.iter_mut().take(d) {
        *k = c;
    }
    cell
}

/// Every translation inside a cell.
fn translations(cell: [usize; 3]) -> Vec<Cell> {
    Pattern::sites(cell, 1).map(|(_, n)| n).collect()
}

/// Whether `a` and `b` are the same phase: some operation of `ops` followed by a
/// translation maps one onto the other.
pub fn equivalent(a: &Pattern, b: &Pattern, ops: &[SiteMap], nb: usize, d: usize) -> bool {
    let c = (0..d).fold(1, |c, k| lcm(lcm(c, a.cell[k]), b.cell[k]));
    let cell = cubic(c, d);
    let sites = nb * cell.iter().product::<usize>();
    let (pa, pb) = if sites <= MAX_COMPARE_SITES {
        (a.on(nb, cell), b.on(nb, cell))
    } else {
        // Too large to compare under rotations: translations on the common cell only.
        let common: [usize; 3] = std::array::from_fn(|k| lcm(a.cell[k], b.cell[k]));
        let (pa, pb) = (a.on(nb, common), b.on(nb, common));
        return translations(common)
            .iter()
            .any(|&t| pa.translated(nb, t).close(&pb));
    };
    let shifts = translations(cell);
    ops.iter().any(|op| {
        let img = pa.image(nb, op, cell);
        shifts.iter().any(|&t| img.translated(nb, t).close(&pb))
    })
}

/// The classes of sites a state of `pattern` keeps equal: the orbits of the
/// operations (point group with translations on the pattern's cell) that leave the
/// pattern unchanged. One class label per site of the pattern's cell.
pub fn site_classes(pattern: &Pattern, ops: &[SiteMap], nb: usize) -> Vec<usize> {
    let cell = pattern.cell;
    let n = pattern.values.len();
    let mut parent: Vec<usize> = (0..n).collect();
    fn find(p: &mut [usize], i: usize) -> usize {
        let mut r = i;
        while p[r] != r {
            r = p[r];
        }
        let mut k = i;
        while p[k] != r {
            let next = p[k];
            p[k] = r;
            k = next;
        }
        r
    }
    // An operation keeps the cell's lattice when R·diag(cell) ⊂ diag(cell)·Z³.
    let fits = |op: &SiteMap| {
        (0..3).all(|j| (0..3).all(|i| (op.rot[i][j] * cell[j] as i32) % cell[i] as i32 == 0))
    };
    let shifts = translations(cell);
    for op in ops.iter().filter(|op| fits(op)) {
        let img = pattern.image(nb, op, cell);
        for &t in &shifts {
            if !img.translated(nb, t).close(pattern) {
                continue;
            }
            for (a, m) in Pattern::sites(cell, nb) {
                let (b, mm) = op.apply(a, m);
                let i = Pattern::index(cell, nb, a, m);
                let j = Pattern::index(cell, nb, b, [mm[0] + t[0], mm[1] + t[1], mm[2] + t[2]]);
                let (ri, rj) = (find(&mut parent, i), find(&mut parent, j));
                if ri != rj {
                    parent[ri.max(rj)] = ri.min(rj);
                }
            }
        }
    }
    (0..n).map(|i| find(&mut parent, i)).collect()
}

/// A phase as reports list it.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct PhaseInfo {
    /// Its name.
    pub name: String,
    /// Where it comes from.
    pub origin: Origin,
    /// The wavevectors of its pattern's Fourier components (q ≡ −q, one of each pair;
    /// the zone centre only for uniform order), in units of the reciprocal primitive
    /// vectors; the first is the one reports give as `wavevector`.
    pub wavevectors: Vec<Wavevector>,
    /// Its pattern (±1 per site of its cell; all +1 for the disordered phase).
    pub pattern: Pattern,
}

impl PhaseInfo {
    /// The disordered phase of a lattice with `nb` basis sites.
    pub fn disordered(nb: usize) -> PhaseInfo {
        PhaseInfo {
            name: "disordered".into(),
            origin: Origin::Disordered,
            wavevectors: vec![[0.0; 3]],
            pattern: Pattern {
                cell: [1; 3],
                values: vec![1.0; nb],
            },
        }
    }

    /// The supercell the phase is followed on.
    pub fn supercell(&self) -> [usize; 3] {
        self.pattern.cell
    }
}

/// The wavevectors of a pattern's Fourier support on its cell (q ≡ −q), the zone
/// centre left out unless the pattern is uniform.
pub fn support(p: &Pattern, nb: usize, d: usize) -> Vec<Wavevector> {
    let cell = p.cell;
    let mut out: Vec<([usize; 3], Wavevector)> = Vec::new();
    for (_, k) in Pattern::sites(cell, 1) {
        let q = [
            k[0] as f64 / cell[0] as f64,
            k[1] as f64 / cell[1] as f64,
            k[2] as f64 / cell[2] as f64,
        ];
        let big = (0..nb).any(|a| {
            let (mut re, mut im) = (0.0, 0.0);
            for (_, n) in Pattern::sites(cell, 1) {
                let ph =
                    -2.0 * std::f64::consts::PI * (0..3).map(|i| q[i] * n[i] as f64).sum::<f64>();
                let v = p.value(nb, a, n);
                re += v * ph.cos();
                im += v * ph.sin();
            }
            re.hypot(im) > 1e-6
        });
        if !big {
            continue;
        }
        let key = [k[0] as usize, k[1] as usize, k[2] as usize];
        let neg = [
            (cell[0] - key[0]) % cell[0],
            (cell[1] - key[1]) % cell[1],
            (cell[2] - key[2]) % cell[2],
        ];
        if out.iter().any(|(kk, _)| *kk == neg) {
            continue;
        }
        out.push((key, q));
    }
    let uniform = p.is_uniform();
    let mut qs: Vec<Wavevector> = out
        .into_iter()
        .map(|(_, q)| q)
        .filter(|q| uniform || q[..d].iter().any(|&c| c != 0.0))
        .collect();
    if qs.is_empty() {
        qs.push([0.0; 3]);
    }
    qs
}

/// The ordered phases of `lattice` built from `ordering` (when given) and the
/// `declared` patterns, with notes on what could not be built. The first entry of the
/// result is the disordered phase.
pub fn candidates(
    lattice: &Lattice,
    ordering: Option<&Ordering>,
    declared: &[PhaseSpec],
) -> (Vec<PhaseInfo>, Vec<String>) {
    let nb = lattice.sites_per_cell();
    let d = lattice.dimension();
    let ops = point_group(lattice);
    let mut notes = Vec::new();
    let mut generated: Vec<Pattern> = Vec::new();
    if let Some(o) = ordering {
        generated = from_ordering(o, &ops, nb, d, &mut notes);
    }
    let mut out: Vec<PhaseInfo> = Vec::new();
    for p in generated {
        let p = p.minimal(nb);
        if out.iter().any(|c| equivalent(&c.pattern, &p, &ops, nb, d)) {
            continue;
        }
        out.push(PhaseInfo {
            name: String::new(),
            origin: Origin::Ordering,
            wavevectors: support(&p, nb, d),
            pattern: p,
        });
    }
    name_generated(&mut out);
    for spec in declared {
        let p = Pattern {
            cell: spec.supercell,
            values: spec.signs.clone(),
        }
        .minimal(nb);
        let info = PhaseInfo {
            name: spec.name.clone(),
            origin: Origin::Declared,
            wavevectors: support(&p, nb, d),
            pattern: p,
        };
        match out.iter().position(|c| {
            c.origin == Origin::Ordering && equivalent(&c.pattern, &info.pattern, &ops, nb, d)
        }) {
            Some(k) => out[k] = info,
            None if out
                .iter()
                .any(|c| equivalent(&c.pattern, &info.pattern, &ops, nb, d)) =>
            {
                notes.push(format!(
                    "declared phase `{}` is a symmetry image of another declared phase and is not followed twice",
                    spec.name
                ));
            }
            None => out.push(info),
        }
    }
    // Generated names that a declared phase took get a suffix.
    let taken: Vec<String> = out
        .iter()
        .filter(|c| c.origin == Origin::Declared)
        .map(|c| c.name.clone())
        .collect();
    for c in out.iter_mut().filter(|c| c.origin == Origin::Ordering) {
        if taken.contains(&c.name) {
            c.name.push_str("-gen");
        }
    }
    let mut all = vec![PhaseInfo::disordered(nb)];
    all.extend(out);
    (all, notes)
}

/// `up`/`down` for uniform patterns, else the composition (`AB`, `A3B`, ...), with a
/// suffix `-2`, `-3`, ... for repeated names.
fn name_generated(list: &mut [PhaseInfo]) {
    let mut used: Vec<String> = Vec::new();
    for c in list.iter_mut() {
        let (up, down) = c.pattern.composition();
        let base = if down == 0 {
            "up".to_string()
        } else if up == 0 {
            "down".to_string()
        } else {
            let g = gcd(up, down);
            let part = |letter: &str, k: usize| {
                if k == 1 {
                    letter.to_string()
                } else {
                    format!("{letter}{k}")
                }
            };
            format!("{}{}", part("A", up / g), part("B", down / g))
        };
        let mut name = base.clone();
        let mut k = 2;
        while used.contains(&name) {
            name = format!("{base}-{k}");
            k += 1;
        }
        used.push(name.clone());
        c.name = name;
    }
}

fn gcd(a: usize, b: usize) -> usize {
    if b == 0 {
        a
    } else {
        gcd(b, a % b)
    }
}

/// The ±1 patterns of the ordering's star (see the module documentation).
fn from_ordering(
    o: &Ordering,
    ops: &[SiteMap],
    nb: usize,
    d: usize,
    notes: &mut Vec<String>,
) -> Vec<Pattern> {
    let own = Pattern {
        cell: o.supercell(),
        values: o.pattern(),
    };
    if own.values.iter().all(|v| v.abs() < 1e-9) {
        notes.push(
            "the level's ordering has no site component (order in multi-spin correlations only): no ordered phase is built from it"
                .into(),
        );
        return Vec::new();
    }
    if own.is_uniform() {
        let up = Pattern {
            cell: [1; 3],
            values: vec![1.0; nb],
        };
        let down = Pattern {
            cell: [1; 3],
            values: vec![-1.0; nb],
        };
        return vec![up, down];
    }
    let c = (0..d).fold(1, |c, k| lcm(c, own.cell[k]));
    let cell = cubic(c, d);
    let sites = nb * cell.iter().product::<usize>();
    if sites > MAX_SUPERCELL_SITES {
        let sites_own = nb * own.cell.iter().product::<usize>();
        if sites_own > MAX_SUPERCELL_SITES {
            notes.push(format!(
                "the ordering's cell holds {sites_own} sites, more than the {MAX_SUPERCELL_SITES} a phase is followed on: no ordered phase is built from it"
            ));
            return Vec::new();
        }
        notes.push(format!(
            "the symmetry images of the ordering need a cell of {sites} sites (more than {MAX_SUPERCELL_SITES}): only the ordering's own pattern and its negative are compared"
        ));
        let sign = Pattern {
            cell: own.cell,
            values: own
                .values
                .iter()
                .map(|v| if *v >= 0.0 { 1.0 } else { -1.0 })
                .collect(),
        };
        let neg = Pattern {
            cell: own.cell,
            values: sign.values.iter().map(|v| -v).collect(),
        };
        return vec![sign, neg];
    }
    let base = own.on(nb, cell);
    // One mode per star member: the images of the pattern, grouped by Fourier support.
    let mut members: Vec<(Vec<Wavevector>, Pattern)> = Vec::new();
    for op in ops {
        let img = base.image(nb, op, cell);
        let key = support(&img, nb, d);
        if !members.iter().any(|(k, _)| *k == key) {
            members.push((key, img));
        }
    }
    let k = members.len();
    let mut combos: Vec<Vec<i32>> = Vec::new();
    if k <= MAX_STAR {
        for code in 1..3usize.pow(k as u32) {
            let mut c = code;
            let coeffs: Vec<i32> = (0..k)
                .map(|_| {
                    let v = (c % 3) as i32 - 1;
                    c /= 3;
                    v
                })
                .collect();
            // One of each ±pair: the first non-zero coefficient is +1.
            if coeffs.iter().find(|&&v| v != 0) == Some(&1) {
                combos.push(coeffs);
            }
        }
        combos.sort_by_key(|c| c.iter().filter(|&&v| v != 0).count());
    } else {
        notes.push(format!(
            "the ordering wavevector has {k} symmetry-distinct partners: only single-q patterns are built"
        ));
        combos = (0..k)
            .map(|j| (0..k).map(|i| i32::from(i == j)).collect())
            .collect();
    }
    let mut out = Vec::new();
    for coeffs in combos {
        let mut sum = vec![0.0; sites];
        for (cj, (_, m)) in coeffs.iter().zip(&members) {
            for (s, v) in sum.iter_mut().zip(&m.values) {
                *s += f64::from(*cj) * v;
            }
        }
        if sum.iter().any(|s| s.abs() < 1e-9) {
            continue;
        }
        let plus = Pattern {
            cell,
            values: sum.iter().map(|s| s.signum()).collect(),
        };
        let minus = Pattern {
            cell,
            values: plus.values.iter().map(|v| -v).collect(),
        };
        out.push(plus);
        out.push(minus);
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn lattice(yaml: &str) -> Lattice {
        Lattice::from_yaml_str(yaml, "test.yaml").unwrap()
    }

    const SQUARE: &str = "name: square\ndimension: 2\nvectors: [[1.0, 0.0], [0.0, 1.0]]\n\
                          basis: [{name: a}]\ncouplings: {J: -1.0}\nbonds:\n\
                          \x20 - {from: a, to: a, cell: [1, 0], coupling: J}\n\
                          \x20 - {from: a, to: a, cell: [0, 1], coupling: J}\n";

    #[test]
    fn minimal_cell_and_translation_equivalence() {
        let l = lattice(SQUARE);
        let ops = point_group(&l);
        let neel = Pattern {
            cell: [4, 2, 1],
            values: vec![1.0, -1.0, 1.0, -1.0, -1.0, 1.0, -1.0, 1.0],
        };
        let m = neel.minimal(1);
        assert_eq!(m.cell, [2, 2, 1]);
        assert_eq!(m.values, vec![1.0, -1.0, -1.0, 1.0]);
        let flipped = Pattern {
            cell: [2, 2, 1],
            values: vec![-1.0, 1.0, 1.0, -1.0],
        };
        // Néel order and its negative are one phase (a translation maps one onto the other).
        assert!(equivalent(&m, &flipped, &ops, 1, 2));
        // Columns along x and along y: one phase by a 90° rotation; not Néel.
        let cols = Pattern {
            cell: [2, 1, 1],
            values: vec![1.0, -1.0],
        };
        let rows = Pattern {
            cell: [1, 2, 1],
            values: vec![1.0, -1.0],
        };
        assert!(equivalent(&cols, &rows, &ops, 1, 2));
        assert!(!equivalent(&cols, &m, &ops, 1, 2));
        // Every site of the Néel pattern is equivalent to every other one of its sign.
        let classes = site_classes(&m, &ops, 1);
        assert_eq!(classes[0], classes[3]);
        assert_eq!(classes[1], classes[2]);
        assert_ne!(classes[0], classes[1]);
    }

    #[test]
    fn star_of_the_fcc_x_point_gives_layering_and_three_to_one() {
        let text = std::fs::read_to_string(concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/../../lattices/fcc.yaml"
        ))
        .unwrap()
        .replace("J: 1.0", "J: -1.0");
        let l = lattice(&text);
        // X = (0, 0, 1) 2π/a is (1/2, 1/2, 0) in the fcc reciprocal primitive basis.
        let o = Ordering::new(3, [0.5, 0.5, 0.0], vec![nalgebra::Complex::new(1.0, 0.0)]);
        let (list, notes) = candidates(&l, Some(&o), &[]);
        assert!(notes.is_empty(), "{notes:?}");
        let names: Vec<&str> = list.iter().map(|c| c.name.as_str()).collect();
        assert_eq!(names, vec!["disordered", "AB", "AB3", "A3B"]);
        // CuAu-type layering on the 2x2x1 cell that holds one X point; Cu3Au-type on the
        // 2x2x2 cell, with all three X points in its Fourier support.
        assert_eq!(list[1].pattern.cell, [2, 2, 1]);
        assert_eq!(list[1].wavevectors.len(), 1);
        assert_eq!(list[2].pattern.cell, [2, 2, 2]);
        assert_eq!(list[2].wavevectors.len(), 3);
        let (up, down) = list[3].pattern.composition();
        assert_eq!((up, down), (6, 2));
    }
}

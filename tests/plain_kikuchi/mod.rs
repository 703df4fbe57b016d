//! A deliberately plain Kikuchi free energy and Tc, written for the tests, sharing no
//! code with the engine (rungs-solve) or with the lattice crate's clusters and levels:
//! only the lattice file's data (vectors, basis positions, bonds, cluster shapes) comes
//! from `rungs::lattice`.
//!
//! * Sites are `(cell, basis)`; a cluster is a sorted site list moved so that its first
//!   site is in cell 0 (its translation class).
//! * Symmetry: the rotations and reflections of the plane (multiples of 30°) or the 48
//!   signed permutations of the axes, in Cartesian coordinates, each with the origin
//!   shift that maps site 0 onto a site, kept if it maps every bond onto a bond.
//!   Correlation variables are the point-group orbits of the non-empty subsets of the
//!   maximal clusters (uniform states only).
//! * Regions: maximal clusters closed under intersection of translates; coefficients by
//!   `a_γ = 1 − Σ_{δ ⊋ γ} m(γ, δ) a_δ` (Kikuchi 1951, Phys. Rev. 81, 988), m counting the
//!   translates of δ that contain γ.
//! * Cluster probabilities written out, `ρ(σ) = 2^{−n} Σ_{S ⊆ γ} ξ_S Π_{i∈S} σ_i`, and
//!   `F = −Σ_bonds J ξ_bond + T Σ_γ a_γ Σ_σ ρ ln ρ` per cell at h = 0.
//! * The paramagnet: Newton on the even variables with explicit sums for the gradient
//!   and Hessian. Stability: the odd block of the Hessian from the same explicit sums
//!   (checked against central differences of the gradient in the tests), its smallest
//!   eigenvalue by Jacobi rotations; Tc where it crosses zero (regula falsi, Illinois
//!   variant).
//!
//! Slow on purpose (dense loops over all 2^n configurations): for clusters up to about
//! ten sites.

// Index loops read like the formulas they implement; kept on purpose in plain code.
#![allow(clippy::needless_range_loop)]

use std::collections::{BTreeSet, HashMap};

use rungs::lattice::Lattice;

type Site = ([i32; 3], usize);
type Cl = Vec<Site>;

/// Sorted, deduplicated, first site moved to cell 0.
fn canon(mut v: Cl) -> Cl {
    v.sort();
    v.dedup();
    if let Some(&(c0, _)) = v.first() {
        for s in v.iter_mut() {
            for k in 0..3 {
                s.0[k] -= c0[k];
            }
        }
    }
    v
}

fn shift(v: &[Site], t: [i32; 3]) -> Cl {
    v.iter()
        .map(|&(c, a)| ([c[0] + t[0], c[1] + t[1], c[2] + t[2]], a))
        .collect()
}

fn is_subset(small: &[Site], big: &[Site]) -> bool {
    small.iter().all(|s| big.contains(s))
}

/// Translations t with `small + t ⊆ big`.
fn containing_translations(small: &[Site], big: &[Site]) -> Vec<[i32; 3]> {
    let (c0, a0) = small[0];
    big.iter()
        .filter(|s| s.1 == a0)
        .map(|s| [s.0[0] - c0[0], s.0[1] - c0[1], s.0[2] - c0[2]])
        .filter(|&t| is_subset(&shift(small, t), big))
        .collect()
}

/// Cartesian geometry of the lattice.
struct Geometry {
    dim: usize,
    /// Columns: the primitive vectors (padded with unit vectors).
    vectors: [[f64; 3]; 3],
    inverse: [[f64; 3]; 3],
    basis: Vec<[f64; 3]>,
}

fn mat_vec(m: &[[f64; 3]; 3], v: [f64; 3]) -> [f64; 3] {
    [0, 1, 2].map(|i| m[i][0] * v[0] + m[i][1] * v[1] + m[i][2] * v[2])
}

fn inverse3(m: &[[f64; 3]; 3]) -> [[f64; 3]; 3] {
    let det = m[0][0] * (m[1][1] * m[2][2] - m[1][2] * m[2][1])
        - m[0][1] * (m[1][0] * m[2][2] - m[1][2] * m[2][0])
        + m[0][2] * (m[1][0] * m[2][1] - m[1][1] * m[2][0]);
    let mut inv = [[0.0; 3]; 3];
    for (i, row) in inv.iter_mut().enumerate() {
        for (j, x) in row.iter_mut().enumerate() {
            let (r1, r2) = ((j + 1) % 3, (j + 2) % 3);
            let (c1, c2) = ((i + 1) % 3, (i + 2) % 3);
            *x = (m[r1][c1] * m[r2][c2] - m[r1][c2] * m[r2][c1]) / det;
        }
    }
    inv
}

impl Geometry {
    fn new(l: &Lattice) -> Geometry {
        let dim = l.dimension();
        let mut cols = [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]];
        for (k, v) in l.vectors().iter().enumerate() {
            cols[k] = *v;
        }
        let mut vectors = [[0.0; 3]; 3];
        for i in 0..3 {
            for (j, col) in cols.iter().enumerate() {
                vectors[i][j] = col[i];
            }
        }
        Geometry {
            dim,
            vectors,
            inverse: inverse3(&vectors),
            basis: l.basis().iter().map(|s| s.position).collect(),
        }
    }

    fn cart(&self, (c, a): Site) -> [f64; 3] {
        let r = mat_vec(&self.vectors, c.map(f64::from));
        [0, 1, 2].map(|k| r[k] + self.basis[a][k])
    }

    fn site_at(&self, r: [f64; 3]) -> Option<Site> {
        for (a, p) in self.basis.iter().enumerate() {
            let n = mat_vec(&self.inverse, [0, 1, 2].map(|k| r[k] - p[k]));
            let rounded = n.map(f64::round);
            if (0..3).all(|k| (n[k] - rounded[k]).abs() < 1e-6) {
                return Some((rounded.map(|x| x as i32), a));
            }
        }
        None
    }
}

/// An isometry `r ↦ R r + τ`.
struct Op {
    rot: [[f64; 3]; 3],
    tau: [f64; 3],
}

fn candidate_rotations(dim: usize) -> Vec<[[f64; 3]; 3]> {
    let mut out = Vec::new();
    match dim {
        1 => {
            for s in [1.0, -1.0] {
                out.push([[s, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]]);
            }
        }
        2 => {
            for k in 0..12 {
                let t = f64::from(k) * std::f64::consts::PI / 6.0;
                let (c, s) = (t.cos(), t.sin());
                out.push([[c, -s, 0.0], [s, c, 0.0], [0.0, 0.0, 1.0]]);
                out.push([[c, s, 0.0], [s, -c, 0.0], [0.0, 0.0, 1.0]]);
            }
        }
        _ => {
            for p in [
                [0, 1, 2],
                [0, 2, 1],
                [1, 0, 2],
                [1, 2, 0],
                [2, 0, 1],
                [2, 1, 0],
            ] {
                for signs in 0..8 {
                    let mut m = [[0.0; 3]; 3];
                    for i in 0..3 {
                        m[i][p[i]] = if signs >> i & 1 == 1 { -1.0 } else { 1.0 };
                    }
                    out.push(m);
                }
            }
        }
    }
    out
}

impl Op {
    fn apply(&self, g: &Geometry, s: Site) -> Option<Site> {
        let r = mat_vec(&self.rot, g.cart(s));
        g.site_at([0, 1, 2].map(|k| r[k] + self.tau[k]))
    }
}

/// One region with a non-zero coefficient, its probabilities written out:
/// `ρ(σ) = 2^{−n} + Σ_l d[σ][l] x[vars[l]]`, `d[σ][l] = 2^{−n} Σ_{S ↦ vars[l]} Π_{i∈S} σ_i`.
struct Region {
    coefficient: f64,
    n: usize,
    /// The distinct variables of its non-empty subsets.
    vars: Vec<usize>,
    /// `d`, row-major: `2^n` rows of `vars.len()` entries.
    d: Vec<f64>,
}

/// The plain model of one level.
pub struct Plain {
    /// Per cell: (variable, J) of every bond.
    bonds: Vec<(usize, f64)>,
    /// Regions with a non-zero coefficient.
    regions: Vec<Region>,
    /// Whether each variable is odd (an odd number of sites).
    odd: Vec<bool>,
    /// Number of variables (index 0 is the empty set, ξ = 1).
    nvars: usize,
}

impl Plain {
    /// Build level `name` of `lattice` from the file's shapes.
    pub fn new(lattice: &Lattice, name: &str) -> Plain {
        let g = Geometry::new(lattice);
        let bond_cl: Vec<Cl> = lattice
            .bonds()
            .iter()
            .map(|b| canon(vec![([0; 3], b.from), (b.cell, b.to)]))
            .collect();
        let bond_set: BTreeSet<Cl> = bond_cl.iter().cloned().collect();
        // Symmetry operations mapping every bond onto a bond (all couplings are equal in
        // the files tested here, so lengths and connectivity are what matter).
        let mut ops = Vec::new();
        for rot in candidate_rotations(g.dim) {
            for b in 0..g.basis.len() {
                let r0 = mat_vec(&rot, g.cart(([0; 3], 0)));
                let target = g.cart(([0; 3], b));
                let op = Op {
                    rot,
                    tau: [0, 1, 2].map(|k| target[k] - r0[k]),
                };
                let ok = bond_cl.iter().all(|cl| {
                    let img: Option<Cl> = cl.iter().map(|&s| op.apply(&g, s)).collect();
                    img.is_some_and(|v| bond_set.contains(&canon(v)))
                }) && (0..g.basis.len()).all(|a| op.apply(&g, ([0; 3], a)).is_some());
                if ok {
                    ops.push(op);
                }
            }
        }
        assert!(!ops.is_empty(), "the identity must be found");
        let orbit = |cl: &Cl| -> Cl {
            ops.iter()
                .map(|op| canon(cl.iter().map(|&s| op.apply(&g, s).unwrap()).collect()))
                .min()
                .unwrap()
        };
        // Maximal clusters.
        let spec = lattice
            .level_specs()
            .iter()
            .find(|l| l.name == name)
            .unwrap_or_else(|| panic!("no level {name}"));
        let mut maximal: Vec<Cl> = spec
            .shapes
            .iter()
            .map(|s| canon(s.iter().map(|&(a, c)| (c, a)).collect()))
            .collect();
        for b in &bond_cl {
            if !maximal
                .iter()
                .any(|m| !containing_translations(b, m).is_empty())
            {
                maximal.push(b.clone());
            }
        }
        maximal.sort();
        maximal.dedup();
        let all = maximal.clone();
        maximal.retain(|c| {
            !all.iter()
                .any(|d| d.len() > c.len() && !containing_translations(c, d).is_empty())
        });
        // Regions: close under intersections of translates.
        let mut regions: BTreeSet<Cl> = maximal.iter().cloned().collect();
        let mut frontier: Vec<Cl> = maximal.clone();
        while !frontier.is_empty() {
            let mut next = Vec::new();
            for a in &frontier {
                for m in &maximal {
                    for &(ca, sa) in a {
                        for &(cm, sm) in m {
                            if sa != sm {
                                continue;
                            }
                            let t = [ca[0] - cm[0], ca[1] - cm[1], ca[2] - cm[2]];
                            let moved = shift(m, t);
                            let inter: Cl =
                                a.iter().copied().filter(|s| moved.contains(s)).collect();
                            let c = canon(inter);
                            if !c.is_empty() && regions.insert(c.clone()) {
                                next.push(c);
                            }
                        }
                    }
                }
            }
            frontier = next;
        }
        let mut regions: Vec<Cl> = regions.into_iter().collect();
        regions.sort_by(|a, b| b.len().cmp(&a.len()).then(a.cmp(b)));
        let mut coeff: Vec<i64> = Vec::new();
        for (i, gamma) in regions.iter().enumerate() {
            let mut a = 1;
            for (j, delta) in regions[..i].iter().enumerate() {
                if delta.len() > gamma.len() {
                    a -= containing_translations(gamma, delta).len() as i64 * coeff[j];
                }
            }
            coeff.push(a);
        }
        let sum: i64 = regions
            .iter()
            .zip(&coeff)
            .map(|(r, a)| a * r.len() as i64)
            .sum();
        assert_eq!(sum, lattice.sites_per_cell() as i64, "Kikuchi sum rule");
        // Variables: orbits of subsets; index 0 is the empty set.
        let mut index: HashMap<Cl, usize> = HashMap::new();
        index.insert(Vec::new(), 0);
        let mut odd = vec![false];
        let mut var_of = |cl: Cl, index: &mut HashMap<Cl, usize>| -> usize {
            if cl.is_empty() {
                return 0;
            }
            let o = orbit(&cl);
            let next = index.len();
            *index.entry(o.clone()).or_insert_with(|| {
                odd.push(o.len() % 2 == 1);
                next
            })
        };
        let mut plain_regions = Vec::new();
        for (r, &a) in regions.iter().zip(&coeff) {
            if a == 0 {
                continue;
            }
            let n = r.len();
            let of_mask: Vec<usize> = (0..1usize << n)
                .map(|mask| {
                    let sub: Cl = (0..n)
                        .filter(|k| mask >> k & 1 == 1)
                        .map(|k| r[k])
                        .collect();
                    var_of(canon(sub), &mut index)
                })
                .collect();
            let mut vars: Vec<usize> = of_mask[1..].to_vec();
            vars.sort_unstable();
            vars.dedup();
            let local: HashMap<usize, usize> =
                vars.iter().enumerate().map(|(l, &v)| (v, l)).collect();
            let k = vars.len();
            let norm = 0.5f64.powi(n as i32);
            let mut d = vec![0.0; (1 << n) * k];
            for sigma in 0..1usize << n {
                for (mask, v) in of_mask.iter().enumerate().skip(1) {
                    let sign = if (mask & sigma).count_ones() % 2 == 1 {
                        -1.0
                    } else {
                        1.0
                    };
                    d[sigma * k + local[v]] += sign * norm;
                }
            }
            plain_regions.push(Region {
                coefficient: a as f64,
                n,
                vars,
                d,
            });
        }
        let bonds = lattice
            .bonds()
            .iter()
            .zip(&bond_cl)
            .map(|(b, cl)| (var_of(cl.clone(), &mut index), b.j))
            .collect();
        let nvars = index.len();
        Plain {
            bonds,
            regions: plain_regions,
            odd,
            nvars,
        }
    }

    /// Cluster probabilities of region `r` at `x`.
    fn rho(&self, r: &Region, x: &[f64]) -> Vec<f64> {
        let k = r.vars.len();
        let norm = 0.5f64.powi(r.n as i32);
        (0..1usize << r.n)
            .map(|sigma| {
                let row = &r.d[sigma * k..(sigma + 1) * k];
                norm + row.iter().zip(&r.vars).map(|(d, &v)| d * x[v]).sum::<f64>()
            })
            .collect()
    }

    /// Free energy per cell, `None` outside the domain (a probability ≤ 0).
    pub fn free_energy(&self, t: f64, x: &[f64]) -> Option<f64> {
        let mut f: f64 = self.bonds.iter().map(|&(v, j)| -j * x[v]).sum();
        for r in &self.regions {
            for p in self.rho(r, x) {
                if p <= 0.0 {
                    return None;
                }
                f += t * r.coefficient * p * p.ln();
            }
        }
        Some(f)
    }

    /// Gradient of F (all variables; entry 0 unused), and the Hessian restricted to
    /// `free` when asked.
    fn derivatives(&self, t: f64, x: &[f64], free: Option<&[usize]>) -> (Vec<f64>, Vec<Vec<f64>>) {
        let mut g = vec![0.0; self.nvars];
        for &(v, j) in &self.bonds {
            g[v] -= j;
        }
        let pos: HashMap<usize, usize> = free
            .unwrap_or(&[])
            .iter()
            .enumerate()
            .map(|(i, &v)| (v, i))
            .collect();
        let nfree = pos.len();
        let mut h = vec![vec![0.0; nfree]; nfree];
        for r in &self.regions {
            let k = r.vars.len();
            let ta = t * r.coefficient;
            // (local index, Hessian position) of the region's free variables.
            let fr: Vec<(usize, usize)> = r
                .vars
                .iter()
                .enumerate()
                .filter_map(|(l, v)| pos.get(v).map(|&i| (l, i)))
                .collect();
            for (sigma, p) in self.rho(r, x).into_iter().enumerate() {
                let row = &r.d[sigma * k..(sigma + 1) * k];
                let lnp = p.ln();
                for (l, &v) in r.vars.iter().enumerate() {
                    g[v] += ta * lnp * row[l];
                }
                for &(l, i) in &fr {
                    let w = ta * row[l] / p;
                    if w == 0.0 {
                        continue;
                    }
                    for &(m, j) in &fr {
                        h[i][j] += w * row[m];
                    }
                }
            }
        }
        (g, h)
    }

    /// The paramagnetic solution at `t` (odd variables zero), Newton from `start`.
    pub fn paramagnet(&self, t: f64, start: &[f64]) -> Vec<f64> {
        let even: Vec<usize> = (1..self.nvars).filter(|&v| !self.odd[v]).collect();
        let mut x = start.to_vec();
        for _ in 0..200 {
            let (g, h) = self.derivatives(t, &x, Some(&even));
            let rhs: Vec<f64> = even.iter().map(|&v| -g[v]).collect();
            let worst = rhs.iter().fold(0.0f64, |m, r| m.max(r.abs()));
            if worst < 1e-12 * (1.0 + t) {
                return x;
            }
            let d = cholesky_solve(h, rhs).expect("even Hessian positive definite");
            // At the rounding floor of the gradient the step is negligible: done.
            if d.iter().all(|di| di.abs() < 1e-12) {
                return x;
            }
            let f0 = self.free_energy(t, &x).unwrap();
            let mut alpha = 1.0;
            loop {
                let mut y = x.clone();
                for (i, &v) in even.iter().enumerate() {
                    y[v] += alpha * d[i];
                }
                match self.free_energy(t, &y) {
                    // Near the minimum F changes below its rounding: allow that much.
                    Some(f) if f <= f0 + 1e-12 * (1.0 + f0.abs()) => {
                        x = y;
                        break;
                    }
                    _ => alpha *= 0.5,
                }
                assert!(alpha > 1e-12, "line search failed at T = {t}");
            }
        }
        panic!("paramagnet not converged at T = {t}");
    }

    /// The odd block of the Hessian at `x`, from the explicit sums.
    pub fn odd_hessian(&self, t: f64, x: &[f64]) -> Vec<Vec<f64>> {
        let odd: Vec<usize> = (1..self.nvars).filter(|&v| self.odd[v]).collect();
        self.derivatives(t, x, Some(&odd)).1
    }

    /// The same block by central differences of the gradient, Richardson-extrapolated
    /// (steps ε and ε/2, error O(ε⁴)): a check of the explicit second derivatives where
    /// every cluster probability is far above ε.
    pub fn odd_hessian_by_differences(&self, t: f64, x: &[f64], eps: f64) -> Vec<Vec<f64>> {
        let odd: Vec<usize> = (1..self.nvars).filter(|&v| self.odd[v]).collect();
        let central = |eps: f64, v: usize| -> Vec<f64> {
            let mut up = x.to_vec();
            let mut down = x.to_vec();
            up[v] += eps;
            down[v] -= eps;
            let (gu, _) = self.derivatives(t, &up, None);
            let (gd, _) = self.derivatives(t, &down, None);
            odd.iter().map(|&u| (gu[u] - gd[u]) / (2.0 * eps)).collect()
        };
        let mut h = vec![vec![0.0; odd.len()]; odd.len()];
        for (j, &v) in odd.iter().enumerate() {
            let (coarse, fine) = (central(eps, v), central(0.5 * eps, v));
            for i in 0..odd.len() {
                h[i][j] = (4.0 * fine[i] - coarse[i]) / 3.0;
            }
        }
        h
    }

    /// Smallest eigenvalue of the odd block of the Hessian at the paramagnet `x`: the
    /// paramagnet is stable against order while it is positive.
    pub fn odd_stability(&self, t: f64, x: &[f64]) -> f64 {
        smallest_eigenvalue(self.odd_hessian(t, x))
    }

    /// The infinite-temperature state: every correlation zero.
    pub fn start(&self) -> Vec<f64> {
        let mut x = vec![0.0; self.nvars];
        x[0] = 1.0;
        x
    }

    /// Tc: the root of the odd-block stability between `lo` (unstable) and `hi` (stable).
    pub fn tc(&self, lo: f64, hi: f64) -> f64 {
        // Follow the paramagnet down from far above, then keep the last solution.
        let mut x = self.start();
        let mut t = 2.0 * hi;
        while t > hi {
            x = self.paramagnet(t, &x);
            t -= 0.1 * hi;
        }
        let lam = |t: f64, x: &mut Vec<f64>| {
            *x = self.paramagnet(t, x);
            self.odd_stability(t, x)
        };
        let (mut a, mut b) = (hi, lo);
        let mut xa = x.clone();
        let fa0 = lam(a, &mut xa);
        assert!(fa0 > 0.0, "the paramagnet is already unstable at T = {hi}");
        let mut xb = xa.clone();
        // Walk down to lo in steps, keeping the solution followable.
        let steps = 20;
        let mut fb = fa0;
        for s in 1..=steps {
            let ts = hi + (lo - hi) * f64::from(s) / f64::from(steps);
            fb = lam(ts, &mut xb);
            if fb < 0.0 {
                b = ts;
                break;
            }
            a = ts;
            xa = xb.clone();
        }
        assert!(fb < 0.0, "no instability above T = {lo}");
        let mut fa = lam(a, &mut xa);
        let mut side = 0;
        for _ in 0..100 {
            let c = (a * fb - b * fa) / (fb - fa);
            let mut xc = xa.clone();
            let fc = lam(c, &mut xc);
            if fc > 0.0 {
                a = c;
                fa = fc;
                xa = xc;
                if side == 1 {
                    fb *= 0.5;
                }
                side = 1;
            } else {
                b = c;
                fb = fc;
                if side == -1 {
                    fa *= 0.5;
                }
                side = -1;
            }
            if (a - b).abs() < 1e-11 * a {
                return 0.5 * (a + b);
            }
        }
        panic!("Tc not bracketed to 1e-11 between {b} and {a}");
    }
}

/// Solve `H d = r` for symmetric positive definite H (plain Cholesky).
fn cholesky_solve(mut h: Vec<Vec<f64>>, mut r: Vec<f64>) -> Option<Vec<f64>> {
    let n = r.len();
    for j in 0..n {
        let mut s = h[j][j];
        for k in 0..j {
            s -= h[j][k] * h[j][k];
        }
        if s <= 0.0 {
            return None;
        }
        let d = s.sqrt();
        h[j][j] = d;
        for i in j + 1..n {
            let mut s = h[i][j];
            for k in 0..j {
                s -= h[i][k] * h[j][k];
            }
            h[i][j] = s / d;
        }
    }
    for i in 0..n {
        for k in 0..i {
            r[i] -= h[i][k] * r[k];
        }
        r[i] /= h[i][i];
    }
    for i in (0..n).rev() {
        for k in i + 1..n {
            r[i] -= h[k][i] * r[k];
        }
        r[i] /= h[i][i];
    }
    Some(r)
}

/// Smallest eigenvalue of a symmetric matrix (cyclic Jacobi rotations).
fn smallest_eigenvalue(mut a: Vec<Vec<f64>>) -> f64 {
    let n = a.len();
    for _ in 0..100 {
        let off: f64 = (0..n)
            .flat_map(|i| (0..n).filter(move |&j| j != i).map(move |j| (i, j)))
            .map(|(i, j)| a[i][j] * a[i][j])
            .sum();
        if off < 1e-26 {
            break;
        }
        for p in 0..n {
            for q in p + 1..n {
                if a[p][q].abs() < 1e-300 {
                    continue;
                }
                let theta = (a[q][q] - a[p][p]) / (2.0 * a[p][q]);
                let t = theta.signum() / (theta.abs() + (theta * theta + 1.0).sqrt());
                let t = if theta == 0.0 { 1.0 } else { t };
                let c = 1.0 / (t * t + 1.0).sqrt();
                let s = t * c;
                for k in 0..n {
                    let (akp, akq) = (a[k][p], a[k][q]);
                    a[k][p] = c * akp - s * akq;
                    a[k][q] = s * akp + c * akq;
                }
                for k in 0..n {
                    let (apk, aqk) = (a[p][k], a[q][k]);
                    a[p][k] = c * apk - s * aqk;
                    a[q][k] = s * apk + c * aqk;
                }
            }
        }
    }
    (0..n).map(|i| a[i][i]).fold(f64::INFINITY, f64::min)
}

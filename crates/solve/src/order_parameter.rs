//! The order parameter a simulation of a lattice should measure: the projection of the
//! spins on the pattern a level's instability picks, with every wavevector of its star.
//!
//! [`expected`] takes the ordering of the `pair` level at h = 0 (the cheapest level that
//! sees more than mean field), or the `site` level's when the pair level has no
//! transition (it finds none on the triangular antiferromagnet, which indeed has no order
//! at T > 0: Wannier 1950, Phys. Rev. 79, 357 — the simulation then decides). From an
//! ordering at wavevector q with site mode u_a the complex pattern on cell R is
//! `ψ(a, R) = u_a e^{2πi q·R}` ([`crate::ordering`]); its images under the lattice's
//! point group are the star of q. Each member q' (one of each pair ±q') gives the real
//! component `Re ψ'` and, unless q' ≡ −q' (every component 0 or 1/2, where ψ' is real),
//! also `Im ψ'`: one component for Néel order, two (cos and sin) at the K point of the
//! triangular lattice, one per member for a star of zone-boundary points. Measuring the
//! whole star makes |M| independent of which symmetry-equivalent domain a finite torus
//! happens to order in. Order at q = 0 with every u_a of one sign is measured as the
//! plain magnetisation m (weights 1).
//!
//! The weights are written on a cubic supercell of `period` cells per axis (the least
//! common multiple of the denominators of q, which also holds every member of the star:
//! the point group maps q to integer combinations of its components), sites numbered
//! basis fastest, then cells along axis 0, 1, 2 (the numbering of `Lattice::supercell`).
//! This crate does not run simulations: a Monte Carlo code takes `period` and
//! `components` as they are.

use nalgebra::Complex;
use rungs_lattice::{symmetry, Lattice, Level};

use crate::ordering::Ordering;
use crate::qspace::{coupling_matrix, is_real, near_integer, Wavevector};
use crate::tc::{critical_temperature, fmt_vec, mean_field_maxima, TcOptions};

/// Where an order parameter comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum OrderSource {
    /// The pair level's instability.
    PairLevel,
    /// The site level's (mean-field) instability.
    SiteLevel,
    /// A wavevector given by the caller.
    Given,
    /// The uniform magnetisation, asked for or as a fallback.
    Uniform,
}

impl OrderSource {
    /// Words for reports: `pair level`, `site level`, `given`, `uniform`.
    pub fn as_str(self) -> &'static str {
        match self {
            OrderSource::PairLevel => "pair level",
            OrderSource::SiteLevel => "site level",
            OrderSource::Given => "given",
            OrderSource::Uniform => "uniform",
        }
    }
}

/// An order parameter: weights of each component on the sites of a cubic supercell.
#[derive(Debug, Clone, PartialEq)]
pub struct OrderParameter {
    /// Spatial dimension.
    pub dimension: usize,
    /// The ordering wavevector (rational, components in [0, 1)).
    pub wavevector: Wavevector,
    /// Every wavevector measured: q and the rest of its star, one of each pair ±q'.
    pub star: Vec<Wavevector>,
    /// Cells per axis of the supercell the weights are written on.
    pub period: usize,
    /// Weights per component on the supercell's sites (module docs), largest |·| = 1.
    pub components: Vec<Vec<f64>>,
    /// Where the ordering comes from.
    pub source: OrderSource,
    /// Cautions (degenerate or approximated wavevectors, fallbacks).
    pub notes: Vec<String>,
    /// Why the wavevector measured is one of a degenerate family (the instability or the
    /// coupling's Fourier transform J(q) maximal along a line or surface, not only on
    /// the star of q), if it is: a simulation may then order in another member, or not
    /// at all (frustration), and a Binder crossing of this order parameter is no Tc.
    pub degenerate: Option<String>,
}

impl OrderParameter {
    /// The uniform magnetisation `m = (1/N) Σ s_i`: one component, every weight 1.
    pub fn uniform(lattice: &Lattice) -> OrderParameter {
        OrderParameter {
            dimension: lattice.dimension(),
            wavevector: [0.0; 3],
            star: vec![[0.0; 3]],
            period: 1,
            components: vec![vec![1.0; lattice.sites_per_cell()]],
            source: OrderSource::Uniform,
            notes: Vec::new(),
            degenerate: None,
        }
    }

    /// The order parameter of `ordering` (a level's instability, or any ordering on
    /// `lattice`'s cell) and its star (module docs).
    pub fn from_ordering(
        lattice: &Lattice,
        ordering: &Ordering,
        source: OrderSource,
    ) -> OrderParameter {
        let d = lattice.dimension();
        let u = &ordering.site_mode;
        let mut notes = Vec::new();
        if u.iter().all(|c| c.norm() < 1e-9) {
            let mut out = OrderParameter::uniform(lattice);
            out.notes.push(format!(
                "the {} ordering at q = ({}) has no site component (order in multi-spin correlations only); the uniform magnetisation is measured instead",
                source.as_str(),
                fmt_vec(&ordering.wavevector, d)
            ));
            return out;
        }
        if ordering.is_uniform_q() && u.iter().all(|c| c.re > 1e-9) {
            return OrderParameter {
                source,
                ..OrderParameter::uniform(lattice)
            };
        }
        if !ordering.exact {
            notes.push(format!(
                "the ordering wavevector ({}) is not a fraction with denominator ≤ {}; the order parameter uses the nearest such fractions",
                fmt_vec(&ordering.wavevector, d),
                crate::ordering::MAX_DENOMINATOR
            ));
        }
        let mut degenerate = None;
        if let Some(line) = &ordering.flat_direction {
            degenerate = Some(format!(
                "the {}'s instability is degenerate along the direction ({}) through the ordering wavevector",
                source.as_str(),
                fmt_vec(line, d)
            ));
            notes.push(format!(
                "the {}'s instability is flat along the direction ({}) through q: the order measured is the pattern at q and its star, and a torus that orders in another pattern of that line shows a small |M|",
                source.as_str(),
                fmt_vec(line, d)
            ));
        }
        let q = ordering.rational_wavevector();
        let period = ordering.supercell()[..d]
            .iter()
            .fold(1, |acc, &n| lcm(acc, n));
        let psi = plane_wave(lattice, u, &q, period);
        let mut star: Vec<(Wavevector, Vec<Complex<f64>>)> = vec![(q, psi.clone())];
        for op in symmetry::point_group(lattice) {
            let Some(image) = transform(lattice, &op, &psi, period) else {
                continue;
            };
            let q_image = wavevector_of(&image, lattice.sites_per_cell(), period, d);
            let known = star.iter().any(|(p, _)| {
                (0..d).all(|k| near_integer(p[k] - q_image[k]))
                    || (0..d).all(|k| near_integer(p[k] + q_image[k]))
            });
            if !known {
                star.push((q_image, image));
            }
        }
        let mut components = Vec::new();
        for (q_member, psi) in &star {
            components.push(psi.iter().map(|c| clean(c.re)).collect::<Vec<f64>>());
            if !is_real(q_member) {
                components.push(psi.iter().map(|c| clean(c.im)).collect());
            }
        }
        // A zone-boundary member whose pattern happens to be zero on every site (u_a
        // purely imaginary there) measures nothing: drop it.
        components.retain(|w: &Vec<f64>| w.iter().any(|&x| x != 0.0));
        let mut out = OrderParameter {
            dimension: d,
            wavevector: q,
            star: star.into_iter().map(|(q, _)| q).collect(),
            period,
            components,
            source,
            notes,
            degenerate,
        };
        if let Some(note) = degeneracy_note(lattice, &out) {
            out.degenerate.get_or_insert_with(|| {
                "the coupling's Fourier transform J(q) is maximal at wavevectors outside the star measured".into()
            });
            out.notes.push(note);
        }
        out
    }

    /// The order parameter at a wavevector `q` given by the caller, with the site mode of
    /// the mean-field coupling matrix J(q) (its top eigenvector; 1 for one site per
    /// cell).
    pub fn at_wavevector(lattice: &Lattice, q: &Wavevector) -> OrderParameter {
        let eigen = coupling_matrix(lattice, q).symmetric_eigen();
        let values = &eigen.eigenvalues;
        let top = (0..values.len())
            .max_by(|&a, &b| values[a].total_cmp(&values[b]))
            .unwrap_or(0);
        let u: Vec<Complex<f64>> = eigen.eigenvectors.column(top).iter().copied().collect();
        let ordering = Ordering::new(lattice.dimension(), *q, u);
        OrderParameter::from_ordering(lattice, &ordering, OrderSource::Given)
    }

    /// Number of components n.
    pub fn components(&self) -> usize {
        self.components.len()
    }

    /// Whether this is the uniform magnetisation (one component, every weight 1).
    pub fn is_uniform(&self) -> bool {
        matches!(&self.components[..], [only] if only.iter().all(|&w| w == 1.0))
    }

    /// A word for the pattern: `uniform`, `staggered` (one component with varying
    /// weights), `two-component`, or `n-component`.
    pub fn pattern(&self) -> String {
        match self.components.len() {
            _ if self.is_uniform() => "uniform".into(),
            1 => "staggered".into(),
            2 => "two-component".into(),
            n => format!("{n}-component"),
        }
    }

    /// One sentence saying what is measured, for reports.
    pub fn describe(&self) -> String {
        let d = self.dimension;
        if self.is_uniform() {
            return "the uniform magnetisation m = (1/N) Σ s_i".into();
        }
        let star = if self.star.len() > 1 {
            format!(
                " and its star ({})",
                self.star[1..]
                    .iter()
                    .map(|q| format!("({})", fmt_vec(q, d)))
                    .collect::<Vec<_>>()
                    .join(", ")
            )
        } else {
            String::new()
        };
        format!(
            "the projection of the spins on the {} ordering at q = ({}){star}: M_c = (1/N) Σ_i w_c,i s_i with w = Re and, where q ≢ −q, Im of u_a e^{{2πi q·R}}; {} component(s), |M| their length; the pattern repeats every {} cells",
            self.source.as_str(),
            fmt_vec(&self.wavevector, d),
            self.components.len(),
            self.period
        )
    }
}

/// The order parameter a simulation of `lattice` should measure (module docs): the pair
/// level's ordering at h = 0, else the site level's, else the uniform magnetisation;
/// `notes` say which and why. When the pair level finds no transition and the site
/// level does (frustration, as on the triangular antiferromagnet), or the ordering is
/// degenerate along a line, `degenerate` says so.
///
/// ```
/// let square_af = rungs_lattice::Lattice::from_yaml_str(
///     "name: sq\ndimension: 2\nvectors: [[1.0, 0.0], [0.0, 1.0]]\nbasis: [{name: a}]\n\
///      couplings: {J: -1.0}\nbonds: [{from: a, to: a, cell: [1, 0], coupling: J},\n\
///      {from: a, to: a, cell: [0, 1], coupling: J}]\n",
///     "sq.yaml",
/// )
/// .unwrap();
/// let order = rungs_solve::order_parameter::expected(&square_af);
/// // Néel order: q = (1/2, 1/2), one component ±1 on a 2 × 2 supercell.
/// assert_eq!(order.wavevector[..2], [0.5, 0.5]);
/// assert_eq!(order.period, 2);
/// assert_eq!(order.components, vec![vec![1.0, -1.0, -1.0, 1.0]]);
/// assert_eq!(order.pattern(), "staggered");
/// ```
pub fn expected(lattice: &Lattice) -> OrderParameter {
    let options = TcOptions {
        field: 0.0,
        ..TcOptions::default()
    };
    let mut notes = Vec::new();
    let mut pair_found_none = false;
    for (name, source) in [
        ("pair", OrderSource::PairLevel),
        ("site", OrderSource::SiteLevel),
    ] {
        let found = Level::build(lattice, name)
            .map_err(|e| e.to_string())
            .and_then(|level| {
                critical_temperature(lattice, &level, options).map_err(|e| e.to_string())
            });
        match found {
            Ok(cp) => match (cp.tc, cp.ordering) {
                (Some(_), Some(ordering)) => {
                    let mut out = OrderParameter::from_ordering(lattice, &ordering, source);
                    if source == OrderSource::SiteLevel && pair_found_none {
                        out.degenerate.get_or_insert_with(|| {
                            "the pair level finds no ordering transition at h = 0 (as in one dimension, or under \
                             frustration): the mean-field ordering measured need not be one that sets in"
                                .into()
                        });
                    }
                    notes.append(&mut out.notes);
                    out.notes = notes;
                    return out;
                }
                _ => {
                    pair_found_none |= source == OrderSource::PairLevel;
                    notes.push(format!(
                        "the {name} level has no transition at h = 0, so it names no ordering"
                    ))
                }
            },
            Err(why) => notes.push(format!("the {name} level gave no ordering: {why}")),
        }
    }
    notes.push("the uniform magnetisation is measured".into());
    OrderParameter {
        notes,
        ..OrderParameter::uniform(lattice)
    }
}

/// `u_a e^{2πi q·c}` on the cubic supercell of side `period` (module-docs numbering).
fn plane_wave(
    lattice: &Lattice,
    u: &[Complex<f64>],
    q: &Wavevector,
    period: usize,
) -> Vec<Complex<f64>> {
    let d = lattice.dimension();
    let mut out = Vec::with_capacity(u.len() * period.pow(d as u32));
    for cell in cells(d, period) {
        let ph = crate::qspace::phase(q, &cell);
        out.extend(u.iter().map(|ua| ua * ph));
    }
    out
}

/// The cells of the cubic supercell, axis 0 fastest.
fn cells(d: usize, period: usize) -> Vec<[i32; 3]> {
    let p = period as i32;
    let n = [p, if d > 1 { p } else { 1 }, if d > 2 { p } else { 1 }];
    let mut out = Vec::new();
    for c2 in 0..n[2] {
        for c1 in 0..n[1] {
            for c0 in 0..n[0] {
                out.push([c0, c1, c2]);
            }
        }
    }
    out
}

/// Index of site (a, c) of the supercell, c reduced modulo the period.
fn index(nb: usize, period: usize, a: usize, c: [i32; 3]) -> usize {
    let p = period as i32;
    let w = |k: usize| c[k].rem_euclid(p) as usize;
    a + nb * (w(0) + period * (w(1) + period * w(2)))
}

/// The image of a pattern under a symmetry operation g: `ψ'(g(a, c)) = ψ(a, c)`, on the
/// same supercell (which g maps onto itself modulo the period); `None` if g does not
/// act as a bijection there (cannot happen for a point-group operation).
fn transform(
    lattice: &Lattice,
    op: &symmetry::SiteMap,
    psi: &[Complex<f64>],
    period: usize,
) -> Option<Vec<Complex<f64>>> {
    let nb = lattice.sites_per_cell();
    let mut out = vec![None; psi.len()];
    for c in cells(lattice.dimension(), period) {
        for a in 0..nb {
            let (b, image) = op.apply(a, c);
            let slot = out.get_mut(index(nb, period, b, image))?;
            if slot.is_some() {
                return None;
            }
            *slot = Some(psi[index(nb, period, a, c)]);
        }
    }
    out.into_iter().collect()
}

/// The wavevector of a plane-wave pattern, read from the phase change along each axis at
/// its largest site of cell 0.
fn wavevector_of(psi: &[Complex<f64>], nb: usize, period: usize, d: usize) -> Wavevector {
    let a = (0..nb)
        .max_by(|&x, &y| psi[x].norm().total_cmp(&psi[y].norm()))
        .unwrap_or(0);
    let mut q = [0.0; 3];
    for (k, qk) in q.iter_mut().enumerate().take(d) {
        let mut step = [0i32; 3];
        step[k] = 1;
        let ratio = psi[index(nb, period, a, step)] / psi[a];
        let mut c = (ratio.arg() / std::f64::consts::TAU).rem_euclid(1.0);
        if near_integer(c) {
            c = 0.0;
        }
        *qk = c;
    }
    q
}

/// A note when the mean-field coupling J(q) is maximal at wavevectors outside the star
/// measured (the order of the site level is degenerate there).
fn degeneracy_note(lattice: &Lattice, order: &OrderParameter) -> Option<String> {
    let d = lattice.dimension();
    let maxima = mean_field_maxima(lattice);
    let top = maxima.first()?.1;
    let in_star = |q: &Wavevector| {
        order.star.iter().any(|p| {
            (0..d).all(|k| near_integer(p[k] - q[k])) || (0..d).all(|k| near_integer(p[k] + q[k]))
        })
    };
    let others: Vec<String> = maxima
        .iter()
        .filter(|(q, v)| (top - v).abs() <= 1e-6 * top.abs().max(1.0) && !in_star(q))
        .map(|(q, _)| format!("({})", fmt_vec(q, d)))
        .collect();
    (!others.is_empty()).then(|| {
        format!(
            "the mean-field coupling J(q) is as large at {} as at the wavevector measured: the ordering is degenerate in mean field (frustration), so the simulated order may be another",
            others.join(", ")
        )
    })
}

/// Round values within 10⁻¹² of zero (or of ±1) to exactly that.
fn clean(x: f64) -> f64 {
    if x.abs() < 1e-12 {
        0.0
    } else if (x.abs() - 1.0).abs() < 1e-12 {
        x.signum()
    } else {
        x
    }
}

fn gcd(a: usize, b: usize) -> usize {
    if b == 0 {
        a
    } else {
        gcd(b, a % b)
    }
}

fn lcm(a: usize, b: usize) -> usize {
    a / gcd(a, b) * b
}

#[cfg(test)]
mod tests {
    use super::*;

    fn lattice(yaml_body: &str) -> Lattice {
        Lattice::from_yaml_str(yaml_body, "test.yaml").unwrap()
    }

    const TRIANGULAR_AF: &str = "name: tri\ndimension: 2\nvectors: [[1.0, 0.0], [0.5, 0.8660254037844386]]\n\
        basis: [{name: a}]\ncouplings: {J: -1.0}\nbonds: [{from: a, to: a, cell: [1, 0], coupling: J},\n\
        {from: a, to: a, cell: [0, 1], coupling: J}, {from: a, to: a, cell: [-1, 1], coupling: J}]\n";

    #[test]
    fn triangular_antiferromagnet_measures_the_two_component_three_sublattice_order() {
        let l = lattice(TRIANGULAR_AF);
        let order = expected(&l);
        // The pair level has no transition here; the site level orders at the K point
        // (three-sublattice order: mean field, common practice).
        assert_eq!(order.source, OrderSource::SiteLevel);
        assert_eq!(order.period, 3);
        assert_eq!(order.components(), 2, "{order:?}");
        assert_eq!(order.pattern(), "two-component");
        // ±K is the whole star.
        assert_eq!(order.star.len(), 1);
        // Cos and sin of the same plane wave: every site has w_c² + w_s² = 1.
        for s in 0..9 {
            let r = order.components[0][s].hypot(order.components[1][s]);
            assert!((r - 1.0).abs() < 1e-12, "{order:?}");
        }
        // Neighbours (1, 0) differ in phase by 2π/3: cos goes 1 → −1/2.
        assert_eq!(order.components[0][0], 1.0);
        assert!((order.components[0][1] + 0.5).abs() < 1e-12);
        assert!(order
            .notes
            .iter()
            .any(|n| n.contains("pair level has no transition")));
        // Frustration: the simulation's crossing of this order parameter is no Tc.
        assert!(order.degenerate.is_some());
    }

    #[test]
    fn stripes_measure_both_members_of_their_star() {
        // A given q = (1/2, 0) on the isotropic square lattice has the star
        // {(1/2, 0), (0, 1/2)} (the 90° rotation): two real components.
        let l = lattice(
            "name: sq\ndimension: 2\nvectors: [[1.0, 0.0], [0.0, 1.0]]\nbasis: [{name: a}]\n\
             couplings: {J: 1.0}\nbonds: [{from: a, to: a, cell: [1, 0], coupling: J},\n\
             {from: a, to: a, cell: [0, 1], coupling: J}]\n",
        );
        let order = OrderParameter::at_wavevector(&l, &[0.5, 0.0, 0.0]);
        assert_eq!(order.source, OrderSource::Given);
        assert_eq!(order.period, 2);
        assert_eq!(order.star.len(), 2, "{order:?}");
        // Cells (0,0), (1,0), (0,1), (1,1): columns and rows alternate.
        assert_eq!(order.components[0], vec![1.0, -1.0, 1.0, -1.0]);
        assert_eq!(order.components[1], vec![1.0, 1.0, -1.0, -1.0]);
        // The ferromagnet's own ordering is the uniform magnetisation.
        let uniform = expected(&l);
        assert!(uniform.is_uniform());
        assert_eq!(uniform.source, OrderSource::PairLevel);
        assert_eq!(uniform.pattern(), "uniform");
        assert!(uniform.degenerate.is_none());
    }

    #[test]
    fn honeycomb_antiferromagnet_is_staggered_on_the_primitive_cell() {
        // Two sites per cell, bipartite: q = 0 with opposite signs on a and b.
        let l = lattice(
            "name: hc\ndimension: 2\nvectors: [[1.0, 0.0], [0.5, 0.8660254037844386]]\n\
             basis: [{name: a, position: [0.0, 0.0]}, {name: b, position: [0.5, 0.2886751345948129]}]\n\
             couplings: {J: -1.0}\nbonds: [{from: a, to: b, cell: [0, 0], coupling: J},\n\
             {from: b, to: a, cell: [1, 0], coupling: J}, {from: b, to: a, cell: [0, 1], coupling: J}]\n",
        );
        let order = expected(&l);
        assert_eq!(order.period, 1);
        assert_eq!(order.pattern(), "staggered");
        assert_eq!(order.components, vec![vec![1.0, -1.0]]);
    }
}

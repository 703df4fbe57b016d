//! What a run measures as its order parameter: the projection of the spins on an
//! ordering pattern.
//!
//! Per sample, component c of the order parameter is `M_c = (1/N) Σ_i w_{c,i} s_i` with
//! weights `w_{c,i}` given per site; its length `|M| = (Σ_c M_c²)^{1/2}` is what the
//! observables record (|M|, M², M⁴ per sample; [`super::observables`]). One component of
//! weights 1 is the uniform magnetisation m. An ordering at wavevector q with site mode
//! u_a gives `w = Re(u_a e^{2πi q·R})` (Néel order: ±1 on the two sublattices); where
//! q ≢ −q (the K point of the triangular lattice, say) the order parameter has two
//! components, the cos and sin patterns `Re` and `Im` of `u_a e^{2πi q·R}`, and a star of
//! symmetry-equivalent wavevectors adds components for each member. Which pattern to
//! measure is the caller's choice: this crate takes the weights, it does not compute
//! orderings.
//!
//! * [`Order`] is the order parameter of a whole run, written on the lattice's cells: a
//!   pattern on a supercell of `period` cells along every axis ([`CellOrder`]), repeated
//!   over each `L × … × L` torus, which must therefore have L a multiple of the period.
//! * [`OrderPattern`] is its value on one torus: weights per site (or the uniform
//!   magnetisation, which needs none), as [`super::System`] carries it.

use rungs_lattice::{Lattice, Torus};

use super::error::McError;

/// Most components an order parameter may have (a star of up to 24 pairs ±q, cos and
/// sin each, on a cubic lattice's general wavevector; common practice allows 48).
pub const MAX_COMPONENTS: usize = 48;

/// The order parameter of a run, on the lattice's cells.
#[derive(Debug, Clone, PartialEq, Default)]
pub enum Order {
    /// The uniform magnetisation `m = (1/N) Σ s_i`.
    #[default]
    Uniform,
    /// Weights on a supercell, repeated over every torus.
    Cell(CellOrder),
}

impl Order {
    /// The order of weights `components[c][s]` on the sites s of a supercell of `period`
    /// cells per axis of `lattice` (numbered as in [`CellOrder`]'s docs), e.g. an
    /// ordering computed by a cluster-variation level; one component of all ones is
    /// [`Order::Uniform`]. Refuses what [`CellOrder::new`] refuses.
    pub fn from_weights(
        lattice: &Lattice,
        period: usize,
        components: Vec<Vec<f64>>,
    ) -> Result<Order, McError> {
        let cell = CellOrder::new(lattice, period, components)?;
        Ok(match &cell.components[..] {
            [only] if only.iter().all(|&w| w == 1.0) => Order::Uniform,
            _ => Order::Cell(cell),
        })
    }

    /// Number of components n (1 for the uniform magnetisation).
    pub fn components(&self) -> usize {
        match self {
            Order::Uniform => 1,
            Order::Cell(c) => c.components.len(),
        }
    }

    /// The period in cells that torus sizes must be multiples of (1 for uniform order).
    pub fn period(&self) -> usize {
        match self {
            Order::Uniform => 1,
            Order::Cell(c) => c.period,
        }
    }

    /// Refuse a linear torus size that is not a multiple of the period, suggesting the
    /// nearest sizes that are ([`McError::Incommensurate`]).
    pub fn check_size(&self, size: usize) -> Result<(), McError> {
        check_period(size, self.period())
    }

    /// The smallest multiple of the period that is at least `size`.
    pub fn fit_size(&self, size: usize) -> usize {
        size.max(1).div_ceil(self.period()) * self.period()
    }

    /// The pattern on `torus` (its size checked against the period).
    pub fn on_torus(&self, torus: &Torus) -> Result<OrderPattern, McError> {
        match self {
            Order::Uniform => Ok(OrderPattern::uniform()),
            Order::Cell(c) => c.on_torus(torus),
        }
    }
}

/// Refuse a size that is not a multiple of `period`, suggesting the nearest that are.
fn check_period(size: usize, period: usize) -> Result<(), McError> {
    if size.is_multiple_of(period) {
        return Ok(());
    }
    let below = size / period * period;
    let above = below + period;
    let suggestion = if below == 0 {
        format!("{above} or {}", 2 * above)
    } else {
        format!("{below} or {above}")
    };
    Err(McError::Incommensurate {
        size,
        period,
        suggestion,
    })
}

/// An order parameter written on a supercell of `period` cells along every axis.
///
/// Supercell site `s = a + nb·(c₀ + p·(c₁ + p·c₂))` for basis site a of the supercell's
/// cell (c₀, c₁, c₂), each `c_k ∈ 0..p` (p the period, nb the basis sites per primitive
/// cell; axes beyond the lattice's dimension have c_k = 0): basis fastest, then cells
/// along axis 0, 1, 2 — the numbering of `Lattice::supercell`.
#[derive(Debug, Clone, PartialEq)]
pub struct CellOrder {
    period: usize,
    dimension: usize,
    sites_per_cell: usize,
    components: Vec<Vec<f64>>,
}

impl CellOrder {
    /// Weights `components[c][s]` of each component c on the supercell sites s (numbered
    /// as in the type's docs) of `lattice`, repeating every `period` cells. Refuses a
    /// period of 0, no or too many components, a component of the wrong length, a weight
    /// that is not finite, or a component with every weight zero.
    ///
    /// ```
    /// use rungs_reference::montecarlo::{CellOrder, Order};
    /// let square = rungs_lattice::Lattice::from_yaml_str(
    ///     "name: sq\ndimension: 2\nvectors: [[1.0, 0.0], [0.0, 1.0]]\nbasis: [{name: a}]\n\
    ///      couplings: {J: -1.0}\nbonds: [{from: a, to: a, cell: [1, 0], coupling: J},\n\
    ///      {from: a, to: a, cell: [0, 1], coupling: J}]\n",
    ///     "sq.yaml",
    /// )
    /// .unwrap();
    /// // Néel order: cells (0,0), (1,0), (0,1), (1,1) of a 2 × 2 supercell.
    /// let neel = Order::Cell(CellOrder::new(&square, 2, vec![vec![1.0, -1.0, -1.0, 1.0]]).unwrap());
    /// assert!(neel.check_size(8).is_ok());
    /// assert!(neel.check_size(5).is_err());
    /// assert_eq!(neel.fit_size(5), 6);
    /// ```
    pub fn new(
        lattice: &Lattice,
        period: usize,
        components: Vec<Vec<f64>>,
    ) -> Result<CellOrder, McError> {
        let bad = |detail: String| Err(McError::BadOrder { detail });
        if period == 0 {
            return bad("the period must be at least one cell".into());
        }
        let nb = lattice.sites_per_cell();
        let sites = period
            .checked_pow(lattice.dimension() as u32)
            .and_then(|c| c.checked_mul(nb));
        let Some(sites) = sites else {
            return bad(format!("a period of {period} cells is too large"));
        };
        check_components(&components, sites, "supercell site")?;
        Ok(CellOrder {
            period,
            dimension: lattice.dimension(),
            sites_per_cell: nb,
            components,
        })
    }

    /// The period in cells.
    pub fn period(&self) -> usize {
        self.period
    }

    /// The weights, one list per component, on the supercell's sites.
    pub fn weights(&self) -> &[Vec<f64>] {
        &self.components
    }

    /// The pattern on `torus`: each torus site takes the weight of the supercell site it
    /// falls on. Refuses a torus whose size along some axis is not a multiple of the
    /// period, or whose basis differs from the lattice's this order was written for.
    pub fn on_torus(&self, torus: &Torus) -> Result<OrderPattern, McError> {
        let size = torus.size();
        let cells: usize = size.iter().product();
        if torus.sites() != cells * self.sites_per_cell {
            return Err(McError::BadOrder {
                detail: format!(
                    "written for {} sites per cell, the torus has {}",
                    self.sites_per_cell,
                    torus.sites() / cells.max(1)
                ),
            });
        }
        // Axes beyond the dimension have size 1 and supercell coordinate 0.
        for &l in &size[..self.dimension] {
            check_period(l, self.period)?;
        }
        let p = self.period;
        let nb = self.sites_per_cell;
        let mut map = Vec::with_capacity(torus.sites());
        for c2 in 0..size[2] {
            for c1 in 0..size[1] {
                for c0 in 0..size[0] {
                    let cell = c0 % p + p * (c1 % p + p * (c2 % p));
                    map.extend((0..nb).map(|a| a + nb * cell));
                }
            }
        }
        let components = self
            .components
            .iter()
            .map(|w| map.iter().map(|&s| w[s]).collect())
            .collect();
        OrderPattern::new(torus.sites(), components)
    }
}

/// The order parameter on one torus: weights per site, or the uniform magnetisation.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct OrderPattern {
    /// Weights, component-major (`c · N + i`); empty for the uniform magnetisation.
    weights: Vec<f64>,
    /// Components (0 stands for the uniform magnetisation).
    components: usize,
}

impl OrderPattern {
    /// The uniform magnetisation (no weights stored).
    pub fn uniform() -> OrderPattern {
        OrderPattern::default()
    }

    /// Weights `components[c][i]` for every site i of a torus of `sites` sites. One
    /// component of all ones is stored as the uniform magnetisation.
    pub fn new(sites: usize, components: Vec<Vec<f64>>) -> Result<OrderPattern, McError> {
        check_components(&components, sites, "site")?;
        if let [only] = &components[..] {
            if only.iter().all(|&w| w == 1.0) {
                return Ok(OrderPattern::uniform());
            }
        }
        Ok(OrderPattern {
            components: components.len(),
            weights: components.concat(),
        })
    }

    /// Number of components n.
    pub fn components(&self) -> usize {
        self.components.max(1)
    }

    /// The pattern read through a sublattice gauge `σ_i = ε_i s_i` ([`super::gauge`]):
    /// weights `w_{c,i} ε_i` (the uniform magnetisation becomes the one component ε), so
    /// that the length on σ equals the length of this pattern on s. Refuses an ε whose
    /// length differs from a stored pattern's site count.
    pub fn gauged(&self, eps: &[i8]) -> Result<OrderPattern, McError> {
        let components = if self.components == 0 {
            vec![eps.iter().map(|&e| f64::from(e)).collect()]
        } else {
            self.weights
                .chunks_exact(eps.len().max(1))
                .map(|w| w.iter().zip(eps).map(|(w, &e)| w * f64::from(e)).collect())
                .collect()
        };
        OrderPattern::new(eps.len(), components)
    }

    /// Whether this is the uniform magnetisation.
    pub fn is_uniform(&self) -> bool {
        self.components == 0
    }

    /// Bytes held per site (8 per component; none for the uniform magnetisation).
    pub fn bytes_per_site(&self) -> usize {
        8 * self.components
    }

    /// The length `|M| = (Σ_c M_c²)^{1/2}`, `M_c = (1/N) Σ_i w_{c,i} s_i`, of a
    /// configuration whose total magnetisation `Σ_i s_i` is `magnetization` (used as is
    /// for the uniform case).
    pub fn length(&self, spins: &[i8], magnetization: i64) -> f64 {
        let n = spins.len().max(1) as f64;
        if self.components == 0 {
            return (magnetization as f64 / n).abs();
        }
        let sum2: f64 = self
            .weights
            .chunks_exact(spins.len())
            .map(|w| {
                let m = w
                    .iter()
                    .zip(spins)
                    .map(|(w, &s)| w * f64::from(s))
                    .sum::<f64>()
                    / n;
                m * m
            })
            .sum();
        sum2.sqrt()
    }
}

/// Check a list of weight components: 1 to [`MAX_COMPONENTS`] of them, each of `sites`
/// finite weights, not all zero.
fn check_components(components: &[Vec<f64>], sites: usize, what: &str) -> Result<(), McError> {
    let bad = |detail: String| Err(McError::BadOrder { detail });
    if components.is_empty() || components.len() > MAX_COMPONENTS {
        return bad(format!(
            "{} components given; give between 1 and {MAX_COMPONENTS}",
            components.len()
        ));
    }
    for (c, w) in components.iter().enumerate() {
        if w.len() != sites {
            return bad(format!(
                "component {c} has {} weights; give one per {what} ({sites})",
                w.len()
            ));
        }
        if let Some(x) = w.iter().find(|x| !x.is_finite()) {
            return bad(format!(
                "component {c} has the weight {x}; give finite numbers"
            ));
        }
        if w.iter().all(|&x| x == 0.0) {
            return bad(format!(
                "every weight of component {c} is zero: it measures nothing"
            ));
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn square(j: f64) -> Lattice {
        Lattice::from_yaml_str(
            &format!(
                "name: sq\ndimension: 2\nvectors: [[1.0, 0.0], [0.0, 1.0]]\nbasis: [{{name: a}}]\n\
                 couplings: {{J: {j}}}\nbonds: [{{from: a, to: a, cell: [1, 0], coupling: J}},\n\
                 {{from: a, to: a, cell: [0, 1], coupling: J}}]\n"
            ),
            "sq.yaml",
        )
        .unwrap()
    }

    #[test]
    fn neel_weights_tile_the_torus_and_measure_the_staggered_magnetisation() {
        let lattice = square(-1.0);
        let order = CellOrder::new(&lattice, 2, vec![vec![1.0, -1.0, -1.0, 1.0]]).unwrap();
        let torus = Torus::new(&lattice, &[4, 4]).unwrap();
        let p = order.on_torus(&torus).unwrap();
        assert_eq!(p.components(), 1);
        assert!(!p.is_uniform());
        // The Néel state s = (-1)^(x+y): staggered magnetisation 1, uniform 0.
        let neel: Vec<i8> = (0..16)
            .map(|i| if (i % 4 + i / 4) % 2 == 0 { 1 } else { -1 })
            .collect();
        assert_eq!(p.length(&neel, 0), 1.0);
        // The ferromagnetic state: staggered 0.
        assert_eq!(p.length(&[1; 16], 16), 0.0);
        // 6 × 6 fits, 5 × 5 does not (and says which sizes do).
        assert!(order
            .on_torus(&Torus::new(&lattice, &[6, 6]).unwrap())
            .is_ok());
        let e = order
            .on_torus(&Torus::new(&lattice, &[5, 5]).unwrap())
            .unwrap_err();
        assert!(e.to_string().contains("4 or 6"), "{e}");
    }

    #[test]
    fn two_components_give_a_rotation_invariant_length() {
        // Three sites with the cos and sin patterns of the 3-sublattice order
        // (angles 0, 2π/3, 4π/3): every state with two equal spins and one opposite has
        // |M| = 2/3 (the three sublattice states of a 3-site cell are rotations).
        let c = [1.0, -0.5, -0.5];
        let s = [0.0, 3f64.sqrt() / 2.0, -(3f64.sqrt()) / 2.0];
        let p = OrderPattern::new(3, vec![c.to_vec(), s.to_vec()]).unwrap();
        assert_eq!(p.components(), 2);
        for spins in [[1i8, -1, -1], [-1, 1, -1], [-1, -1, 1], [1, 1, -1]] {
            let m: i64 = spins.iter().map(|&s| i64::from(s)).sum();
            assert!((p.length(&spins, m) - 2.0 / 3.0).abs() < 1e-15, "{spins:?}");
        }
    }

    #[test]
    fn all_ones_is_the_uniform_magnetisation_and_bad_weights_are_refused() {
        let p = OrderPattern::new(4, vec![vec![1.0; 4]]).unwrap();
        assert!(p.is_uniform());
        assert_eq!(p.bytes_per_site(), 0);
        assert_eq!(p.length(&[1, 1, 1, -1], 2), 0.5);
        for bad in [
            vec![],
            vec![vec![1.0; 3]],
            vec![vec![0.0; 4]],
            vec![vec![f64::NAN, 1.0, 1.0, 1.0]],
        ] {
            assert!(matches!(
                OrderPattern::new(4, bad),
                Err(McError::BadOrder { .. })
            ));
        }
        assert_eq!(
            Order::from_weights(&square(1.0), 2, vec![vec![1.0; 4]]).unwrap(),
            Order::Uniform
        );
        assert!(CellOrder::new(&square(1.0), 0, vec![vec![1.0]]).is_err());
        assert!(CellOrder::new(&square(1.0), 2, vec![vec![1.0; 3]]).is_err());
    }
}

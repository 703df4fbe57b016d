//! Tc of a big level on point-group orbits, matrix-free.
//!
//! The **probe** at T solves the paramagnet in the even sector (truncated Newton, warm
//! started from the nearest temperatures already solved, linearly extrapolated; the
//! first one cold, or for clusters of 24 sites and more approached from high T by
//! [`approach_from_above`]), then
//! finds the lowest eigenpair of the odd sector, `H_odd u = λ B u`, by LOBPCG warm
//! started from the last mode, with B the diagonal of H_odd at the first temperature
//! probed (fixed, so λ(T) is one smooth function). λ changes sign at Tc, where the
//! paramagnet stops being a minimum against the symmetric (uniform) order; λ > 0 is the
//! positive definiteness of H_odd. The **search** is the one of every Tc,
//! [`crate::search`] (with [`crate::search::StepRules::creeping`]): step down from a
//! temperature above Tc along the secant of λ(T) until λ < 0, then Brent's method.
//!
//! The critical amplitude: with u B-normalised, `H⁻¹ ≈ u uᵀ / λ` near Tc, so
//! `χ = bᵀH⁻¹b / N_b ≈ (bᵀu)² / (N_b λ'(Tc) (T − Tc))` (b: the field on the orbits);
//! λ' from the Rayleigh quotient `uᵀH(T)u` at Tc ± 10⁻⁴ Tc.

use rungs_lattice::CompactLevel;

use crate::error::SolveError;
use crate::krylov::lobpcg_lowest;

use super::model::Model;
use super::newton::{
    approach_from_above, extrapolate, minimise, product_state, sector_product, NewtonCgOptions,
    SectorOps,
};

/// Clusters from this many sites up start their first paramagnet by
/// [`approach_from_above`] instead of from the uncorrelated state (measured: the 4×4
/// block's cold start costs 858 products against 906 approached; see
/// docs/benchmarks.md for the 5×5 block).
const APPROACH_SITES: usize = 24;

/// What a probe says about one temperature.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ProbeValue {
    /// A smooth function of T whose sign change is Tc (here λ of the odd sector).
    pub value: f64,
    /// Whether the odd-sector Hessian is positive definite (the paramagnet is stable).
    pub positive_definite: bool,
}

/// The paramagnet and its odd-sector stability along T, with warm starts.
pub struct SymmetricProbe<'a> {
    model: Model<'a>,
    even: Vec<usize>,
    odd: Vec<usize>,
    /// The field direction on the odd variables: `b_k` = site variables in orbit k.
    b: Vec<f64>,
    /// The fixed metric B of the eigenproblem (odd variables).
    metric: Option<Vec<f64>>,
    /// Paramagnets solved: (T, x), at most four, for warm starts.
    history: Vec<(f64, Vec<f64>)>,
    /// The last odd-sector mode (odd variables), B-normalised.
    mode: Option<Vec<f64>>,
    /// Probes evaluated: (T, value).
    cache: Vec<(f64, ProbeValue)>,
    /// Products with H spent.
    pub products: usize,
}

impl<'a> SymmetricProbe<'a> {
    /// A probe of `level` (h = 0).
    pub fn new(level: &'a CompactLevel) -> SymmetricProbe<'a> {
        let model = Model::new(level, 1.0, 0.0);
        let even: Vec<usize> = (0..level.len()).filter(|&k| !level.is_odd(k)).collect();
        let odd: Vec<usize> = (0..level.len()).filter(|&k| level.is_odd(k)).collect();
        let mut pos = vec![usize::MAX; level.len()];
        for (i, &k) in odd.iter().enumerate() {
            pos[k] = i;
        }
        let mut b = vec![0.0; odd.len()];
        for &v in &level.site_vars {
            b[pos[v]] += 1.0;
        }
        SymmetricProbe {
            model,
            even,
            odd,
            b,
            metric: None,
            history: Vec::new(),
            mode: None,
            cache: Vec::new(),
            products: 0,
        }
    }

    /// The field direction on the odd variables.
    pub fn field_direction(&self) -> &[f64] {
        &self.b
    }

    /// The odd variables (orbit ids).
    pub fn odd(&self) -> &[usize] {
        &self.odd
    }

    /// A warm start at `t` (the model set there): the two nearest solutions extrapolated
    /// linearly (when the result is feasible), else the nearest, else a cold start.
    fn start(&mut self, t: f64) -> Result<Vec<f64>, SolveError> {
        let mut near: Vec<&(f64, Vec<f64>)> = self.history.iter().collect();
        near.sort_by(|a, b| (a.0 - t).abs().total_cmp(&(b.0 - t).abs()));
        if let [a, b, ..] = near.as_slice() {
            if (a.0 - b.0).abs() > 0.0 {
                let s = (t - a.0) / (a.0 - b.0);
                if let Some(x) = extrapolate(&mut self.model, &a.1, &b.1, s) {
                    return Ok(x);
                }
            }
        }
        if let Some(a) = near.first() {
            return Ok(a.1.clone());
        }
        self.cold_start()
    }

    /// A start without solutions nearby: the uncorrelated state, or for clusters of
    /// [`APPROACH_SITES`] sites and more the approach from high temperature.
    fn cold_start(&mut self) -> Result<Vec<f64>, SolveError> {
        if self.model.level().max_cluster_sites < APPROACH_SITES {
            return Ok(product_state(&self.model, 0.0));
        }
        let (x, products) = approach_from_above(&mut self.model, &self.even)?;
        self.products += products;
        Ok(x)
    }

    /// The paramagnet at `t`; the model is left evaluated there.
    pub fn paramagnet(&mut self, t: f64) -> Result<Vec<f64>, SolveError> {
        if let Some((_, x)) = self.history.iter().find(|(s, _)| *s == t) {
            let x = x.clone();
            self.model.set(t, 0.0);
            self.model.evaluate(&x, None, None);
            return Ok(x);
        }
        self.model.set(t, 0.0);
        let x0 = self.start(t)?;
        let sol = match minimise(&mut self.model, x0, &self.even, NewtonCgOptions::default()) {
            Ok(s) => s,
            // A poor extrapolation: start again without it.
            Err(_) => {
                let x0 = self.cold_start()?;
                minimise(&mut self.model, x0, &self.even, NewtonCgOptions::default())?
            }
        };
        self.products += sol.products;
        super::drop_farthest(&mut self.history, 4, t, |h| h.0);
        self.history.push((t, sol.x.clone()));
        Ok(sol.x)
    }

    /// `out = H_odd v` at the model's current point.
    fn odd_product(&mut self, v: &[f64], out: &mut [f64]) {
        let n = self.model.len();
        let (mut full, mut full_out) = (vec![0.0; n], vec![0.0; n]);
        sector_product(&mut self.model, &self.odd, v, out, &mut full, &mut full_out);
    }

    /// λ(T) and positive definiteness of the odd sector at the paramagnet.
    pub fn probe(&mut self, t: f64) -> Result<ProbeValue, SolveError> {
        if let Some(&(_, v)) = self.cache.iter().find(|c| c.0 == t) {
            return Ok(v);
        }
        self.paramagnet(t)?;
        let metric = match &self.metric {
            Some(m) => m.clone(),
            None => {
                let d = self.model.diagonal();
                let m = super::newton::inverse_diagonal(&d, &self.odd)
                    .iter()
                    .map(|i| 1.0 / i)
                    .collect::<Vec<f64>>();
                self.metric = Some(m.clone());
                m
            }
        };
        let start = self.mode.clone().unwrap_or_else(|| self.b.clone());
        let mut products = 0;
        let eig = {
            let odd = &self.odd;
            let ops = SectorOps::new(&mut self.model);
            let mut op = |v: &[f64], out: &mut [f64]| {
                products += 1;
                ops.product(odd, v, out)
            };
            let mut pre = |v: &[f64], out: &mut [f64]| ops.precondition(odd, v, out);
            lobpcg_lowest(&mut op, &metric, &mut pre, &start, 1e-10, 2000)
        };
        self.products += products;
        if !eig.value.is_finite() {
            return Err(SolveError::TcSearch {
                level: self.model.level().name.clone(),
                detail: format!("the odd-sector eigenvalue at T = {t} is not finite"),
            });
        }
        self.mode = Some(eig.vector);
        let v = ProbeValue {
            value: eig.value,
            positive_definite: eig.value > 0.0,
        };
        self.cache.push((t, v));
        Ok(v)
    }

    /// The B-normalised mode of the last probe.
    pub fn mode(&self) -> Option<&[f64]> {
        self.mode.as_deref()
    }

    /// The Rayleigh quotient `uᵀ H_odd(T) u` at the paramagnet at `t`.
    pub fn rayleigh(&mut self, t: f64, u: &[f64]) -> Result<f64, SolveError> {
        self.paramagnet(t)?;
        let mut hu = vec![0.0; u.len()];
        self.odd_product(u, &mut hu);
        self.products += 1;
        Ok(u.iter().zip(&hu).map(|(a, b)| a * b).sum())
    }
}

impl crate::search::Probe for SymmetricProbe<'_> {
    fn value(&mut self, t: f64) -> Result<f64, SolveError> {
        Ok(self.probe(t)?.value)
    }
    fn name(&self) -> &str {
        &self.model.level().name
    }
}

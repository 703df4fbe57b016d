//! Measurements and their statistics.
//!
//! Every sweep records the sample `[e, e², |M|, M², M⁴, |m|]` (e = E/N; M the order
//! parameter of the run, [`super::order`]: the projection of the spins on the ordering
//! pattern, which is the magnetisation m = (Σ s_i)/N for uniform order; |m| the uniform
//! magnetisation, kept beside it). Samples are
//! kept in at most [`BinnedSeries::CAPACITY`] bins: when the store fills, neighbouring
//! bins are merged and the bin size doubles, so memory stays fixed however long the run.
//!
//! Error bars of plain means come from a binning analysis (Flyvbjerg & Petersen 1989,
//! J. Chem. Phys. 91, 461): bins of doubling size until fewer than [`MIN_BINS`] remain;
//! the largest of these estimates is reported (the plateau value when the series is long
//! enough). Non-linear quantities — the Binder cumulant `U4 = 1 - ⟨M⁴⟩ / (3⟨M²⟩²)`
//! (Binder 1981, Z. Phys. B 43, 119), the specific heat `C = N(⟨e²⟩ - ⟨e⟩²)/T²` and the
//! susceptibility `χ = N(⟨M²⟩ - ⟨|M|⟩²)/T` — get jackknife errors over [`MIN_BINS`]
//! blocks (Efron 1982).

/// Number of observables per sample.
pub const K: usize = 6;
/// Index of e in a sample.
pub const E: usize = 0;
/// Index of e².
pub const E2: usize = 1;
/// Index of |M|, the length of the order parameter.
pub const ABS_M: usize = 2;
/// Index of M².
pub const M2: usize = 3;
/// Index of M⁴.
pub const M4: usize = 4;
/// Index of the uniform |m|.
pub const ABS_UNIFORM: usize = 5;
/// Fewest bins a binning level or a jackknife may use (common practice: ~30 bins keep
/// the relative uncertainty of an error estimate near 1/√(2·31) ≈ 13%).
pub const MIN_BINS: usize = 32;

/// The sample recorded for energy per site `e`, order parameter `order` (its length
/// |M|, or the signed magnetisation for uniform order) and uniform magnetisation per
/// site `m`.
pub fn sample(e: f64, order: f64, m: f64) -> [f64; K] {
    let m2 = order * order;
    [e, e * e, order.abs(), m2, m2 * m2, m.abs()]
}

/// A time series of samples held as bins of equal, doubling size.
#[derive(Debug, Clone)]
pub struct BinnedSeries {
    bins: Vec<[f64; K]>,
    bin_size: usize,
    partial: [f64; K],
    partial_count: usize,
    total: [f64; K],
    count: usize,
}

impl Default for BinnedSeries {
    fn default() -> Self {
        BinnedSeries::new()
    }
}

impl BinnedSeries {
    /// Most bins held at once (a power of two); the store is allocated once.
    pub const CAPACITY: usize = 1 << 14;

    /// An empty series.
    pub fn new() -> BinnedSeries {
        BinnedSeries {
            bins: Vec::with_capacity(Self::CAPACITY),
            bin_size: 1,
            partial: [0.0; K],
            partial_count: 0,
            total: [0.0; K],
            count: 0,
        }
    }

    /// Record one sample.
    pub fn push(&mut self, x: [f64; K]) {
        self.count += 1;
        for ((t, p), v) in self.total.iter_mut().zip(&mut self.partial).zip(x) {
            *t += v;
            *p += v;
        }
        self.partial_count += 1;
        if self.partial_count == self.bin_size {
            let scale = 1.0 / self.bin_size as f64;
            self.bins.push(self.partial.map(|v| v * scale));
            self.partial = [0.0; K];
            self.partial_count = 0;
            if self.bins.len() == Self::CAPACITY {
                for b in 0..Self::CAPACITY / 2 {
                    let (x, y) = (self.bins[2 * b], self.bins[2 * b + 1]);
                    self.bins[b] = std::array::from_fn(|k| 0.5 * (x[k] + y[k]));
                }
                self.bins.truncate(Self::CAPACITY / 2);
                self.bin_size *= 2;
            }
        }
    }

    /// Samples recorded.
    pub fn len(&self) -> usize {
        self.count
    }

    /// Whether nothing was recorded.
    pub fn is_empty(&self) -> bool {
        self.count == 0
    }

    /// Mean of every observable over all samples.
    pub fn means(&self) -> [f64; K] {
        let n = self.count.max(1) as f64;
        self.total.map(|v| v / n)
    }

    /// The completed bins (each the mean of `bin_size()` consecutive samples).
    pub fn bins(&self) -> &[[f64; K]] {
        &self.bins
    }

    /// Samples per stored bin.
    pub fn bin_size(&self) -> usize {
        self.bin_size
    }

    /// One observable's bin means.
    pub fn column(&self, k: usize) -> Vec<f64> {
        self.bins.iter().map(|b| b[k]).collect()
    }
}

/// Result of a binning analysis.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BinningError {
    /// The error bar of the mean: the largest estimate over levels with ≥ MIN_BINS bins.
    pub error: f64,
    /// Whether the two coarsest levels agree within their own statistical uncertainty
    /// (the estimate has reached a plateau).
    pub converged: bool,
}

/// Binning analysis of a series `x` (Flyvbjerg & Petersen 1989): at each level the
/// error of the mean is `σ_l = sqrt(Σ (x̄_b - x̄)² / (M_l (M_l - 1)))` over the M_l bins,
/// then neighbouring bins are averaged; levels go on while at least [`MIN_BINS`] bins
/// remain.
pub fn binning_error(x: &[f64]) -> BinningError {
    let mut level: Vec<f64> = x.to_vec();
    let mut estimates = Vec::new();
    while level.len() >= MIN_BINS {
        let m = level.len() as f64;
        let mean = level.iter().sum::<f64>() / m;
        let var = level.iter().map(|v| (v - mean) * (v - mean)).sum::<f64>() / (m - 1.0);
        estimates.push(((var / m).sqrt(), level.len()));
        level = level.chunks_exact(2).map(|p| 0.5 * (p[0] + p[1])).collect();
    }
    let error = estimates.iter().map(|e| e.0).fold(0.0, f64::max);
    let converged = match estimates[..] {
        [.., (prev, _), (last, bins)] => {
            let relative = 1.0 / (2.0 * (bins as f64 - 1.0)).sqrt();
            (last - prev).abs() <= 2.0 * relative * last.max(prev)
        }
        _ => false,
    };
    BinningError { error, converged }
}

/// Jackknife estimate of `f(means)` over `blocks` equal blocks of `bins` (remainder bins
/// at the end dropped): returns `(f(all), error)` with
/// `error² = (B-1)/B Σ_b (f_(b) - f̄)²`, f_(b) computed leaving block b out (Efron 1982).
pub fn jackknife(bins: &[[f64; K]], blocks: usize, f: impl Fn(&[f64; K]) -> f64) -> (f64, f64) {
    let per = bins.len() / blocks.max(1);
    if per == 0 || blocks < 2 {
        let n = bins.len().max(1) as f64;
        let mean: [f64; K] = std::array::from_fn(|k| bins.iter().map(|b| b[k]).sum::<f64>() / n);
        return (f(&mean), 0.0);
    }
    let sums: Vec<[f64; K]> = bins
        .chunks_exact(per)
        .take(blocks)
        .map(|c| std::array::from_fn(|k| c.iter().map(|b| b[k]).sum()))
        .collect();
    let total: [f64; K] = std::array::from_fn(|k| sums.iter().map(|s| s[k]).sum());
    let used = (per * blocks) as f64;
    let all = f(&total.map(|v| v / used));
    let rest = (per * (blocks - 1)) as f64;
    let leave: Vec<f64> = sums
        .iter()
        .map(|s| f(&std::array::from_fn(|k| (total[k] - s[k]) / rest)))
        .collect();
    let b = blocks as f64;
    let mean = leave.iter().sum::<f64>() / b;
    let var = leave.iter().map(|v| (v - mean) * (v - mean)).sum::<f64>() * (b - 1.0) / b;
    (all, var.sqrt())
}

/// Binder cumulant `U4 = 1 - ⟨M⁴⟩/(3⟨M²⟩²)` of the order parameter from sample means; 0
/// (its value for a one-component Gaussian, i.e. disordered, distribution) when M
/// vanished in every sample. For an n-component order parameter the disordered value
/// is `1 - (n + 2)/(3n)` (1/3 for n = 2), the ordered one 2/3 for every n.
pub fn binder(means: &[f64; K]) -> f64 {
    if means[M2] > 0.0 {
        1.0 - means[M4] / (3.0 * means[M2] * means[M2])
    } else {
        0.0
    }
}

/// Everything reported for one (size, temperature) point. The magnetisation-like
/// entries are of the run's order parameter M ([`super::order`]): for uniform order
/// M = m, the magnetisation per site; for Néel order the staggered magnetisation. The
/// uniform |m| is kept beside them (`uniform_magnetization`). Serialised with these
/// field names as keys (the JSON contract of `mc`).
#[derive(Debug, Clone, Copy, PartialEq, Default, serde::Serialize)]
pub struct Estimates {
    /// ⟨e⟩, energy per site.
    pub energy: f64,
    /// Its binning error.
    pub energy_error: f64,
    /// ⟨|M|⟩, the order parameter per site.
    pub abs_magnetization: f64,
    /// Its binning error.
    pub abs_magnetization_error: f64,
    /// ⟨M²⟩.
    pub m2: f64,
    /// Its binning error.
    pub m2_error: f64,
    /// U4 = 1 - ⟨M⁴⟩/(3⟨M²⟩²).
    pub binder: f64,
    /// Jackknife error of U4.
    pub binder_error: f64,
    /// C = N(⟨e²⟩ - ⟨e⟩²)/T² per site.
    pub specific_heat: f64,
    /// Jackknife error of C.
    pub specific_heat_error: f64,
    /// χ = N(⟨M²⟩ - ⟨|M|⟩²)/T per site.
    pub susceptibility: f64,
    /// Jackknife error of χ.
    pub susceptibility_error: f64,
    /// ⟨|m|⟩ of the uniform magnetisation per site (equal to `abs_magnetization` for
    /// uniform order).
    pub uniform_magnetization: f64,
    /// Its binning error.
    pub uniform_magnetization_error: f64,
    /// Whether the binning errors of e, |M| and M² reached a plateau.
    pub errors_converged: bool,
}

/// Estimates from a recorded series on a torus of `sites` sites at temperature `t`.
pub fn estimate(series: &BinnedSeries, sites: usize, t: f64) -> Estimates {
    let means = series.means();
    let n = sites as f64;
    let e = binning_error(&series.column(E));
    let abs_m = binning_error(&series.column(ABS_M));
    let m2 = binning_error(&series.column(M2));
    let uniform = binning_error(&series.column(ABS_UNIFORM));
    let heat = |x: &[f64; K]| n * (x[E2] - x[E] * x[E]) / (t * t);
    let chi = |x: &[f64; K]| n * (x[M2] - x[ABS_M] * x[ABS_M]) / t;
    let (_, binder_error) = jackknife(series.bins(), MIN_BINS, binder);
    let (_, specific_heat_error) = jackknife(series.bins(), MIN_BINS, heat);
    let (_, susceptibility_error) = jackknife(series.bins(), MIN_BINS, chi);
    Estimates {
        energy: means[E],
        energy_error: e.error,
        abs_magnetization: means[ABS_M],
        abs_magnetization_error: abs_m.error,
        m2: means[M2],
        m2_error: m2.error,
        binder: binder(&means),
        binder_error,
        specific_heat: heat(&means).max(0.0),
        specific_heat_error,
        susceptibility: chi(&means).max(0.0),
        susceptibility_error,
        uniform_magnetization: means[ABS_UNIFORM],
        uniform_magnetization_error: uniform.error,
        errors_converged: e.converged && abs_m.converged && m2.converged,
    }
}

#[cfg(test)]
mod tests {
    use super::super::rng::{rng_from_seed, uniform};
    use super::*;

    #[test]
    fn binning_keeps_means_and_merges_when_full() {
        let mut s = BinnedSeries::new();
        let n = BinnedSeries::CAPACITY * 2 + 3;
        for i in 0..n {
            s.push(sample(i as f64, 0.0, 0.0));
        }
        assert_eq!(s.len(), n);
        // Merged at CAPACITY samples (to size 2) and again at 2·CAPACITY (to size 4).
        assert_eq!(s.bin_size(), 4);
        assert_eq!(s.bins().len(), BinnedSeries::CAPACITY / 2);
        assert_eq!(s.bins()[0][E], 1.5);
        assert!((s.means()[E] - (n - 1) as f64 / 2.0).abs() < 1e-9);
    }

    #[test]
    fn binning_error_of_white_noise_is_sigma_over_sqrt_n_and_grows_with_correlation() {
        // Uniform noise on [0, 1): σ² = 1/12, so the error of the mean is sqrt(1/(12 n)).
        let mut rng = rng_from_seed(11);
        let n = 1 << 14;
        let white: Vec<f64> = (0..n).map(|_| uniform(&mut rng)).collect();
        let b = binning_error(&white);
        let expected = (1.0 / (12.0 * n as f64)).sqrt();
        assert!(
            (b.error / expected - 1.0).abs() < 0.3,
            "{} vs {}",
            b.error,
            expected
        );
        // An AR(1) series x_t = a x_{t-1} + noise has τ_int = (1+a)/(2(1-a)) (common
        // practice): a = 0.9 inflates the error by sqrt(2 τ_int) = sqrt(19) ≈ 4.4.
        let mut x = 0.0;
        let ar: Vec<f64> = white
            .iter()
            .map(|w| {
                x = 0.9 * x + (w - 0.5);
                x
            })
            .collect();
        let naive = {
            let m = ar.iter().sum::<f64>() / n as f64;
            (ar.iter().map(|v| (v - m) * (v - m)).sum::<f64>() / (n as f64 * (n as f64 - 1.0)))
                .sqrt()
        };
        let ratio = binning_error(&ar).error / naive;
        assert!(ratio > 3.0 && ratio < 6.0, "{ratio}");
    }

    #[test]
    fn jackknife_of_a_linear_function_is_the_standard_error() {
        let bins: Vec<[f64; K]> = (0..64)
            .map(|i| [i as f64, 0.0, 0.0, 0.0, 0.0, 0.0])
            .collect();
        let (v, err) = jackknife(&bins, 64, |x| 2.0 * x[E]);
        let mean = 31.5;
        let sd = (bins.iter().map(|b| (b[E] - mean).powi(2)).sum::<f64>() / 63.0).sqrt();
        assert!((v - 63.0).abs() < 1e-12);
        assert!((err - 2.0 * sd / 8.0).abs() < 1e-9, "{err}");
    }

    #[test]
    fn binder_limits() {
        // Ordered: m = ±1 always → U4 = 2/3; Gaussian m → 0 (Binder 1981).
        assert!((binder(&sample(0.0, 1.0, 1.0)) - 2.0 / 3.0).abs() < 1e-15);
        assert_eq!(binder(&sample(0.0, 0.0, 0.0)), 0.0);
    }
}

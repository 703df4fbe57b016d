//! Single-spin Metropolis updates (Metropolis, Rosenbluth, Rosenbluth, Teller & Teller
//! 1953) in sequential order over the sites: valid for any couplings and field, so used
//! for antiferromagnets, frustrated lattices and h ≠ 0, where Wolff clusters are not.
//!
//! Flipping s_i changes the energy by `ΔE = 2 s_i (Σ_j J_ij s_j + h)`; the flip is
//! accepted with probability `min(1, exp(-ΔE / T))`. A sequential sweep satisfies the
//! balance condition (each single-site step does), which is all a stationary chain needs.

use super::error::McError;
use super::neighbours::Neighbours;
use super::rng::{uniform, McRng};

/// Metropolis updater at one temperature and field.
#[derive(Debug, Clone, Copy)]
pub struct Metropolis {
    beta: f64,
    field: f64,
}

impl Metropolis {
    /// Prepare updates at temperature `t` (> 0) and field `h`.
    pub fn new(t: f64, field: f64) -> Result<Metropolis, McError> {
        if !(t.is_finite() && t > 0.0) {
            return Err(McError::BadTemperature(t));
        }
        if !field.is_finite() {
            return Err(McError::BadField(field));
        }
        Ok(Metropolis {
            beta: 1.0 / t,
            field,
        })
    }

    /// One sweep: one attempted flip of every site, in index order. Returns the flips.
    pub fn sweep(&self, neighbours: &Neighbours, spins: &mut [i8], rng: &mut McRng) -> u64 {
        let offsets = neighbours.offsets();
        let targets = neighbours.targets();
        let couplings = neighbours.couplings();
        let mut flips = 0;
        for i in 0..spins.len() {
            let (a, b) = (offsets[i] as usize, offsets[i + 1] as usize);
            let mut local = self.field;
            for (&j, &c) in targets[a..b].iter().zip(&couplings[a..b]) {
                local += c * f64::from(spins[j as usize]);
            }
            let delta = 2.0 * f64::from(spins[i]) * local;
            if delta <= 0.0 || uniform(rng) < (-self.beta * delta).exp() {
                spins[i] = -spins[i];
                flips += 1;
            }
        }
        flips
    }
}

#[cfg(test)]
mod tests {
    use super::super::rng::rng_from_seed;
    use super::*;

    #[test]
    fn a_strong_field_aligns_free_spins_and_ground_states_stay() {
        // Two sites, no bonds between them worth anything: J = 0.
        let n = Neighbours::from_edges(2, &[(0, 1, 0.0)]).unwrap();
        let m = Metropolis::new(0.01, 1.0).unwrap();
        let mut rng = rng_from_seed(1);
        let mut spins = vec![-1i8, -1];
        assert_eq!(m.sweep(&n, &mut spins, &mut rng), 2);
        assert_eq!(spins, vec![1, 1]);
        // At T = 0.01 flipping against h = 1 costs exp(-200): never accepted.
        assert_eq!(m.sweep(&n, &mut spins, &mut rng), 0);
        assert!(matches!(
            Metropolis::new(1.0, f64::INFINITY),
            Err(McError::BadField(_))
        ));
    }
}

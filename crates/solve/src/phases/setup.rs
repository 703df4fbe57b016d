//! What every path of a diagram shares, built once: the grid, the candidate phases with
//! the cells they are followed on, the level's ordering and Tc at h = 0, and the
//! wavevectors at which the disordered state's stability is checked.

use rungs_lattice::symmetry::point_group;
use rungs_lattice::{Lattice, Level};

use super::candidates::{candidates, site_classes, Origin, PhaseInfo};
use super::{path, Along, PathResult};
use crate::error::SolveError;
use crate::functional::check_size;
use crate::ordering::Ordering;
use crate::phase::PhaseCell;
use crate::qspace::Wavevector;
use crate::tc::{critical_temperature, mean_field_maxima, mean_field_scale, TcOptions};

/// The grid of a diagram.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct DiagramSpec {
    /// Temperatures (ascending, distinct, > 0).
    pub temperatures: Vec<f64>,
    /// Fields (ascending, distinct).
    pub fields: Vec<f64>,
    /// Paths in T (one per field) or in h (one per temperature).
    pub along: Along,
}

impl DiagramSpec {
    /// A grid from the values given in any order (sorted, repeats dropped).
    pub fn new(temperatures: &[f64], fields: &[f64], along: Along) -> DiagramSpec {
        let sorted = |v: &[f64]| {
            let mut s = v.to_vec();
            s.sort_by(f64::total_cmp);
            s.dedup();
            s
        };
        DiagramSpec {
            temperatures: sorted(temperatures),
            fields: sorted(fields),
            along,
        }
    }

    /// Number of paths.
    pub fn paths(&self) -> usize {
        match self.along {
            Along::Temperature => self.fields.len(),
            Along::Field => self.temperatures.len(),
        }
    }

    /// The fixed value of path `i`: its field (paths in T) or temperature (paths in h).
    pub fn fixed(&self, i: usize) -> f64 {
        match self.along {
            Along::Temperature => self.fields[i],
            Along::Field => self.temperatures[i],
        }
    }

    /// The values a path runs over.
    pub fn path_values(&self) -> &[f64] {
        match self.along {
            Along::Temperature => &self.temperatures,
            Along::Field => &self.fields,
        }
    }

    /// (T, h) of the point `x` of the path with fixed value `fixed`.
    pub fn point(&self, fixed: f64, x: f64) -> (f64, f64) {
        match self.along {
            Along::Temperature => (x, fixed),
            Along::Field => (fixed, x),
        }
    }
}

/// The prepared computation of one level's phase diagram; [`PhaseDiagramSetup::path`]
/// computes one path, independently of every other (so paths may run in parallel, or
/// in separate processes).
pub struct PhaseDiagramSetup<'a> {
    pub(crate) lattice: &'a Lattice,
    pub(crate) level: &'a Level,
    pub(crate) spec: DiagramSpec,
    pub(crate) phases: Vec<PhaseInfo>,
    /// The cell of each ordered phase (`cells[k]` for `phases[k + 1]`).
    pub(crate) cells: Vec<PhaseCell>,
    /// Per ordered phase: the site classes a state of it keeps equal.
    pub(crate) classes: Vec<Vec<usize>>,
    /// Whether the level orders uniformly (a ferromagnet): translation-invariant states
    /// are then named by the sign of m.
    pub(crate) uniform_order: bool,
    /// The level's Tc at h = 0, if it has one.
    pub(crate) tc0: Option<f64>,
    /// Wavevectors every ordered phase's cell holds (where the disordered state's
    /// stability is checked).
    pub(crate) wavevectors: Vec<Wavevector>,
    /// Scale of fields and temperatures (the mean-field Tc), for absolute tolerances.
    pub(crate) scale: f64,
    notes: Vec<String>,
}

impl<'a> PhaseDiagramSetup<'a> {
    /// Prepare the diagram of `level` (of `lattice`) on the grid `spec`: the level's
    /// ordering at h = 0 (its Tc search), the candidate phases and their cells.
    pub fn new(
        lattice: &'a Lattice,
        level: &'a Level,
        spec: DiagramSpec,
    ) -> Result<PhaseDiagramSetup<'a>, SolveError> {
        check_size(level)?;
        if let Some(&t) = spec
            .temperatures
            .iter()
            .find(|t| !(t.is_finite() && **t > 0.0))
        {
            return Err(SolveError::BadTemperature { t });
        }
        if let Some(&h) = spec.fields.iter().find(|h| !h.is_finite()) {
            return Err(SolveError::BadField { h });
        }
        let mut notes = Vec::new();
        if lattice.is_frustrated() {
            notes.push(crate::cautions::FRUSTRATED.to_string());
        }
        let d = lattice.dimension();
        let (ordering, tc0) = match critical_temperature(lattice, level, TcOptions::default()) {
            Ok(cp) if cp.ordering.is_some() => (cp.ordering, cp.tc),
            Ok(_) => (mean_field_ordering(lattice, &mut notes), None),
            Err(e) => {
                notes.push(format!("the level's Tc search at h = 0 failed ({e})"));
                (mean_field_ordering(lattice, &mut notes), None)
            }
        };
        let (phases, more) = candidates(lattice, ordering.as_ref(), lattice.declared_phases());
        notes.extend(more);
        let ops = point_group(lattice);
        let nb = lattice.sites_per_cell();
        let mut cells = Vec::with_capacity(phases.len() - 1);
        let mut classes = Vec::with_capacity(phases.len() - 1);
        for p in &phases[1..] {
            let mut cell = PhaseCell::new(lattice, level, None, p.pattern.cell)?;
            cell.pattern = p.pattern.values.clone();
            cells.push(cell);
            classes.push(site_classes(&p.pattern, &ops, nb));
        }
        let mut wavevectors: Vec<Wavevector> = Vec::new();
        for c in &cells {
            for q in &c.wavevectors {
                if !wavevectors.iter().any(|p| p[..d] == q[..d]) {
                    wavevectors.push(*q);
                }
            }
        }
        if wavevectors.is_empty() {
            wavevectors.push([0.0; 3]);
        }
        let uniform_order = phases
            .iter()
            .any(|p| p.origin == Origin::Ordering && p.pattern.is_uniform());
        Ok(PhaseDiagramSetup {
            lattice,
            level,
            spec,
            phases,
            cells,
            classes,
            uniform_order,
            tc0,
            wavevectors,
            scale: mean_field_scale(lattice).max(1e-3),
            notes,
        })
    }

    /// The phases compared, the disordered one first.
    pub fn phases(&self) -> &[PhaseInfo] {
        &self.phases
    }

    /// The grid.
    pub fn spec(&self) -> &DiagramSpec {
        &self.spec
    }

    /// The level's Tc at h = 0, if it has one.
    pub fn tc(&self) -> Option<f64> {
        self.tc0
    }

    /// Cautions about the whole diagram (how the candidates were built).
    pub fn notes(&self) -> &[String] {
        &self.notes
    }

    /// Number of paths.
    pub fn paths(&self) -> usize {
        self.spec.paths()
    }

    /// Compute path `index` (0-based, in ascending order of its fixed value).
    pub fn path(&self, index: usize) -> PathResult {
        path::run(self, index)
    }
}

/// The mean-field ordering (the top of the coupling matrix over the zone), for levels
/// whose disordered state never goes unstable (first-order only) or whose Tc search
/// failed.
fn mean_field_ordering(lattice: &Lattice, notes: &mut Vec<String>) -> Option<Ordering> {
    let (q, _) = *mean_field_maxima(lattice).first()?;
    let m = crate::qspace::coupling_matrix(lattice, &q);
    let eig = m.symmetric_eigen();
    let k = (0..eig.eigenvalues.len())
        .max_by(|&a, &b| eig.eigenvalues[a].total_cmp(&eig.eigenvalues[b]))?;
    let mode = eig.eigenvectors.column(k).iter().copied().collect();
    notes.push(
        "the level's disordered state has no instability at h = 0: the ordered phases compared are built from the mean-field ordering wavevector (the maximum of J(q))"
            .into(),
    );
    Some(Ordering::new(lattice.dimension(), q, mode))
}

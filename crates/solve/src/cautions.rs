//! Cautions that every report about levels carries: which levels are bounds, what order
//! the search can find, what a field changes, and the artefacts of one dimension.
//!
//! They are plain sentences, shared by the Tc table ([`crate::levels`]), the sweep
//! report ([`crate::sweep_report`]) and the front ends that show them, so that each
//! caution is worded in one place.

use rungs_lattice::Lattice;

/// Which levels are variational bounds (Bogoliubov inequality; Griffiths 1967, Commun.
/// Math. Phys. 6, 121; Ruozzi 2012, NIPS 25, 117; Fisher 1967).
pub const NOT_BOUNDS_NOTE: &str =
    "bounds: `site` gives F_site ≥ F_exact for any couplings and field (Bogoliubov inequality) \
     and, for ferromagnets (all J ≥ 0, or unfrustrated couplings at h = 0, which a change of \
     spin signs makes ferromagnetic), Tc_site ≥ Tc_exact (Griffiths 1967, Commun. Math. Phys. \
     6, 121); `pair` gives, for ferromagnets, F_pair ≥ F_exact in any field (Ruozzi 2012, NIPS \
     25, 117) and Tc_pair ≥ Tc_exact (correlations bounded by non-backtracking walks: Fisher \
     1967; Saade, Krzakala & Zdeborová 2016, arXiv:1609.08269). Larger clusters are \
     approximations, not bounds: their Tc and F may lie on either side of the exact values.";

/// The note for one-dimensional lattices (Ising 1925, Z. Phys. 31, 253).
pub const ONE_D_NOTE: &str = "1D lattice: the exact model has no order at any T > 0 (Ising 1925, \
     Z. Phys. 31, 253), so any finite Tc or spontaneous magnetisation here is an artefact of the \
     approximation.";

/// The row note of a level that orders on a one-dimensional lattice.
pub const ONE_D_ROW: &str = "artefact: no order at T > 0 in 1D";

/// The note saying which order a level can find. Every level's instability is sought
/// at every wavevector of the zone (see [`crate::tc`]), so order that breaks the cell's
/// translations is found without a supercell; frustrated lattices are flagged, where a
/// cluster approximation may order although the exact model does not (Wannier 1950,
/// Phys. Rev. 79, 357; Kanô & Naya 1953, Prog. Theor. Phys. 10, 158).
///
/// ```
/// let square = rungs_lattice::Lattice::from_yaml_str(
///     "name: sq\ndimension: 2\nvectors: [[1, 0], [0, 1]]\nbasis: [{name: a}]\n\
///      couplings: {J: 1}\nbonds: [{from: a, to: a, cell: [1, 0], coupling: J},\n\
///      {from: a, to: a, cell: [0, 1], coupling: J}]\n",
///     "sq.yaml",
/// )?;
/// assert!(rungs_solve::cautions::order_note(&square).contains("every wavevector"));
/// # Ok::<(), rungs_lattice::LatticeError>(())
/// ```
pub fn order_note(lattice: &Lattice) -> String {
    let frustrated = lattice.is_frustrated();
    let base = "each level's instability is sought at every wavevector q, so order that breaks the \
                cell's translations (Néel order, superstructures) is found without a supercell; q is in \
                units of the reciprocal primitive vectors, and `supercell` is the smallest diagonal cell \
                that holds the order (`rungs sweep` follows the ordered phase on it)."
        .to_string();
    if frustrated {
        format!("{} {}", FRUSTRATED, capitalised(&base))
    } else {
        base
    }
}

/// The caution for a frustrated lattice ([`Lattice::is_frustrated`]): order a cluster
/// approximation predicts may be absent from the exact model.
pub const FRUSTRATED: &str = "IMPORTANT: frustrated couplings (no change of spin signs makes every bond \
     ferromagnetic). Cluster approximations may predict order where the exact model has none (the \
     triangular and kagome antiferromagnets have no transition at any T > 0: Wannier 1950, Phys. Rev. \
     79, 357; Kanô & Naya 1953, Prog. Theor. Phys. 10, 158).";

/// `text` with its first letter upper-case.
fn capitalised(text: &str) -> String {
    let mut c = text.chars();
    c.next()
        .map_or_else(String::new, |f| f.to_uppercase().chain(c).collect())
}

/// The note for a field `h ≠ 0`: what Tc means there, and why a ferromagnet has none
/// (common practice); `None` at h = 0.
pub fn field_note(lattice: &Lattice, field: f64) -> Option<String> {
    if field == 0.0 {
        return None;
    }
    let ferro = lattice.bonds().iter().all(|b| b.j >= 0.0);
    Some(if ferro {
        format!(
            "h = {field}: a uniform field breaks the up–down symmetry of a ferromagnet, so there is \
             no phase transition in a field (common practice); any row without Tc says so. The \
             zero-field reference is not used."
        )
    } else {
        format!(
            "h = {field}: Tc is where the field-polarised phase becomes unstable to order (e.g. the \
             Néel line T_N(h) of an antiferromagnet); the zero-field reference is not used."
        )
    })
}

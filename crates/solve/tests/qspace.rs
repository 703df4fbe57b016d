//! The Hessian at a wavevector against the mean-field closed form and against the full
//! Hessian of the same state written on a supercell.

mod common;

use common::*;
use rungs_solve::equilibrium::{minimise, product_state, NewtonOptions};
use rungs_solve::functional::{Block, Functional};
use rungs_solve::qspace::{coupling_top, QHessian};
use rungs_solve::supercell::{expand, variable_map};

#[test]
fn site_level_spectrum_is_t_minus_j_of_q() {
    // Mean field at the paramagnet: λ(q) = T − J(q), J(q) = 2J cos 2πq on the chain
    // (common practice: the random-phase form of the Bogoliubov free energy).
    let l = chain(-1.3);
    let lv = level(&l, "site");
    let t = 3.0;
    let f = Functional::new(&lv, t, 0.0);
    let x = product_state(&f, 0.0);
    let qh = QHessian::new(&f, &l, &x, Block::odd(&lv), false).unwrap();
    for q in [0.0, 0.1, 0.25, 0.5, 0.77] {
        let lam = qh.lowest(&[q, 0.0, 0.0]).value;
        let jq = 2.0 * -1.3 * (std::f64::consts::TAU * q).cos();
        assert!((lam - (t - jq)).abs() < 1e-12, "q = {q}: {lam}");
        assert!((coupling_top(&l, &[q, 0.0, 0.0]) - jq).abs() < 1e-12);
    }
}

#[test]
fn spectrum_at_commensurate_wavevectors_is_the_supercell_spectrum() {
    // The supercell Hessian of a translation-invariant state is block-diagonal in the
    // wavevectors commensurate with the supercell (Bloch's theorem; common practice).
    for (stem, name, n, t) in [
        ("square", "plaquette", [2usize, 2, 1], 2.6),
        ("triangular", "triangles", [3, 3, 1], 4.0),
        ("kagome", "triangles", [2, 1, 1], 2.5),
    ] {
        let l = shipped(stem);
        let lv = level(&l, name);
        let f = Functional::new(&lv, t, 0.0);
        let para = minimise(
            &f,
            product_state(&f, 0.0),
            &Block::even(&lv),
            NewtonOptions::default(),
        )
        .unwrap();
        let odd = Block::odd(&lv);
        let qh = QHessian::new(&f, &l, &para.x, odd, false).unwrap();
        let mut from_q: Vec<f64> = Vec::new();
        for i in 0..n[0] {
            for j in 0..n[1] {
                let q = [i as f64 / n[0] as f64, j as f64 / n[1] as f64, 0.0];
                from_q.extend(qh.matrix(&q).symmetric_eigenvalues().iter().copied());
            }
        }
        let sl = l.supercell(n).unwrap();
        let slv = level(&sl, name);
        let map = variable_map(&lv, &slv, n).unwrap();
        let xs = expand(&para.x, &map);
        let fs = Functional::new(&slv, t, 0.0);
        let sodd = Block::odd(&slv);
        let mut full: Vec<f64> = fs
            .hessian_block(&xs, &sodd.vars, &sodd.pos)
            .unwrap()
            .symmetric_eigenvalues()
            .iter()
            .copied()
            .collect();
        from_q.sort_by(f64::total_cmp);
        full.sort_by(f64::total_cmp);
        assert_eq!(from_q.len(), full.len(), "{stem} {name}");
        for (a, b) in from_q.iter().zip(&full) {
            assert!(
                (a - b).abs() < 1e-9 * (1.0 + b.abs()),
                "{stem} {name}: {a} vs {b}"
            );
        }
    }
}

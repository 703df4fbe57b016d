//! The functional's derivatives against finite differences, and probabilities that stay
//! a distribution.

mod common;

use common::*;
use proptest::prelude::*;
use rungs_solve::equilibrium::product_state;
use rungs_solve::functional::{Basis, Block, Functional};

proptest! {
    #![proptest_config(ProptestConfig::with_cases(24))]
    #[test]
    fn gradient_and_hessian_match_finite_differences(t in 1.0f64..5.0, h in -1.0f64..1.0, m in -0.6f64..0.6, seed in 0u64..1000) {
        let l = shipped("square");
        let lv = level(&l, "plaquette");
        let f = Functional::new(&lv, t, h);
        // A feasible point: a product state, perturbed a little.
        let mut x = product_state(&f, m);
        for (k, xv) in x.iter_mut().enumerate() {
            *xv += 0.01 * (((seed as usize * 31 + k * 17) % 13) as f64 / 13.0 - 0.5);
        }
        prop_assume!(f.feasible(&x));
        let ev = f.evaluate(&x).unwrap();
        let all = Block::all(&lv);
        let hess = f.hessian_block(&x, &all.vars, &all.pos).unwrap();
        let eps = 1e-6;
        for v in 0..x.len() {
            let mut xp = x.clone();
            let mut xm = x.clone();
            xp[v] += eps;
            xm[v] -= eps;
            let (ep, em) = (f.evaluate(&xp).unwrap(), f.evaluate(&xm).unwrap());
            let g_fd = (ep.free_energy - em.free_energy) / (2.0 * eps);
            prop_assert!((ev.gradient[v] - g_fd).abs() < 1e-6 * (1.0 + g_fd.abs()), "grad {v}: {} vs {g_fd}", ev.gradient[v]);
            for w in 0..x.len() {
                let h_fd = (ep.gradient[w] - em.gradient[w]) / (2.0 * eps);
                prop_assert!((hess[(v, w)] - h_fd).abs() < 1e-5 * (1.0 + h_fd.abs()), "H[{v},{w}]: {} vs {h_fd}", hess[(v, w)]);
            }
        }
        // Matrix-free product equals the dense Hessian times a vector.
        let vec: Vec<f64> = (0..x.len()).map(|k| ((k * 7 + 3) % 5) as f64 - 2.0).collect();
        let mut out = vec![0.0; x.len()];
        f.hessian_vector(&x, &vec, &mut out).unwrap();
        for (r, o) in out.iter().enumerate() {
            let dense: f64 = (0..x.len()).map(|c| hess[(r, c)] * vec[c]).sum();
            prop_assert!((o - dense).abs() < 1e-9 * (1.0 + dense.abs()));
        }
    }
}

#[test]
fn solved_correlations_are_a_distribution() {
    // Every correlation in [−1, 1]; each maximal cluster's probabilities ≥ 0 and sum to 1.
    let l = shipped("square");
    let lv = level(&l, "block3");
    for (t, h) in [(1.5, 0.0), (2.4, 0.0), (3.0, 0.5)] {
        let st = rungs_solve::solve_equilibrium(&lv, t, h, None).unwrap();
        assert!(st.solution.x.iter().all(|x| (-1.0..=1.0).contains(x)));
        for r in lv.regions.iter().filter(|r| r.coefficient != 0) {
            let n = r.cluster.len();
            let mut p = vec![0.0; 1 << n];
            p[0] = 1.0;
            for (slot, &v) in p.iter_mut().zip(&r.subset_vars).skip(1) {
                *slot = st.solution.x[v as usize];
            }
            rungs_solve::wht::wht(&mut p);
            let p: Vec<f64> = p.iter().map(|q| q / (1u64 << n) as f64).collect();
            assert!(p.iter().all(|&q| q >= 0.0));
            assert!((p.iter().sum::<f64>() - 1.0).abs() < 1e-12);
        }
    }
}

/// Gradient and Hessian of `f` at `x` against central differences, and the matrix-free
/// product against the dense Hessian.
fn check_derivatives(f: &Functional, x: &[f64], eps: f64) {
    let lv = f.level();
    let ev = f.evaluate(x).unwrap();
    let all = Block::all(lv);
    let hess = f.hessian_block(x, &all.vars, &all.pos).unwrap();
    let precise = f.hessian_block_precise(x, &all.vars, &all.pos).unwrap();
    for v in 0..x.len() {
        let mut xp = x.to_vec();
        let mut xm = x.to_vec();
        xp[v] += eps;
        xm[v] -= eps;
        let (ep, em) = (f.evaluate(&xp).unwrap(), f.evaluate(&xm).unwrap());
        let g_fd = (ep.free_energy - em.free_energy) / (2.0 * eps);
        assert!(
            (ev.gradient[v] - g_fd).abs() < 1e-6 * (1.0 + g_fd.abs()),
            "grad {v}: {} vs {g_fd}",
            ev.gradient[v]
        );
        for w in 0..x.len() {
            let h_fd = (ep.gradient[w] - em.gradient[w]) / (2.0 * eps);
            assert!(
                (hess[(v, w)] - h_fd).abs() < 1e-5 * (1.0 + h_fd.abs()),
                "H[{v},{w}]: {} vs {h_fd}",
                hess[(v, w)]
            );
            assert!((hess[(v, w)] - precise[(v, w)]).abs() < 1e-9 * (1.0 + h_fd.abs()));
        }
    }
    let vec: Vec<f64> = (0..x.len())
        .map(|k| ((k * 7 + 3) % 5) as f64 - 2.0)
        .collect();
    let mut out = vec![0.0; x.len()];
    f.hessian_vector(x, &vec, &mut out).unwrap();
    for (r, o) in out.iter().enumerate() {
        let dense: f64 = (0..x.len()).map(|c| hess[(r, c)] * vec[c]).sum();
        assert!((o - dense).abs() < 1e-9 * (1.0 + dense.abs()));
    }
}

#[test]
fn flip_basis_derivatives_match_finite_differences() {
    // Plaquette and site levels (the site level has factorised bonds), on a two-site
    // supercell with a staggered pattern: mixed signs of ε exercise every term.
    let l = shipped("square").supercell([2, 1, 1]).unwrap();
    for name in ["site", "pair", "plaquette"] {
        let lv = level(&l, name);
        let basis = Basis::Flip {
            pattern: vec![1.0, -1.0],
        };
        let f = Functional::with_basis(&lv, 1.7, 0.3, basis, None);
        let x = f.product_state_sites(&[0.4, -0.3]);
        assert!(f.feasible(&x));
        check_derivatives(&f, &x, 1e-6);
    }
}

#[test]
fn a_state_has_the_same_free_energy_in_every_basis() {
    // F, E and S are properties of the state, not of its coordinates; the reference
    // offset changes nothing either (common practice: a change of variables).
    let l = shipped("square").supercell([2, 1, 1]).unwrap();
    let lv = level(&l, "plaquette");
    let walsh = Functional::new(&lv, 2.1, 0.2);
    let x = walsh.product_state_sites(&[0.5, -0.2]);
    let e0 = walsh.evaluate(&x).unwrap();
    for basis in [
        Basis::flip_up(2),
        Basis::Flip {
            pattern: vec![-1.0, 1.0],
        },
    ] {
        let y = walsh.convert(&x, &basis).unwrap();
        let f = Functional::with_basis(&lv, 2.1, 0.2, basis.clone(), None);
        let e = f.evaluate(&y).unwrap();
        assert!((e.free_energy - e0.free_energy).abs() < 1e-12);
        assert!((e.energy - e0.energy).abs() < 1e-12);
        assert!((e.entropy - e0.entropy).abs() < 1e-12);
        let back = f.convert(&y, &Basis::Walsh).unwrap();
        for (a, b) in back.iter().zip(&x) {
            assert!((a - b).abs() < 1e-12);
        }
        // Offsets from a reference: the same state.
        let reference = y.iter().map(|v| v * 0.9).collect::<Vec<_>>();
        let g = Functional::with_basis(&lv, 2.1, 0.2, basis, Some(reference.clone()));
        let z: Vec<f64> = y.iter().zip(&reference).map(|(a, b)| a - b).collect();
        let ez = g.evaluate(&z).unwrap();
        assert!((ez.free_energy - e0.free_energy).abs() < 1e-12);
        check_derivatives(&g, &z, 1e-6);
    }
}

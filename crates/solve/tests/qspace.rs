//! The Hessian at a wavevector against the mean-field closed form and against the full
//! Hessian of the same state written on a supercell.

mod common;

use common::*;
use rungs_solve::equilibrium::{minimise, product_state, NewtonOptions};
use rungs_solve::functional::{Basis, Block, Functional};
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

#[test]
fn real_forms_keep_the_spectrum_at_complex_wavevectors() {
    // H(q)* = H(−q) for a real Hessian; an operation mapping q to −q makes H(q) unitarily
    // equivalent to a real symmetric matrix (Wigner's antiunitary symmetry; common
    // practice). The real form must give the same lowest eigenvalue, an eigenvector of
    // H(q) itself, and the same answers to the positive-definiteness test.
    use rungs_lattice::symmetry;
    use rungs_solve::qspace::RealForms;
    for (stem, name, t, h) in [
        ("square", "plaquette", 2.6, 0.0),
        ("triangular", "triangles", 4.0, 0.0),
        ("kagome", "triangles", 2.5, 0.0),
        ("honeycomb", "pair", 1.8, 0.0),
        ("diamond", "stars", 3.0, 0.0),
        ("simple_cubic", "cube", 4.7, 0.0),
        ("fcc_af", "tetrahedra", 2.0, 0.0),
        ("square", "plaquette", 1.5, 0.7),
        ("triangular", "triangles", 2.0, 1.3),
    ] {
        let l = shipped(stem);
        let lv = level(&l, name);
        let (f, block, x) = disordered(&lv, t, h);
        let ops = symmetry::level_group(&lv, &symmetry::point_group(&l));
        let forms = RealForms::new(&lv, &ops, &block);
        let plain = QHessian::scaled(&f, &l, &x, block.clone(), false).unwrap();
        let real = QHessian::scaled(&f, &l, &x, block.clone(), false)
            .unwrap()
            .with_real_forms(&forms);
        let d = l.dimension();
        let mut covered = 0;
        for q in [
            [0.13, 0.29, 0.41],
            [1.0 / 3.0, 1.0 / 6.0, 0.0],
            [0.37, 0.0, 0.11],
            [0.25, 0.25, 0.25],
        ] {
            let mut q = q;
            q[d..].iter_mut().for_each(|c| *c = 0.0);
            covered += usize::from(forms.applies_at(&q));
            let exact = plain.lowest_value(&q);
            let mode = real.lowest(&q);
            let tag = format!("{stem} {name} h = {h} q = {q:?}");
            assert!(
                (mode.value - exact).abs() < 1e-10 * (1.0 + exact.abs()),
                "{tag}"
            );
            assert!(
                (real.lowest_value(&q) - exact).abs() < 1e-10 * (1.0 + exact.abs()),
                "{tag}"
            );
            // An eigenvector of the complex H(q), of unit norm.
            let m = plain.matrix(&q);
            let v = &mode.vector;
            assert!((v.norm() - 1.0).abs() < 1e-10, "{tag}");
            assert!((&m * v - v.map(|z| z * mode.value)).norm() < 1e-9, "{tag}");
            for (shift, pd) in [(exact - 1e-6, true), (exact + 1e-6, false)] {
                assert_eq!(real.is_positive_definite_above(&q, shift), pd, "{tag}");
            }
        }
        // Every lattice here has an inversion centre: every wavevector has a real form.
        assert_eq!(covered, 4, "{stem} {name}");
    }
}

#[test]
fn eliminating_private_variables_keeps_every_definiteness_answer() {
    use rungs_lattice::symmetry;
    use rungs_solve::qspace::Projection;
    // Haynsworth (1968, Linear Algebra Appl. 1, 73): the inertia of a Hermitian matrix is
    // that of a positive definite diagonal block plus that of its Schur complement, so
    // `H(q) − s·I` is positive definite exactly when the private block and the condensed
    // matrix are. Checked against the full eigensolve: definite just below the lowest
    // eigenvalue, not just above it, nor far above (where the private block itself fails).
    for (stem, name, t, h) in [
        ("simple_cubic", "cube", 4.7, 0.0),
        ("simple_cubic", "cube", 4.4, 0.0),
        ("square", "plaquette", 2.6, 0.0),
        ("square", "block3", 2.4, 0.0),
        ("kagome", "hexagon", 2.3, 0.0),
        ("fcc_af", "tetrahedra_octahedron", 1.8, 0.0),
        ("honeycomb", "hexagon", 1.7, 0.0),
        ("square", "plaquette", 1.5, 0.7),
        ("triangular", "hexagon", 2.0, 1.3),
    ] {
        let l = shipped(stem);
        let lv = level(&l, name);
        let (f, block, x) = disordered(&lv, t, h);
        // In a field, also the same state's matrix in flip probabilities (the basis a
        // strongly polarised state keeps, whose kernels are read differently).
        if h != 0.0 {
            let flip = Functional::with_basis(
                &lv,
                t,
                h,
                Basis::Flip {
                    pattern: vec![1.0; lv.sites_per_cell],
                },
                None,
            );
            let y = f.convert(&x, flip.basis()).unwrap();
            let qf = QHessian::scaled(&flip, &l, &y, block.clone(), false).unwrap();
            assert!(qf.factorised_order() < block.vars.len());
            for q in [[0.0, 0.0, 0.0], [0.5, 0.5, 0.0], [0.13, 0.29, 0.0]] {
                let exact = qf.lowest_value(&q);
                for (shift, pd) in [(exact - 1e-7, true), (exact + 1e-7, false)] {
                    let tag = format!("{stem} {name} flip basis q = {q:?}: λ = {exact}");
                    assert_eq!(qf.is_positive_definite_above(&q, shift), pd, "{tag}");
                }
            }
        }
        let qh = QHessian::scaled(&f, &l, &x, block.clone(), false).unwrap();
        let ops = symmetry::level_group(&lv, &symmetry::point_group(&l));
        let order = qh.factorised_order();
        assert!(
            order < block.vars.len(),
            "{stem} {name}: nothing eliminated"
        );
        if (stem, name) == ("simple_cubic", "cube") {
            // The odd subsets of a cube, per cell: 1 site, 44 triangles, 56 five-site and
            // 8 seven-site subsets (109); shared with another region are the site and the
            // 12 triangles that lie in a face (each face is a plaquette region): 13
            // (counting, common practice).
            assert_eq!((block.vars.len(), order), (109, 13));
        }
        let d = l.dimension();
        for q in [
            [0.0, 0.0, 0.0],
            [0.5, 0.5, 0.5],
            [0.5, 0.0, 0.0],
            [0.13, 0.29, 0.41],
            [1.0 / 3.0, 1.0 / 6.0, 0.0],
        ] {
            let mut q = q;
            q[d..].iter_mut().for_each(|c| *c = 0.0);
            let exact = qh.lowest_value(&q);
            let tag = format!("{stem} {name} T = {t} h = {h} q = {q:?}: λ = {exact}");
            // The symmetric subspace at a real q, summed in real arithmetic: the same
            // lowest eigenvalue as the complex projected matrix.
            if rungs_solve::qspace::is_real(&q) {
                let proj = Projection::new(&lv, &ops, &q, &block);
                let complex = qh.projected_matrix(&q, &proj);
                let reference = complex.map(|z| z.re).symmetric_eigenvalues().min();
                let value = qh.projected_lowest_value(&q, &proj);
                assert!(
                    (value - reference).abs() < 1e-10,
                    "{tag}: {value} {reference}"
                );
                assert!(complex.iter().all(|z| z.im.abs() < 1e-12), "{tag}");
            }
            for (shift, pd) in [
                (exact - 1e-7, true),
                (exact + 1e-7, false),
                (exact + 1.0, false),
            ] {
                assert_eq!(
                    qh.is_positive_definite_above(&q, shift),
                    pd,
                    "{tag} s = {shift}"
                );
            }
        }
    }
}

/// The disordered state of `lv` at (t, h) from a weakly ordered start, with the block
/// whose stability decides its Tc: the odd sector at h = 0, every variable in a field.
fn disordered(lv: &rungs_lattice::Level, t: f64, h: f64) -> (Functional<'_>, Block, Vec<f64>) {
    let f = Functional::new(lv, t, h);
    let (free, block) = if h == 0.0 {
        (Block::even(lv), Block::odd(lv))
    } else {
        (Block::all(lv), Block::all(lv))
    };
    let x = minimise(&f, product_state(&f, 0.1), &free, NewtonOptions::default())
        .unwrap()
        .x;
    (f, block, x)
}

#[test]
fn the_grouped_gram_and_moment_forms_agree_with_the_assembled_matrices() {
    use nalgebra::{Complex, DVector};
    use rungs_lattice::symmetry;
    // Exact identities, checked numerically: the moment-matrix Schur complement
    // (`K⁻¹[c, d] = ξ_{c⊕d}/(T a)`, used by the zero-shift definiteness test of a
    // symmetric paramagnet at h = 0 and of every state in a field), the grouped Gram form
    // of the Newton Hessian on orbit variables, and the matrix-free Rayleigh form
    // `u†H(q)u` (common practice: block inverses and Gram forms of Σ p ln p).
    for (stem, name, t, h) in [
        ("simple_cubic", "cube", 4.7, 0.0),
        ("simple_cubic", "cube", 4.4, 0.0),
        ("square", "plaquette", 2.6, 0.0),
        ("square", "plaquette", 2.3, 0.0),
        ("square", "block3", 2.4, 0.0),
        ("square", "block3", 2.3, 0.0),
        ("square", "plaquette", 1.5, 0.7),
        ("triangular", "hexagon", 2.0, 1.3),
    ] {
        let l = shipped(stem);
        let lv = level(&l, name);
        // The paramagnet at h = 0 with its odd correlations exactly zero (the state the
        // Tc search follows); in a field every variable free.
        let f = Functional::new(&lv, t, h);
        let (free, block, m0) = if h == 0.0 {
            (Block::even(&lv), Block::odd(&lv), 0.0)
        } else {
            (Block::all(&lv), Block::all(&lv), 0.1)
        };
        let x = minimise(&f, product_state(&f, m0), &free, NewtonOptions::default())
            .unwrap()
            .x;
        let qh = QHessian::scaled(&f, &l, &x, block.clone(), false).unwrap();
        assert!(qh.factorised_order() < block.vars.len(), "{stem} {name}");
        let d = l.dimension();
        for q in [
            [0.0, 0.0, 0.0],
            [0.5, 0.5, 0.5],
            [0.5, 0.0, 0.0],
            [0.13, 0.29, 0.41],
        ] {
            let mut q = q;
            q[d..].iter_mut().for_each(|c| *c = 0.0);
            let exact = qh.lowest_value(&q);
            let tag = format!("{stem} {name} T = {t} h = {h} q = {q:?}: λ = {exact}");
            if exact.abs() > 1e-9 {
                assert_eq!(qh.is_positive_definite(&q), exact > 0.0, "{tag}");
            }
            let n = block.vars.len();
            let u = DVector::from_fn(n, |i, _| {
                Complex::new((0.3 * i as f64).sin() + 0.1, (0.7 * i as f64).cos())
            });
            let direct = (u.adjoint() * qh.matrix(&q) * &u)[(0, 0)].re;
            let free_form = qh.quadratic_form(&q, &u);
            let scale: f64 = u.iter().map(|z| z.norm_sqr()).sum();
            assert!(
                (direct - free_form).abs() < 1e-12 * scale,
                "{tag}: {direct} {free_form}"
            );
        }
        // The Newton Hessian of the even sector on orbit variables, grouped and visited.
        if h == 0.0 {
            let ops = symmetry::level_group(&lv, &symmetry::point_group(&l));
            let reduced = lv.reduced(&symmetry::variable_orbits(&lv, &ops));
            let g = Functional::new(&reduced, t, 0.0);
            let even = Block::even(&reduced);
            let y = minimise(&g, product_state(&g, 0.0), &even, NewtonOptions::default())
                .unwrap()
                .x;
            // On the plaquette's 16 states grouping does not pay and the pairs are kept.
            let Some(groups) = g.state_groups(&even) else {
                assert_eq!(name, "plaquette", "{stem} {name}: grouping should pay");
                continue;
            };
            let grouped = g.hessian_block_grouped(&y, &even, &groups).unwrap();
            let visited = g.hessian_block(&y, &even.vars, &even.pos).unwrap();
            let norm = visited.abs().max();
            assert!(
                (&grouped - &visited).abs().max() < 1e-13 * norm,
                "{stem} {name}: grouped Hessian off by {}",
                (&grouped - &visited).abs().max()
            );
        }
    }
}

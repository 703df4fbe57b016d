//! The spectrum of the preconditioned Hessian M⁻¹H of a square n×n block's paramagnet,
//! in its even or odd sector, from dense matrices built column by column with the
//! matrix-free products (`cargo run --release -p rungs-solve --example spectrum -- 3 2.36
//! [odd]`; the 4×4 block takes minutes). Prints the extreme eigenvalues of M⁻¹H and of
//! H, how the extreme modes spread over cluster sizes, and a histogram by decade: what
//! decides the conjugate-gradient counts of the big levels.
use std::collections::BTreeMap;
use std::path::Path;

use nalgebra::{DMatrix, SymmetricEigen};
use rungs_lattice::{CompactLevel, Lattice};
use rungs_solve::big::model::Model;
use rungs_solve::big::newton::{minimise, product_state, sector_precondition, sector_product};

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let mut args = std::env::args().skip(1);
    let n: usize = args.next().map_or(Ok(3), |s| s.parse())?;
    let t: f64 = args.next().map_or(Ok(2.4), |s| s.parse())?;
    let odd_sector = args.next().as_deref() == Some("odd");
    let name = format!("block{n}x{n}");
    let lattice = Lattice::from_file(
        &Path::new(env!("CARGO_MANIFEST_DIR")).join("../../lattices/square.yaml"),
    )?
    .with_block_level(&name, [n, n, 1])?;
    let level = CompactLevel::build(&lattice, &name)?;
    let mut model = Model::new(&level, t, 0.0);
    let (odd, even): (Vec<usize>, Vec<usize>) = (0..level.len()).partition(|&k| level.is_odd(k));
    let x0 = product_state(&model, 0.0);
    let solved = minimise(&mut model, x0, &even, Default::default())?;
    model
        .evaluate(&solved.x, None, None)
        .ok_or("infeasible paramagnet")?;
    let sector = if odd_sector { &odd } else { &even };
    let m = sector.len();
    let (mut full, mut full_out) = (vec![0.0; level.len()], vec![0.0; level.len()]);
    let (mut h, mut p) = (DMatrix::<f64>::zeros(m, m), DMatrix::<f64>::zeros(m, m));
    let (mut e, mut out) = (vec![0.0; m], vec![0.0; m]);
    for i in 0..m {
        e.iter_mut().for_each(|v| *v = 0.0);
        e[i] = 1.0;
        sector_product(&mut model, sector, &e, &mut out, &mut full, &mut full_out);
        h.column_mut(i).copy_from_slice(&out);
        sector_precondition(&mut model, sector, &e, &mut out, &mut full, &mut full_out);
        p.column_mut(i).copy_from_slice(&out);
    }
    let h = (&h + h.transpose()) * 0.5;
    let p = (&p + p.transpose()) * 0.5;
    // M^{-1/2} H M^{-1/2} has the eigenvalues of M⁻¹H.
    let pe = SymmetricEigen::new(p);
    let root = &pe.eigenvectors
        * DMatrix::from_diagonal(&pe.eigenvalues.map(|v| v.max(0.0).sqrt()))
        * pe.eigenvectors.transpose();
    let se = SymmetricEigen::new(&root * &h * &root);
    let mut order: Vec<usize> = (0..m).collect();
    order.sort_by(|&a, &b| se.eigenvalues[a].total_cmp(&se.eigenvalues[b]));
    let mut he: Vec<f64> = SymmetricEigen::new(h).eigenvalues.iter().copied().collect();
    he.sort_by(f64::total_cmp);
    println!(
        "{name}, T = {t}, {} sector ({m} orbits): M⁻¹H in [{:.4e}, {:.4e}], H in [{:.4e}, {:.4e}]",
        if odd_sector { "odd" } else { "even" },
        se.eigenvalues[order[0]],
        se.eigenvalues[order[m - 1]],
        he[0],
        he[m - 1]
    );
    let show = |label: &str, ids: &[usize]| {
        for &i in ids {
            let u = &root * se.eigenvectors.column(i);
            let norm: f64 = u.iter().map(|v| v * v).sum();
            let mut by_size = BTreeMap::<u32, f64>::new();
            for (j, &k) in sector.iter().enumerate() {
                *by_size.entry(level.orbit_sites[k] as u32).or_default() += u[j] * u[j] / norm;
            }
            let parts: Vec<String> = by_size
                .iter()
                .filter(|(_, w)| **w > 0.02)
                .map(|(s, w)| format!("{s} sites {w:.2}"))
                .collect();
            println!("{label} {:.4e}: {}", se.eigenvalues[i], parts.join(", "));
        }
    };
    show("lowest ", &order[..m.min(4)]);
    show("highest", &order[m.saturating_sub(4)..]);
    let mut decades = [0usize; 10];
    for &v in se.eigenvalues.iter() {
        decades[(v.log10() + 3.0).floor().clamp(0.0, 9.0) as usize] += 1;
    }
    println!("eigenvalues per decade from 10⁻³: {decades:?}");
    Ok(())
}

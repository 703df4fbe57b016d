//! Cost of one Hessian–vector product and one preconditioner application on a square
//! n×n block (`cargo run --release -p rungs-solve --example hv_timing -- 5`).
use std::path::Path;
use std::time::Instant;

use rungs_lattice::{CompactLevel, Lattice};
use rungs_solve::big::model::Model;

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let n: usize = std::env::args().nth(1).map_or(Ok(5), |s| s.parse())?;
    let name = format!("block{n}x{n}");
    let lattice = Lattice::from_file(
        &Path::new(env!("CARGO_MANIFEST_DIR")).join("../../lattices/square.yaml"),
    )?
    .with_block_level(&name, [n, n, 1])?;
    let t0 = Instant::now();
    let level = CompactLevel::build(&lattice, &name)?;
    let t1 = Instant::now();
    let mut model = Model::new(&level, 2.3, 0.0);
    let x = vec![0.0; level.len()];
    let mut g = vec![0.0; level.len()];
    let t2 = Instant::now();
    model.evaluate(&x, Some(&mut g), None).ok_or("infeasible")?;
    let t3 = Instant::now();
    let v: Vec<f64> = (0..level.len()).map(|k| (k as f64).sin()).collect();
    let mut out = vec![0.0; level.len()];
    let reps = 3;
    for _ in 0..reps {
        model.hessian_vector(&v, &mut out);
    }
    let t4 = Instant::now();
    for _ in 0..reps {
        model.precondition(&v, &mut out);
    }
    let t5 = Instant::now();
    // One parity only (the odd sector of a Tc probe): half transforms at h = 0.
    let odd: Vec<f64> = v
        .iter()
        .enumerate()
        .map(|(k, x)| if level.is_odd(k) { *x } else { 0.0 })
        .collect();
    for _ in 0..reps {
        model.hessian_vector(&odd, &mut out);
    }
    let t6 = Instant::now();
    // A fingerprint of the last product, to compare code paths.
    let check: f64 = out
        .iter()
        .enumerate()
        .map(|(k, o)| o * (k as f64 + 1.0).sqrt())
        .sum();
    println!("fingerprint of H·v on one parity: {check:.15e}");
    println!(
        "{name}: {} orbits ({} translation classes); build {:.2} s, model {:.2} s, F+grad {:.3} s, H·v {:.3} s, M⁻¹·v {:.3} s, H·v on one parity {:.3} s",
        level.len(),
        level.translation_classes(),
        (t1 - t0).as_secs_f64(),
        (t2 - t1).as_secs_f64(),
        (t3 - t2).as_secs_f64(),
        (t4 - t3).as_secs_f64() / reps as f64,
        (t5 - t4).as_secs_f64() / reps as f64,
        (t6 - t5).as_secs_f64() / reps as f64,
    );
    Ok(())
}

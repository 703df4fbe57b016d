//! A 41-point temperature sweep of the square 4×4 block at h = 0 with the matrix-free
//! symmetric thermodynamics (`cargo run --release -p rungs-solve --example
//! sweep_block4`): T = 3.0 down to 2.0, warm-started point to point, m U F S C χ each.
use std::path::Path;
use std::time::Instant;

use rungs_lattice::{CompactLevel, Lattice};
use rungs_solve::big::thermo::SymmetricEngine;

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let lattice = Lattice::from_file(
        &Path::new(env!("CARGO_MANIFEST_DIR")).join("../../lattices/square.yaml"),
    )?;
    let start = Instant::now();
    let level = CompactLevel::build(&lattice, "block4")?;
    let mut engine = SymmetricEngine::new(&level);
    let mut warm = None;
    println!("      T         m           U           F           S           C          chi");
    for k in 0..41 {
        let t = 3.0 - 0.025 * k as f64;
        let (o, state) = engine.observables(t, 0.0, warm.as_ref())?;
        println!(
            "{t:7.3} {:11.6} {:11.6} {:11.6} {:11.6} {:11.6} {:11.4}",
            o.magnetization, o.energy, o.free_energy, o.entropy, o.specific_heat, o.susceptibility
        );
        warm = Some(state);
    }
    println!("41 points in {:.1} s", start.elapsed().as_secs_f64());
    Ok(())
}

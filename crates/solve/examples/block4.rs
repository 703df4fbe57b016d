//! Tc of the square 4×4 block, matrix-free (`cargo run --release -p rungs-solve
//! --example block4`), with no hint from smaller levels: what `rungs tc --levels block4`
//! does. Prints Tc, χ̄ and the time; `/usr/bin/time -v` around it gives the peak memory.
use std::path::Path;
use std::time::Instant;

use rungs_lattice::{CompactLevel, Lattice};
use rungs_solve::big::critical_temperature_compact;
use rungs_solve::TcOptions;

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let name = std::env::args().nth(1).unwrap_or_else(|| "block4".into());
    let lattice = Lattice::from_file(
        &Path::new(env!("CARGO_MANIFEST_DIR")).join("../../lattices/square.yaml"),
    )?;
    let lattice = match name.strip_prefix("block") {
        Some(n) if !lattice.level_specs().iter().any(|l| l.name == name) => {
            let n: usize = n.parse()?;
            lattice.with_block_level(&name, [n, n, 1])?
        }
        _ => lattice,
    };
    let t0 = Instant::now();
    let level = CompactLevel::build(&lattice, &name)?;
    let t1 = Instant::now();
    let cp = critical_temperature_compact(&lattice, &level, TcOptions::default())?;
    println!(
        "{name}: {} orbits, build {:.2} s; Tc {:?} amplitude {:?} in {:.2} s",
        level.len(),
        (t1 - t0).as_secs_f64(),
        cp.tc,
        cp.amplitude,
        t1.elapsed().as_secs_f64()
    );
    Ok(())
}

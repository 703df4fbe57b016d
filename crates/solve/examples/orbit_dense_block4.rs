//! Tc of the square 4×4 block on the dense orbit path
//! (`cargo run --release -p rungs-solve --example orbit_dense_block4`), started from the
//! 3×3 block's Tc as the long validation `square_block4_tc_on_both_big_paths` does: the
//! check of the matrix-free `block4` example by an independent method. Prints both Tc
//! to 15 digits, χ̄ and the time; `/usr/bin/time -v` around it gives the peak memory.
use std::path::Path;
use std::time::Instant;

use rungs_lattice::{Lattice, Level};
use rungs_solve::big::critical_temperature_orbits_dense;
use rungs_solve::{critical_temperature, TcOptions};

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let lattice = Lattice::from_file(
        &Path::new(env!("CARGO_MANIFEST_DIR")).join("../../lattices/square.yaml"),
    )?;
    let clock = Instant::now();
    let block3 = Level::build(&lattice, "block3")?;
    let b3 = critical_temperature(&lattice, &block3, TcOptions::default())?
        .tc
        .ok_or("no Tc for the 3×3 block")?;
    let level = Level::build(&lattice, "block4")?;
    let cp = critical_temperature_orbits_dense(&lattice, &level, TcOptions::default(), Some(b3))?;
    let tc = cp.tc.ok_or("no Tc for the 4×4 block")?;
    println!(
        "block3 Tc {b3:.15}; block4 dense orbits Tc {tc:.15} amplitude {:?} in {:.1} s",
        cp.amplitude,
        clock.elapsed().as_secs_f64()
    );
    Ok(())
}

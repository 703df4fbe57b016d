//! Tc of the square 4×4 block (development aid; `cargo run --release -p rungs-solve
//! --example block4`). Starts below the 3×3 block's Tc, as `rungs tc` and `ladder` do.
use std::path::Path;
use std::time::Instant;

use rungs_lattice::{Lattice, Level};
use rungs_solve::{critical_temperature, TcOptions};

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let lattice = Lattice::from_file(
        &Path::new(env!("CARGO_MANIFEST_DIR")).join("../../lattices/square.yaml"),
    )?;
    let t0 = Instant::now();
    let b3 = critical_temperature(
        &lattice,
        &Level::build(&lattice, "block3")?,
        TcOptions::default(),
    )?;
    let t1 = Instant::now();
    let lv = Level::build(&lattice, "block4")?;
    let t2 = Instant::now();
    let options = TcOptions {
        start_below: b3.tc,
        ..TcOptions::default()
    };
    let cp = critical_temperature(&lattice, &lv, options)?;
    println!(
        "block3 {:?} in {:.3} s; block4 build {:.2} s; block4 tc {:?} amplitude {:?} in {:.1} s",
        b3.tc,
        (t1 - t0).as_secs_f64(),
        (t2 - t1).as_secs_f64(),
        cp.tc,
        cp.amplitude,
        t2.elapsed().as_secs_f64()
    );
    Ok(())
}

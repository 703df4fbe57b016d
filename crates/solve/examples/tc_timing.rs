//! Quick timing of Tc per level (development aid; criterion benches are authoritative).
use std::path::Path;
use std::time::Instant;

use rungs_lattice::{Lattice, Level};
use rungs_solve::{critical_temperature, TcOptions};

fn main() -> Result<(), Box<dyn std::error::Error>> {
    for (stem, level) in [
        ("square", "plaquette"),
        ("simple_cubic", "cube"),
        ("square", "block3"),
        ("triangular", "triangles"),
    ] {
        let lattice = Lattice::from_file(
            &Path::new(env!("CARGO_MANIFEST_DIR"))
                .join("../../lattices")
                .join(format!("{stem}.yaml")),
        )?;
        let t0 = Instant::now();
        let lv = Level::build(&lattice, level)?;
        let t1 = Instant::now();
        let cp = critical_temperature(&lattice, &lv, TcOptions::default())?;
        println!(
            "{stem}/{level}: vars {} build {:.2} ms, tc {:?} in {:.2} ms",
            lv.variables.len(),
            (t1 - t0).as_secs_f64() * 1e3,
            cp.tc,
            t1.elapsed().as_secs_f64() * 1e3
        );
    }
    Ok(())
}

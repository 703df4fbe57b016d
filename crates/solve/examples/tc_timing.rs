//! Tc of one shipped lattice and level, repeated, with the mean time per Tc
//! (`cargo run --release -p rungs-solve --example tc_timing -- simple_cubic cube 200`).
//! Building the level is included, as in the `tc` criterion benchmark. With a count of 1
//! it is the run to hand to `valgrind --tool=callgrind`, whose instruction counts do not
//! depend on the machine's load. With the level `all`, every level of the lattice once,
//! Tc to full precision (to compare two builds).
use std::path::Path;
use std::time::Instant;

use rungs_lattice::{Lattice, Level};
use rungs_solve::{critical_temperature, TcOptions};

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let mut args = std::env::args().skip(1);
    let stem = args.next().unwrap_or_else(|| "simple_cubic".into());
    let name = args.next().unwrap_or_else(|| "cube".into());
    let count: usize = args.next().map_or(Ok(100), |s| s.parse())?;
    let lattice = Lattice::from_file(
        &Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("../../lattices")
            .join(format!("{stem}.yaml")),
    )?;
    if name == "all" {
        for name in Level::names(&lattice) {
            let level = Level::build(&lattice, &name)?;
            let clock = Instant::now();
            let cp = critical_temperature(&lattice, &level, TcOptions::default());
            let tc = cp.map(|cp| cp.tc.map_or("none".to_string(), |t| format!("{t:.15}")));
            println!(
                "{stem}/{name}: Tc {} ({:.1} ms)",
                tc.unwrap_or_else(|e| format!("error: {e}")),
                1e3 * clock.elapsed().as_secs_f64()
            );
        }
        return Ok(());
    }
    let clock = Instant::now();
    let mut tc = None;
    for _ in 0..count.max(1) {
        let level = Level::build(&lattice, &name)?;
        tc = critical_temperature(&lattice, &level, TcOptions::default())?.tc;
    }
    let per = clock.elapsed().as_secs_f64() / count.max(1) as f64;
    println!("{stem}/{name}: Tc {tc:?}, {:.3} ms per Tc", 1e3 * per);
    Ok(())
}

//! Where one dense Tc search spends its time: the milliseconds between the stages the
//! search reports (set-up, each step-down and root probe, the wavevector checks, the
//! ordering and amplitude), after `warm` untimed searches
//! (`cargo run --release -p rungs-solve --example tc_stages -- simple_cubic cube 20`;
//! the first argument is a shipped lattice's stem or a path to a `.yaml` file).
use std::path::Path;
use std::sync::Mutex;
use std::time::Instant;

use rungs_lattice::{Lattice, Level};
use rungs_solve::{critical_temperature_observed, TcOptions};

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let mut args = std::env::args().skip(1);
    let stem = args.next().unwrap_or_else(|| "simple_cubic".into());
    let name = args.next().unwrap_or_else(|| "cube".into());
    let warm: usize = args.next().map_or(Ok(20), |s| s.parse())?;
    let path = if stem.ends_with(".yaml") {
        Path::new(&stem).to_path_buf()
    } else {
        Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("../../lattices")
            .join(format!("{stem}.yaml"))
    };
    let lattice = Lattice::from_file(&path)?;
    for _ in 0..warm {
        let level = Level::build(&lattice, &name)?;
        critical_temperature_observed(&lattice, &level, TcOptions::default(), &|_| {})?;
    }
    let clock = Instant::now();
    let log = Mutex::new(Vec::new());
    let level = Level::build(&lattice, &name)?;
    let built = clock.elapsed().as_secs_f64();
    let cp = critical_temperature_observed(&lattice, &level, TcOptions::default(), &|s| {
        if let Ok(mut log) = log.lock() {
            log.push((clock.elapsed().as_secs_f64(), s.to_string()));
        }
    })?;
    let end = clock.elapsed().as_secs_f64();
    println!("level built in {:.3} ms", 1e3 * built);
    let mut previous = built;
    let log = log.into_inner().unwrap_or_default();
    for (t, stage) in log
        .iter()
        .chain([(end, format!("end: Tc {:?}", cp.tc))].iter())
    {
        println!("{:10.3} ms (+{:.3}) {stage}", 1e3 * t, 1e3 * (t - previous));
        previous = *t;
    }
    Ok(())
}

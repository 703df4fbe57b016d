use rungs_lattice::{Lattice, Level};
use rungs_solve::{critical_temperature_observed, TcOptions};
use std::path::Path;
use std::sync::Mutex;
use std::time::Instant;
fn main() -> Result<(), Box<dyn std::error::Error>> {
    let mut args = std::env::args().skip(1);
    let stem = args.next().unwrap_or_else(|| "simple_cubic".into());
    let name = args.next().unwrap_or_else(|| "cube".into());
    let lattice = if stem.ends_with(".yaml") {
        Lattice::from_file(Path::new(&stem))?
    } else {
        Lattice::from_file(
            &Path::new(env!("CARGO_MANIFEST_DIR"))
                .join("../../lattices")
                .join(format!("{stem}.yaml")),
        )?
    };
    let warm: usize = args.next().map_or(20, |s| s.parse().unwrap());
    for _ in 0..warm {
        let level = Level::build(&lattice, &name)?;
        critical_temperature_observed(&lattice, &level, TcOptions::default(), &|_| {})?;
    }
    let clock = Instant::now();
    let log = Mutex::new(Vec::new());
    let level = Level::build(&lattice, &name)?;
    let t0 = clock.elapsed().as_secs_f64();
    let cp = critical_temperature_observed(&lattice, &level, TcOptions::default(), &|s: &str| {
        log.lock()
            .unwrap()
            .push((clock.elapsed().as_secs_f64(), s.to_string()));
    })?;
    let end = clock.elapsed().as_secs_f64();
    println!("build {:.3} ms", t0 * 1e3);
    let mut prev = t0;
    for (t, s) in log.lock().unwrap().iter() {
        println!("{:8.3} (+{:.3}) {}", t * 1e3, (t - prev) * 1e3, s);
        prev = *t;
    }
    println!(
        "{:8.3} (+{:.3}) end  Tc {:?}",
        end * 1e3,
        (end - prev) * 1e3,
        cp.tc
    );
    Ok(())
}

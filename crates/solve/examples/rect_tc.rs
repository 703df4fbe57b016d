//! Tc of an n×m block of a shipped square-net lattice on the region fixed point:
//! `cargo run --release -p rungs-solve --example rect_tc -- 4 4 [start] [lattice]`
//! (lattice: a file stem in lattices/, `square` unless given).
use rungs_lattice::Lattice;
use rungs_solve::big::rect::{critical_temperature_rect, RectBlock};
use rungs_solve::tc::TcOptions;

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let args: Vec<String> = std::env::args().collect();
    let c: usize = args.get(1).map_or(Ok(4), |s| s.parse())?;
    let r: usize = args.get(2).map_or(Ok(c), |s| s.parse())?;
    let start: f64 = args.get(3).map_or(Ok(2.36), |s| s.parse())?;
    let stem = args.get(4).map_or("square", String::as_str);
    let path = format!("{}/../../lattices/{stem}.yaml", env!("CARGO_MANIFEST_DIR"));
    let name = format!("block{c}x{r}");
    let lattice =
        Lattice::from_file(std::path::Path::new(&path))?.with_block_level(&name, [c, r, 1])?;
    let block = RectBlock::detect(&lattice, &name).ok_or("not a rectangle")?;
    let clock = std::time::Instant::now();
    let observe = |m: &str| eprintln!("{:8.1} s  {m}", clock.elapsed().as_secs_f64());
    let cp = critical_temperature_rect(
        &lattice,
        &name,
        block,
        TcOptions::default(),
        start,
        &observe,
    )?;
    println!(
        "{name}: Tc = {:.12} chi_bar = {:?} ({:.1} s)",
        cp.tc.unwrap_or(f64::NAN),
        cp.amplitude,
        clock.elapsed().as_secs_f64()
    );
    Ok(())
}

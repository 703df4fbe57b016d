//! Products with H spent per Tc probe of a square n×n block (`cargo run --release -p
//! rungs-solve --example probe_count -- 4 2.35 2.33 2.32`): for each temperature given,
//! the paramagnet's Newton–CG products (warm-started from the temperatures before) and
//! the LOBPCG products of the odd-sector eigenvalue, with λ and the wall time.
use std::path::Path;
use std::time::Instant;

use rungs_lattice::{CompactLevel, Lattice};
use rungs_solve::big::SymmetricProbe;

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let mut args = std::env::args().skip(1);
    let n: usize = args.next().map_or(Ok(4), |s| s.parse())?;
    let temperatures = args
        .map(|s| s.parse::<f64>())
        .collect::<Result<Vec<_>, _>>()?;
    let name = format!("block{n}x{n}");
    let lattice = Lattice::from_file(
        &Path::new(env!("CARGO_MANIFEST_DIR")).join("../../lattices/square.yaml"),
    )?
    .with_block_level(&name, [n, n, 1])?;
    let level = CompactLevel::build(&lattice, &name)?;
    let mut probe = SymmetricProbe::new(&level);
    for t in temperatures {
        let clock = Instant::now();
        let before = probe.products;
        probe.paramagnet(t)?;
        let newton = probe.products - before;
        let value = probe.probe(t)?.value;
        println!(
            "T {t}: λ {value:.6e}, Newton products {newton}, LOBPCG products {}, {:.2} s",
            probe.products - before - newton,
            clock.elapsed().as_secs_f64()
        );
    }
    Ok(())
}

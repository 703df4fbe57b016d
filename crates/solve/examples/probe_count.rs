//! Products with H spent per Tc probe of a square n×n block (`cargo run --release -p
//! rungs-solve --example probe_count -- 4 2.35 2.33 2.32`): for each temperature given,
//! the paramagnet's Newton–CG products (warm-started from the temperatures before) and
//! the LOBPCG products of the odd-sector eigenvalue, with λ and the wall time. `p2.5`
//! solves the paramagnet at 2.5 only; `r2` adds two probes where the secant through the last
//! two probes (kept inside the bracket) puts Tc, and says where Tc lies.
use std::path::Path;
use std::time::Instant;

use rungs_lattice::{CompactLevel, Lattice};
use rungs_solve::big::SymmetricProbe;

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let mut args = std::env::args().skip(1);
    let n: usize = args.next().map_or(Ok(4), |s| s.parse())?;
    let temperatures: Vec<String> = args.collect();
    let name = format!("block{n}x{n}");
    let lattice = Lattice::from_file(
        &Path::new(env!("CARGO_MANIFEST_DIR")).join("../../lattices/square.yaml"),
    )?
    .with_block_level(&name, [n, n, 1])?;
    let level = CompactLevel::build(&lattice, &name)?;
    let mut probe = SymmetricProbe::new(&level);
    // (T, λ) of the probes so far.
    let mut probed: Vec<(f64, f64)> = Vec::new();
    let mut queue: std::collections::VecDeque<String> = temperatures.into();
    while let Some(arg) = queue.pop_front() {
        // `r3`: three more probes, each where the secant through the last two crosses
        // zero (regula falsi when it leaves the bracket).
        if let Some(rest) = arg.strip_prefix('r') {
            let count: usize = rest.parse()?;
            let above = probed
                .iter()
                .filter(|p| p.1 > 0.0)
                .min_by(|a, b| a.0.total_cmp(&b.0));
            let below = probed
                .iter()
                .filter(|p| p.1 <= 0.0)
                .max_by(|a, b| a.0.total_cmp(&b.0));
            let (Some(&(ta, la)), Some(&(tb, lb))) = (above, below) else {
                println!("no sign change among the probes: nothing to refine");
                continue;
            };
            // The secant through the last two probes, kept inside the bracket.
            let (t1, l1) = probed[probed.len() - 1];
            let (t0, l0) = probed[probed.len() - 2];
            let secant = t1 - l1 * (t1 - t0) / (l1 - l0);
            let t = if secant > tb && secant < ta {
                secant
            } else {
                tb + (ta - tb) * (-lb) / (la - lb)
            };
            println!("Tc between {tb} and {ta}; the secant puts it at {t:.9}");
            if count > 0 {
                queue.push_front(format!("r{}", count - 1));
                queue.push_front(format!("{t}"));
            }
            continue;
        }
        // `p2.5`: the paramagnet only (a continuation step), no eigenvalue.
        let (only_paramagnet, t) = match arg.strip_prefix('p') {
            Some(rest) => (true, rest.parse::<f64>()?),
            None => (false, arg.parse::<f64>()?),
        };
        let clock = Instant::now();
        let before = probe.products;
        probe.paramagnet(t)?;
        let newton = probe.products - before;
        if only_paramagnet {
            println!(
                "T {t}: paramagnet, Newton products {newton}, {:.2} s",
                clock.elapsed().as_secs_f64()
            );
            continue;
        }
        let value = probe.probe(t)?.value;
        probed.push((t, value));
        println!(
            "T {t}: λ {value:.6e}, Newton products {newton}, LOBPCG products {}, {:.2} s",
            probe.products - before - newton,
            clock.elapsed().as_secs_f64()
        );
    }
    Ok(())
}

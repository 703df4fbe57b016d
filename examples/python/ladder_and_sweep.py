"""Load a lattice, climb the ladder, sweep two levels; plot if matplotlib is installed.

    pip install ./python
    python examples/python/ladder_and_sweep.py [LATTICE] [--plot FILE.png]

It prints the ladder and a table of the sweep and, when matplotlib is installed, draws
|m| and C against T into FILE.png (default: ladder_and_sweep.png). The numbers are those of `rungs ladder` and `rungs sweep` on the same file.
"""

from __future__ import annotations

import argparse
from pathlib import Path

import numpy as np

import rungs

ROOT = Path(__file__).resolve().parents[2]


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("lattice", nargs="?", default=str(ROOT / "lattices" / "square.yaml"))
    parser.add_argument(
        "--plot", metavar="FILE", default="ladder_and_sweep.png",
        help="figure of |m| and C against T, drawn when matplotlib is installed",
    )
    args = parser.parse_args()

    lattice = rungs.Lattice.from_file(args.lattice)
    print(f"{lattice.name}: {lattice.dimension}D, levels {', '.join(lattice.levels)}")

    # The ladder: each rung's Tc against the reference, and the extrapolations.
    ladder = rungs.ladder(lattice)
    reference = ladder["reference"]
    print(f"reference Tc: {reference['tc']:.6f} ({reference['kind']})" if reference else "no reference Tc")
    for rung in ladder["levels"]:
        tc = "—" if rung["tc"] is None else f"{rung['tc']:.6f}"
        dev = "" if rung["deviation"] is None else f"  {100 * rung['deviation']:+.2f} %"
        print(f"  {rung['level']:<12} {rung['max_cluster_sites']:>3} sites  Tc = {tc}{dev}")
    for e in ladder["extrapolations"]:
        print(f"  extrapolated ({e['method']}): Tc = {e['tc']:.4f} ± {e['tc_error']:.4f}")

    # A sweep of the two lowest cluster levels, cooling through their Tc.
    levels = lattice.levels[:2]
    top = max(r["tc"] for r in ladder["levels"] if r["tc"] is not None)
    temps = np.round(np.linspace(1.2 * top, 0.5 * top, 15), 6)
    data = rungs.sweep(lattice, levels, temps)
    print(f"\n{'level':<10} {'T':>8} {'m':>9} {'C':>9}")
    for level, t, m, c in zip(data["level"], data["temperature"], data["magnetization"], data["specific_heat"]):
        print(f"{level:<10} {t:>8.4f} {m:>9.5f} {c:>9.5f}")

    try:
        import matplotlib

        matplotlib.use("Agg")
        import matplotlib.pyplot as plt
    except ImportError:
        print("\nmatplotlib is not installed: no figure (pip install matplotlib)")
        return
    fig, (ax_m, ax_c) = plt.subplots(1, 2, figsize=(9, 3.5))
    for level in levels:
        mask = data["level"] == level
        ax_m.plot(data["temperature"][mask], np.abs(data["magnetization"][mask]), label=level)
        ax_c.plot(data["temperature"][mask], data["specific_heat"][mask], label=level)
    if reference:
        for ax in (ax_m, ax_c):
            ax.axvline(reference["tc"], color="grey", linestyle=":", label="reference Tc")
    ax_m.set(xlabel="T", ylabel="|m| per site")
    ax_c.set(xlabel="T", ylabel="C per site")
    ax_m.legend()
    fig.tight_layout()
    fig.savefig(args.plot)
    print(f"\nwrote {args.plot}")


if __name__ == "__main__":
    main()

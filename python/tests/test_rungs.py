"""The Python package against the `rungs` command and against exact results.

The numbers must be the command's: the same library computes both, so Tc's, sweeps and
ladders agree to rounding of the JSON/CSV text, and Monte Carlo with the same seed gives
the same numbers.
"""

from __future__ import annotations

import math
import threading
import time

import numpy as np
import pytest

import rungs

ONSAGER = 2.0 / math.log(1.0 + math.sqrt(2.0))  # Onsager 1944, Phys. Rev. 65, 117


def close(a, b, rel=1e-9):
    if a is None or b is None:
        return a is b
    return math.isclose(a, b, rel_tol=rel, abs_tol=1e-12)


# --- Lattice ---------------------------------------------------------------------------


def test_lattice_from_file(lattices):
    square = rungs.Lattice.from_file(lattices / "square.yaml")
    assert square.name == "square"
    assert square.dimension == 2
    assert square.levels[:3] == ["site", "pair", "plaquette"]
    assert "square" in repr(square)


def test_lattice_from_yaml():
    chain = rungs.Lattice.from_yaml(
        "name: chain\ndimension: 1\nvectors: [[1]]\nbasis: [{name: a}]\n"
        "couplings: {J: 1}\nbonds: [{from: a, to: a, cell: [1], coupling: J}]\n"
    )
    assert (chain.name, chain.dimension, chain.levels) == ("chain", 1, ["site", "pair"])


def test_bad_input_raises_lattice_error_with_the_cli_message(cli, tmp_path):
    bad = tmp_path / "bad.yaml"
    bad.write_text("name: x\ndimension: 2\n")
    with pytest.raises(rungs.LatticeError) as caught:
        rungs.Lattice.from_file(bad)
    assert isinstance(caught.value, ValueError)
    out = cli.run(["inspect", str(bad)])
    assert out.returncode == 2
    assert out.stderr.strip() == f"rungs: error: {caught.value}"


def test_unknown_level_is_a_lattice_error_with_the_cli_message(cli, lattices):
    square = rungs.Lattice.from_file(lattices / "square.yaml")
    with pytest.raises(rungs.LatticeError) as caught:
        rungs.tc(square, levels=["plaquete"])
    out = cli.run(["tc", "lattices/square.yaml", "--levels", "plaquete"])
    assert out.returncode == 2
    assert out.stderr.strip() == f"rungs: error: {caught.value}"


def test_bad_arguments_are_lattice_errors(lattices):
    square = rungs.Lattice.from_file(lattices / "square.yaml")
    with pytest.raises(rungs.LatticeError):
        rungs.sweep(square, ["site"], [-1.0])
    with pytest.raises(rungs.LatticeError):
        rungs.tc(square, supercell=[2])
    with pytest.raises(rungs.LatticeError):
        rungs.mc(square, [], [2.0])
    with pytest.raises(rungs.LatticeError):
        rungs.Lattice.from_file(lattices / "no-such-file.yaml")


def test_convergence_error_is_a_runtime_error():
    assert issubclass(rungs.ConvergenceError, RuntimeError)
    assert issubclass(rungs.LatticeError, ValueError)


# --- tc --------------------------------------------------------------------------------


def test_tc_exact_rungs_on_the_square_lattice(lattices):
    square = rungs.Lattice.from_file(lattices / "square.yaml")
    rows = rungs.tc(square, levels=["site", "pair"])
    # Mean field Tc = zJ = 4 (Weiss 1907); Bethe Tc = 2/ln(z/(z-2)) = 2/ln 2
    # (Bethe 1935, Proc. R. Soc. A 150, 552).
    assert [r["level"] for r in rows] == ["site", "pair"]
    assert math.isclose(rows[0]["tc"], 4.0, rel_tol=1e-7)
    assert math.isclose(rows[1]["tc"], 2.0 / math.log(2.0), rel_tol=1e-7)
    # deviation from Onsager's exact Tc.
    assert math.isclose(rows[1]["deviation"], rows[1]["tc"] / ONSAGER - 1.0, rel_tol=1e-9)


@pytest.mark.parametrize(
    "lattice",
    ["square.yaml", "triangular.yaml", "honeycomb.yaml", "chain.yaml", "kagome.yaml"],
)
def test_tc_matches_the_cli(cli, lattices, lattice):
    lat = rungs.Lattice.from_file(lattices / lattice)
    levels = [n for n in lat.levels if n in ("site", "pair")] + [
        n for n in lat.levels if n not in ("site", "pair")
    ][:1]
    rows = rungs.tc(lat, levels=levels)
    doc = cli.json(["tc", f"lattices/{lattice}", "--levels", ",".join(levels)])
    assert len(rows) == len(doc["levels"])
    for py, sh in zip(rows, doc["levels"]):
        assert set(py) == set(sh)
        for key in ("level", "max_cluster_sites", "wavevector", "supercell", "note"):
            assert py[key] == sh[key], key
        for key in ("tc", "deviation", "amplitude"):
            assert close(py[key], sh[key]), (key, py[key], sh[key])


def test_tc_on_a_supercell_and_in_a_field_match_the_cli(cli, lattices):
    square = rungs.Lattice.from_file(lattices / "square.yaml")
    rows = rungs.tc(square, levels=["pair"], supercell=[2, 1], field=0.0)
    doc = cli.json(["tc", "lattices/square.yaml", "--levels", "pair", "--supercell", "2x1"])
    assert close(rows[0]["tc"], doc["levels"][0]["tc"])
    # Enlarging the cell does not change the model: Bethe's 2/ln 2 again.
    assert math.isclose(rows[0]["tc"], 2.0 / math.log(2.0), rel_tol=1e-7)
    # A uniform field: the ferromagnet has no transition (common practice), and the
    # rows say so as the command's do.
    rows = rungs.tc(square, levels=["site", "pair"], field=0.5)
    doc = cli.json(["tc", "lattices/square.yaml", "--levels", "site,pair", "--field", "0.5"])
    assert [r["tc"] for r in rows] == [r["tc"] for r in doc["levels"]] == [None, None]
    assert [r["note"] for r in rows] == [r["note"] for r in doc["levels"]]


# --- sweep -----------------------------------------------------------------------------


def test_sweep_is_numpy_arrays_keyed_by_the_csv_columns(cli, lattices):
    square = rungs.Lattice.from_file(lattices / "square.yaml")
    temps = [3.0, 2.5, 2.0]
    out = rungs.sweep(square, ["site", "pair"], temps, fields=(0.0, 0.1))
    rows = cli.csv(
        ["sweep", "lattices/square.yaml", "--levels", "site,pair",
         "--temps", "3,2.5,2", "--fields", "0,0.1"]
    )
    assert list(out) == rungs.COLUMNS == list(rows[0])
    assert all(isinstance(v, np.ndarray) for v in out.values())
    assert out["level"].dtype.kind == "U"
    assert len(out["temperature"]) == len(rows) == 12
    assert list(out["level"]) == [r["level"] for r in rows]
    for column in rungs.COLUMNS[1:]:
        np.testing.assert_allclose(
            out[column], [float(r[column]) for r in rows], rtol=1e-9, atol=1e-12, err_msg=column
        )


def test_sweep_mean_field_magnetisation(lattices):
    square = rungs.Lattice.from_file(lattices / "square.yaml")
    out = rungs.sweep(square, ["site"], [5.0, 2.0])
    m = out["magnetization"]
    # Mean field on the square lattice: m = tanh(4m/T) (Weiss 1907), no order above 4.
    assert abs(m[0]) < 1e-9
    assert abs(abs(m[1]) - math.tanh(2.0 * abs(m[1]))) < 1e-9 and abs(m[1]) > 0.95


def test_sweep_pair_is_exact_on_the_chain(lattices):
    chain = rungs.Lattice.from_file(lattices / "chain.yaml")
    temps = np.linspace(0.5, 3.0, 6)
    out = rungs.sweep(chain, ["pair"], temps)
    # The Bethe (pair) level is exact on a chain: U = -J tanh(J/T) at h = 0
    # (Ising 1925, Z. Phys. 31, 253).
    np.testing.assert_allclose(out["energy"], -np.tanh(1.0 / temps), rtol=1e-8)


# --- ladder ----------------------------------------------------------------------------


def test_ladder_matches_the_cli(cli, lattices):
    square = rungs.Lattice.from_file(lattices / "square.yaml")
    py = rungs.ladder(square, up_to=4)
    sh = cli.json(["ladder", "lattices/square.yaml", "--up-to", "4"])
    assert set(py) == set(sh)
    assert py["reference"] == sh["reference"]
    assert math.isclose(py["reference"]["tc"], ONSAGER, rel_tol=1e-12)
    assert [r["level"] for r in py["levels"]] == [r["level"] for r in sh["levels"]]
    for a, b in zip(py["levels"], sh["levels"]):
        assert close(a["tc"], b["tc"]) and close(a["amplitude"], b["amplitude"])
    assert [e["method"] for e in py["extrapolations"]] == [e["method"] for e in sh["extrapolations"]]
    for a, b in zip(py["extrapolations"], sh["extrapolations"]):
        assert close(a["tc"], b["tc"], rel=1e-7)
    assert py["notes"] == sh["notes"]


# --- mc --------------------------------------------------------------------------------


def test_mc_matches_the_cli_with_the_same_seed(cli, lattices):
    square = rungs.Lattice.from_file(lattices / "square.yaml")
    py = rungs.mc(square, [4, 6], [2.0, 2.5], sweeps=300, warmup=50, seed=7)
    sh = cli.json(
        ["mc", "lattices/square.yaml", "--sizes", "4,6", "--temps", "2,2.5",
         "--sweeps", "300", "--warmup", "50", "--seed", "7"]
    )
    assert set(py) == set(sh)
    assert py["seed"] == 7 and py["sizes"] == [4, 6]
    for a, b in zip(py["points"], sh["points"]):
        assert set(a) == set(b)
        for key in ("energy", "abs_magnetization", "binder", "specific_heat", "susceptibility"):
            assert close(a[key], b[key]), key
    # Far below Onsager's Tc the spins are nearly aligned.
    low = rungs.mc(square, [4], [1.2], sweeps=300, warmup=50)
    assert low["points"][0]["abs_magnetization"] > 0.9


# --- the GIL ---------------------------------------------------------------------------


def test_the_gil_is_released_during_a_computation(lattices):
    cubic = rungs.Lattice.from_file(lattices / "simple_cubic.yaml")
    ticks = []
    done = threading.Event()

    def compute():
        try:
            rungs.mc(cubic, [8], [4.5, 4.6], sweeps=20_000, warmup=500)
        finally:
            done.set()

    worker = threading.Thread(target=compute)
    worker.start()
    # A pure-Python loop in this thread keeps running while the worker computes.
    while not done.is_set():
        ticks.append(time.perf_counter())
        time.sleep(0.001)
    worker.join()
    assert len(ticks) > 20, len(ticks)

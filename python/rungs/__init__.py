"""rungs: Ising-type lattice spin models beyond mean field, from Python.

Read a lattice (a YAML file, format in docs/lattice-format.md), then climb the ladder of
approximations: single-site mean field, pair (Bethe), Kikuchi cluster-variation levels.
Model and units: spins s = +-1, H = -sum_bonds J s_i s_j - h sum_i s_i, k_B = 1,
temperatures in units of the file's couplings, every quantity per lattice site.

The numbers are those of the ``rungs`` command: ``tc``, ``ladder`` and ``mc`` return
the dicts of ``rungs tc|ladder|mc --format json`` (same keys, ``None`` where the JSON has
``null``), and ``sweep`` returns one NumPy array per CSV column of ``rungs sweep``.
Computations release the GIL, so threads can run several at once.

>>> import rungs
>>> square = rungs.Lattice.from_file("lattices/square.yaml")   # doctest: +SKIP
>>> [row["tc"] for row in rungs.tc(square, levels=["site", "pair"])]   # doctest: +SKIP
[4.0, 2.885390081777927]
"""

from __future__ import annotations

import json
from typing import Any, Dict, List, Optional, Sequence

import numpy as np

from ._rungs import COLUMNS as _COLUMNS
from ._rungs import ConvergenceError, Lattice, LatticeError
from ._rungs import ladder_json as _ladder_json
from ._rungs import mc_json as _mc_json
from ._rungs import sweep_json as _sweep_json
from ._rungs import tc_json as _tc_json

__all__ = [
    "COLUMNS",
    "ConvergenceError",
    "Lattice",
    "LatticeError",
    "ladder",
    "mc",
    "sweep",
    "tc",
]

#: The CSV columns of ``rungs sweep``: the keys of :func:`sweep`'s result.
COLUMNS: List[str] = list(_COLUMNS)


def _floats(values: Sequence[float], what: str) -> List[float]:
    """``values`` as a list of floats (a scalar is one value)."""
    if np.ndim(values) == 0:
        values = [values]  # type: ignore[list-item]
    try:
        return [float(v) for v in np.asarray(values, dtype=float).ravel()]
    except (TypeError, ValueError) as e:
        raise LatticeError(f"{what}: {e}") from None


def _names(levels: Optional[Sequence[str]]) -> Optional[List[str]]:
    """Level names as a list (a single name is one level)."""
    if levels is None:
        return None
    if isinstance(levels, str):
        return [levels]
    return [str(n) for n in levels]


def tc(
    lattice: Lattice,
    levels: Optional[Sequence[str]] = None,
    field: Optional[float] = None,
    supercell: Optional[Sequence[int]] = None,
) -> List[Dict[str, Any]]:
    """The critical temperature at each level (default: every level, in ladder order).

    Returns the ``levels`` of ``rungs tc --format json``: one dict per level with
    ``level``, ``max_cluster_sites``, ``tc`` (``None`` without a transition),
    ``deviation`` from the reference, ``seconds``, ``wavevector``, ``supercell``,
    ``note`` and more. ``field`` defaults to the file's; ``supercell`` builds the levels
    on a larger cell (one factor per dimension).
    """
    report = json.loads(
        _tc_json(
            lattice,
            _names(levels),
            None if field is None else float(field),
            None if supercell is None else [int(n) for n in supercell],
        )
    )
    return report["levels"]


def sweep(
    lattice: Lattice,
    levels: Sequence[str],
    temps: Sequence[float],
    fields: Sequence[float] = (0.0,),
) -> Dict[str, np.ndarray]:
    """Equilibrium thermodynamics per site along a path, as ``rungs sweep`` computes it.

    Fields are the outer loop, temperatures follow in the order given (each point
    continues the branch of the one before: descending temperatures cool). Returns one
    NumPy array per CSV column of ``rungs sweep`` (:data:`COLUMNS`): ``level`` (str),
    ``temperature``, ``field``, ``magnetization``, ``energy``, ``free_energy``,
    ``entropy``, ``specific_heat``, ``susceptibility``, ``order_parameter``. Points the
    engine cannot report are left out, as in the command.
    """
    report = json.loads(
        _sweep_json(
            lattice,
            _names(levels) or [],
            _floats(temps, "temps"),
            _floats(fields, "fields"),
            None,
        )
    )
    points = report["points"]
    out: Dict[str, np.ndarray] = {}
    for column in COLUMNS:
        if column == "level":
            out[column] = np.array([p[column] for p in points], dtype=str)
        else:
            out[column] = np.array([p[column] for p in points], dtype=float)
    return out


def ladder(
    lattice: Lattice,
    up_to: Optional[int] = None,
    monte_carlo: bool = False,
    field: Optional[float] = None,
) -> Dict[str, Any]:
    """The ladder, as ``rungs ladder --format json``: every rung's Tc against the reference,
    the coherent-anomaly and inverse-size extrapolations, and notes.

    Keys: ``lattice``, ``dimension``, ``reference``, ``levels``, ``extrapolations``,
    ``notes``. ``up_to`` climbs to blocks of up to that many sites; ``monte_carlo``
    runs a Monte Carlo reference where no exact or file value exists (``--mc``).
    """
    return json.loads(
        _ladder_json(
            lattice,
            None if up_to is None else int(up_to),
            bool(monte_carlo),
            None if field is None else float(field),
        )
    )


def mc(
    lattice: Lattice,
    sizes: Sequence[int],
    temps: Sequence[float],
    sweeps: int = 10_000,
    warmup: int = 1_000,
    seed: int = 1,
) -> Dict[str, Any]:
    """Monte Carlo on L x ... x L tori, as ``rungs mc --format json`` (same defaults).

    Keys: ``lattice``, ``seed``, ``sizes``, ``points`` (one dict per size and
    temperature), ``tc_estimate`` (Binder-cumulant crossing, or ``None``) and
    ``definitions``. The same seed gives the same numbers.
    """
    if np.ndim(sizes) == 0:
        sizes = [sizes]  # type: ignore[list-item]
    if any(int(n) < 1 for n in sizes):
        raise LatticeError(f"Monte Carlo: sizes must be positive integers, got {list(sizes)}")
    return json.loads(
        _mc_json(
            lattice,
            [int(n) for n in sizes],
            _floats(temps, "temps"),
            int(sweeps),
            int(warmup),
            int(seed),
        )
    )

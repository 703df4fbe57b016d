"""Type stubs of the ``rungs`` package."""

from typing import Any, Dict, List, Optional, Sequence

import numpy as np

from ._rungs import ConvergenceError as ConvergenceError
from ._rungs import Lattice as Lattice
from ._rungs import LatticeError as LatticeError

COLUMNS: List[str]

def tc(
    lattice: Lattice,
    levels: Optional[Sequence[str]] = None,
    field: Optional[float] = None,
    supercell: Optional[Sequence[int]] = None,
) -> List[Dict[str, Any]]: ...
def sweep(
    lattice: Lattice,
    levels: Sequence[str],
    temps: Sequence[float],
    fields: Sequence[float] = (0.0,),
) -> Dict[str, np.ndarray]: ...
def ladder(
    lattice: Lattice,
    up_to: Optional[int] = None,
    monte_carlo: bool = False,
    field: Optional[float] = None,
) -> Dict[str, Any]: ...
def mc(
    lattice: Lattice,
    sizes: Sequence[int],
    temps: Sequence[float],
    sweeps: int = 10_000,
    warmup: int = 1_000,
    seed: int = 1,
) -> Dict[str, Any]: ...

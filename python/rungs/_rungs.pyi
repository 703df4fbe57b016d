"""Type stubs of the compiled extension ``rungs._rungs`` (see ``rungs/__init__.py``)."""

from os import PathLike
from typing import List, Optional, Union

COLUMNS: List[str]

class LatticeError(ValueError):
    """Bad input; the message is the ``rungs`` command's."""

class ConvergenceError(RuntimeError):
    """A computation that did not converge."""

class Lattice:
    """A validated lattice."""

    @staticmethod
    def from_file(path: Union[str, PathLike[str]]) -> Lattice: ...
    @staticmethod
    def from_yaml(text: str) -> Lattice: ...
    @property
    def name(self) -> str: ...
    @property
    def levels(self) -> List[str]: ...
    @property
    def dimension(self) -> int: ...
    @property
    def field(self) -> float: ...

def tc_json(
    lattice: Lattice,
    levels: Optional[List[str]] = None,
    field: Optional[float] = None,
    supercell: Optional[List[int]] = None,
) -> str: ...
def sweep_json(
    lattice: Lattice,
    levels: List[str],
    temps: List[float],
    fields: List[float],
    supercell: Optional[List[int]] = None,
) -> str: ...
def ladder_json(
    lattice: Lattice,
    up_to: Optional[int] = None,
    monte_carlo: bool = False,
    field: Optional[float] = None,
) -> str: ...
def mc_json(
    lattice: Lattice,
    sizes: List[int],
    temps: List[float],
    sweeps: int,
    warmup: int,
    seed: int,
) -> str: ...

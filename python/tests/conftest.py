"""Shared fixtures: the shipped lattices and the `rungs` command to compare with.

The command is found as $RUNGS_BIN, else in the workspace's target directory (built by
`cargo test` or `cargo build`); tests that compare with it are skipped, with the reason,
when neither exists (CI sets RUNGS_BIN, so there they always run).
"""

from __future__ import annotations

import json
import os
import subprocess
from pathlib import Path
from typing import List, Optional

import pytest

ROOT = Path(__file__).resolve().parents[2]
LATTICES = ROOT / "lattices"


def _find_cli() -> Optional[Path]:
    given = os.environ.get("RUNGS_BIN")
    if given:
        return Path(given)
    target = Path(os.environ.get("CARGO_TARGET_DIR", ROOT / "target"))
    for profile in ("release", "debug"):
        candidate = target / profile / "rungs"
        if candidate.is_file():
            return candidate
    return None


CLI = _find_cli()


@pytest.fixture(scope="session")
def lattices() -> Path:
    return LATTICES


class Cli:
    """Runs the `rungs` command with progress bars off."""

    def __init__(self, path: Path) -> None:
        self.path = path

    def run(self, args: List[str]) -> subprocess.CompletedProcess:
        return subprocess.run(
            [str(self.path), *args],
            cwd=ROOT,
            env={**os.environ, "CI": "true"},
            capture_output=True,
            text=True,
            timeout=600,
        )

    def json(self, args: List[str]) -> dict:
        out = self.run([*args, "--format", "json"])
        assert out.returncode == 0, out.stderr
        return json.loads(out.stdout)

    def csv(self, args: List[str]) -> List[dict]:
        out = self.run([*args, "--format", "csv"])
        assert out.returncode == 0, out.stderr
        lines = [l for l in out.stdout.splitlines() if l and not l.startswith("#")]
        header = lines[0].split(",")
        return [dict(zip(header, l.split(","))) for l in lines[1:]]


@pytest.fixture(scope="session")
def cli() -> Cli:
    if CLI is None or not CLI.is_file():
        pytest.skip("the `rungs` command is not built: set RUNGS_BIN or run `cargo build`")
    return Cli(CLI)

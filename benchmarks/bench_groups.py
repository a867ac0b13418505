"""Benchmarks of the point-group engine (run with ``make bench``).

* building and labelling every finite group from scratch (the ``point_group`` cache cleared
  before every round): generators -> closure -> classes -> characters -> Mulliken labels;
* ``splitting group Ih`` as a whole process, start-up and imports included;
* the free-unit analysis of C60 (60 atoms, Ih) from coordinates.
"""

from __future__ import annotations

import shutil
import subprocess
import sys
from pathlib import Path

import pytest

from splitting.groups import all_group_names, point_group

ROOT = Path(__file__).resolve().parent.parent


def _build_all() -> int:
    point_group.cache_clear()
    total = 0
    for name in all_group_names():
        total += len(point_group(name).labels)
    return total


def test_build_and_label_every_group(benchmark):
    species = benchmark.pedantic(_build_all, rounds=5, iterations=1, warmup_rounds=1)
    assert species > 0


def _splitting_command() -> str:
    candidate = Path(sys.executable).parent / "splitting"
    if candidate.exists():
        return str(candidate)
    found = shutil.which("splitting")
    if found is None:
        pytest.skip("the splitting command is not installed")
    return found


def test_cli_group_ih_process(benchmark):
    cmd = [_splitting_command(), "group", "Ih"]

    def run() -> str:
        done = subprocess.run(cmd, capture_output=True, text=True, check=True, timeout=60)
        return done.stdout

    out = benchmark.pedantic(run, rounds=5, iterations=1, warmup_rounds=1)
    assert "Hg" in out


def test_analyse_c60(benchmark):
    import ase.io

    from splitting.molecule.analysis import analyse_unit

    atoms = ase.io.read(ROOT / "structures" / "molecules" / "c60.xyz")
    result = benchmark.pedantic(
        analyse_unit, args=(atoms.numbers, atoms.positions), rounds=5, iterations=1, warmup_rounds=1
    )
    assert result.vibrations.dimension == 174

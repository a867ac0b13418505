"""Timing of ``splitting lower`` on the one-orientation fcc C60 model (Fm-3, 240 atoms) and an Fm-3m salt.

Run with::

    .venv/bin/python -m pytest benchmarks/bench_lower.py --benchmark-enable -q -p no:doctest -s

Timings:

* the search in-process (``splitting.phases.lower.lower``) on fcc C60 to index 8, and the
  whole command as a new process (interpreter start-up and imports included); both check
  that Pa-3 (No. 205), the published ordered phase (W. I. F. David et al., Nature 353, 147
  (1991)), is among the candidates;
* fcc C60 and the salt K2PtCl6 (Fm-3m, PtCl6^2- octahedra on the Oh sites, K+ on the Td
  sites; a = 9.75 A, Cl at (0.24, 0, 0): values from memory, a timing input only) to index 16,
  first in a process (the subgroup search runs) and then again (the subgroups of the space
  group are reused; the candidates are predicted again);
* the large-index cases as whole commands: CO2 (Pa-3) to index 48 (171 subgroups, predicted),
  and a 20-atom P1 cell (invented positions) to index 48, refused at once with the
  ``--max-index`` that fits (thousands of sublattices, each a candidate).

The last test prints every mean.
"""

from __future__ import annotations

import subprocess
import sys
import time
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
C60 = ROOT / "structures" / "c60_fcc_Fm-3.cif"
MAX_INDEX = 8

_MEANS: dict[str, float] = {}


def _record(name: str, benchmark) -> None:
    stats = getattr(benchmark, "stats", None)
    if stats is not None:  # None when benchmarks are disabled (the default in pyproject.toml)
        _MEANS[name] = stats.stats.mean


def salt_cell(folder: Path) -> Path:
    """K2PtCl6 (Fm-3m) as a primitive-cell CIF (positions from memory; for timing only)."""
    import ase.io
    from ase.spacegroup import crystal

    atoms = crystal(
        ["Pt", "K", "Cl"],
        basis=[(0, 0, 0), (0.25, 0.25, 0.25), (0.24, 0, 0)],
        spacegroup=225,
        cellpar=[9.75, 9.75, 9.75, 90, 90, 90],
        primitive_cell=True,
    )
    path = folder / "k2ptcl6_Fm-3m.cif"
    ase.io.write(path, atoms, format="cif")
    return path


def _in_process() -> list[int]:
    from splitting.phases.lower import lower

    return [c.space_group[0] for c in lower(C60, max_index=MAX_INDEX).candidates]


def _whole_process() -> str:
    done = subprocess.run(
        [sys.executable, "-m", "splitting.cli", "lower", str(C60), "--max-index", str(MAX_INDEX)],
        capture_output=True,
        text=True,
        check=False,
        cwd=ROOT,
    )
    assert done.returncode == 0, done.stderr
    return done.stdout


_TWICE = r"""
import json, sys, time
from splitting.phases.lower import lower
out = []
for _ in range(2):
    start = time.perf_counter()
    n = len(lower(sys.argv[1], max_index=int(sys.argv[2])).candidates)
    out.append(time.perf_counter() - start)
print(json.dumps({"first": out[0], "again": out[1], "candidates": n}))
"""


def first_and_again(path: Path, max_index: int) -> dict[str, float]:
    """Seconds of ``lower`` in a fresh process, first (subgroup search included) and again."""
    import json

    done = subprocess.run(
        [sys.executable, "-c", _TWICE, str(path), str(max_index)], capture_output=True, text=True, check=False, cwd=ROOT
    )
    assert done.returncode == 0, done.stderr
    return json.loads(done.stdout.strip().splitlines()[-1])


def test_lower_c60_in_process(benchmark) -> None:
    numbers = benchmark.pedantic(_in_process, rounds=3, iterations=1, warmup_rounds=0)
    assert 205 in numbers
    _record("in_process", benchmark)


def test_lower_c60_whole_process(benchmark) -> None:
    out = benchmark.pedantic(_whole_process, rounds=3, iterations=1, warmup_rounds=0)
    assert "Pa-3 (205)" in out
    _record("process", benchmark)


@pytest.mark.parametrize("case", ["c60", "salt"])
def test_lower_to_index_16(case: str, tmp_path: Path, benchmark) -> None:
    path = C60 if case == "c60" else salt_cell(tmp_path)
    got = benchmark.pedantic(first_and_again, args=(path, 16), rounds=1, iterations=1)
    assert got["candidates"] > 0
    _MEANS[f"{case} index 16 first"] = got["first"]
    _MEANS[f"{case} index 16 again"] = got["again"]
    print("\n" + "\n".join(f"lower {k}: {v:.2f} s" for k, v in _MEANS.items()))


def p1_cell(folder: Path) -> Path:
    """A 20-atom cell without symmetry (invented positions on a jittered grid), as CIF."""
    import itertools

    import numpy as np
    from ase import Atoms

    rng = np.random.default_rng(5)
    grid = np.array(list(itertools.product(range(3), range(3), range(3))), dtype=float)[:20]
    atoms = Atoms(
        ["Na", "Cl"] * 10,
        scaled_positions=(grid + 0.2 * rng.random(grid.shape)) / 3,
        cell=[[9.1, 0, 0], [0.8, 9.6, 0], [0.5, 0.3, 10.2]],
        pbc=True,
    )
    path = folder / "p1_20.cif"
    atoms.write(path, format="cif")
    return path


def _command(path: Path, max_index: int) -> subprocess.CompletedProcess:
    return subprocess.run(
        [sys.executable, "-m", "splitting.cli", "lower", str(path), "--max-index", str(max_index)],
        capture_output=True,
        text=True,
        check=False,
        cwd=ROOT,
    )


@pytest.mark.parametrize("case", ["co2", "p1"])
def test_lower_to_index_48(case: str, tmp_path: Path, benchmark) -> None:
    path = ROOT / "structures" / "co2_Pa-3.cif" if case == "co2" else p1_cell(tmp_path)
    done = benchmark.pedantic(_command, args=(path, 48), rounds=1, iterations=1)
    if case == "co2":
        assert done.returncode == 0, done.stderr
    else:
        assert done.returncode == 2 and "give --max-index" in done.stderr, done.stderr
    _record(f"{case} index 48 command", benchmark)
    print("\n" + "\n".join(f"lower {k}: {v:.2f} s" for k, v in _MEANS.items()))


if __name__ == "__main__":  # pragma: no cover - a manual run
    import tempfile

    with tempfile.TemporaryDirectory() as tmp:
        start = time.perf_counter()
        print("c60 index 8 in process", _in_process() and round(time.perf_counter() - start, 2))
        print("c60 index 16", first_and_again(C60, 16))
        print("salt index 16", first_and_again(salt_cell(Path(tmp)), 16))

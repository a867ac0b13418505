"""Timing of ``splitting predict`` against the cost of reading the file and finding its space group.

Run with::

    .venv/bin/python -m pytest benchmarks --benchmark-enable -q -p no:doctest

Four timings:

* ``test_cli_c60_cell``: the whole command as a new process on the ordered C60 file (240 atoms);
* ``test_cli_c60_supercell``: the same on a 3 x 3 x 3 supercell of it (6480 atoms, written to
  a temporary extended-XYZ file);
* ``test_read_and_symmetry_supercell``: in-process ``ase.io.read`` + ``spglib.get_symmetry_dataset``
  on that supercell file only -- the floor any such tool must pay;
* ``test_predict_in_process_supercell``: the pipeline in-process on the same file.

The last test prints the ratios pipeline / (read + symmetry search).
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
C60 = ROOT / "structures" / "c60_ordered_Pa-3.cif"
TOLERANCE = 0.01  # angstrom, the default of `splitting predict`

_MEANS: dict[str, float] = {}


@pytest.fixture(scope="module")
def supercell_file(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """The ordered C60 crystal repeated 3 x 3 x 3 (6480 atoms), as extended XYZ."""
    import ase.io

    atoms = ase.io.read(C60).repeat((3, 3, 3))
    assert len(atoms) == 6480
    path = tmp_path_factory.mktemp("bench") / "c60_Pa-3_3x3x3.extxyz"
    ase.io.write(path, atoms, format="extxyz")
    return path


def _run_cli(path: Path) -> str:
    done = subprocess.run(
        [sys.executable, "-m", "splitting.cli", "predict", str(path)],
        capture_output=True,
        text=True,
        check=False,
        cwd=ROOT,
    )
    assert done.returncode == 0, done.stderr
    return done.stdout


def _record(name: str, benchmark) -> None:
    stats = getattr(benchmark, "stats", None)
    if stats is not None:  # None when benchmarks are disabled (the default in pyproject.toml)
        _MEANS[name] = stats.stats.mean


def test_cli_c60_cell(benchmark) -> None:
    out = benchmark.pedantic(_run_cli, args=(C60,), rounds=3, iterations=1, warmup_rounds=1)
    assert "Pa-3" in out and "240 atoms" in out
    _record("cli_cell", benchmark)


def test_cli_c60_supercell(benchmark, supercell_file: Path) -> None:
    out = benchmark.pedantic(_run_cli, args=(supercell_file,), rounds=3, iterations=1, warmup_rounds=1)
    assert "Pa-3" in out and "6480 as given" in out
    _record("cli_supercell", benchmark)


def test_read_and_symmetry_supercell(benchmark, supercell_file: Path) -> None:
    import ase.io
    import spglib

    def read_and_search() -> int:
        atoms = ase.io.read(supercell_file)
        ds = spglib.get_symmetry_dataset(
            (atoms.cell[:], atoms.get_scaled_positions(), atoms.numbers), symprec=TOLERANCE
        )
        return int(ds.number)

    old = spglib.error.OLD_ERROR_HANDLING
    spglib.error.OLD_ERROR_HANDLING = False  # no DeprecationWarning (warnings are errors here)
    try:
        number = benchmark.pedantic(read_and_search, rounds=3, iterations=1, warmup_rounds=1)
    finally:
        spglib.error.OLD_ERROR_HANDLING = old
    assert number == 205
    _record("read_symmetry", benchmark)


def test_predict_in_process_supercell(benchmark, supercell_file: Path) -> None:
    from splitting.crystal.predict import predict

    p = benchmark.pedantic(predict, args=(supercell_file,), rounds=3, iterations=1, warmup_rounds=1)
    assert p.atoms_input == 6480 and p.atoms_primitive == 240 and p.space_group.number == 205
    _record("predict_in_process", benchmark)
    floor = _MEANS.get("read_symmetry")
    if floor:
        lines = [f"read + symmetry search (6480 atoms): {floor:.3f} s"]
        for key, what in (
            ("predict_in_process", "predict in-process"),
            ("cli_supercell", "CLI process"),
            ("cli_cell", "CLI process, 240-atom file"),
        ):
            if key in _MEANS:
                lines.append(f"{what}: {_MEANS[key]:.3f} s = {_MEANS[key] / floor:.2f} x (read + symmetry)")
        print("\n" + "\n".join(lines))

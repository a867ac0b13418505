"""Structure files that once crashed, hung or silently changed the crystal.

Each folder of tests/data/bad-inputs/ (R01 ... R27) holds the input of one reported case;
the case's number names it. What each did before it was fixed: R01 a segmentation fault in
the symmetry library (NaN/inf coordinates); R02 a hang in the neighbour search (flat cells);
R03 an endless read (a count line of 10^12 atoms); R11/R12/R27 internal errors or a cell
silently taken as |a| (NaN, inf, huge, negative lengths); R13-R16 internal errors, and a
negative occupancy that turned Cl into S; R25 coinciding atoms merged silently; R26 a
malformed atom row dropped silently. Each must now give one line ``error: ...`` naming the
file, exit status 2 (bad input, docs/exit-codes.md), in bounded time.

The cases are run as whole processes with a time limit, so a regression to a segmentation
fault or a hang fails the test instead of the test run.
"""

from __future__ import annotations

import re
import subprocess
import sys
from pathlib import Path

import pytest

DATA = Path(__file__).parent / "data" / "bad-inputs"
#: cases read with --disordered (the occupancies were the trouble there)
DISORDERED = {"R14", "R15", "R16"}
CASES = sorted(
    (case.name, f.name) for case in DATA.iterdir() if case.is_dir() and case.name[:1] == "R" for f in case.iterdir()
)


def test_every_case_has_inputs() -> None:
    assert {c for c, _ in CASES} >= {"R01", "R02", "R03", "R11", "R12", "R13", "R14", "R15", "R16", "R25", "R26", "R27"}


@pytest.mark.parametrize(("case", "name"), CASES)
def test_reproducer_gives_one_error_line(case: str, name: str) -> None:
    path = DATA / case / name
    argv = [sys.executable, "-m", "splitting", "predict", str(path)]
    if case in DISORDERED:
        argv.append("--disordered")
    proc = subprocess.run(argv, capture_output=True, text=True, timeout=120)
    assert proc.returncode == 2, (case, name, proc.returncode, proc.stderr)
    assert proc.stdout == ""
    lines = proc.stderr.splitlines()
    assert len(lines) == 1 and lines[0].startswith("error: "), proc.stderr
    assert str(path) in lines[0]
    assert "Traceback" not in proc.stderr and "internal error" not in proc.stderr


STRUCTURES = Path(__file__).resolve().parents[1] / "structures"


@pytest.mark.parametrize(
    ("case", "args", "says"),
    [
        # R04: explosive neighbour searches from absurd bond options
        ("R04", ["predict", str(STRUCTURES / "calcite.cif"), "--bond-scale", "1e3"], "--bond-scale"),
        ("R04", ["predict", str(STRUCTURES / "calcite.cif"), "--bond-scale", "inf"], "--bond-scale"),
        ("R04", ["predict", str(STRUCTURES / "calcite.cif"), "--bond", "C-O=inf"], "C-O"),
        # R05: a subgroup search of index 1000 ran for minutes with growing memory
        ("R05", ["lower", str(STRUCTURES / "co2_Pa-3.cif"), "--max-index", "1000"], "largest index 1000"),
    ],
)
def test_reproducer_options_refused_at_once(case: str, args: list[str], says: str) -> None:
    proc = subprocess.run([sys.executable, "-m", "splitting", *args], capture_output=True, text=True, timeout=60)
    lines = proc.stderr.splitlines()
    assert proc.returncode == 2 and len(lines) == 1 and lines[0].startswith("error: "), (case, proc.stderr)
    assert says in lines[0]


def test_R09_cell_above_the_atom_limit_is_refused_before_the_search(tmp_path: Path) -> None:
    """R09: cells of ~100,000 atoms took over 10 minutes; the limit (--max-atoms) says so at once."""
    # invented: a simple cubic grid of C atoms 1.6 A apart, 40 x 40 x 13 = 20,800 atoms
    n = 40 * 40 * 13
    rows = "\n".join(f"C {1.6 * (i % 40):.2f} {1.6 * ((i // 40) % 40):.2f} {1.6 * (i // 1600):.2f}" for i in range(n))
    path = tmp_path / "big.extxyz"
    path.write_text(f'{n}\nLattice="64 0 0 0 64 0 0 0 20.8" Properties=species:S:1:pos:R:3 pbc="T T T"\n{rows}\n')
    proc = subprocess.run(
        [sys.executable, "-m", "splitting", "predict", str(path)], capture_output=True, text=True, timeout=120
    )
    lines = proc.stderr.splitlines()
    assert proc.returncode == 2 and len(lines) == 1 and "--max-atoms" in lines[0], proc.stderr


def _shared_bad_inputs() -> Path | None:
    """The collection of reported bad inputs beside the checkout (shared/bad-inputs), if it is there."""
    for base in (Path(__file__).resolve().parents[2], Path(__file__).resolve().parents[3]):
        folder = base / "shared" / "bad-inputs"
        if (folder / "INDEX.txt").is_file():
            return folder
    return None


def test_every_reported_bad_input_is_a_test() -> None:
    """Each reproducer of the collection (R01, R02, ...) is named by at least one test file."""
    folder = _shared_bad_inputs()
    if folder is None:
        pytest.skip("the shared bad-input collection is not beside this checkout")
    index = (folder / "INDEX.txt").read_text(encoding="utf-8")
    names = sorted(set(re.findall(r"^R\d\d", index, flags=re.M)))
    tests = "\n".join(p.read_text(encoding="utf-8") for p in Path(__file__).parent.glob("test_*.py"))
    missing = [n for n in names if not re.search(rf"\b{n}\b", tests)]
    assert not missing, missing

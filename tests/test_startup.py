"""Start-up path: ``--help`` and ``--version`` import no heavy library; ``group`` needs no scipy.

Heavy modules are imported inside the commands that use them (splitting.cli); these tests fail
when one creeps back onto the start-up path. Timings are recorded in benchmarks/bench_startup.py.
"""

from __future__ import annotations

import json
import subprocess
import sys

import pytest

HEAVY = ("numpy", "scipy", "spglib", "matplotlib", "ase", "gemmi", "dask", "pyarrow")

PROBE = """
import json, sys
from splitting.cli import main
try:
    main({argv!r})
except SystemExit:
    pass
sys.stdout = sys.__stdout__
print(json.dumps(sorted({{m.split('.')[0] for m in sys.modules}})))
"""


def _loaded(argv: list[str]) -> set[str]:
    proc = subprocess.run([sys.executable, "-c", PROBE.format(argv=argv)], capture_output=True, text=True, check=True)
    return set(json.loads(proc.stdout.strip().splitlines()[-1]))


@pytest.mark.parametrize("argv", [["--help"], ["--version"], ["predict", "--help"], ["explain", "--help"]])
def test_help_and_version_import_nothing_heavy(argv: list[str]) -> None:
    assert not _loaded(argv) & set(HEAVY)


def test_group_needs_neither_scipy_nor_the_structure_libraries() -> None:
    assert not _loaded(["group", "D4h"]) & {"scipy", "spglib", "matplotlib", "ase", "gemmi", "dask", "pyarrow"}


def test_predict_draws_nothing(structures_dir) -> None:
    assert not _loaded(["predict", str(structures_dir / "calcite.vasp")]) & {"matplotlib", "dask", "pyarrow"}

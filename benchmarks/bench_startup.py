"""Whole-process start-up times of the ``splitting`` command (cold interpreter each round).

Run with ``make bench``. Goals: ``--help`` and ``--version`` under 0.3 s, ``group D4h`` under
0.5 s, ``predict`` of a 10-atom cell (primitive calcite) under 1 s. Each round starts a new
Python process, so the figures include the interpreter and every import.
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
CASES = {
    "help": ["--help"],
    "version": ["--version"],
    "group": ["group", "D4h"],
    "predict_10_atoms": ["predict", str(ROOT / "structures" / "calcite.vasp")],
}
GOALS = {"help": 0.3, "version": 0.3, "group": 0.5, "predict_10_atoms": 1.0}


def _run(argv: list[str]) -> None:
    subprocess.run([sys.executable, "-m", "splitting", *argv], check=True, capture_output=True)


@pytest.mark.parametrize("case", sorted(CASES))
def test_startup(benchmark, case: str) -> None:
    benchmark.extra_info["goal_s"] = GOALS[case]
    benchmark.pedantic(_run, args=(CASES[case],), rounds=5, iterations=1, warmup_rounds=1)

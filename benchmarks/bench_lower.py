"""Timing of ``splitting lower`` on the one-orientation fcc C60 model (Fm-3, 240 atoms), max index 8.

Run with::

    .venv/bin/python -m pytest benchmarks/bench_lower.py --benchmark-enable -q -p no:doctest -s

Two timings: the search in-process (``splitting.phases.lower.lower``) and the whole command as
a new process (interpreter start-up and imports included).  Both check that Pa-3 (No. 205),
the published ordered phase (W. I. F. David et al., Nature 353, 147 (1991)), is among the
candidates; the last test prints both means.
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
C60 = ROOT / "structures" / "c60_fcc_Fm-3.cif"
MAX_INDEX = 8

_MEANS: dict[str, float] = {}


def _record(name: str, benchmark) -> None:
    stats = getattr(benchmark, "stats", None)
    if stats is not None:  # None when benchmarks are disabled (the default in pyproject.toml)
        _MEANS[name] = stats.stats.mean


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


def test_lower_c60_in_process(benchmark) -> None:
    numbers = benchmark.pedantic(_in_process, rounds=3, iterations=1, warmup_rounds=0)
    assert 205 in numbers
    _record("in_process", benchmark)


def test_lower_c60_whole_process(benchmark) -> None:
    out = benchmark.pedantic(_whole_process, rounds=3, iterations=1, warmup_rounds=0)
    assert "Pa-3 (205)" in out
    _record("process", benchmark)
    if _MEANS:
        print(
            "\n"
            + "\n".join(
                f"lower c60_fcc_Fm-3.cif --max-index {MAX_INDEX}, {k.replace('_', ' ')}: {v:.2f} s"
                for k, v in _MEANS.items()
            )
        )

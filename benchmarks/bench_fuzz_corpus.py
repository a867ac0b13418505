"""The whole generated bad-input corpus (tests/fuzz_corpus.py), each case a separate process.

Run with ``make bench`` (``SPLITTING_FUZZ_SIZE`` sets the number of cases, default 1200;
two cases run at a time). Records the total duration and checks that no case printed a
traceback, ended with a status outside EXIT_CODES or with the internal-error status, hung
(more than 60 s) or left a partial output file. The counts are kept in the benchmark's
``extra_info``.
"""

from __future__ import annotations

import os
import subprocess
import sys
import tempfile
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent / "tests"))

from fuzz_corpus import Case, corpus

from splitting.errors import EXIT_CODES

SIZE = int(os.environ.get("SPLITTING_FUZZ_SIZE", "1200"))
HANG_S = 60


def run_case(case: Case) -> str:
    """'' when the case keeps the contract, else what went wrong."""
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        argv = case.materialise(folder)
        try:
            proc = subprocess.run(
                [sys.executable, "-m", "splitting", *argv], capture_output=True, text=True, timeout=HANG_S
            )
        except subprocess.TimeoutExpired:
            return f"{case.name}: hang (> {HANG_S} s)"
        err = proc.stderr
        if "Traceback" in err:
            return f"{case.name}: traceback"
        if proc.returncode not in EXIT_CODES or proc.returncode == 70:
            return f"{case.name}: exit {proc.returncode}: {err.strip()[:200]}"
        if proc.returncode and not (err.startswith("error: ") and err.count("\n") == 1):
            return f"{case.name}: not one error line: {err[:200]!r}"
        if case.output and proc.returncode and (folder / case.output).exists():
            return f"{case.name}: output written despite exit {proc.returncode}"
        if any(p.name.endswith(".part") for p in folder.iterdir()):
            return f"{case.name}: partial file left"
    return ""


def run_corpus() -> list[str]:
    with ThreadPoolExecutor(max_workers=2) as pool:
        return [r for r in pool.map(run_case, corpus(SIZE)) if r]


def test_whole_corpus(benchmark) -> None:
    problems = benchmark.pedantic(run_corpus, rounds=1, iterations=1)
    benchmark.extra_info["cases"] = SIZE
    benchmark.extra_info["problems"] = len(problems)
    assert not problems, "\n".join(problems[:20])

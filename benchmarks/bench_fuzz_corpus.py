"""The whole generated bad-input corpus (tests/fuzz_corpus.py), each case a separate process.

Run with ``make bench``, or as a script (``python benchmarks/bench_fuzz_corpus.py [report.json]``)
to print the counts per outcome and the cases that broke the contract. ``SPLITTING_FUZZ_SIZE``
caps the number of cases (default: all of :func:`fuzz_corpus.whole_corpus`);
``SPLITTING_FUZZ_CODE`` names the checkout whose ``splitting`` is run (default: this one).
Two cases run at a time, each in its own process session, so a case that runs longer than
:data:`HANG_S` is killed together with every process it started and counted as a hang.
The outcomes (:data:`fuzz_corpus.OUTCOMES`): clean error, ok, raw library text, a unit spelling
that is not the trade's, hang, not one line, partial file, traceback, internal error.
"""

from __future__ import annotations

import json
import os
import sys
import tempfile
import time
from collections import Counter
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent / "tests"))

from fuzz_corpus import OUTCOMES, ROOT, Case, judge, run_process, whole_corpus

HANG_S = 60
#: outcomes that keep the contract
GOOD = ("clean error", "ok")


def run_case(case: Case) -> tuple[str, str, float, str]:
    """(case name, outcome, seconds, standard error) of one case run as its own process."""
    code_root = Path(os.environ.get("SPLITTING_FUZZ_CODE", ROOT))
    start = time.monotonic()
    with tempfile.TemporaryDirectory() as tmp:
        result = run_process(case, Path(tmp), timeout=HANG_S, code_root=code_root)
        outcome = "hang" if result is None else judge(case, *result, Path(tmp))
        detail = "" if result is None else result[2].strip()[:300]
    return case.name, outcome, time.monotonic() - start, detail


def run_corpus() -> dict:
    """Counts per outcome, total seconds and the cases that broke the contract."""
    cases = whole_corpus()
    size = int(os.environ.get("SPLITTING_FUZZ_SIZE", len(cases)))
    start = time.monotonic()
    results = []
    with ThreadPoolExecutor(max_workers=2) as pool:
        for k, result in enumerate(pool.map(run_case, cases[:size]), start=1):
            results.append(result)
            if k % 100 == 0 and __name__ == "__main__":
                print(f"{k} cases, {time.monotonic() - start:.0f} s", file=sys.stderr, flush=True)
    counts = Counter(outcome for _, outcome, _, _ in results)
    return {
        "cases": len(results),
        "seconds": round(time.monotonic() - start, 1),
        "slowest_s": round(max((s for _, _, s, _ in results), default=0.0), 1),
        "slowest": [f"{n} ({s:.1f} s)" for n, _, s, _ in sorted(results, key=lambda r: -r[2])[:3]],
        "counts": {o: counts.get(o, 0) for o in OUTCOMES},
        "problems": [(name, outcome, detail) for name, outcome, _, detail in results if outcome not in GOOD],
    }


def test_whole_corpus(benchmark) -> None:
    summary = benchmark.pedantic(run_corpus, rounds=1, iterations=1)
    benchmark.extra_info.update({k: summary[k] for k in ("cases", "seconds", "counts")})
    bad = summary["problems"]
    assert not bad, "\n".join(f"{n}: {o}: {d}" for n, o, d in bad[:20])


if __name__ == "__main__":
    summary = run_corpus()
    if len(sys.argv) > 1:
        Path(sys.argv[1]).write_text(json.dumps(summary, indent=1, ensure_ascii=False), encoding="utf-8")
    print(json.dumps({k: summary[k] for k in ("cases", "seconds", "slowest", "counts")}, indent=1, ensure_ascii=False))
    for name, outcome, detail in summary["problems"]:
        print(f"{outcome:15} {name}: {detail[:160]}")

"""A bounded slice of the generated bad-input corpus (tests/fuzz_corpus.py), plus hypothesis mutations.

The whole corpus (the systematic families of tests/fuzz_variants.py and random damage) runs in
benchmarks/bench_fuzz_corpus.py, each case a separate process. Contract checked on each case
(:func:`fuzz_corpus.judge`): no traceback, an exit status of EXIT_CODES other than 70 (internal
error), one ``error:`` line on standard error and nothing on standard output when it fails, no
partial output file, bounded time, no library's wording in the message (LIBRARY_PHRASES) and no
unit spelled other than the trade's (UNIT_SPELLINGS). A standard output that is full or closed
must be said (exit 6), and an input marked `refuse` (unreadable as it is) must not get an answer.
"""

from __future__ import annotations

import signal
import time
from pathlib import Path

import pytest
from fuzz_corpus import BAD_NUMBERS, STRUCTURES, Case, judge, mutate_text, run_process, spread_slice, whole_corpus
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

#: cases of the corpus run in CI, spread over every family (about a minute on the development machine)
SLICE = 100
#: seconds one case may take
LIMIT_S = 30


def check_case(case: Case, folder: Path, run_cli) -> int:
    """Run one case (in-process; as a process when standard output is full or closed) and judge it."""
    start = time.monotonic()
    if case.stdout != "pipe":
        result = run_process(case, folder, timeout=LIMIT_S)
        assert result is not None, f"{case.name} ran for more than {LIMIT_S} s"
        code, out, err = result
    else:
        argv = case.materialise(folder)

        def too_long(signum, frame):
            raise TimeoutError(f"{case.name} ran for more than {LIMIT_S} s")

        old = signal.signal(signal.SIGALRM, too_long)
        signal.alarm(LIMIT_S)
        try:
            code, out, err = run_cli(argv)
        finally:
            signal.alarm(0)
            signal.signal(signal.SIGALRM, old)
    assert time.monotonic() - start < LIMIT_S
    outcome = judge(case, code, out, err, folder)
    assert outcome in ("ok", "clean error"), (case.name, outcome, case.argv, err)
    return code


@pytest.mark.parametrize("case", spread_slice(whole_corpus(), SLICE), ids=lambda c: c.name)
def test_corpus_slice(case: Case, tmp_path: Path, run_cli) -> None:
    check_case(case, tmp_path, run_cli)


def test_the_whole_corpus_is_large_and_named_once() -> None:
    cases = whole_corpus()
    assert len(cases) > 1200
    assert len({c.name for c in cases}) == len(cases)


@settings(max_examples=15, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(
    source=st.sampled_from([p for p in STRUCTURES if p.suffix == ".cif"]),
    bad=st.sampled_from(BAD_NUMBERS),
    which=st.integers(min_value=0, max_value=10_000),
)
def test_a_number_of_a_cif_replaced(source: Path, bad: str, which: int, tmp_path_factory, run_cli) -> None:
    """Any one number of a bundled CIF replaced by a bad one: a clean answer or a clean error."""
    import re

    text = source.read_text(encoding="utf-8")
    numbers = list(re.finditer(r"(?<![A-Za-z_])-?\d+\.\d+", text))
    m = numbers[which % len(numbers)]
    folder = tmp_path_factory.mktemp("cif")
    case = Case(
        "hypothesis-cif", ("predict", "{dir}/x.cif"), {"x.cif": (text[: m.start()] + bad + text[m.end() :]).encode()}
    )
    check_case(case, folder, run_cli)


@settings(max_examples=10, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(seed=st.integers(min_value=0, max_value=2**31))
def test_mutated_peak_lists(seed: int, tmp_path_factory, run_cli) -> None:
    import random

    from fuzz_corpus import PEAKS, ROOT

    src = PEAKS[seed % len(PEAKS)]
    data = mutate_text(src.read_text(encoding="utf-8"), random.Random(seed)).encode()
    case = Case(
        "hypothesis-peaks",
        ("explain", str(ROOT / "structures" / "calcite.cif"), "--peaks", f"{{dir}}/p{src.suffix}"),
        {f"p{src.suffix}": data},
    )
    check_case(case, tmp_path_factory.mktemp("peaks"), run_cli)

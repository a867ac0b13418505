"""Shared, generic fixtures: where the bundled structures live, and a command-line runner."""

from __future__ import annotations

import contextlib
from collections.abc import Callable, Iterator, Sequence
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent


@pytest.fixture(scope="session")
def structures_dir() -> Path:
    """The bundled ``structures/`` folder (molecules in ``molecules/``, bad input in ``bad/``)."""
    return ROOT / "structures"


@pytest.fixture
def run_cli(capsys: pytest.CaptureFixture[str]) -> Callable[[Sequence[str]], tuple[int, str, str]]:
    """Call ``splitting.cli.main(argv)`` in-process and return ``(exit code, stdout, stderr)``.

    An ``argparse`` exit (``SystemExit``) is caught and its code returned.
    """
    from splitting.cli import main

    def run(argv: Sequence[str]) -> tuple[int, str, str]:
        capsys.readouterr()  # drop anything printed before
        try:
            code = main([str(a) for a in argv])
        except SystemExit as exc:  # argparse usage errors
            code = exc.code if isinstance(exc.code, int) else 1
        out, err = capsys.readouterr()
        return int(code), out, err

    return run


# Predictions of the bundled crystals, shared by every test file (results are immutable).
@pytest.fixture(scope="session")
def calcite(structures_dir: Path):
    """Prediction for calcite (R-3c)."""
    from splitting.crystal.predict import predict

    return predict(structures_dir / "calcite.cif")


@pytest.fixture(scope="session")
def c60(structures_dir: Path):
    """Prediction for the ordered C60 phase (Pa-3)."""
    from splitting.crystal.predict import predict

    return predict(structures_dir / "c60_ordered_Pa-3.cif")


@pytest.fixture(scope="session")
def c60_fcc(structures_dir: Path):
    """Prediction for the one-orientation fcc C60 model (Fm-3)."""
    from splitting.crystal.predict import predict

    return predict(structures_dir / "c60_fcc_Fm-3.cif")


@contextlib.contextmanager
def local_cluster() -> Iterator[str]:
    """Address of a local Dask cluster with two single-threaded worker processes (closed on exit)."""
    import dask
    from distributed import LocalCluster

    # a busy machine (the test suite runs in parallel with other work) may start workers slowly
    with dask.config.set({"distributed.comm.timeouts.connect": "120s"}):
        with LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=":0") as c:
            yield c.scheduler_address


@pytest.fixture(autouse=True)
def _fresh_estimates() -> Iterator[None]:
    """Every test starts without the model estimates an earlier test kept in the process."""
    import sys

    memo = sys.modules.get("splitting.dynamics.memo")
    if memo is not None:
        memo.clear()
    yield

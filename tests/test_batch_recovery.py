"""Batch screening survives a killed worker and resumes after an interruption.

* a worker process is killed (SIGKILL) while the run is going: Dask runs its task again
  on another worker, and the final tables hold every structure exactly once;
* a run interrupted after a few parts (the progress callback raises KeyboardInterrupt, as
  Ctrl-C does) keeps its committed parts; the rerun screens only the rest, rewrites no
  committed part, and gives the same tables as a run that was never interrupted.

Each test has its own two-worker local cluster, so killing a worker touches no other test.
"""

from __future__ import annotations

import os
import shutil
import signal
from collections.abc import Iterator
from pathlib import Path

import pytest
from conftest import local_cluster

from splitting.batch import Progress, screen

SMALL = ["calcite.cif", "co2_Pa-3.cif", "nh4cl_ordered_P-43m.cif", "diamond.cif", "alpha_N2_Pa-3.cif"]
COPIES = 3  # variants per file: the same crystal with a different comment line (a different key)


@pytest.fixture
def cluster() -> Iterator[str]:
    with local_cluster() as address:
        yield address


@pytest.fixture
def folder(tmp_path: Path, structures_dir: Path) -> Path:
    """15 small crystals: each bundled file three times, with a different comment line each."""
    src = tmp_path / "in"
    src.mkdir()
    for name in SMALL:
        text = (structures_dir / name).read_text()
        for k in range(COPIES):
            (src / f"{Path(name).stem}_{k}.cif").write_text(f"# variant {k}\n" + text)
    return src


def _same_rows(a, b) -> None:
    cols = [c for c in a.columns if c != "seconds"]
    left = a[cols].sort_values("key").reset_index(drop=True)
    right = b[cols].sort_values("key").reset_index(drop=True)
    assert left.astype(str).equals(right.astype(str))


@pytest.mark.slow
def test_killed_worker_run_completes_once(folder: Path, tmp_path: Path, cluster: str) -> None:
    from distributed import Client

    killed: list[int] = []
    with Client(cluster) as watcher:

        def kill_a_busy_worker(p: Progress) -> None:
            if killed or p.done >= p.total:
                return
            busy = [addr for addr, keys in watcher.processing().items() if keys]
            if not busy:
                return
            pid = watcher.run(os.getpid, workers=[busy[0]])[busy[0]]
            os.kill(pid, signal.SIGKILL)
            killed.append(pid)

        run = screen(folder, tmp_path / "out", scheduler=cluster, part_size=1, progress=kill_a_busy_worker)
        assert killed, "no worker was busy after the first part: nothing was killed"
        # the nanny started a new worker process in place of the killed one
        assert killed[0] not in watcher.run(os.getpid).values()
    s = run.structures
    assert len(s) == len(SMALL) * COPIES and s["key"].is_unique and s["name"].is_unique
    assert s["ok"].all(), s.loc[~s["ok"], ["name", "error"]].to_string()
    assert run.computed == len(s) and run.reused == 0
    # every committed part holds distinct structures, and no structure is in two parts
    import pyarrow.parquet as pq

    keys = [
        k
        for f in sorted((tmp_path / "out" / "parts").glob("*.structures.parquet"))
        for k in pq.read_table(f, columns=["key"]).column("key").to_pylist()
    ]
    assert sorted(keys) == sorted(s["key"])


@pytest.mark.slow
def test_resume_after_interruption(folder: Path, tmp_path: Path, cluster: str) -> None:
    out = tmp_path / "out"
    stop_after = 4

    def interrupt(p: Progress) -> None:
        if p.done >= stop_after:
            raise KeyboardInterrupt

    with pytest.raises(KeyboardInterrupt):
        screen(folder, out, scheduler=cluster, part_size=1, progress=interrupt)
    assert not (out / "structures.parquet").exists()  # no final table from an unfinished run
    parts = {f: f.stat().st_mtime_ns for f in (out / "parts").glob("*.structures.parquet")}
    assert stop_after <= len(parts) < len(SMALL) * COPIES

    seen: list[Progress] = []
    run = screen(folder, out, scheduler=cluster, part_size=1, progress=seen.append)
    total = len(SMALL) * COPIES
    assert run.reused == len(parts) and run.computed == total - len(parts)
    assert seen[-1].total == total - len(parts) and seen[-1].done == seen[-1].total
    for f, mtime in parts.items():  # nothing finished was redone
        assert f.stat().st_mtime_ns == mtime
    s = run.structures
    assert len(s) == total and s["key"].is_unique and s["ok"].all()

    # nothing lost: the same tables as one uninterrupted run
    whole = screen(folder, tmp_path / "whole", scheduler=cluster, part_size=1)
    _same_rows(s.drop(columns=["path"]), whole.structures.drop(columns=["path"]))
    _same_rows(run.bands.drop(columns=["path"]), whole.bands.drop(columns=["path"]))
    shutil.rmtree(tmp_path / "whole")

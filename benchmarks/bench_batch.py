"""Throughput of ``splitting screen`` on two worker processes, and the share of the engine.

Structures: the bundled crystals of fewer than 100 atoms (every ordered file but the C60
cells), each written in a few variants that differ by a comment line (a different key, so
each is screened), and generated small crystals (invented: rock-salt, caesium-chloride,
zinc-blende, diamond and fcc cells from ``ase.build.bulk`` with lattice constants spread
over a few percent, and NH4Cl cells with every atom moved at random by ~0.03 A, which are
P1 with two distinct ions).

Two figures:

* structures per minute with a warm two-worker local cluster (the goal is >= 1,000 per
  minute for cells under 100 atoms), and cold (cluster start and worker imports included);
* the engine's share: ``1 - work / (wall x workers)``, where ``work`` is the time the
  workers spent screening (each structure in the worker's child process, transfer of the
  answer included) and the rest is scheduling, sending files, writing parts and
  assembling the tables (the goal is < 10 % of the work).

Run with::

    .venv/bin/python -m pytest benchmarks/bench_batch.py --benchmark-enable -q -p no:doctest -s

or ``.venv/bin/python benchmarks/bench_batch.py [count]`` without pytest.  Measured (340
structures of at most 36 atoms, load average about 3): 1,938 per minute cold, 1,551 warm,
engine share 2.7 %, 64.5 ms per structure in a worker (benchmarks/README.md).
"""

from __future__ import annotations

import json
import shutil
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
BUNDLED = [
    "alpha_N2_Pa-3.cif",
    "calcite.cif",
    "co2_Pa-3.cif",
    "diamond.cif",
    "naphthalene_P21a.cif",
    "naphthalene_P21c.cif",
    "naphthalene_P21n.cif",
    "nh4br_ordered_P-43m.cif",
    "nh4br_ordered_P4nmm.cif",
    "nh4cl_ordered_P-43m.cif",
]
#: (formula, structure name of ase.build.bulk, lattice constant in A): invented cells
GENERATED = [
    ("NaCl", "rocksalt", 5.64),
    ("MgO", "rocksalt", 4.21),
    ("CsCl", "cesiumchloride", 4.12),
    ("ZnS", "zincblende", 5.41),
    ("Si", "diamond", 5.43),
    ("Cu", "fcc", 3.61),
]
WORKERS = 2


def make_inputs(folder: Path, count: int) -> int:
    """Write about ``count`` distinct small structures into ``folder``; returns how many."""
    import ase.io
    import numpy as np
    from ase.build import bulk

    folder.mkdir(parents=True, exist_ok=True)
    rng = np.random.default_rng(12)
    n = 0
    texts = [(ROOT / "structures" / name).read_text() for name in BUNDLED]
    nh4cl = ase.io.read(ROOT / "structures" / "nh4cl_ordered_P-43m.cif")
    while n < count:
        k = n // (len(BUNDLED) + len(GENERATED) + 1)
        for name, text in zip(BUNDLED, texts, strict=True):
            (folder / f"{Path(name).stem}_{k}.cif").write_text(f"# variant {k}\n" + text)
            n += 1
        for formula, kind, a in GENERATED:
            scale = 1.0 + 0.03 * rng.uniform(-1.0, 1.0)
            ase.io.write(folder / f"{formula}_{kind}_{k}.cif", bulk(formula, kind, a=a * scale), format="cif")
            n += 1
        jittered = nh4cl.copy()
        jittered.positions += rng.normal(0.0, 0.03, jittered.positions.shape)
        ase.io.write(folder / f"nh4cl_jitter_{k}.extxyz", jittered, format="extxyz")
        n += 1
    return n


def run(count: int, folder: Path) -> dict[str, float]:
    """Cold and warm runs over about ``count`` structures; returns the figures."""
    from distributed import LocalCluster

    from splitting.batch import screen

    n = make_inputs(folder / "in", count)
    start = time.perf_counter()
    cold = screen(folder / "in", folder / "cold", workers=WORKERS)
    cold_wall = time.perf_counter() - start
    with LocalCluster(n_workers=WORKERS, threads_per_worker=1, processes=True, dashboard_address=":0") as cluster:
        screen(
            folder / "in" / BUNDLED[0].replace(".cif", "_0.cif"),
            folder / "warm-up",
            scheduler=cluster.scheduler_address,
        )
        start = time.perf_counter()
        warm = screen(folder / "in", folder / "warm", scheduler=cluster.scheduler_address)
        warm_wall = time.perf_counter() - start
    assert warm.structures["ok"].all(), warm.structures.loc[~warm.structures["ok"], "error"].tolist()
    e = warm.engine
    one = float(warm.structures["seconds"].mean())
    figures = {
        "structures": n,
        "atoms_max": int(warm.structures["atoms_input"].max()),
        "cold_per_minute": round(60 * n / cold_wall),
        "warm_per_minute": round(60 * n / warm_wall),
        "warm_wall_s": round(warm_wall, 2),
        "work_s": round(e["work"], 2),
        "engine_share": round(1.0 - e["work"] / (e["seconds"] * e["workers"]), 3),
        "mean_predict_ms": round(1000 * one, 1),
        "cold_ok": int(cold.structures["ok"].sum()),
    }
    print(json.dumps(figures), flush=True)
    return figures


def test_batch_throughput(tmp_path: Path, benchmark) -> None:
    figures = benchmark.pedantic(run, args=(340, tmp_path), rounds=1, iterations=1)
    assert figures["atoms_max"] < 100


if __name__ == "__main__":  # pragma: no cover - a manual run
    import tempfile

    with tempfile.TemporaryDirectory() as tmp:
        run(int(sys.argv[1]) if len(sys.argv) > 1 else 340, Path(tmp))
    shutil.rmtree(tmp, ignore_errors=True)

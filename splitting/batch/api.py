"""Screening many structures: :func:`screen` runs, :func:`read_screening` reads back."""

from __future__ import annotations

import dataclasses
import os
from collections import Counter
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from datetime import UTC, datetime
from pathlib import Path
from typing import TYPE_CHECKING, Any

from ..errors import InputError
from .inputs import collect, options_text, structure_key
from .runner import Limits, Progress, package_version, run_parts
from .store import PartStore, read_metadata

if TYPE_CHECKING:
    import pandas as pd

    from ..crystal.predict import Options

__all__ = ["Screening", "read_screening", "screen"]


@dataclass(frozen=True)
class Screening:
    """The tables of a screening run and what the run did.

    Attributes
    ----------
    folder : Path
        Output folder (``structures.parquet``, ``bands.parquet``, ``parts/``).
    structures : pandas.DataFrame
        One row per input structure (failures included, with ``error_kind`` and ``error``).
    bands : pandas.DataFrame
        One row per structure, unit and band.
    metadata : dict
        Run description stored in the Parquet files (options, limits, version, ...).
    computed : int
        Structures screened by this run.
    reused : int
        Structures taken from parts committed earlier.
    engine : dict
        Wall time, time spent screening, workers and parts of this run (empty when read back).
    """

    folder: Path
    structures: pd.DataFrame
    bands: pd.DataFrame
    metadata: dict[str, Any]
    computed: int = 0
    reused: int = 0
    engine: dict[str, Any] = dataclasses.field(default_factory=dict)

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready summary (no table rows)."""
        s = self.structures
        ok = s["ok"].astype(bool)
        return {
            "folder": os.fspath(self.folder),
            "structures": len(s),
            "ok": int(ok.sum()),
            "failed": int((~ok).sum()),
            "computed": self.computed,
            "reused": self.reused,
            "bands": len(self.bands),
            "failures": dict(Counter(s.loc[~ok, "error_kind"].astype(str)).most_common()),
            "space_groups": dict(Counter(s.loc[ok, "space_group"].astype(str)).most_common(10)),
            "engine": self.engine,
            "files": [os.fspath(self.folder / "structures.parquet"), os.fspath(self.folder / "bands.parquet")],
        }

    def summary(self) -> str:
        """A few lines for the end of a run."""
        d = self.to_dict()
        lines = [
            f"screened {d['structures']} structures: {d['ok']} ok, {d['failed']} failed "
            f"({d['computed']} done now, {d['reused']} from earlier parts)"
        ]
        if d["failures"]:
            lines.append("failures: " + ", ".join(f"{k} {n}" for k, n in d["failures"].items()))
        if d["space_groups"]:
            lines.append("most common space groups: " + ", ".join(f"{k} {n}" for k, n in d["space_groups"].items()))
        e = self.engine
        if e.get("seconds"):
            rate = 60 * d["computed"] / e["seconds"]
            lines.append(
                f"{e['seconds']:.1f} s on {e['workers']} workers ({rate:.0f} structures per minute), "
                f"{e['work']:.1f} s of screening in {e['parts']} parts"
            )
        lines.append(f"tables: {d['files'][0]} ({d['structures']} rows), {d['files'][1]} ({d['bands']} rows)")
        return "\n".join(lines)


def _options_dict(options: Options | None) -> dict[str, Any]:
    from ..crystal.predict import Options

    opts = options or Options()
    return {f.name: getattr(opts, f.name) for f in dataclasses.fields(opts)}


def _jsonable(value: Any) -> Any:
    if isinstance(value, tuple | list):
        return [_jsonable(v) for v in value]
    return value


def screen(
    sources: Sequence[str | os.PathLike[str]] | str | os.PathLike[str],
    out: str | os.PathLike[str],
    *,
    options: Options | None = None,
    scheduler: str | None = None,
    workers: int | None = None,
    timeout: float = 120.0,
    memory: int = 4096,
    part_size: int = 32,
    progress: Callable[[Progress], None] | None = None,
) -> Screening:
    """Screen many structure files on a Dask cluster; results in Parquet, resumable.

    Parameters
    ----------
    sources : path or sequence of paths
        Folders, glob patterns, list files or structure files (see :func:`splitting.batch.inputs.collect`).
    out : path
        Output folder.  Parts committed there by an earlier run with the same options are
        reused: a rerun after an interruption does only what is missing.
    options : splitting.crystal.predict.Options, optional
        Options of the crystal pipeline (part of each structure's key).
    scheduler : str, optional
        Address of a running Dask scheduler (``tcp://host:8786``); default: a local cluster.
    workers : int, optional
        Worker processes of the local cluster (default: one per core).
    timeout : float
        Seconds allowed per structure (0: no limit); past it the structure is a ``Timeout`` row.
    memory : int
        Memory per structure (MiB) above a worker child's start-up size (0: no limit).
    part_size : int
        Most structures committed together in one part.
    progress : callable, optional
        Called with a :class:`~splitting.batch.runner.Progress` after every part.

    Returns
    -------
    Screening

    Raises
    ------
    InputError
        No inputs, a bad option, an unreachable scheduler, an unusable output folder.
    """
    if timeout < 0 or memory < 0:
        raise InputError("the time and memory limits must be zero (no limit) or positive")
    if part_size < 1:
        raise InputError("the part size must be at least 1")
    if workers is not None and workers < 1:
        raise InputError("the number of workers must be at least 1")
    if scheduler:
        from .runner import check_scheduler_address

        check_scheduler_address(scheduler)
    if isinstance(sources, str | os.PathLike):
        sources = [sources]
    paths = collect(sources)
    opts = _options_dict(options)
    text = options_text(_jsonable(opts))
    limits = Limits(timeout=float(timeout), memory=int(memory))
    metadata = {
        "program": "splitting screen",
        "version": package_version(),
        "options": _jsonable(opts),
        "limits": dataclasses.asdict(limits),
    }
    store = PartStore(out, metadata)
    inputs: list[tuple[str, str]] = []
    missing: list[tuple[str, str]] = []
    for p in paths:
        try:
            with open(p, "rb") as handle:
                inputs.append((p, structure_key(handle.read(), text)))
        except OSError as exc:  # a list file may name files that are gone: a failure row, not a stop
            key = structure_key(f"unreadable:{p}".encode(), text)
            inputs.append((p, key))
            from .._io import _os_reason

            missing.append((p, f"{p}: cannot be read ({_os_reason(exc)})"))
    done = store.committed_keys()
    unreadable = {p for p, _ in missing}
    todo: list[tuple[str, str]] = []
    seen: set[str] = set()
    for p, k in inputs:  # each key once: a copy of a file under another name is screened once
        if k not in done and k not in seen and p not in unreadable:
            seen.add(k)
            todo.append((p, k))
    new_missing = [(p, m) for p, m in missing if dict(inputs)[p] not in done]
    if new_missing:
        from .inputs import part_key
        from .work import failure_row

        rows = [failure_row(p, dict(inputs)[p], "InputError", m) for p, m in new_missing]
        store.commit(part_key(r["key"] for r in rows), rows, [])
    engine: dict[str, Any] = {}
    if todo:
        engine = run_parts(
            todo, store, opts, limits, scheduler=scheduler, workers=workers, part_size=part_size, progress=progress
        )
    metadata = {**metadata, "finished": datetime.now(UTC).isoformat(timespec="seconds"), "inputs": len(inputs)}
    store.assemble(inputs, metadata)
    result = read_screening(store.folder)
    reused = len({k for _, k in inputs} & done)
    return dataclasses.replace(result, computed=len(todo) + len(new_missing), reused=reused, engine=engine)


def read_screening(folder: str | os.PathLike[str]) -> Screening:
    """Read the tables of a finished run back as pandas DataFrames (nullable dtypes).

    Raises
    ------
    InputError
        The folder holds no tables written by ``splitting screen``.
    """
    import pandas as pd

    root = Path(folder)
    s_path, b_path = root / "structures.parquet", root / "bands.parquet"
    for p in (s_path, b_path):
        if not p.is_file():
            raise InputError(f"{root}: no {p.name} (not the output folder of a finished screening run)")
    metadata = read_metadata(s_path)
    structures = pd.read_parquet(s_path, dtype_backend="numpy_nullable")
    bands = pd.read_parquet(b_path, dtype_backend="numpy_nullable")
    return Screening(folder=root, structures=structures, bands=bands, metadata=metadata)

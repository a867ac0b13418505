"""Running the parts on a Dask cluster and committing each as it finishes.

One code path for a laptop and for many machines: without a scheduler address a
``distributed.LocalCluster`` is started (one single-threaded worker process per core)
and the client connects to it exactly as it would to a remote ``dask scheduler``.

The client reads each file, sends its bytes with the task (the workers need no shared
file system) and writes every finished part itself.  Tasks are submitted in a bounded
window, so the client's memory does not grow with the number of structures.  A task
lost with its worker is run again by Dask (its part has the same name, so a part
written twice is written identically); a part whose task fails for good is split into
single structures, and a single structure whose task fails for good gets a failure row.
"""

from __future__ import annotations

import os
import time
from collections.abc import Callable, Iterator, Sequence
from dataclasses import dataclass
from importlib.metadata import PackageNotFoundError, version
from typing import Any

from .inputs import part_key
from .store import PartStore
from .work import LOST, Row, failure_row

__all__ = ["Limits", "Progress", "run_part", "run_parts"]


@dataclass(frozen=True)
class Limits:
    """Bounds on the work for one structure.

    Attributes
    ----------
    timeout : float
        Seconds allowed per structure (0: no limit).
    memory : int
        Memory budget per structure in MiB above the worker child's start-up size (0: none).
    """

    timeout: float = 120.0
    memory: int = 4096


@dataclass(frozen=True)
class Progress:
    """State of a run, passed to the progress callback after every committed part.

    Attributes
    ----------
    done : int
        Structures committed in this run.
    total : int
        Structures this run has to do (those found in earlier parts are not counted).
    failed : int
        Failure rows among ``done``.
    elapsed : float
        Seconds since the cluster was ready.
    """

    done: int
    total: int
    failed: int
    elapsed: float


def package_version() -> str:
    """Installed version of ``splitting``."""
    try:
        return version("splitting")
    except PackageNotFoundError:  # pragma: no cover - running from a source tree
        return "unknown"


def run_part(items: Sequence[tuple[str, str, bytes]], options: dict[str, Any], limits: Limits) -> dict[str, Any]:
    """The Dask task: screen the structures of one part in this worker's sandbox.

    Returns ``{"version", "rows", "bands", "work"}`` (``work``: seconds spent screening).
    """
    from .sandbox import sandbox_for

    box = sandbox_for()
    rows: list[Row] = []
    bands: list[Row] = []
    start = time.perf_counter()
    for path, key, data in items:
        row, b = box.run(path, key, data, options, timeout=limits.timeout, memory=limits.memory)
        rows.append(row)
        bands.extend(b)
    return {"version": package_version(), "rows": rows, "bands": bands, "work": time.perf_counter() - start}


@dataclass
class _Part:
    items: list[tuple[str, str, bytes]]

    @property
    def name(self) -> str:
        return part_key(k for _, k, _ in self.items)


def _parts(todo: Sequence[tuple[str, str]], size: int) -> Iterator[_Part]:
    """Parts of at most ``size`` structures (file content read now, when the part is sent)."""
    for i in range(0, len(todo), size):
        items = []
        for path, key in todo[i : i + size]:
            with open(path, "rb") as handle:
                items.append((path, key, handle.read()))
        yield _Part(items)


def _reason(answer: Any) -> str:
    """Text of what a failed task gave back (an exception, or Dask's ``(type, exception, traceback)``)."""
    if isinstance(answer, tuple) and len(answer) == 3 and isinstance(answer[1], BaseException):
        answer = answer[1]
    if isinstance(answer, BaseException):
        return f"{type(answer).__name__}: {answer}" if str(answer) else type(answer).__name__
    return repr(answer)


#: transports a Dask scheduler listens on (the scheme of its address)
SCHEMES = ("tcp", "tls", "ws", "wss", "ucx", "inproc")


def check_scheduler_address(address: str) -> None:
    """Refuse, at once, a scheduler address that cannot be one: [SCHEME://]HOST:PORT with a known
    scheme (tcp when none is given), a host (one written in digits must be an IPv4 address) and a
    port 1-65535.  Whether a scheduler answers there is only known by connecting.

    Examples
    --------
    >>> check_scheduler_address("tcp://10.0.0.5:8786")
    >>> check_scheduler_address("10.0.0.5:8786")
    >>> try:
    ...     check_scheduler_address("tcp://256.0.0.1:1")
    ... except Exception as exc:
    ...     print(str(exc).split(";")[0])
    --scheduler tcp://256.0.0.1:1: 256.0.0.1 is not an IPv4 address (four numbers 0-255)
    """
    import ipaddress
    import re

    from ..errors import InputError

    hint = "give the scheduler as tcp://HOST:PORT"
    scheme, sep, rest = address.partition("://")
    if not sep:
        scheme, rest = "tcp", address
    if scheme not in SCHEMES:
        known = ", ".join(SCHEMES)
        raise InputError(f"--scheduler {address}: unknown transport {scheme!r} (one of {known}); {hint}")
    if scheme == "inproc":
        return
    host, colon, port = rest.rpartition(":")
    host = host.strip("[]")
    if not colon or not host or not port.isdigit() or not 1 <= int(port) <= 65535:
        raise InputError(f"--scheduler {address}: the address needs a host and a port 1-65535; {hint}")
    if re.fullmatch(r"[0-9.]+", host):
        try:
            ipaddress.IPv4Address(host)
        except ValueError:
            raise InputError(
                f"--scheduler {address}: {host} is not an IPv4 address (four numbers 0-255); {hint}"
            ) from None


def _connect(scheduler: str | None, workers: int | None):
    """A client and, without an address, the local cluster it talks to."""
    from distributed import Client, LocalCluster

    if scheduler:
        try:
            return Client(scheduler, timeout="30s"), None
        except (OSError, ValueError, TypeError):  # no answer, or not an address at all
            from ..errors import InputError

            raise InputError(
                f"--scheduler {scheduler}: no Dask scheduler answers at this address within 30 s; give it as "
                "tcp://HOST:PORT, or leave --scheduler out to run on this machine"
            ) from None
    n = workers or os.cpu_count() or 1
    # the dashboard on a free port: a fixed one fails when another cluster holds it
    cluster = LocalCluster(n_workers=n, threads_per_worker=1, processes=True, dashboard_address=":0")
    try:
        return Client(cluster), cluster
    except BaseException:
        cluster.close()
        raise


def run_parts(
    todo: Sequence[tuple[str, str]],
    store: PartStore,
    options: dict[str, Any],
    limits: Limits,
    *,
    scheduler: str | None = None,
    workers: int | None = None,
    part_size: int = 32,
    progress: Callable[[Progress], None] | None = None,
) -> dict[str, Any]:
    """Screen ``todo`` (``(path, key)`` pairs, keys unique) and commit every part to ``store``.

    Returns engine figures: ``{"seconds", "work", "workers", "parts", "failed"}``.
    """
    from distributed import as_completed

    client, cluster = _connect(scheduler, workers)
    try:
        nworkers = len(client.scheduler_info(n_workers=-1)["workers"]) if scheduler else (workers or os.cpu_count())
        nworkers = max(1, nworkers or 1)
        # enough parts to keep every worker busy, never more than part_size structures in one
        size = max(1, min(part_size, -(-len(todo) // (4 * nworkers))))
        window = 4 * nworkers
        pending = _parts(todo, size)
        # results are fetched into the client as each task finishes: a worker killed after
        # finishing a task cannot take the answer with it (Dask would otherwise recompute it)
        queue = as_completed(loop=client.loop, with_results=True, raise_errors=False)
        inflight: dict[Any, _Part] = {}
        retry: list[_Part] = []
        mine = package_version()

        def submit(part: _Part) -> None:
            fut = client.submit(run_part, part.items, options, limits, key=f"screen-{part.name}", pure=False, retries=0)
            inflight[fut] = part
            queue.add(fut)

        def fill() -> None:
            while len(inflight) < window:
                part = retry.pop() if retry else next(pending, None)
                if part is None:
                    return
                submit(part)

        start = time.perf_counter()
        done = failed = parts = 0
        work = 0.0
        fill()
        for fut, answer in queue:
            part = inflight.pop(fut)
            if isinstance(answer, dict):
                if answer["version"] != mine:
                    from ..errors import InputError

                    raise InputError(
                        f"a worker runs splitting {answer['version']}, this client {mine}; install the same version"
                    )
                rows, bands = answer["rows"], answer["bands"]
                work += answer["work"]
            elif len(part.items) > 1:  # lost for good (e.g. killed workers): try each structure alone
                retry.extend(_Part([item]) for item in part.items)
                fut.release()
                fill()
                continue
            else:
                path, key, _ = part.items[0]
                rows, bands = (
                    [failure_row(path, key, LOST, f"{path}: the task failed on every try ({_reason(answer)})")],
                    [],
                )
            fut.release()
            store.commit(part.name, rows, bands)
            parts += 1
            done += len(rows)
            failed += sum(not r["ok"] for r in rows)
            if progress is not None:
                progress(Progress(done, len(todo), failed, time.perf_counter() - start))
            fill()
        return {
            "seconds": time.perf_counter() - start,
            "work": work,
            "workers": nworkers,
            "parts": parts,
            "failed": failed,
        }
    finally:
        client.close()
        if cluster is not None:
            cluster.close()

"""A child process that screens one structure at a time, within a time and a memory limit.

A Dask task cannot be stopped from outside once it runs, and a structure that makes the
pipeline loop or swell would hold a worker for ever.  So each worker thread keeps one
child Python process (:class:`Sandbox`) that does the work of
:func:`splitting.batch.work.screen_one`:

* the child's address space is limited (the soft ``resource.RLIMIT_AS``, set for every
  structure) to what it holds after start-up plus the per-structure memory budget, so an
  oversized structure raises ``MemoryError`` there and becomes a failure row;
* the parent waits at most the per-structure time limit for the answer; past it the child
  is killed, the structure gets a ``Timeout`` row and a fresh child takes the next one;
* a child that dies (a crash in compiled code) gives a ``Crash`` row.

Messages are length-prefixed pickles over the child's standard input and output; the
child leaves when its input closes (the worker ended), so no child outlives its worker.
POSIX only (``select`` on pipes, ``resource``).
"""

from __future__ import annotations

import os
import pickle
import select
import signal
import struct
import subprocess
import sys
import tempfile
import threading
import time
from pathlib import Path
from typing import Any, BinaryIO

from .work import CRASH, MEMORY, TIMEOUT, Row, failure_row

__all__ = ["Sandbox", "sandbox_for"]

_HEADER = struct.Struct(">Q")
_READY = b"ready"
_START_TIMEOUT = 300.0  # seconds allowed for the child's imports (a cold disk, a busy machine)


def _send(stream: BinaryIO, obj: Any) -> None:
    data = pickle.dumps(obj, protocol=5)
    stream.write(_HEADER.pack(len(data)) + data)
    stream.flush()


def _read_exactly(fd: int, n: int, deadline: float | None) -> bytes | None:
    """``n`` bytes from ``fd``; ``None`` at end of file; ``TimeoutError`` past ``deadline``."""
    chunks, got = [], 0
    while got < n:
        if deadline is not None:
            left = deadline - time.monotonic()
            if left <= 0 or not select.select([fd], [], [], left)[0]:
                raise TimeoutError
        chunk = os.read(fd, n - got)
        if not chunk:
            return None
        chunks.append(chunk)
        got += len(chunk)
    return b"".join(chunks)


def _receive(fd: int, deadline: float | None) -> Any:
    head = _read_exactly(fd, _HEADER.size, deadline)
    if head is None:
        return None
    body = _read_exactly(fd, _HEADER.unpack(head)[0], deadline)
    return None if body is None else pickle.loads(body)


class Sandbox:
    """One child process screening structures sent to it, restarted after a timeout or a crash."""

    def __init__(self) -> None:
        self._proc: subprocess.Popen[bytes] | None = None

    def _start(self) -> subprocess.Popen[bytes]:
        env = dict(os.environ)
        env.update({"OPENBLAS_NUM_THREADS": "1", "OMP_NUM_THREADS": "1", "MKL_NUM_THREADS": "1"})
        here = str(Path(__file__).resolve().parents[2])  # the folder holding the package
        env["PYTHONPATH"] = os.pathsep.join(p for p in (here, env.get("PYTHONPATH")) if p)
        proc = subprocess.Popen(
            [sys.executable, "-m", "splitting.batch.sandbox"],
            stdin=subprocess.PIPE,
            stdout=subprocess.PIPE,
            stderr=subprocess.DEVNULL,
            env=env,
        )
        assert proc.stdout is not None
        try:
            ready = _receive(proc.stdout.fileno(), time.monotonic() + _START_TIMEOUT)
        except TimeoutError:
            ready = None
        if ready != _READY:
            self._stop(proc)
            raise RuntimeError("the screening child process did not start")
        return proc

    @staticmethod
    def _stop(proc: subprocess.Popen[bytes]) -> int:
        if proc.poll() is None:
            proc.kill()
        code = proc.wait()
        for stream in (proc.stdin, proc.stdout):
            if stream is not None:
                stream.close()
        return code

    def run(
        self, path: str, key: str, data: bytes, options: dict[str, Any], *, timeout: float, memory: int
    ) -> tuple[Row, list[Row]]:
        """Screen one structure (file content ``data``, shown as ``path``) within the limits.

        ``timeout`` in seconds, ``memory`` in MiB above the child's start-up size; 0 for no limit.
        """
        if self._proc is not None and self._proc.poll() is not None:  # died while idle
            self._stop(self._proc)
            self._proc = None
        if self._proc is None:
            self._proc = self._start()
        proc = self._proc
        assert proc.stdin is not None and proc.stdout is not None
        start = time.monotonic()
        try:
            _send(proc.stdin, (path, key, data, options, memory))
            answer = _receive(proc.stdout.fileno(), start + timeout if timeout > 0 else None)
        except TimeoutError:
            self._stop(proc)
            self._proc = None
            return failure_row(
                path, key, TIMEOUT, f"{path}: not done within the time limit of {timeout:g} s", seconds=timeout
            ), []
        except BrokenPipeError:
            answer = None
        if answer is None:  # the child died
            code = self._stop(proc)
            self._proc = None
            elapsed = time.monotonic() - start
            if code < 0 and -code in (signal.SIGKILL, signal.SIGSEGV, signal.SIGABRT, signal.SIGBUS):
                how = f"signal {signal.Signals(-code).name}"
            else:
                how = f"exit status {code}"
            kind = MEMORY if code == -signal.SIGKILL else CRASH
            return failure_row(path, key, kind, f"{path}: the computation died ({how})", seconds=elapsed), []
        return answer

    def close(self) -> None:
        """End the child (it also ends by itself when this process ends)."""
        if self._proc is not None:
            proc, self._proc = self._proc, None
            if proc.stdin is not None:
                proc.stdin.close()
            try:
                proc.wait(timeout=5)
            except subprocess.TimeoutExpired:
                pass
            self._stop(proc)


_LOCAL = threading.local()


def sandbox_for() -> Sandbox:
    """The sandbox of the calling thread (one child per worker thread, kept between tasks)."""
    box = getattr(_LOCAL, "box", None)
    if box is None:
        box = _LOCAL.box = Sandbox()
    return box


# ------------------------------------------------------------------ the child
def _address_space() -> int | None:
    """Current virtual size of this process in bytes (Linux), else ``None``."""
    try:
        with open("/proc/self/statm") as handle:
            return int(handle.read().split()[0]) * os.sysconf("SC_PAGE_SIZE")
    except (OSError, ValueError):
        return None


def _trim_heap() -> None:
    """Give the heap's free memory back to the system (glibc's ``malloc_trim``; elsewhere nothing).

    The budget is address space above the size measured after the warm-up: free heap left
    inside that size would be a reserve the budget does not see.
    """
    import ctypes
    import ctypes.util

    name = ctypes.util.find_library("c")
    try:
        ctypes.CDLL(name).malloc_trim(0)
    except (OSError, AttributeError, TypeError):  # no glibc (musl, macOS): the budget is looser
        pass


def _warm_up(folder: str) -> None:
    """Screen a small made-up crystal once, so that lazy imports and caches are filled before the limit."""
    import ase.io
    from ase.build import bulk

    from .work import screen_one

    file = os.path.join(folder, "warm-up.cif")
    ase.io.write(file, bulk("NaCl", "rocksalt", a=5.64), format="cif")  # invented rock-salt cell
    try:
        screen_one(file, "", file, {})
    finally:
        os.unlink(file)


def _limit_memory(base: int | None, memory: int) -> None:
    """Soft address-space limit ``base + memory`` MiB (none when ``memory`` is 0 or ``base`` unknown)."""
    import resource

    _, hard = resource.getrlimit(resource.RLIMIT_AS)
    soft = hard if memory <= 0 or base is None else base + memory * 2**20
    if hard != resource.RLIM_INFINITY:
        soft = min(soft, hard)
    resource.setrlimit(resource.RLIMIT_AS, (soft, hard))


def _child() -> None:
    from .work import MEMORY, screen_one

    folder = tempfile.mkdtemp(prefix="splitting-screen-")
    _warm_up(folder)
    import gc

    gc.collect()
    _trim_heap()
    base = _address_space()
    stdin, stdout = sys.stdin.buffer, sys.stdout.buffer
    sys.stdout = sys.stderr  # nothing printed by a library may corrupt the answers
    _send(stdout, _READY)
    try:
        while True:
            message = _receive(stdin.fileno(), None)
            if message is None:
                return
            path, key, data, options, memory = message
            _limit_memory(base, memory)
            file = os.path.join(folder, os.path.basename(path) or "structure")
            try:
                with open(file, "wb") as handle:
                    handle.write(data)
                row, bands = screen_one(path, key, file, options)
            except MemoryError:
                row, bands = failure_row(path, key, MEMORY, ""), []
            finally:
                if os.path.exists(file):
                    os.unlink(file)
            if row["error_kind"] == MEMORY:
                row["error"] = f"{path}: ran out of memory (limit {memory} MiB per structure)"
            try:
                _send(stdout, (row, bands))
            except BrokenPipeError:
                return
    finally:
        os.rmdir(folder)


if __name__ == "__main__":  # pragma: no cover - runs in the child
    _child()

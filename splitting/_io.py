"""Small file helpers shared by every writer: outputs appear whole or not at all."""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

from .errors import InputError

__all__ = ["atomic_write_bytes", "atomic_write_text", "read_text"]


def atomic_write_bytes(path: str | os.PathLike[str], data: bytes) -> Path:
    """Write ``data`` to ``path`` through a temporary file and a rename.

    A reader never sees a half-written file, and a failure leaves any earlier
    file in place.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "x.txt"
    >>> atomic_write_bytes(p, b"ok").read_bytes()
    b'ok'
    """
    target = Path(path)
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.is_dir():
        raise InputError(f"cannot write {target}: folder {folder} does not exist")
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".part", dir=folder)
    try:
        with os.fdopen(fd, "wb") as handle:
            handle.write(data)
        umask = os.umask(0)
        os.umask(umask)
        os.chmod(tmp, 0o666 & ~umask)  # as an ordinary new file would be
        os.replace(tmp, target)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return target


def atomic_write_text(path: str | os.PathLike[str], text: str) -> Path:
    """Write UTF-8 ``text`` atomically; see :func:`atomic_write_bytes`."""
    return atomic_write_bytes(path, text.encode("utf-8"))


def read_text(path: str | os.PathLike[str]) -> str:
    """Read a UTF-8 text file, turning the usual failures into :class:`InputError`."""
    p = Path(path)
    if not p.exists():
        raise InputError(f"{p}: no such file")
    if p.is_dir():
        raise InputError(f"{p}: is a folder, not a file")
    try:
        return p.read_text(encoding="utf-8-sig")
    except UnicodeDecodeError as exc:
        raise InputError(f"{p}: not a UTF-8 text file ({exc.reason})") from None
    except OSError as exc:
        raise InputError(f"{p}: cannot be read ({exc.strerror})") from None

"""Small file helpers shared by every writer: outputs appear whole or not at all."""

from __future__ import annotations

import errno
import os
import stat
import tempfile
from pathlib import Path

from .defaults import DEFAULT_INPUT_MB
from .errors import InputError, MemoryShortageError, OutputError

__all__ = [
    "atomic_folder",
    "atomic_write_bytes",
    "atomic_write_text",
    "check_input_file",
    "input_limit",
    "output_error",
    "read_input_bytes",
    "read_text",
    "set_input_limit",
]

_LIMIT: list[int] = []
_COMPRESSED = {".gz": "gzip", ".bz2": "bz2", ".xz": "lzma"}


def set_input_limit(megabytes: float | None) -> None:
    """Set the cap on the bytes read from one input file (``None``: the default)."""
    _LIMIT[:] = [] if megabytes is None else [int(megabytes * 2**20)]


def input_limit() -> int:
    """The cap on the bytes read from one input file, in bytes."""
    if _LIMIT:
        return _LIMIT[0]
    env = os.environ.get("SPLITTING_MAX_INPUT_MB")
    try:
        mb = float(env) if env else DEFAULT_INPUT_MB
    except ValueError:
        raise InputError(f"SPLITTING_MAX_INPUT_MB={env!r} is not a number of megabytes") from None
    if not mb > 0 or mb == float("inf"):
        raise InputError(f"SPLITTING_MAX_INPUT_MB={env!r} must be a positive number of megabytes")
    return int(mb * 2**20)


def _too_big(p: Path, size: str) -> InputError:
    mb = input_limit() / 2**20
    return InputError(
        f"{p}: {size}, more than the input limit of {mb:g} MB; raise the limit with --max-input-mb "
        "(or SPLITTING_MAX_INPUT_MB) if the file is really meant"
    )


def _os_reason(exc: OSError) -> str:
    if exc.errno == errno.ENAMETOOLONG:
        return "the file name is too long"
    if exc.errno in (errno.EACCES, errno.EPERM):
        return "permission denied"
    if exc.errno == errno.ELOOP:
        return "too many levels of symbolic links"
    if exc.errno == errno.ENOTDIR:
        return "a part of the path is not a folder"
    if exc.errno == errno.ENOENT:
        return "no such file or folder (or the folder takes no new files)"
    if exc.errno == errno.EROFS:
        return "the file system is read-only"
    if exc.strerror:
        return exc.strerror[:1].lower() + exc.strerror[1:]
    return "the operating system refused it"


def check_input_file(path: str | os.PathLike[str], *, what: str = "file") -> Path:
    """Check that ``path`` names a regular, readable file within the input limit.

    Devices (``/dev/zero``), FIFOs and sockets are refused: they can block or never end.

    Examples
    --------
    >>> check_input_file("/dev/zero")
    Traceback (most recent call last):
    ...
    splitting.errors.InputError: /dev/zero: not a regular file (a device); give a file
    """
    p = Path(path)
    try:
        st = p.stat()
    except FileNotFoundError:
        raise InputError(f"{p}: no such file") from None
    except OSError as exc:
        raise InputError(f"{p}: cannot be read ({_os_reason(exc)})") from None
    if stat.S_ISDIR(st.st_mode):
        raise InputError(f"{p}: is a folder, not a {what}")
    if not stat.S_ISREG(st.st_mode):
        kind = "a FIFO" if stat.S_ISFIFO(st.st_mode) else "a socket" if stat.S_ISSOCK(st.st_mode) else "a device"
        raise InputError(f"{p}: not a regular file ({kind}); give a {what}")
    if st.st_size > input_limit():
        raise _too_big(p, f"{st.st_size / 2**20:.0f} MB")
    if not os.access(p, os.R_OK):
        raise InputError(f"{p}: cannot be read (permission denied)")
    return p


def read_input_bytes(path: str | os.PathLike[str], *, what: str = "file") -> bytes:
    """The bytes of an input file, decompressed (.gz, .bz2, .xz) up to the input limit."""
    p = check_input_file(path, what=what)
    limit = input_limit()
    opener = _COMPRESSED.get(p.suffix.lower())
    try:
        if opener is None:
            return p.read_bytes()
        import importlib

        module = importlib.import_module(opener)
        with module.open(p, "rb") as handle:
            data = handle.read(limit + 1)
    except OSError as exc:
        if opener is not None and not isinstance(exc, PermissionError):
            raise InputError(f"{p}: not a valid {p.suffix} compressed file") from None
        raise InputError(f"{p}: cannot be read ({_os_reason(exc)})") from None
    except EOFError:
        raise InputError(f"{p}: the compressed file is cut short") from None
    except MemoryError:
        raise MemoryShortageError(f"{p}: reading the file needs more memory than this process may have") from None
    except Exception:  # lzma.LZMAError, zlib.error and similar: damaged data
        raise InputError(f"{p}: not a valid {p.suffix} compressed file") from None
    if len(data) > limit:
        raise _too_big(p, "decompresses to more")
    return data


def output_error(target: str | os.PathLike[str], exc: OSError) -> OutputError:
    """An :class:`OutputError` naming ``target`` and saying in plain words why it failed."""
    reasons = {
        errno.ENOSPC: "no space left on the device",
        errno.EDQUOT: "disk quota exceeded",
        errno.EROFS: "the file system is read-only",
        errno.EISDIR: "it is a folder",
        errno.EEXIST: "it already exists",
    }
    reason = reasons.get(exc.errno or 0) or _os_reason(exc)
    return OutputError(f"cannot write {target}: {reason}")


def _check_folder(target: Path) -> Path:
    folder = target.parent if str(target.parent) else Path(".")
    try:
        if not folder.is_dir():
            raise OutputError(f"cannot write {target}: folder {folder} does not exist")
        if target.is_dir():
            raise OutputError(f"cannot write {target}: it is a folder; give a file name")
    except OSError as exc:
        raise output_error(target, exc) from None
    return folder


def atomic_write_bytes(path: str | os.PathLike[str], data: bytes) -> Path:
    """Write ``data`` to ``path`` through a temporary file and a rename.

    A reader never sees a half-written file, and a failure leaves any earlier
    file in place.

    Raises
    ------
    OutputError
        The folder is missing or read-only, the name is a folder, the disk is full.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "x.txt"
    >>> atomic_write_bytes(p, b"ok").read_bytes()
    b'ok'
    """
    target = Path(path)
    folder = _check_folder(target)
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{target.name[:100]}.", suffix=".part", dir=folder)
    except OSError as exc:
        raise output_error(target, exc) from None
    try:
        with os.fdopen(fd, "wb") as handle:
            handle.write(data)
            handle.flush()
            os.fsync(handle.fileno())
        umask = os.umask(0)
        os.umask(umask)
        os.chmod(tmp, 0o666 & ~umask)  # as an ordinary new file would be
        os.replace(tmp, target)
    except OSError as exc:
        Path(tmp).unlink(missing_ok=True)
        raise output_error(target, exc) from None
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return target


class atomic_folder:  # noqa: N801 - used as a context manager, like open()
    """Build a folder of outputs in a temporary sibling and move it into place whole.

    Inside the ``with`` block, write into the yielded path; on success the folder appears
    at ``path``, on failure nothing does.  An existing folder at ``path`` is replaced only
    when it is empty or holds the ``marker`` file of an earlier run (a folder of the user's
    own files is never removed).

    Examples
    --------
    >>> import tempfile, pathlib
    >>> out = pathlib.Path(tempfile.mkdtemp()) / "results"
    >>> with atomic_folder(out) as tmp:
    ...     _ = (tmp / "a.txt").write_text("a")
    >>> sorted(p.name for p in out.iterdir())
    ['.splitting-output', 'a.txt']
    """

    def __init__(self, path: str | os.PathLike[str], *, marker: str = ".splitting-output"):
        self.target = Path(path)
        self.marker = marker
        self.tmp: Path | None = None

    def __enter__(self) -> Path:
        target = self.target
        folder = target.parent if str(target.parent) else Path(".")
        try:
            if target.exists() and not target.is_dir():
                raise OutputError(f"cannot write to {target}: a file of that name exists; give a folder name")
            if not folder.is_dir():
                raise OutputError(f"cannot write {target}: folder {folder} does not exist")
            if target.is_dir() and any(target.iterdir()) and not (target / self.marker).exists():
                raise OutputError(
                    f"cannot write to {target}: the folder exists and holds other files; give a new folder name"
                )
            self.tmp = Path(tempfile.mkdtemp(prefix=f".{target.name[:100]}.", suffix=".part", dir=folder))
            (self.tmp / self.marker).write_text("written by splitting; the folder is replaced on the next run\n")
        except OSError as exc:
            if self.tmp is not None:
                import shutil

                shutil.rmtree(self.tmp, ignore_errors=True)
            raise output_error(target, exc) from None
        return self.tmp

    def __exit__(self, exc_type, exc, tb) -> bool:
        import shutil

        assert self.tmp is not None
        if exc_type is not None:
            shutil.rmtree(self.tmp, ignore_errors=True)
            if isinstance(exc, OSError):
                raise output_error(self.target, exc) from None
            return False
        old = None
        try:
            os.chmod(self.tmp, 0o777 & ~_umask())
            if self.target.exists():
                old = self.target.with_name(f".{self.target.name[:100]}.old-{os.getpid()}")
                os.replace(self.target, old)
            os.replace(self.tmp, self.target)
        except OSError as exc:
            if old is not None and not self.target.exists():
                os.replace(old, self.target)
            shutil.rmtree(self.tmp, ignore_errors=True)
            raise output_error(self.target, exc) from None
        if old is not None:
            shutil.rmtree(old, ignore_errors=True)
        return False


def _umask() -> int:
    umask = os.umask(0)
    os.umask(umask)
    return umask


def atomic_write_text(path: str | os.PathLike[str], text: str) -> Path:
    """Write UTF-8 ``text`` atomically; see :func:`atomic_write_bytes`."""
    return atomic_write_bytes(path, text.encode("utf-8"))


def read_text(path: str | os.PathLike[str]) -> str:
    """Read a UTF-8 text file, turning the usual failures into :class:`InputError`."""
    p = Path(path)
    from ._reasons import decode_text

    return decode_text(read_input_bytes(p), str(p))

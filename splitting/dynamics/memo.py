"""One model estimate per distinct structure: kept for the process, and on disk in the cache folder.

Several commands (and one command given the same file twice) ask for the estimate of the
same structure; it is computed once.  The key is a hash of the file's bytes, the file
format, the crystal-pipeline options, the model options (without the cache folder) and a
fingerprint of the code (the package version and the text of its modules and data), so a
changed file, option or program never reuses an old result.  With a cache folder the
result is also written there as JSON (``estimate-<key>.json``, full precision) and read
back by later runs; an unreadable entry is computed again and rewritten.
"""

from __future__ import annotations

import dataclasses
import functools
import hashlib
import json
import os
from collections.abc import Callable
from pathlib import Path

from .results import BandEstimate, Estimate, Line

__all__ = ["cached_estimate", "clear", "estimate_key"]

Progress = Callable[[str], None]

#: results kept in this process, by key
_MEMO: dict[str, Estimate] = {}
#: format of the files in the cache folder
_FORMAT = 1


@functools.lru_cache(maxsize=1)
def _code_fingerprint() -> str:
    """Hash of the package version and of every module and data file of the package."""
    from .. import __version__

    root = Path(__file__).resolve().parent.parent
    h = hashlib.sha256(f"{__version__}/{_FORMAT}".encode())
    for p in sorted(root.rglob("*")):
        if p.is_file() and p.suffix in (".py", ".toml", ".json", ".csv", ".txt") and "__pycache__" not in p.parts:
            h.update(p.relative_to(root).as_posix().encode())
            h.update(p.read_bytes())
    return h.hexdigest()


def estimate_key(path: str | os.PathLike[str], options=None, model=None, *, format: str | None = None) -> str:
    """The key of one estimate: file bytes, format, pipeline options, model options (not the cache) and code."""
    from ..crystal.predict import Options
    from .estimate import EstimateOptions

    opts = options or Options()
    mo = dataclasses.replace(model or EstimateOptions(), cache=None)
    from .._io import read_input_bytes

    h = hashlib.sha256()
    h.update(hashlib.sha256(read_input_bytes(path, what="structure file")).digest())
    for part in (format or "", repr(opts), repr(mo), _code_fingerprint()):
        h.update(b"\0" + part.encode())
    return h.hexdigest()[:32]


def cached_estimate(
    path: str | os.PathLike[str],
    options=None,
    model=None,
    *,
    progress: Progress | None = None,
    format: str | None = None,
) -> Estimate:
    """:func:`splitting.dynamics.estimate`, computed once per distinct structure and options.

    The result carries ``path`` as its source even when it was computed for a copy of
    the file under another name.
    """
    from .estimate import EstimateOptions, estimate

    mo = model or EstimateOptions()
    key = estimate_key(path, options, mo, format=format)
    source = os.fspath(path)
    if key in _MEMO:
        if progress:
            progress(f"{source}: estimate already computed in this run")
        return dataclasses.replace(_MEMO[key], source=source)
    target = Path(mo.cache) / f"estimate-{key}.json" if mo.cache else None
    if target is not None and target.is_file():
        found = _read(target)
        if found is not None:
            if progress:
                progress(f"{source}: estimate read from the cache")
            _MEMO[key] = found
            return dataclasses.replace(found, source=source)
    result = estimate(path, options, mo, progress=progress, format=format)
    _MEMO[key] = result
    if target is not None:
        _write(target, result)
    return result


def clear() -> None:
    """Forget the results kept in this process."""
    _MEMO.clear()


def _plain(value):
    """Lists back to tuples, all the way down (the dataclasses hold tuples)."""
    if isinstance(value, list):
        return tuple(_plain(v) for v in value)
    return value


def _read(target: Path) -> Estimate | None:
    try:
        data = json.loads(target.read_text(encoding="utf-8"))
        if data.get("format") != _FORMAT:
            return None
        fields = {k: _plain(v) for k, v in data["estimate"].items() if k not in ("lines", "bands", "relaxation")}
        if data["estimate"].get("relaxation") is not None:
            from .relax import Relaxation

            fields["relaxation"] = Relaxation(**{k: _plain(v) for k, v in data["estimate"]["relaxation"].items()})
        lines = tuple(Line(**{k: _plain(v) for k, v in line.items()}) for line in data["estimate"]["lines"])
        bands = tuple(BandEstimate(**{k: _plain(v) for k, v in b.items()}) for b in data["estimate"]["bands"])
        return Estimate(lines=lines, bands=bands, **fields)
    except (OSError, ValueError, TypeError, KeyError, AttributeError):
        return None  # an unreadable or outdated entry is computed again


def _write(target: Path, result: Estimate) -> None:
    from .._io import atomic_write_text

    text = json.dumps({"format": _FORMAT, "estimate": dataclasses.asdict(result)}, ensure_ascii=False)
    try:
        atomic_write_text(target, text + "\n")
    except OSError:
        pass  # a cache that cannot be written only costs time

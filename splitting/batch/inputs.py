"""What to screen: folders, glob patterns and list files, expanded to structure files.

Every structure is known by a key: a hash of its file content and of the pipeline
options, so a renamed or copied file is not screened twice, and a changed file or a
changed option is screened again.
"""

from __future__ import annotations

import glob
import hashlib
import json
import os
from collections.abc import Iterable, Sequence
from pathlib import Path
from typing import Any

from ..errors import InputError

__all__ = ["STRUCTURE_SUFFIXES", "collect", "options_text", "structure_key"]

#: File endings taken from a folder (any file named directly, by a pattern or in a list is taken).
STRUCTURE_SUFFIXES = (".cif", ".mcif", ".vasp", ".poscar", ".xyz", ".extxyz", ".res", ".pdb", ".cell", ".gen")
_STRUCTURE_NAMES = ("POSCAR", "CONTCAR")
#: Endings of list files: one structure path per line, relative to the list file's folder.
LIST_SUFFIXES = (".txt", ".list", ".lst")
_PATTERN = set("*?[")


def _in_folder(folder: Path) -> list[str]:
    found = []
    for root, dirs, files in os.walk(folder):
        dirs[:] = sorted(d for d in dirs if not d.startswith("."))
        for name in sorted(files):
            if name.startswith("."):
                continue
            if name.lower().endswith(STRUCTURE_SUFFIXES) or name.split(".")[0] in _STRUCTURE_NAMES:
                found.append(os.path.join(root, name))
    return found


def _in_list(path: Path) -> list[str]:
    from .._io import read_text

    out = []
    for line in read_text(path).splitlines():
        line = line.strip()
        if not line or line.startswith("#"):
            continue
        entry = Path(line).expanduser()
        out.append(os.fspath(entry if entry.is_absolute() else path.parent / entry))
    return out


def collect(sources: Sequence[str | os.PathLike[str]]) -> list[str]:
    """Structure files named by ``sources``, in order, each once.

    A source is a folder (its structure files, recursively, by ending), a glob pattern
    (``"db/**/*.cif"``), a list file (ending ``.txt``, ``.list`` or ``.lst``: one path a
    line, ``#`` comments) or a structure file.  A file named in a list that does not exist
    is kept: it becomes a failure row, not a stop.

    Raises
    ------
    InputError
        A source that does not exist, or a folder or pattern with no structure file.

    Examples
    --------
    >>> from pathlib import Path
    >>> folder = Path(__file__).parents[2] / "structures"
    >>> [Path(p).name for p in collect([folder / "calcite.*"])]
    ['calcite.cif', 'calcite.extxyz', 'calcite.vasp']
    """
    if not sources:
        raise InputError("nothing to screen: give a folder, a glob pattern or a list file")
    out: list[str] = []
    for source in sources:
        text = os.fspath(source)
        path = Path(text).expanduser()
        if path.is_dir():
            found = _in_folder(path)
            if not found:
                raise InputError(f"{text}: no structure files in this folder (endings {', '.join(STRUCTURE_SUFFIXES)})")
        elif path.is_file():
            found = _in_list(path) if path.suffix.lower() in LIST_SUFFIXES else [text]
        elif _PATTERN & set(text):
            found = sorted(p for p in glob.glob(os.path.expanduser(text), recursive=True) if os.path.isfile(p))
            if not found:
                raise InputError(f"{text}: the pattern matches no file")
        else:
            raise InputError(f"{text}: no such file or folder")
        out.extend(found)
    return list(dict.fromkeys(out))


def options_text(options: dict[str, Any]) -> str:
    """Canonical JSON of the pipeline options (sorted keys): what the keys hash."""
    return json.dumps(options, sort_keys=True, separators=(",", ":"))


def structure_key(content: bytes, options: str) -> str:
    """Key of one structure: hash of the options text and the file content.

    >>> structure_key(b"data", "{}") == structure_key(b"data", "{}") != structure_key(b"data", '{"a":1}')
    True
    """
    h = hashlib.sha256()
    h.update(b"splitting-screen-1\0")
    h.update(options.encode())
    h.update(b"\0")
    h.update(content)
    return h.hexdigest()[:32]


def part_key(keys: Iterable[str]) -> str:
    """Name of a part: hash of the keys it holds (the same structures give the same part)."""
    return hashlib.sha256("\n".join(sorted(keys)).encode()).hexdigest()[:24]

"""Reading structure files through ase, with every failure turned into one clear line."""

from __future__ import annotations

import os
import warnings
from pathlib import Path

from .errors import InputError

__all__ = ["read_atoms"]


def read_atoms(path: str | os.PathLike[str], *, format: str | None = None):
    """Read the last frame of any file ase understands.

    Raises
    ------
    InputError
        Missing, empty or unreadable file, unknown format, or a file with no atoms.
    """
    import ase.io

    p = Path(path)
    if not p.exists():
        raise InputError(f"{p}: no such file")
    if p.is_dir():
        raise InputError(f"{p}: is a folder, not a structure file")
    if p.stat().st_size == 0:
        raise InputError(f"{p}: the file is empty")
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            atoms = ase.io.read(str(p), format=format)
    except ase.io.formats.UnknownFileTypeError:
        raise InputError(f"{p}: unknown file format; give a CIF, POSCAR, XYZ or another format ase reads") from None
    except StopIteration:
        raise InputError(f"{p}: no structure found in the file") from None
    except Exception as exc:  # ase raises many types for malformed files
        msg = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
        raise InputError(f"{p}: cannot be read as a structure ({msg})") from None
    if isinstance(atoms, list):
        if not atoms:
            raise InputError(f"{p}: no structure found in the file")
        atoms = atoms[-1]
    if len(atoms) == 0:
        raise InputError(f"{p}: the structure has no atoms")
    return atoms

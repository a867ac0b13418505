"""Reading structure files, with every failure turned into one clear line.

CIF goes through gemmi (:mod:`splitting.cif`); every other format through ase.  Before any
number reaches the symmetry library it is checked here: finite coordinates, a cell with
positive, finite, not absurd lengths and a volume that is not flat.
"""

from __future__ import annotations

import math
import os
import re
import tempfile
import warnings
from collections.abc import Sequence
from pathlib import Path

import numpy as np

from ._io import read_input_bytes
from ._reasons import decode_text
from .errors import InputError, MemoryShortageError

__all__ = ["check_atoms", "check_cell_parameters", "read_atoms"]

#: shortest and longest cell edge accepted, angstrom
MIN_CELL_LENGTH = 0.5
MAX_CELL_LENGTH = 1.0e4
#: smallest volume / (a b c) accepted; below it the cell is flat (e.g. an angle near 0 or 180 degrees)
MIN_VOLUME_FRACTION = 0.02
#: largest Cartesian coordinate accepted, angstrom
MAX_COORDINATE = 1.0e6

_COMPRESSED = (".gz", ".bz2", ".xz")


def check_cell_parameters(params: Sequence[float], where: str) -> None:
    """Raise InputError unless a, b, c (angstrom) and alpha, beta, gamma (degrees) make a usable cell.

    Examples
    --------
    >>> check_cell_parameters([4.0, 4.0, 4.0, 90, 90, 90], "x.cif")
    >>> check_cell_parameters([-1.0, 4.0, 4.0, 90, 90, 90], "x.cif")
    Traceback (most recent call last):
    ...
    splitting.errors.InputError: x.cif: cell length a is -1 Å; a cell length must be positive
    """
    names = ("a", "b", "c", "alpha", "beta", "gamma")
    for name, v in zip(names, params, strict=True):
        kind = "length" if len(name) == 1 else "angle"
        unit = "A" if kind == "length" else "degrees"
        if not math.isfinite(v):
            raise InputError(f"{where}: cell {kind} {name} is {v}, not a finite number")
        if kind == "length":
            if v <= 0:
                raise InputError(f"{where}: cell length {name} is {v:g} Å; a cell length must be positive")
            if v < MIN_CELL_LENGTH or v > MAX_CELL_LENGTH:
                raise InputError(
                    f"{where}: cell length {name} is {v:g} Å, outside {MIN_CELL_LENGTH:g}-{MAX_CELL_LENGTH:g} Å; "
                    "not the cell of a crystal"
                )
        elif not 0 < v < 180:
            raise InputError(f"{where}: cell angle {name} is {v:g} {unit}; an angle must lie between 0 and 180")
    ca, cb, cg = (math.cos(math.radians(x)) for x in params[3:])
    fraction2 = 1 - ca * ca - cb * cb - cg * cg + 2 * ca * cb * cg
    if fraction2 < MIN_VOLUME_FRACTION**2:
        raise InputError(
            f"{where}: the cell is flat (angles {params[3]:g}, {params[4]:g}, {params[5]:g} degrees leave "
            f"{math.sqrt(max(fraction2, 0.0)):.2g} of a*b*c as volume); check the cell angles"
        )


def check_atoms(atoms, where: str) -> None:
    """Raise InputError for non-finite or absurd coordinates, or an unusable periodic cell."""
    pos = np.asarray(atoms.positions, dtype=float)
    bad = ~np.isfinite(pos).all(axis=1)
    if bad.any():
        i = int(np.flatnonzero(bad)[0])
        raise InputError(
            f"{where}: atom {i + 1} ({atoms[i].symbol}) has a coordinate that is not a finite number "
            f"({', '.join(f'{x:g}' for x in pos[i])})"
        )
    if len(pos) and np.abs(pos).max() > MAX_COORDINATE:
        i = int(np.argmax(np.abs(pos).max(axis=1)))
        raise InputError(f"{where}: atom {i + 1} ({atoms[i].symbol}) lies {np.abs(pos[i]).max():g} Å from the origin")
    if any(atoms.pbc):
        cell = np.asarray(atoms.cell[:], dtype=float)
        if not np.isfinite(cell).all():
            raise InputError(f"{where}: the cell holds a number that is not finite")
        if atoms.cell.rank < 3:
            raise InputError(f"{where}: the cell vectors do not span three dimensions")
        angles = []
        with np.errstate(all="ignore"):  # lengths near 1e308 overflow: check_cell_parameters names them
            lengths = np.linalg.norm(cell, axis=1)
            for i, j in ((1, 2), (0, 2), (0, 1)):
                cosine = float(np.dot(cell[i], cell[j]) / (lengths[i] * lengths[j]))
                cosine = cosine if math.isfinite(cosine) else 0.0
                angles.append(math.degrees(math.acos(max(-1.0, min(1.0, cosine)))))
        check_cell_parameters([*lengths.tolist(), *angles], where)


def _xyz_counts(data: bytes, where: str) -> None:
    """Check that every frame of an XYZ file holds as many lines as its count line claims."""
    lines = data.splitlines()
    n_lines = len(lines)
    pos = 0
    while pos < n_lines:
        head = lines[pos].strip()
        if not head:
            pos += 1
            continue
        try:
            n = int(head.split()[0])
        except ValueError:
            shown = head[:40].decode(errors="replace")
            raise InputError(f"{where}: line {pos + 1} should give the number of atoms, but reads {shown!r}") from None
        if n <= 0:
            raise InputError(f"{where}: line {pos + 1} gives {n} atoms")
        if pos + 2 + n > n_lines:
            raise InputError(
                f"{where}: line {pos + 1} says {n} atoms, but the file has only {n_lines - pos - 2} lines after it"
            )
        expected, columns = _xyz_columns(lines[pos + 1] if pos + 1 < n_lines else b"")
        for k in range(pos + 2, pos + 2 + n):
            got = len(lines[k].split())
            if got != expected:
                raise InputError(
                    f"{where}, line {k + 1}: {got} value{'s' if got != 1 else ''} where an atom row holds {expected} "
                    f"({columns}); a value is missing or one too many"
                )
        pos += 2 + n


_PROPERTIES = re.compile(rb"""(?i)\bproperties=(?:"([^"]*)"|'([^']*)'|(\S+))""")


def _xyz_columns(comment: bytes) -> tuple[int, str]:
    """How many values an atom row holds, and what they are, from an (extended) XYZ comment line."""
    m = _PROPERTIES.search(comment)
    if m is None:
        return 4, "element, x, y, z"
    spec = (m.group(1) or m.group(2) or m.group(3)).decode(errors="replace").split(":")
    try:
        fields = [(spec[i], int(spec[i + 2])) for i in range(0, len(spec) - 2, 3)]
    except ValueError:
        return 4, "element, x, y, z"
    if not fields or len(spec) % 3:
        return 4, "element, x, y, z"
    known = {("species", 1): "element", ("pos", 3): "x, y, z"}
    words = [known.get((name, k)) or (f"{name} ({k} values)" if k > 1 else name) for name, k in fields]
    return sum(k for _, k in fields), ", ".join(words)


def _is_cif(name: str, format: str | None) -> bool:
    return format == "cif" if format else name.lower().endswith((".cif", ".mmcif"))


def read_atoms(path: str | os.PathLike[str], *, format: str | None = None, cif_reader: str = "gemmi"):
    """Read the last frame of a structure file: CIF through gemmi, other formats through ase.

    Parameters
    ----------
    path
        The file; ``.gz``, ``.bz2`` and ``.xz`` files are decompressed (up to the input limit).
    format
        An ase format name, when the suffix does not say it.
    cif_reader
        ``"gemmi"`` (default) or ``"ase"``, the reader used for CIF.

    Raises
    ------
    InputError
        Missing, empty, non-regular or unreadable file, unknown format, a file with no atoms,
        numbers that are not finite or a cell that cannot be a crystal's.
    """
    p = Path(path)
    data = read_input_bytes(p, what="structure file")
    name = p.name
    if name.lower().endswith(_COMPRESSED):
        name = name.rsplit(".", 1)[0]
    if not data.strip():
        raise InputError(f"{p}: the file is empty")
    if _is_cif(name, format) and cif_reader == "gemmi":
        from .cif import read_cif

        atoms = read_cif(p, text=decode_text(data, str(p), lenient=True))
    else:
        if not name.lower().endswith(_BINARY_FORMATS):
            decode_text(data, str(p))  # ase would stop with a decoding error of its own
        if (format or "").endswith("xyz") or (format is None and name.lower().endswith((".xyz", ".extxyz"))):
            _xyz_counts(data, str(p))
        atoms = _read_ase(p, name, data, format)
    if len(atoms) == 0:
        raise InputError(f"{p}: the structure has no atoms")
    check_atoms(atoms, str(p))
    return atoms


#: suffixes of binary structure formats ase reads (every other structure file must be UTF-8 text)
_BINARY_FORMATS = (".traj", ".bundle", ".nc", ".db", ".gpw", ".pckl", ".npz", ".h5", ".hdf5")


def _read_ase(p: Path, name: str, data: bytes, format: str | None):
    import ase.io

    with tempfile.TemporaryDirectory(prefix="splitting-read-") as tmp:
        source = p
        if p.name != name:  # decompressed: give ase the plain file under its own name
            source = Path(tmp) / re.sub(r"[^\w.+-]", "_", name)
            source.write_bytes(data)
        try:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                atoms = ase.io.read(str(source), format=format)
        except ase.io.formats.UnknownFileTypeError:
            raise InputError(f"{p}: unknown file format; give a CIF, POSCAR, XYZ or another format ase reads") from None
        except StopIteration:
            raise InputError(f"{p}: no structure found in the file") from None
        except MemoryError:
            raise MemoryShortageError(
                f"{p}: reading the file needs more memory than this process may have "
                "(a damaged header, or a memory limit too low for it)"
            ) from None
        except Exception as exc:  # ase raises many types for malformed files
            raise InputError(f"{p}: cannot be read as a structure ({_plain(exc, name, format)})") from None
    if isinstance(atoms, list):
        if not atoms:
            raise InputError(f"{p}: no structure found in the file")
        atoms = atoms[-1]
    return atoms


#: names of the formats read through ase, by suffix (or file name), as the trade calls them
_FORMAT_NAMES = {".vasp": "POSCAR", "poscar": "POSCAR", "contcar": "POSCAR", ".xyz": "XYZ", ".extxyz": "extended XYZ"}


def _plain(exc: Exception, name: str = "", format: str | None = None) -> str:
    """What a reader's failure says about the file, in the file's terms (never the reader's words)."""
    from ._reasons import reason

    lower = name.lower()
    known = _FORMAT_NAMES.get(Path(lower).suffix) or _FORMAT_NAMES.get(lower.split(".")[0]) or format
    default = f"the file does not follow the {known} format" if known else "the file does not follow its format"
    return reason(exc, default)

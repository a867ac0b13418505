"""Measured spectra and peak lists: the result types and the file readers.

Two kinds of measured data come in:

* a **peak list** (:func:`read_peaks`): one band a row, position in cm-1 with an
  intensity and optionally a width (FWHM) and a polarisation label;
* a **spectrum** (:func:`read_spectrum`): signal against wavenumber, from a
  two-column text/CSV file or a JCAMP-DX file.

Both end up on a wavenumber axis in cm-1, ascending. Anything that cannot be read
unambiguously raises :class:`~splitting.errors.InputError` with a one-line message
that names the file and, where it applies, the line.

Wavelength guard
----------------
A file read with ``units="cm-1"`` is refused when its x values look like
wavelengths. The rule (common practice, chosen to be conservative):

1. the column header of the x column names a wavelength unit (``nm``,
   ``um``/``µm``/``micron``/``micrometre``) or says ``wavelength``;
2. every x value lies between 0.2 and 25: that is the range of wavelengths in
   micrometres from the near UV to the mid-IR edge, while a vibrational spectrum in
   cm-1 that never passes 25 cm-1 lies below what ordinary IR and Raman
   instruments record (low-wavenumber Raman lattice modes at 10-200 cm-1 pass,
   since the axis or the list goes beyond 25 cm-1);
3. the file name carries an ``nm`` token and every x value lies between 200 and
   1100 (the usual UV-visible-NIR detector range). Without such a hint a range of
   200-1100 is an ordinary fingerprint/lattice region in cm-1 and is accepted.

JCAMP-DX files state their units (``##XUNITS``), so the guard is not applied to them.
"""

from __future__ import annotations

import contextlib
import io
import math
import re
import warnings
from collections.abc import Iterator
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from ..errors import InputError, MemoryShortageError

__all__ = [
    "JCAMP_SUFFIXES",
    "Peak",
    "PeakList",
    "Spectrum",
    "normalise_technique",
    "read_peaks",
    "read_spectrum",
]

#: File name endings read as JCAMP-DX by :func:`read_spectrum`.
JCAMP_SUFFIXES = (".jdx", ".dx", ".jcamp")

_TECHNIQUES = {
    "ir": "ir",
    "infrared": "ir",
    "ftir": "ir",
    "ft-ir": "ir",
    "raman": "raman",
    "ft-raman": "raman",
}

_UNITS = ("cm-1", "um", "nm")


def normalise_technique(value: str | None, *, where: str = "technique") -> str | None:
    """Return ``"ir"``, ``"raman"`` or ``None`` for a technique name.

    Accepts common spellings case-insensitively (``IR``, ``infrared``, ``FTIR``,
    ``Raman``).

    Examples
    --------
    >>> normalise_technique("Infrared")
    'ir'
    >>> normalise_technique(None) is None
    True
    """
    if value is None:
        return None
    key = str(value).strip().lower()
    if key in _TECHNIQUES:
        return _TECHNIQUES[key]
    raise InputError(f"{where}: unknown technique {value!r}; use 'ir' or 'raman'")


# --------------------------------------------------------------------------- results


@dataclass(frozen=True)
class Peak:
    """One band of a measured or found spectrum.

    Attributes
    ----------
    position_cm1 : float
        Band position (wavenumber or Raman shift), cm-1.
    intensity : float
        Peak height above the baseline, in the units of the signal (arbitrary).
    width_cm1 : float or None
        Full width at half maximum, cm-1; ``None`` when not known.
    polarisation : str or None
        Free polarisation label as given (e.g. ``"zz"``, ``"x(yy)x"``, ``"p"``);
        ``None`` when not known.
    """

    position_cm1: float
    intensity: float
    width_cm1: float | None = None
    polarisation: str | None = None

    def to_dict(self) -> dict[str, Any]:
        """Plain JSON-ready dictionary of the fields."""
        return {
            "position_cm1": float(self.position_cm1),
            "intensity": float(self.intensity),
            "width_cm1": None if self.width_cm1 is None else float(self.width_cm1),
            "polarisation": self.polarisation,
        }


@dataclass(frozen=True)
class PeakList:
    """Bands of one spectrum, sorted by position.

    Attributes
    ----------
    peaks : tuple of Peak
        The bands, ascending in ``position_cm1`` (sorted on construction).
    technique : {"ir", "raman"} or None
        How the spectrum was measured, when known.
    source : str or None
        Where the list came from (a file path, or a description).

    Examples
    --------
    >>> pl = PeakList((Peak(1600.0, 1.0), Peak(1000.0, 0.5)), technique="raman")
    >>> pl.positions().tolist()
    [1000.0, 1600.0]
    """

    peaks: tuple[Peak, ...]
    technique: str | None = None
    source: str | None = None

    def __post_init__(self) -> None:
        peaks = tuple(self.peaks)
        for p in peaks:
            if not isinstance(p, Peak):
                raise TypeError(f"PeakList holds Peak objects, got {type(p).__name__}")
        peaks = tuple(sorted(peaks, key=lambda p: p.position_cm1))
        object.__setattr__(self, "peaks", peaks)
        object.__setattr__(self, "technique", normalise_technique(self.technique))

    def __len__(self) -> int:
        return len(self.peaks)

    def __iter__(self) -> Iterator[Peak]:
        return iter(self.peaks)

    def positions(self) -> np.ndarray:
        """Peak positions, cm-1, as a new 1-D float array (ascending)."""
        return np.array([p.position_cm1 for p in self.peaks], dtype=float)

    def to_dict(self) -> dict[str, Any]:
        """Plain JSON-ready dictionary of the fields."""
        return {
            "peaks": [p.to_dict() for p in self.peaks],
            "technique": self.technique,
            "source": self.source,
        }


def _frozen_array(values: Any, name: str) -> np.ndarray:
    arr = np.array(values, dtype=float, copy=True)
    if arr.ndim != 1:
        raise InputError(f"Spectrum: {name} must be one-dimensional, got shape {arr.shape}")
    arr.setflags(write=False)
    return arr


@dataclass(frozen=True, eq=False)
class Spectrum:
    """A measured or synthetic spectrum on an ascending wavenumber axis.

    Both arrays are copied on construction and made read-only.

    Attributes
    ----------
    wavenumber_cm1 : ndarray, shape (n,), float
        Strictly ascending, positive wavenumbers (or Raman shifts), cm-1.
    signal : ndarray, shape (n,), float
        Signal at each wavenumber (absorbance, Raman counts, ...), arbitrary units;
        bands are maxima.
    technique : {"ir", "raman"} or None
        How the spectrum was measured, when known.
    source : str or None
        Where the spectrum came from.

    Examples
    --------
    >>> s = Spectrum([100.0, 101.0, 102.0], [0.0, 1.0, 0.0], technique="IR")
    >>> s.technique, s.wavenumber_cm1.flags.writeable
    ('ir', False)
    """

    wavenumber_cm1: np.ndarray
    signal: np.ndarray
    technique: str | None = None
    source: str | None = field(default=None)

    def __post_init__(self) -> None:
        x = _frozen_array(self.wavenumber_cm1, "wavenumber_cm1")
        y = _frozen_array(self.signal, "signal")
        where = self.source or "Spectrum"
        if x.shape != y.shape:
            raise InputError(f"{where}: {x.size} wavenumbers but {y.size} signal values; they must match")
        if x.size < 3:
            raise InputError(f"{where}: a spectrum needs at least 3 points, got {x.size}")
        if not (np.all(np.isfinite(x)) and np.all(np.isfinite(y))):
            raise InputError(f"{where}: wavenumbers and signal must be finite (no NaN or inf)")
        if x[0] <= 0:
            raise InputError(f"{where}: wavenumbers must be > 0 cm-1, got {x[0]:g}")
        if np.any(np.diff(x) <= 0):
            raise InputError(f"{where}: wavenumbers must be strictly ascending")
        object.__setattr__(self, "wavenumber_cm1", x)
        object.__setattr__(self, "signal", y)
        object.__setattr__(self, "technique", normalise_technique(self.technique))

    def __eq__(self, other: object) -> bool:
        if not isinstance(other, Spectrum):
            return NotImplemented
        return (
            self.technique == other.technique
            and self.source == other.source
            and np.array_equal(self.wavenumber_cm1, other.wavenumber_cm1)
            and np.array_equal(self.signal, other.signal)
        )

    __hash__ = None  # type: ignore[assignment]

    def __len__(self) -> int:
        return int(self.wavenumber_cm1.size)

    def to_dict(self) -> dict[str, Any]:
        """Plain JSON-ready dictionary of the fields."""
        return {
            "wavenumber_cm1": self.wavenumber_cm1.tolist(),
            "signal": self.signal.tolist(),
            "technique": self.technique,
            "source": self.source,
        }


# --------------------------------------------------------------------------- text tables

_COMMENT_KEY = re.compile(r"^#+\s*([A-Za-z][A-Za-z _-]*?)\s*[:=]\s*(.*?)\s*$")
_DECIMAL_COMMA = re.compile(r"^[+-]?\d*,\d+([eE][+-]?\d+)?$")


@dataclass
class _Table:
    """Rows of a delimited text file: what the two readers share."""

    path: Path
    header: list[str] | None
    header_line: int
    rows: list[tuple[int, list[str]]]
    keys: dict[str, tuple[int, str]]
    delimiter: str | None


def _read_table(path: Path) -> _Table:
    """Split a text file into comment keys, an optional header and data rows."""
    from .._io import read_text

    text = read_text(path)
    if not text.strip():
        raise InputError(f"{path}: file is empty")
    header: list[str] | None = None
    header_line = 0
    rows: list[tuple[int, list[str]]] = []
    keys: dict[str, tuple[int, str]] = {}
    delimiter: str | None = None
    seen_first = False
    for lineno, raw in enumerate(text.splitlines(), start=1):
        line = raw.strip()
        if line.startswith("#"):
            m = _COMMENT_KEY.match(line)
            if m:
                keys.setdefault(m.group(1).strip().lower(), (lineno, m.group(2)))
            continue
        line = line.split("#", 1)[0].strip()
        if not line:
            continue
        if not seen_first:
            seen_first = True
            if "\t" in line:
                delimiter = "\t"
            elif ";" in line:
                delimiter = ";"
            elif "," in line:
                delimiter = ","
            else:
                delimiter = None
        fields = line.split(delimiter) if delimiter else line.split()
        fields = [f.strip().strip('"').strip("'").strip() for f in fields]
        while fields and fields[-1] == "":
            fields.pop()
        if header is None and not rows and fields and not _is_number(fields[0], delimiter):
            header = fields
            header_line = lineno
            continue
        rows.append((lineno, fields))
    if not rows:
        raise InputError(f"{path}: no data rows (only comments or a header)")
    return _Table(path, header, header_line, rows, keys, delimiter)


def _is_number(text: str, delimiter: str | None) -> bool:
    try:
        _to_float(text, delimiter)
    except ValueError:
        return False
    return True


def _to_float(text: str, delimiter: str | None) -> float:
    if delimiter == ";" and _DECIMAL_COMMA.match(text):
        text = text.replace(",", ".")
    return float(text)


def _number(table: _Table, lineno: int, fields: list[str], col: int, what: str) -> float:
    """Parse field ``col`` of a row as a finite float or raise a located InputError."""
    where = f"{table.path}, line {lineno}"
    if col >= len(fields) or fields[col] == "":
        raise InputError(f"{where}: missing {what} (column {col + 1})")
    text = fields[col]
    try:
        value = _to_float(text, table.delimiter)
    except ValueError:
        raise InputError(f"{where}: {what} (column {col + 1}) is not a number: {text!r}") from None
    if math.isnan(value):
        raise InputError(f"{where}: {what} (column {col + 1}) is NaN")
    if math.isinf(value):
        raise InputError(f"{where}: {what} (column {col + 1}) is infinite")
    return value


def _technique_from(table_keys: dict[str, tuple[int, str]], path: Path, given: str | None) -> str | None:
    given_norm = normalise_technique(given)
    found: str | None = None
    if "technique" in table_keys:
        lineno, value = table_keys["technique"]
        found = normalise_technique(value, where=f"{path}, line {lineno}")
    return _agree(given_norm, found, path)


def _agree(given: str | None, found: str | None, path: Path) -> str | None:
    if given is not None and found is not None and given != found:
        raise InputError(f"{path}: the file says technique {found!r} but technique={given!r} was passed")
    return given if given is not None else found


def _check_units(units: str) -> str:
    if units not in _UNITS:
        raise InputError(f"units must be one of {', '.join(_UNITS)}; got {units!r}")
    return units


_NM_HINT = re.compile(r"(?<![a-z])(nm|nanomet(er|re)s?)(?![a-z])")
_UM_HINT = re.compile(r"(?<![a-z])(um|µm|μm|microns?|micromet(er|re)s?)(?![a-z])")


def _guard_wavelength(x: np.ndarray, path: Path, units: str, column_name: str | None, header_line: int) -> None:
    """Refuse x values that look like wavelengths when units='cm-1' (module docstring)."""
    if units != "cm-1" or x.size == 0:
        return
    if column_name:
        name = column_name.lower()
        if _NM_HINT.search(name):
            raise InputError(f"{path}, line {header_line}: column {column_name!r} is in nanometres; pass units='nm'")
        if _UM_HINT.search(name):
            raise InputError(f"{path}, line {header_line}: column {column_name!r} is in micrometres; pass units='um'")
        if "wavelength" in name:
            guess = "um" if float(x.max()) <= 25 else "nm"
            raise InputError(
                f"{path}, line {header_line}: column {column_name!r} holds wavelengths; pass units={guess!r}"
            )
    lo, hi = float(x.min()), float(x.max())
    if 0.2 <= lo and hi <= 25.0:
        raise InputError(f"{path}: x values {lo:g} to {hi:g} look like wavelength in micrometres; pass units='um'")
    if _NM_HINT.search(path.stem.lower().replace("_", " ").replace("-", " ")) and (200.0 <= lo and hi <= 1100.0):
        raise InputError(
            f"{path}: x values {lo:g} to {hi:g} with 'nm' in the file name look like "
            "wavelength in nanometres; pass units='nm'"
        )


def _to_wavenumber(x: np.ndarray, units: str) -> np.ndarray:
    """Convert positive x in ``units`` to cm-1 (1e4/um, 1e7/nm)."""
    if units == "um":
        return 1e4 / x
    if units == "nm":
        return 1e7 / x
    return x


def _width_to_cm1(x: float, width: float, units: str) -> float:
    """Convert a FWHM given in wavelength units at wavelength ``x`` to cm-1."""
    if units == "cm-1":
        return width
    lo, hi = x - width / 2.0, x + width / 2.0
    if lo <= 0:
        raise ValueError("width larger than twice the wavelength")
    scale = 1e4 if units == "um" else 1e7
    return scale / lo - scale / hi


# --------------------------------------------------------------------------- peak lists

_ROLE_NAMES = {
    "position": {
        "position",
        "pos",
        "wavenumber",
        "wavenumbers",
        "frequency",
        "freq",
        "nu",
        "peak",
        "center",
        "centre",
        "shift",
        "ramanshift",
        "x",
        "band",
        "wavelength",
    },
    "intensity": {
        "intensity",
        "int",
        "height",
        "amplitude",
        "amp",
        "absorbance",
        "area",
        "strength",
        "y",
        "signal",
        "counts",
        "i",
    },
    "width": {"width", "fwhm", "linewidth", "hwhm", "w"},
    "polarisation": {"polarisation", "polarization", "pol", "polarisations", "polarizations"},
}


def _column_role(name: str) -> tuple[str | None, bool]:
    """Role of a header name, and whether it is a half width (HWHM)."""
    base = name.lower()
    base = re.split(r"[(\[/]", base, maxsplit=1)[0]
    base = re.sub(r"[\s_.-]+", "", base)
    for role, names in _ROLE_NAMES.items():
        if base in names:
            return role, base == "hwhm"
    return None, False


def read_peaks(path: str | Path, *, technique: str | None = None, units: str = "cm-1") -> PeakList:
    """Read a peak list from a delimited text file.

    Format: comma-, semicolon- or tab-separated (or whitespace-separated) columns;
    ``#`` starts a comment. An optional header row names the columns; recognised
    names (case-insensitive, a unit in brackets or after ``/`` is ignored) are
    position (``position``, ``wavenumber``, ``frequency``, ``shift``, ...),
    intensity (``intensity``, ``height``, ``absorbance``, ...), width (``width``,
    ``fwhm``; ``hwhm`` is doubled) and polarisation (``polarisation``,
    ``polarization``, ``pol``); other columns are ignored. Without a header the
    columns are position, intensity, width, polarisation in that order. Position
    and intensity are required; an empty width or polarisation field means unknown.
    With ``;`` as separator a decimal comma (``1234,5``) is accepted.

    Rows are sorted by position; two rows with the same position are an error.

    Parameters
    ----------
    path : str or Path
        The file.
    technique : {"ir", "raman"} or None
        Technique of the list. When ``None`` it is taken from a header comment
        ``# technique: raman``; a conflict between the two is an error.
    units : {"cm-1", "um", "nm"}
        Unit of the position and width columns; converted to cm-1. With ``"cm-1"``
        values that look like wavelengths are refused (see the module docstring).

    Returns
    -------
    PeakList

    Raises
    ------
    InputError
        Missing or empty file, text or NaN in a numeric column, too few columns,
        duplicate positions, non-positive positions or widths, wavelength-looking
        positions with ``units="cm-1"``.
    """
    path = Path(path)
    units = _check_units(units)
    table = _read_table(path)
    tech = _technique_from(table.keys, path, technique)

    cols: dict[str, int] = {}
    half_width = False
    position_name: str | None = None
    if table.header is not None:
        for i, name in enumerate(table.header):
            role, is_half = _column_role(name)
            if role is None:
                continue
            if role in cols:
                raise InputError(
                    f"{path}, line {table.header_line}: two columns give the {role}: "
                    f"{table.header[cols[role]]!r} and {name!r}"
                )
            cols[role] = i
            if role == "width":
                half_width = is_half
            if role == "position":
                position_name = name
        for role in ("position", "intensity"):
            if role not in cols:
                raise InputError(
                    f"{path}, line {table.header_line}: the header row {', '.join(table.header)!r} has no {role} column"
                )
    else:
        cols = {"position": 0, "intensity": 1, "width": 2, "polarisation": 3}

    needed = max(cols["position"], cols["intensity"]) + 1
    positions: list[float] = []
    entries: list[tuple[int, float, float, float | None, str | None]] = []
    for lineno, fields in table.rows:
        if len(fields) < needed:
            raise InputError(
                f"{path}, line {lineno}: {len(fields)} column(s), need at least {needed} (position, intensity)"
            )
        pos = _number(table, lineno, fields, cols["position"], "position")
        inten = _number(table, lineno, fields, cols["intensity"], "intensity")
        width: float | None = None
        wcol = cols.get("width")
        if wcol is not None and wcol < len(fields) and fields[wcol] != "":
            width = _number(table, lineno, fields, wcol, "width")
            if half_width:
                width *= 2.0
            if width <= 0:
                raise InputError(f"{path}, line {lineno}: width must be > 0, got {width:g}")
        pol: str | None = None
        pcol = cols.get("polarisation")
        if pcol is not None and pcol < len(fields) and fields[pcol] != "":
            pol = fields[pcol]
        if pos <= 0:
            raise InputError(f"{path}, line {lineno}: position must be > 0, got {pos:g}")
        positions.append(pos)
        entries.append((lineno, pos, inten, width, pol))

    _guard_wavelength(np.array(positions), path, units, position_name, table.header_line)

    seen: dict[float, int] = {}
    peaks: list[Peak] = []
    for lineno, pos, inten, width, pol in entries:
        if pos in seen:
            raise InputError(f"{path}, line {lineno}: position {pos:g} repeats line {seen[pos]}")
        seen[pos] = lineno
        if units != "cm-1":
            if width is not None:
                try:
                    width = _width_to_cm1(pos, width, units)
                except ValueError:
                    raise InputError(
                        f"{path}, line {lineno}: width {width:g} {units} is larger than "
                        f"twice the wavelength {pos:g} {units}"
                    ) from None
            pos = float(_to_wavenumber(np.array(pos), units))
        peaks.append(Peak(pos, inten, width, pol))
    return PeakList(tuple(peaks), technique=tech, source=str(path))


# --------------------------------------------------------------------------- spectra


def read_spectrum(path: str | Path, *, technique: str | None = None, units: str = "cm-1") -> Spectrum:
    """Read a spectrum from a two-column text/CSV file or a JCAMP-DX file.

    Text files: columns x and signal, separated by commas, semicolons, tabs or
    spaces; ``#`` starts a comment; an optional header row; columns after the
    second are ignored. ``# technique: raman`` in a comment sets the technique.
    With ``;`` as separator a decimal comma is accepted.

    JCAMP-DX files (``.jdx``, ``.dx``, ``.jcamp``) are parsed with the ``jcamp``
    package: ``##XYDATA=(X++(Y..Y))`` and ``##XYPOINTS=(XY..XY)`` blocks;
    ``##XUNITS`` of ``1/CM``, ``MICROMETERS`` or ``NANOMETERS`` are converted to
    cm-1 (``units`` is used only when XUNITS is missing); ``##DATA TYPE``
    starting with ``INFRARED`` or ``RAMAN`` sets the technique.

    Descending x data are reversed; the result is ascending in cm-1.

    Parameters
    ----------
    path : str or Path
        The file.
    technique : {"ir", "raman"} or None
        Technique; when ``None`` it is taken from the file if the file says.
        A conflict between the two is an error.
    units : {"cm-1", "um", "nm"}
        Unit of the x column of a text file (wavenumber = 1e4/um = 1e7/nm).
        With ``"cm-1"`` x values that look like wavelengths are refused (see the
        module docstring).

    Returns
    -------
    Spectrum

    Raises
    ------
    InputError
        Missing or empty file, text or NaN in a numeric column, fewer than two
        columns, non-positive or repeated x values, x that is not monotonic,
        wavelength-looking x with ``units="cm-1"``, JCAMP content that cannot be
        parsed or has unknown units.
    """
    path = Path(path)
    units = _check_units(units)
    if path.suffix.lower() in JCAMP_SUFFIXES:
        return _read_jcamp(path, technique=technique, units=units)
    table = _read_table(path)
    tech = _technique_from(table.keys, path, technique)
    xs: list[float] = []
    ys: list[float] = []
    lines: list[int] = []
    for lineno, fields in table.rows:
        if len(fields) < 2:
            raise InputError(f"{path}, line {lineno}: {len(fields)} column(s), need 2 (x, signal)")
        x = _number(table, lineno, fields, 0, "x")
        y = _number(table, lineno, fields, 1, "signal")
        if x <= 0:
            raise InputError(f"{path}, line {lineno}: x must be > 0, got {x:g}")
        xs.append(x)
        ys.append(y)
        lines.append(lineno)
    x_arr = np.array(xs)
    y_arr = np.array(ys)
    if x_arr.size < 3:
        raise InputError(f"{path}: only {x_arr.size} data row(s); a spectrum needs at least 3")
    column_name = table.header[0] if table.header else None
    _guard_wavelength(x_arr, path, units, column_name, table.header_line)
    step = np.diff(x_arr)
    direction = 1.0 if step[0] > 0 else -1.0
    bad = np.nonzero(step * direction <= 0)[0]
    if bad.size:
        i = int(bad[0]) + 1
        what = "repeats" if step[i - 1] == 0 else "breaks the monotonic order of"
        raise InputError(f"{path}, line {lines[i]}: x = {x_arr[i]:g} {what} the x column")
    return _make_spectrum(x_arr, y_arr, units, tech, path)


def _make_spectrum(x: np.ndarray, y: np.ndarray, units: str, technique: str | None, path: Path) -> Spectrum:
    x = _to_wavenumber(x, units)
    if x[-1] < x[0]:
        x, y = x[::-1], y[::-1]
    return Spectrum(x, y, technique=technique, source=str(path))


_JCAMP_UNITS = {
    "1/cm": "cm-1",
    "cm-1": "cm-1",
    "cm^-1": "cm-1",
    "micrometers": "um",
    "micrometres": "um",
    "micrometer": "um",
    "um": "um",
    "nanometers": "nm",
    "nanometres": "nm",
    "nanometer": "nm",
    "nm": "nm",
}


#: most points a spectrum may hold (a JCAMP-DX ##NPOINTS above it is refused before reading)
MAX_SPECTRUM_POINTS = 5_000_000

_NPOINTS = re.compile(rb"^\s*##\s*NPOINTS\s*=\s*(\S*)", re.I | re.M)
_UNKNOWN_CHAR = re.compile(r"Unknown character \((.*)\)")


def _check_jcamp_header(path: Path, data: bytes) -> None:
    """Refuse a ##NPOINTS that is not a count or would need gigabytes, before the reader allocates it."""
    for m in _NPOINTS.finditer(data):
        text = m.group(1).decode("ascii", "replace")
        try:
            n = float(text)
        except ValueError:
            raise InputError(f"{path}: ##NPOINTS={text} is not a number of points") from None
        if not (np.isfinite(n) and n == int(n) and n >= 1):
            raise InputError(f"{path}: ##NPOINTS={text} is not a whole, positive number of points")
        if n > MAX_SPECTRUM_POINTS:
            raise InputError(
                f"{path}: ##NPOINTS={text} is more than the {MAX_SPECTRUM_POINTS} points a spectrum may hold "
                "(a file of this size cannot hold them; check the header)"
            )


def _read_jcamp(path: Path, *, technique: str | None, units: str) -> Spectrum:
    import jcamp

    from .._io import read_input_bytes
    from .._reasons import decode_text, jcamp_reason, reason

    raw = read_input_bytes(path)
    if not raw.strip():
        raise InputError(f"{path}: file is empty")
    decode_text(raw, str(path))  # refuses UTF-16, binary and other non-UTF-8 files by name
    _check_jcamp_header(path, raw)
    reader = getattr(jcamp, "jcamp_readfile", None) or jcamp.readfile
    chatter = io.StringIO()
    try:
        with contextlib.redirect_stdout(chatter), warnings.catch_warnings():
            warnings.simplefilter("ignore")
            data = reader(str(path))
    except (KeyError, ValueError, IndexError, TypeError, ZeroDivisionError) as exc:
        header = (
            "a header value such as ##FIRSTX, ##LASTX, ##XFACTOR or ##NPOINTS, or a data line, is not as the "
            "format asks"
        )
        why = reason(exc, header) if isinstance(exc, ValueError) else header
        raise InputError(f"{path}: not a readable JCAMP-DX file ({why})") from None
    except MemoryError:
        raise MemoryShortageError(f"{path}: the JCAMP-DX header asks for more points than memory holds") from None
    except Exception as exc:  # the jcamp reader raises a bare Exception on undecodable data lines
        m = _UNKNOWN_CHAR.search(str(exc))
        if m:
            raise InputError(
                f"{path}: a data line holds {m.group(1)!r}, which is not part of a JCAMP-DX number"
            ) from None
        raise InputError(
            f"{path}: not a readable JCAMP-DX file (a data line cannot be decoded as JCAMP-DX numbers)"
        ) from None
    said = chatter.getvalue().strip()
    if said:
        raise InputError(f"{path}: JCAMP-DX data fail their checks: {jcamp_reason(said.splitlines()[0])}")
    if "children" in data:
        raise InputError(f"{path}: compound JCAMP-DX files (DATA TYPE=LINK) are not supported")
    x = np.asarray(data.get("x", []), dtype=float)
    y = np.asarray(data.get("y", []), dtype=float)
    if x.size == 0:
        raise InputError(f"{path}: no ##XYDATA or ##XYPOINTS data found")
    if x.size != y.size:
        raise InputError(f"{path}: {x.size} x values but {y.size} y values")
    if not (np.all(np.isfinite(x)) and np.all(np.isfinite(y))):
        raise InputError(f"{path}: the JCAMP-DX data hold NaN or missing values")

    xunits = data.get("xunits")
    if xunits is None:
        file_units = units
    else:
        key = str(xunits).strip().lower()
        if key not in _JCAMP_UNITS:
            raise InputError(
                f"{path}: ##XUNITS={xunits} cannot be converted to cm-1 (known: 1/CM, MICROMETERS, NANOMETERS)"
            )
        file_units = _JCAMP_UNITS[key]

    found: str | None = None
    dtype = str(data.get("data type", data.get("datatype", ""))).strip().upper()
    if dtype.startswith("INFRARED"):
        found = "ir"
    elif dtype.startswith("RAMAN"):
        found = "raman"
    tech = _agree(normalise_technique(technique), found, path)

    if np.any(x <= 0):
        raise InputError(f"{path}: x values must be > 0, found {float(x.min()):g}")
    step = np.diff(x)
    if x.size < 3:
        raise InputError(f"{path}: only {x.size} point(s); a spectrum needs at least 3")
    if not (np.all(step > 0) or np.all(step < 0)):
        raise InputError(f"{path}: x values are not strictly monotonic")
    return _make_spectrum(x, y, file_units, tech, path)

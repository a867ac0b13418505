"""Catalogue of free-unit vibrational fundamentals (molecules and polyatomic ions).

Each unit is described by one small TOML file (the format is documented in
``docs/mode-tables.md``).  The bundled files live in ``splitting/data/units``;
users may load their own with :func:`load_mode_table`.

Species labels follow one convention throughout the project:

* ``T`` (never ``F``) for triply degenerate species, ``G`` and ``H`` for four-
  and fivefold ones;
* primes are ASCII apostrophes (``A1'``, ``A2''``); ``g``/``u`` are suffixes
  (``A1g``, ``T1u``, ``Hg``);
* linear units use Greek letters with ``g``/``u`` before the sign: ``Σg+``,
  ``Σu+``, ``Πu``.  The ASCII spellings ``Sigma_g+``, ``Pi_u`` ... are accepted
  when reading and normalised to the Greek form.

Examples
--------
>>> table = find_table("carbonate")
>>> table.formula, table.point_group
('CO3', 'D3h')
>>> [m.species for m in table.modes]
["A1'", "A2''", "E'", "E'"]
>>> table.degrees_of_freedom()
6
"""

from __future__ import annotations

import re
import tomllib
from dataclasses import dataclass, field
from functools import lru_cache
from importlib import resources
from pathlib import Path
from typing import Any

from ..errors import DataError, InputError

__all__ = [
    "FreeMode",
    "ModeTable",
    "atom_count",
    "bundled_tables",
    "find_table",
    "formula_counts",
    "load_mode_table",
    "normalise_point_group",
    "normalise_species",
    "parse_mode_table",
    "species_dimension",
]

# --------------------------------------------------------------------------- labels

_MULLIKEN = re.compile(r"^(?P<letter>[ABETGH])(?P<index>[1-9])?(?P<parity>[gu])?(?P<primes>'{1,2})?$")
_GREEK = re.compile(r"^(?P<letter>[ΣΠΔΦ])(?P<parity>[gu])?(?P<sign>[+-])?$")
_ASCII_GREEK = re.compile(
    r"^(?P<name>Sigma|Pi|Delta|Phi)_?(?:(?P<p1>[gu])(?P<s1>[+-])?|(?P<s2>[+-])_?(?P<p2>[gu])?)?$",
    re.IGNORECASE,
)
_GREEK_LETTER = {"sigma": "Σ", "pi": "Π", "delta": "Δ", "phi": "Φ"}
_DIMENSION = {"A": 1, "B": 1, "Σ": 1, "E": 2, "Π": 2, "Δ": 2, "Φ": 2, "T": 3, "G": 4, "H": 5}

_LINEAR_GROUPS = {"D∞h", "C∞v"}
_POINT_GROUP_ALIASES = {
    "dinfh": "D∞h",
    "d-inf-h": "D∞h",
    "dooh": "D∞h",
    "d∞h": "D∞h",
    "cinfv": "C∞v",
    "c-inf-v": "C∞v",
    "coov": "C∞v",
    "c∞v": "C∞v",
}
_POINT_GROUP = re.compile(r"^(?:[CDS][1-9][0-9]?[hvd]?|C[si]|[TO][hd]?|I[h]?|Td|D∞h|C∞v)$")


def normalise_species(label: str) -> str:
    """Return the project's spelling of a Mulliken species label.

    Parameters
    ----------
    label : str
        A label such as ``"A1g"``, ``"E'"``, ``"T2"``, ``"Σg+"`` or one of the
        ASCII aliases of the linear-group labels (``"Sigma_g+"``, ``"Pi_u"``).

    Returns
    -------
    str
        The label in canonical form (Greek letters for linear groups).

    Raises
    ------
    InputError
        If the label does not follow the conventions (for instance ``F2``
        instead of ``T2``, lower-case ``a1g``, or typographic primes).

    Examples
    --------
    >>> normalise_species("Sigma_g+")
    'Σg+'
    >>> normalise_species("Pi_u")
    'Πu'
    >>> normalise_species("A2''")
    "A2''"
    """
    text = label.strip()
    if _MULLIKEN.match(text) or _GREEK.match(text):
        return text
    ascii_match = _ASCII_GREEK.match(text)
    if ascii_match:
        letter = _GREEK_LETTER[ascii_match["name"].lower()]
        parity = (ascii_match["p1"] or ascii_match["p2"] or "").lower()
        sign = ascii_match["s1"] or ascii_match["s2"] or ""
        if letter != "Σ" and sign:
            raise InputError(f"species {label!r}: only Sigma species carry a + or - sign")
        return f"{letter}{parity}{sign}"
    hint = ""
    if text[:1] == "F" and _MULLIKEN.match("T" + text[1:]):
        hint = f"; write {'T' + text[1:]!r} (T, not F, for triply degenerate species)"
    elif "′" in text or "″" in text or "’" in text:
        fixed = text.replace("″", "''").replace("′", "'").replace("’", "'")
        hint = f"; write primes as ASCII apostrophes: {fixed!r}"
    elif text[:1].islower() and _MULLIKEN.match(text[:1].upper() + text[1:]):
        hint = f"; write the letter in upper case: {text[:1].upper() + text[1:]!r}"
    raise InputError(f"species {label!r} is not a Mulliken label of the form A1g, E', T2, Σg+{hint}")


def species_dimension(label: str) -> int:
    """Degeneracy of a species from its letter (A, B, Σ: 1; E, Π, Δ, Φ: 2; T: 3; G: 4; H: 5).

    Examples
    --------
    >>> species_dimension("T1u"), species_dimension("Πu"), species_dimension("Hg")
    (3, 2, 5)
    """
    canonical = normalise_species(label)
    return _DIMENSION[canonical[0]]


def normalise_point_group(name: str) -> str:
    """Return the project's spelling of a point-group symbol.

    Linear groups are written ``D∞h`` and ``C∞v``; the ASCII spellings
    ``Dinfh``, ``D-inf-h``, ``Dooh`` (and the C∞v analogues) are accepted.

    Examples
    --------
    >>> normalise_point_group("Dinfh")
    'D∞h'
    >>> normalise_point_group("Oh")
    'Oh'
    """
    text = name.strip()
    alias = _POINT_GROUP_ALIASES.get(text.lower())
    if alias is not None:
        return alias
    if not _POINT_GROUP.match(text):
        raise InputError(f"point group {name!r} is not a Schoenflies symbol such as C2v, D3h, Td, Oh, Ih, D∞h")
    return text


# --------------------------------------------------------------------------- formulae

_FORMULA_TOKEN = re.compile(r"([A-Z][a-z]?)(\d*)")


def formula_counts(formula: str) -> dict[str, int]:
    """Count the atoms of each element in a simple formula such as ``"ClO4"`` or ``"C6H6"``.

    Parentheses and charges are not part of the formula (the charge has its
    own field in a mode table).

    Raises
    ------
    InputError
        If the text is not a sequence of element symbols with optional counts.

    Examples
    --------
    >>> formula_counts("ClO4")
    {'Cl': 1, 'O': 4}
    >>> formula_counts("C60")
    {'C': 60}
    """
    text = formula.strip()
    counts: dict[str, int] = {}
    position = 0
    for match in _FORMULA_TOKEN.finditer(text):
        if match.start() != position:
            break
        element, number = match.group(1), match.group(2)
        count = int(number) if number else 1
        if count == 0:
            raise InputError(f"formula {formula!r}: zero count for {element}")
        counts[element] = counts.get(element, 0) + count
        position = match.end()
    if not text or position != len(text):
        raise InputError(f"formula {formula!r} is not a plain formula such as CO3 or C6H6")
    return counts


def atom_count(formula: str) -> int:
    """Total number of atoms in a simple formula.

    Examples
    --------
    >>> atom_count("NH4")
    5
    """
    return sum(formula_counts(formula).values())


# --------------------------------------------------------------------------- records


@dataclass(frozen=True)
class FreeMode:
    """One fundamental of a free unit (degenerate modes are listed once).

    Attributes
    ----------
    name : str
        Mode label, e.g. ``"nu3"`` (the numbering convention is stated in the file).
    species : str
        Mulliken species in the unit's point group, canonical spelling.
    wavenumber_cm1 : float
        Wavenumber of the fundamental, cm-1.
    ir : bool or None
        Infrared activity of the free unit, ``None`` when the file does not say.
    raman : bool or None
        Raman activity of the free unit, ``None`` when the file does not say.
    note : str
        Free text, e.g. ``"from memory"`` or a remark on Fermi resonance.
    isotope_shifts : dict of str to float
        Shift of the wavenumber, cm-1, on substitution by one isotope (key such as
        ``"13C"``), negative for a lower wavenumber.
    """

    name: str
    species: str
    wavenumber_cm1: float
    ir: bool | None = None
    raman: bool | None = None
    note: str = ""
    isotope_shifts: dict[str, float] = field(default_factory=dict)

    @property
    def dimension(self) -> int:
        """Degeneracy of the mode (1, 2, 3, 4 or 5)."""
        return species_dimension(self.species)

    def to_dict(self) -> dict[str, Any]:
        """Plain, JSON-ready dictionary of the fields."""
        return {
            "name": self.name,
            "species": self.species,
            "wavenumber_cm1": self.wavenumber_cm1,
            "ir": self.ir,
            "raman": self.raman,
            "note": self.note,
            "isotope_shifts": dict(self.isotope_shifts),
        }


@dataclass(frozen=True)
class ModeTable:
    """The fundamentals of one free unit, with where they come from.

    Attributes
    ----------
    name : str
        Common name, e.g. ``"carbonate"``.
    formula : str
        Plain formula without charge, e.g. ``"CO3"``.
    charge : int
        Charge of the unit in units of e.
    point_group : str
        Schoenflies symbol of the free unit (``D∞h`` for linear centrosymmetric units).
    phase : str
        Where the wavenumbers were measured (``"gas"``, ``"aqueous solution"``, ...).
    source : str
        Full citation of the wavenumbers.
    modes : tuple of FreeMode
        The fundamentals, each degenerate set listed once.
    complete : bool
        ``True`` when every fundamental is listed, so the degeneracies add up to
        3N - 6 (3N - 5 for a linear unit); ``False`` when only some are given.
    path : str
        File the table was read from (empty for tables built in memory).
    """

    name: str
    formula: str
    charge: int
    point_group: str
    phase: str
    source: str
    modes: tuple[FreeMode, ...]
    complete: bool = True
    path: str = ""

    @property
    def linear(self) -> bool:
        """Whether the unit is linear (point group D∞h or C∞v)."""
        return self.point_group in _LINEAR_GROUPS

    def atom_count(self) -> int:
        """Number of atoms N from the formula."""
        return atom_count(self.formula)

    def expected_degrees_of_freedom(self) -> int:
        """3N - 6, or 3N - 5 for a linear unit (1 for a diatomic)."""
        n = self.atom_count()
        return 3 * n - (5 if self.linear or n == 2 else 6)

    def degrees_of_freedom(self) -> int:
        """Sum of the degeneracies of the listed fundamentals."""
        return sum(mode.dimension for mode in self.modes)

    def mode(self, name: str) -> FreeMode:
        """Return the mode called ``name`` (case-insensitive).

        Raises
        ------
        DataError
            If the table has no such mode.
        """
        for candidate in self.modes:
            if candidate.name.lower() == name.strip().lower():
                return candidate
        known = ", ".join(m.name for m in self.modes)
        raise DataError(f"{self.name}: no mode {name!r}; modes are {known}")

    def to_dict(self) -> dict[str, Any]:
        """Plain, JSON-ready dictionary of the fields."""
        return {
            "name": self.name,
            "formula": self.formula,
            "charge": self.charge,
            "point_group": self.point_group,
            "phase": self.phase,
            "source": self.source,
            "complete": self.complete,
            "path": self.path,
            "modes": [mode.to_dict() for mode in self.modes],
        }


# --------------------------------------------------------------------------- reading

_TABLE_REQUIRED = ("name", "formula", "charge", "point_group", "phase", "source", "mode")
_TABLE_OPTIONAL = ("complete",)
_MODE_REQUIRED = ("name", "species", "wavenumber")
_MODE_OPTIONAL = ("ir", "raman", "note", "isotope_shift")
_ISOTOPE_KEY = re.compile(r"^[1-9][0-9]{0,2}[A-Z][a-z]?$")


def _is_number(value: object) -> bool:
    return isinstance(value, (int, float)) and not isinstance(value, bool)


def _check_keys(where: str, data: dict[str, Any], required: tuple[str, ...], optional: tuple[str, ...]) -> None:
    missing = [key for key in required if key not in data]
    if missing:
        raise InputError(f"{where}: missing key{'s' if len(missing) > 1 else ''} {', '.join(missing)}")
    unknown = sorted(set(data) - set(required) - set(optional))
    if unknown:
        allowed = ", ".join(required + optional)
        raise InputError(
            f"{where}: unknown key{'s' if len(unknown) > 1 else ''} {', '.join(unknown)} (allowed: {allowed})"
        )


def _text(where: str, data: dict[str, Any], key: str) -> str:
    value = data[key]
    if not isinstance(value, str) or not value.strip():
        raise InputError(f"{where}: {key} must be a non-empty string")
    return value.strip()


def _parse_mode(where: str, raw: object) -> FreeMode:
    if not isinstance(raw, dict):
        raise InputError(f"{where}: each [[mode]] must be a table")
    _check_keys(where, raw, _MODE_REQUIRED, _MODE_OPTIONAL)
    name = _text(where, raw, "name")
    where = f"{where} ({name})"
    species_raw = _text(where, raw, "species")
    try:
        species = normalise_species(species_raw)
    except InputError as exc:
        raise InputError(f"{where}: {exc}") from None
    wavenumber = raw["wavenumber"]
    if not _is_number(wavenumber):
        raise InputError(f"{where}: wavenumber must be a number in cm-1, got {wavenumber!r}")
    if not float(wavenumber) > 0:
        raise InputError(f"{where}: wavenumber must be positive, got {wavenumber!r}")
    activity: dict[str, bool | None] = {}
    for key in ("ir", "raman"):
        value = raw.get(key)
        if value is not None and not isinstance(value, bool):
            raise InputError(f"{where}: {key} must be true or false, got {value!r}")
        activity[key] = value
    note = raw.get("note", "")
    if not isinstance(note, str):
        raise InputError(f"{where}: note must be a string")
    shifts_raw = raw.get("isotope_shift", {})
    if not isinstance(shifts_raw, dict):
        raise InputError(f'{where}: isotope_shift must be a table such as {{"13C" = -66}}')
    shifts: dict[str, float] = {}
    for isotope, shift in shifts_raw.items():
        if not _ISOTOPE_KEY.match(isotope):
            raise InputError(f"{where}: isotope {isotope!r} must be written mass number then symbol, e.g. 13C")
        if not _is_number(shift):
            raise InputError(f"{where}: isotope shift for {isotope} must be a number in cm-1, got {shift!r}")
        shifts[isotope] = float(shift)
    return FreeMode(
        name=name,
        species=species,
        wavenumber_cm1=float(wavenumber),
        ir=activity["ir"],
        raman=activity["raman"],
        note=note.strip(),
        isotope_shifts=shifts,
    )


def parse_mode_table(data: dict[str, Any], *, where: str = "<mode table>") -> ModeTable:
    """Build a :class:`ModeTable` from an already-parsed TOML document.

    Parameters
    ----------
    data : dict
        The document, as returned by :func:`tomllib.loads`.
    where : str, optional
        Name used in error messages (normally the file path).

    Raises
    ------
    InputError
        On a missing or unknown key, a wrong type, a non-numeric wavenumber,
        an unknown species spelling or a formula that cannot be read.
    """
    _check_keys(where, data, _TABLE_REQUIRED, _TABLE_OPTIONAL)
    name = _text(where, data, "name")
    formula = _text(where, data, "formula")
    try:
        formula_counts(formula)
    except InputError as exc:
        raise InputError(f"{where}: {exc}") from None
    charge = data["charge"]
    if not isinstance(charge, int) or isinstance(charge, bool):
        raise InputError(f"{where}: charge must be an integer, got {charge!r}")
    try:
        point_group = normalise_point_group(_text(where, data, "point_group"))
    except InputError as exc:
        raise InputError(f"{where}: {exc}") from None
    complete = data.get("complete", True)
    if not isinstance(complete, bool):
        raise InputError(f"{where}: complete must be true or false, got {complete!r}")
    raw_modes = data["mode"]
    if not isinstance(raw_modes, list) or not raw_modes:
        raise InputError(f"{where}: mode must be a non-empty array of [[mode]] tables")
    modes = tuple(_parse_mode(f"{where}: mode {i + 1}", raw) for i, raw in enumerate(raw_modes))
    seen: set[str] = set()
    for mode in modes:
        key = mode.name.lower()
        if key in seen:
            raise InputError(f"{where}: mode name {mode.name!r} appears twice")
        seen.add(key)
    return ModeTable(
        name=name,
        formula=formula,
        charge=charge,
        point_group=point_group,
        phase=_text(where, data, "phase"),
        source=_text(where, data, "source"),
        modes=modes,
        complete=complete,
        path="" if where.startswith("<") else where,
    )


def _load_text(text: str, where: str) -> ModeTable:
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        from .._reasons import toml_reason

        raise InputError(f"{where}: not valid TOML ({toml_reason(exc)})") from None
    except RecursionError:
        raise InputError(
            f"{where}: not a mode table: its arrays or tables are nested hundreds of levels deep "
            "(a mode table needs three)"
        ) from None
    return parse_mode_table(data, where=where)


def load_mode_table(path: str | Path) -> ModeTable:
    """Read one mode-table TOML file.

    Parameters
    ----------
    path : str or pathlib.Path
        The file.

    Returns
    -------
    ModeTable

    Raises
    ------
    InputError
        If the file cannot be read or does not follow the format; the message is
        one line naming the file and the problem.
    """
    from .._io import read_text

    where = str(path)
    return _load_text(read_text(path), where)


@lru_cache(maxsize=1)
def _bundled() -> tuple[ModeTable, ...]:
    folder = resources.files("splitting").joinpath("data").joinpath("units")
    tables: list[ModeTable] = []
    entries = sorted((entry for entry in folder.iterdir() if entry.name.endswith(".toml")), key=lambda e: e.name)
    for entry in entries:
        where = f"splitting/data/units/{entry.name}"
        try:
            tables.append(_load_text(entry.read_text(encoding="utf-8"), where))
        except InputError as exc:
            raise DataError(f"bundled mode table is broken: {exc}") from None
    if not tables:
        raise DataError("no bundled mode tables found in splitting/data/units")
    return tuple(tables)


def bundled_tables() -> dict[str, ModeTable]:
    """All mode tables shipped with the package, keyed by unit name.

    Examples
    --------
    >>> "benzene" in bundled_tables()
    True
    """
    result: dict[str, ModeTable] = {}
    for table in _bundled():
        if table.name in result:
            raise DataError(f"two bundled mode tables are named {table.name!r}")
        result[table.name] = table
    return result


def find_table(name_or_formula: str) -> ModeTable:
    """Find a bundled table by unit name or formula, ignoring case.

    Parameters
    ----------
    name_or_formula : str
        For example ``"carbonate"``, ``"CO3"``, ``"c60"`` or ``"SF6"``.

    Raises
    ------
    DataError
        If no bundled table matches; the message lists what exists.

    Examples
    --------
    >>> find_table("co3").name
    'carbonate'
    >>> find_table("C60").point_group
    'Ih'
    """
    wanted = name_or_formula.strip().lower()
    tables = bundled_tables()
    matches = [t for t in tables.values() if wanted in (t.name.lower(), t.formula.lower())]
    if len(matches) == 1:
        return matches[0]
    listing = ", ".join(f"{t.name} ({t.formula})" for t in tables.values())
    if not matches:
        raise DataError(f"no mode table for {name_or_formula!r}; bundled tables: {listing}")
    names = ", ".join(t.name for t in matches)
    raise DataError(f"{name_or_formula!r} matches several mode tables ({names}); use the name")

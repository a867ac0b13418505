"""Unit names as spectroscopists write them, and matching of names given on the command line.

The pipeline finds units by bonds and names them by their Hill formula (carbon first, then
hydrogen, then the other elements alphabetically; without carbon, all alphabetically):
``O4S``, ``H4N``, ``CH6N``. Papers and spectra are labelled ``SO4^2-``, ``NH4+``,
``CH3NH3+``. :func:`unit_name` gives the written name of a unit from a table of common
ions and molecules, with the charge of the ion as listed there; a unit not in the table
keeps its Hill formula. The Hill formula stays the key of every result (a field beside the
name), because it is defined for every unit.

Names are written in plain text with the charge after a caret when it has a number
(``SO4^2-``, ``PO4^3-``) and as a bare sign otherwise (``NH4+``, ``ClO4-``). The formulas
of the ions and their charges are those of the tables of ions in IUPAC, *Nomenclature of
Inorganic Chemistry: IUPAC Recommendations 2005* (the Red Book), ch. IR-5 and Table IX;
the written order of the atoms (``NH4+``, ``SF6``, ``CH3NH3+``) is common practice.

:func:`hill_of` reads any such name (or a Hill formula, or any order of the elements) back
to the Hill formula, so options accept either; :func:`match_unit` finds the unit a name
means among the units of a structure and says what is there when nothing matches.
"""

from __future__ import annotations

import re
from collections.abc import Iterable
from typing import Any

from ..errors import InputError

__all__ = [
    "COMMON_UNITS",
    "charge_text",
    "find_unit",
    "hill_of",
    "match_unit",
    "name_counts",
    "unit_charge",
    "unit_name",
]

#: Written name and charge of common molecular ions and molecules, by Hill formula.
#: Formulas and charges of the ions: IUPAC Red Book 2005 (ch. IR-5, Table IX); the order of
#: the atoms as written and the neutral molecules: common practice.
COMMON_UNITS: dict[str, tuple[str, int]] = {
    # oxoanions and other polyatomic anions
    "O4S": ("SO4", -2),
    "O3S": ("SO3", -2),
    "O3S2": ("S2O3", -2),
    "HO4S": ("HSO4", -1),
    "O4Se": ("SeO4", -2),
    "ClO4": ("ClO4", -1),
    "ClO3": ("ClO3", -1),
    "BrO3": ("BrO3", -1),
    "IO3": ("IO3", -1),
    "IO4": ("IO4", -1),
    "NO3": ("NO3", -1),
    "CO3": ("CO3", -2),
    "CHO3": ("HCO3", -1),
    "C2O4": ("C2O4", -2),
    "CHO2": ("HCOO", -1),
    "C2H3O2": ("CH3COO", -1),
    "O4P": ("PO4", -3),
    "HO4P": ("HPO4", -2),
    "H2O4P": ("H2PO4", -1),
    "AsO4": ("AsO4", -3),
    "O4V": ("VO4", -3),
    "O4Si": ("SiO4", -4),
    "CrO4": ("CrO4", -2),
    "Cr2O7": ("Cr2O7", -2),
    "MnO4": ("MnO4", -1),
    "MoO4": ("MoO4", -2),
    "O4W": ("WO4", -2),
    "BF4": ("BF4", -1),
    "BH4": ("BH4", -1),
    "F6P": ("PF6", -1),
    "F6Si": ("SiF6", -2),
    "AlCl4": ("AlCl4", -1),
    "Cl4Ga": ("GaCl4", -1),
    "Cl6Pt": ("PtCl6", -2),
    "Cl4Pt": ("PtCl4", -2),
    "Cl4Zn": ("ZnCl4", -2),
    "Cl4Co": ("CoCl4", -2),
    "CN": ("CN", -1),
    "CNS": ("SCN", -1),
    "CNO": ("OCN", -1),
    "N3": ("N3", -1),
    "HO": ("OH", -1),
    "I3": ("I3", -1),
    # cations
    "H4N": ("NH4", 1),
    "H3O": ("H3O", 1),
    "CH6N": ("CH3NH3", 1),
    "C4H12N": ("N(CH3)4", 1),
    "C2H8N": ("(CH3)2NH2", 1),
    "CH5N2": ("CH(NH2)2", 1),
    "H5N2": ("N2H5", 1),
    # neutral molecules
    "H2O": ("H2O", 0),
    "H3N": ("NH3", 0),
    "H2S": ("H2S", 0),
    "O2S": ("SO2", 0),
    "F6S": ("SF6", 0),
    "CO2": ("CO2", 0),
    "CS2": ("CS2", 0),
    "CO": ("CO", 0),
    "N2O": ("N2O", 0),
    "N2": ("N2", 0),
    "O2": ("O2", 0),
    "Cl2": ("Cl2", 0),
    "Br2": ("Br2", 0),
    "I2": ("I2", 0),
    "CH4": ("CH4", 0),
    "C2H2": ("C2H2", 0),
    "C2H4": ("C2H4", 0),
    "C2H6": ("C2H6", 0),
    "C6H6": ("C6H6", 0),
    "C10H8": ("C10H8", 0),
    "C14H10": ("C14H10", 0),
    "CCl4": ("CCl4", 0),
    "CHCl3": ("CHCl3", 0),
    "CH2Cl2": ("CH2Cl2", 0),
    "CH4O": ("CH3OH", 0),
    "C60": ("C60", 0),
    "C70": ("C70", 0),
}

_ELEMENT = re.compile(r"([A-Z][a-z]?)(\d*)")
# a charge at the end: "^2-", "^+", " 2-", "(2-)", "2-" after "^"/space/paren, or a bare sign
_CHARGE = re.compile(r"(?:\^|\s+|\()(\d*)([+-])\)?$|([+-])$")


def charge_text(charge: int) -> str:
    """``"^2-"``, ``"+"``, ``"-"``, ``""`` for a charge of -2, 1, -1, 0."""
    if charge == 0:
        return ""
    sign = "+" if charge > 0 else "-"
    return sign if abs(charge) == 1 else f"^{abs(charge)}{sign}"


def _split_charge(text: str) -> tuple[str, int | None]:
    m = _CHARGE.search(text)
    if not m:
        return text, None
    if m.group(3):
        return text[: m.start()], 1 if m.group(3) == "+" else -1
    n = int(m.group(1)) if m.group(1) else 1
    return text[: m.start()], n if m.group(2) == "+" else -n


def _counts(body: str, whole: str) -> dict[str, int]:
    """Element counts of a formula with optional parenthesised groups, e.g. ``N(CH3)4``."""
    from ase.data import atomic_numbers

    counts: dict[str, int] = {}
    stack: list[dict[str, int]] = [counts]
    pos = 0
    while pos < len(body):
        ch = body[pos]
        if ch == "(":
            stack.append({})
            pos += 1
            continue
        if ch == ")":
            if len(stack) == 1:
                raise InputError(f"{whole!r} is not a unit name or formula (unbalanced parenthesis)")
            m = re.match(r"\d*", body[pos + 1 :])
            k = int(m.group()) if m and m.group() else 1
            inner = stack.pop()
            for e, n in inner.items():
                stack[-1][e] = stack[-1].get(e, 0) + n * k
            pos += 1 + (len(m.group()) if m else 0)
            continue
        m = _ELEMENT.match(body, pos)
        if not m or m.group(1) not in atomic_numbers:
            raise InputError(
                f"{whole!r} is not a unit name or formula "
                "(expected element symbols with counts, e.g. SO4^2-, NH4+, C60)"
            )
        n = int(m.group(2)) if m.group(2) else 1
        if n == 0:
            raise InputError(f"{whole!r}: an element count of 0 is not a formula")
        stack[-1][m.group(1)] = stack[-1].get(m.group(1), 0) + n
        pos = m.end()
    if len(stack) != 1:
        raise InputError(f"{whole!r} is not a unit name or formula (unbalanced parenthesis)")
    if not counts:
        raise InputError(f"{whole!r} is not a unit name or formula")
    return counts


def name_counts(name: str) -> tuple[dict[str, int], int | None]:
    """Element counts and charge (``None`` if not written) of a unit name or formula.

    Examples
    --------
    >>> name_counts("SO4^2-")
    ({'S': 1, 'O': 4}, -2)
    >>> name_counts("CH3NH3+")
    ({'C': 1, 'H': 6, 'N': 1}, 1)
    >>> name_counts("O4S")
    ({'O': 4, 'S': 1}, None)
    """
    body, charge = _split_charge(name.strip())
    return _counts(body.replace(" ", ""), name), charge


def _hill(counts: dict[str, int]) -> str:
    def part(e: str) -> str:
        return e + (str(counts[e]) if counts[e] > 1 else "")

    if "C" in counts:
        order = ["C"] + (["H"] if "H" in counts else []) + sorted(e for e in counts if e not in ("C", "H"))
    else:
        order = sorted(counts)
    return "".join(part(e) for e in order)


def hill_of(name: str) -> str:
    """Hill formula of a unit name, a formula in any order, or a Hill formula.

    Examples
    --------
    >>> hill_of("SO4^2-"), hill_of("NH4+"), hill_of("CH3NH3+"), hill_of("O4S"), hill_of("N(CH3)4+")
    ('O4S', 'H4N', 'CH6N', 'O4S', 'C4H12N')
    """
    return _hill(name_counts(name)[0])


def unit_charge(formula: str) -> int | None:
    """Charge of the unit with this Hill formula in the common-ion table (``None``: not listed)."""
    entry = COMMON_UNITS.get(formula)
    return entry[1] if entry else None


def unit_name(formula: str) -> str:
    """Written name of a unit from its Hill formula; the Hill formula when it is not listed.

    Examples
    --------
    >>> unit_name("O4S"), unit_name("H4N"), unit_name("CH6N"), unit_name("C60"), unit_name("C2Ca2O6")
    ('SO4^2-', 'NH4+', 'CH3NH3+', 'C60', 'C2Ca2O6')
    """
    entry = COMMON_UNITS.get(formula)
    if entry is None:
        return formula
    return entry[0] + charge_text(entry[1])


def match_unit(name: str, formulas: Iterable[str], *, what: str = "unit", where: str = "the structure") -> str:
    """The Hill formula among ``formulas`` that ``name`` (written name or formula) means.

    Units are matched by their element counts; a charge written in ``name`` must agree with
    the common-ion table when the unit is listed there.

    Raises
    ------
    InputError
        One line naming what is there when ``name`` is not a formula or matches no unit.

    Examples
    --------
    >>> match_unit("CO3^2-", ["Ca", "CO3"])
    'CO3'
    """
    present = list(dict.fromkeys(formulas))
    listing = ", ".join(f"{unit_name(f)} ({f})" if unit_name(f) != f else f for f in present) or "none"
    try:
        counts, charge = name_counts(name)
    except InputError as exc:
        raise InputError(f"{what} {name!r}: {exc}; units in {where}: {listing}") from None
    hill = _hill(counts)
    if hill not in present:
        written = unit_name(hill)
        shown = f"{name!r} ({written})" if written not in (name.strip(), hill) else repr(name)
        raise InputError(f"{what} {shown} matches no unit of {where}; units there: {listing}")
    listed = unit_charge(hill)
    if charge is not None and listed is not None and charge != listed:
        raise InputError(f"{what} {name!r}: the unit {hill} is {unit_name(hill)}, charge {listed:+d}")
    return hill


def find_unit(units: Iterable[Any], name: str) -> Any:
    """The first of ``units`` (objects with a ``formula``) named ``name``: Hill formula or written name.

    Raises ``KeyError`` when none matches.
    """
    units = list(units)
    for u in units:
        if u.formula == name:
            return u
    try:
        hill = hill_of(name)
    except InputError:
        raise KeyError(name) from None
    for u in units:
        if u.formula == hill:
            return u
    raise KeyError(name)

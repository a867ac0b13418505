"""Natural isotopic abundances and isotope masses (bundled reference data).

The numbers live in ``splitting/data/isotopes.toml``, which names its sources
(AME2020 masses; CIAAW 2021 and Meija et al. 2016 abundances).

Examples
--------
>>> carbon = isotopes("C")
>>> [(i.mass_number, i.abundance) for i in carbon]
[(12, 0.9893), (13, 0.0107)]
>>> most_abundant("Cl").mass_number
35
"""

from __future__ import annotations

import tomllib
from dataclasses import dataclass
from functools import lru_cache
from importlib import resources
from typing import Any

from ..errors import DataError

__all__ = ["Isotope", "abundance_source", "elements", "isotope", "isotopes", "most_abundant"]


@dataclass(frozen=True)
class Isotope:
    """One stable (or primordial) isotope of an element.

    Attributes
    ----------
    element : str
        Element symbol, e.g. ``"S"``.
    mass_number : int
        Mass number A.
    mass_u : float
        Atomic mass, unified atomic mass units (u).
    abundance : float
        Natural amount fraction (0 to 1).
    abundance_uncertainty : float
        Standard uncertainty of ``abundance`` as given by the source (0 for a
        mononuclidic element).
    """

    element: str
    mass_number: int
    mass_u: float
    abundance: float
    abundance_uncertainty: float = 0.0

    @property
    def label(self) -> str:
        """Mass number then symbol, e.g. ``"13C"``."""
        return f"{self.mass_number}{self.element}"

    def to_dict(self) -> dict[str, Any]:
        """Plain, JSON-ready dictionary of the fields."""
        return {
            "element": self.element,
            "mass_number": self.mass_number,
            "mass_u": self.mass_u,
            "abundance": self.abundance,
            "abundance_uncertainty": self.abundance_uncertainty,
        }


_WHERE = "splitting/data/isotopes.toml"


def _number(value: object, what: str) -> float:
    if not isinstance(value, (int, float)) or isinstance(value, bool):
        raise DataError(f"{_WHERE}: {what} must be a number, got {value!r}")
    return float(value)


@lru_cache(maxsize=1)
def _table() -> tuple[dict[str, tuple[Isotope, ...]], dict[str, str]]:
    text = resources.files("splitting").joinpath("data").joinpath("isotopes.toml").read_text(encoding="utf-8")
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        from .._reasons import toml_reason

        raise DataError(f"{_WHERE}: not valid TOML ({toml_reason(exc)})") from None
    sources: dict[str, str] = data.get("sources", {})
    by_element: dict[str, tuple[Isotope, ...]] = {}
    source_of: dict[str, str] = {}
    for symbol, entry in data.get("element", {}).items():
        key = entry.get("abundance_source")
        if key not in sources:
            raise DataError(f"{_WHERE}: element {symbol} names unknown abundance_source {key!r}")
        rows = []
        for raw in entry.get("isotope", []):
            what = f"{symbol} isotope {raw.get('mass_number')!r}"
            mass_number = raw.get("mass_number")
            if not isinstance(mass_number, int) or isinstance(mass_number, bool):
                raise DataError(f"{_WHERE}: {what}: mass_number must be an integer")
            rows.append(
                Isotope(
                    element=symbol,
                    mass_number=mass_number,
                    mass_u=_number(raw.get("mass_u"), f"{what} mass_u"),
                    abundance=_number(raw.get("abundance"), f"{what} abundance"),
                    abundance_uncertainty=_number(raw.get("abundance_uncertainty", 0.0), f"{what} uncertainty"),
                )
            )
        if not rows:
            raise DataError(f"{_WHERE}: element {symbol} has no isotopes")
        by_element[symbol] = tuple(sorted(rows, key=lambda i: i.mass_number))
        source_of[symbol] = sources[key]
    return by_element, source_of


def elements() -> tuple[str, ...]:
    """Symbols of the elements with bundled isotope data, in file order."""
    return tuple(_table()[0])


def _lookup(element: str) -> tuple[Isotope, ...]:
    symbol = element.strip()
    table = _table()[0]
    if symbol not in table:
        symbol = symbol.capitalize()
    if symbol not in table:
        raise DataError(f"no isotope data for element {element!r}; available: {', '.join(table)}")
    return table[symbol]


def isotopes(element: str) -> tuple[Isotope, ...]:
    """Natural isotopes of ``element``, by increasing mass number.

    Parameters
    ----------
    element : str
        Element symbol (``"S"``, ``"Cl"``; case-insensitive).

    Raises
    ------
    DataError
        If the element is not in the bundled table.
    """
    return _lookup(element)


def isotope(label: str) -> Isotope:
    """One isotope from a label such as ``"13C"`` or ``"34S"``.

    Examples
    --------
    >>> isotope("34S").abundance
    0.0425
    """
    text = label.strip()
    digits = len(text) - len(text.lstrip("0123456789"))
    if digits == 0 or digits == len(text):
        raise DataError(f"isotope label {label!r} must be mass number then symbol, e.g. 13C")
    mass_number = int(text[:digits])
    for candidate in _lookup(text[digits:]):
        if candidate.mass_number == mass_number:
            return candidate
    known = ", ".join(i.label for i in _lookup(text[digits:]))
    raise DataError(f"{label!r} is not a natural isotope in the bundled table; known: {known}")


def most_abundant(element: str) -> Isotope:
    """The isotope of ``element`` with the largest natural abundance."""
    return max(_lookup(element), key=lambda i: i.abundance)


def abundance_source(element: str) -> str:
    """Citation of the abundances used for ``element``."""
    return _table()[1][_lookup(element)[0].element]

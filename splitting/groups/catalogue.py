"""Names of the point groups and their generators in the standard orientation.

Standard orientation (stated with every result that carries Mulliken labels):

* z along the principal axis (highest-order rotation or rotoreflection axis);
* groups with two-fold axes perpendicular to z (D_n, D_nh, D_nd): one such C2' along x;
* C_nv: one mirror plane is xz (the class of that plane is sigma_v);
* D_nd: the sigma_d planes bisect the angles between the C2' axes;
* C_s: the mirror plane is xy;
* cubic groups: the two-fold (O, O_h: four-fold) axes along x, y and z, a three-fold axis along [111];
  T_d: mirror plane x = y;
* icosahedral groups: two-fold axes along x, y and z, a five-fold axis along (0, 1, golden ratio).

No operation list is typed by hand: each group is the closure of the generators below.
"""

from __future__ import annotations

import re

import numpy as np

from ..errors import SymmetryError
from .operations import INVERSION, improper_rotation, reflection, rotation

__all__ = [
    "CRYSTALLOGRAPHIC",
    "HERMANN_MAUGUIN",
    "MAX_AXIAL_ORDER",
    "all_group_names",
    "canonical_name",
    "family",
    "generators",
]

#: largest n of the axial families C_n, C_nv, C_nh, D_n, D_nh, D_nd, S_2n
MAX_AXIAL_ORDER = 8

GOLDEN = (1 + 5**0.5) / 2

#: Hermann-Mauguin (short) symbols of the 32 crystallographic point groups
#: (International Tables for Crystallography, Vol. A, Table 10.1.2.2).
HERMANN_MAUGUIN: dict[str, str] = {
    "C1": "1", "Ci": "-1", "C2": "2", "Cs": "m", "C2h": "2/m",
    "D2": "222", "C2v": "mm2", "D2h": "mmm",
    "C4": "4", "S4": "-4", "C4h": "4/m", "D4": "422", "C4v": "4mm", "D2d": "-42m", "D4h": "4/mmm",
    "C3": "3", "S6": "-3", "D3": "32", "C3v": "3m", "D3d": "-3m",
    "C6": "6", "C3h": "-6", "C6h": "6/m", "D6": "622", "C6v": "6mm", "D3h": "-6m2", "D6h": "6/mmm",
    "T": "23", "Th": "m-3", "O": "432", "Td": "-43m", "Oh": "m-3m",
}  # fmt: skip

CRYSTALLOGRAPHIC: tuple[str, ...] = tuple(HERMANN_MAUGUIN)

_HM_TO_SCHOENFLIES = {hm: s for s, hm in HERMANN_MAUGUIN.items()}
_HM_TO_SCHOENFLIES.update({"-4m2": "D2d", "2mm": "C2v", "m2m": "C2v", "-62m": "D3h", "312": "D3", "321": "D3",
                           "31m": "C3v", "3m1": "C3v", "-31m": "D3d", "-3m1": "D3d", "m3": "Th", "m3m": "Oh",
                           "2/m2/m2/m": "D2h", "4/m2/m2/m": "D4h", "6/m2/m2/m": "D6h",
                           "-32/m": "D3d", "2/m-3": "Th", "4/m-32/m": "Oh"})  # fmt: skip

_ALIASES = {
    "C3i": "S6", "C5i": "S10", "C7i": "S14", "S2": "Ci", "C1h": "Cs", "C1v": "Cs", "Sigma": "Cs",
    "Dinfh": "D∞h", "Cinfv": "C∞v", "D*h": "D∞h", "C*v": "C∞v", "D-inf-h": "D∞h", "C-inf-v": "C∞v",
    "Dooh": "D∞h", "Coov": "C∞v", "Dinfinityh": "D∞h", "Cinfinityv": "C∞v",
    "V": "D2", "Vh": "D2h", "Vd": "D2d", "D1": "C2", "D1h": "C2v", "D1d": "C2h", "C1i": "Ci",
}  # fmt: skip


def all_group_names() -> tuple[str, ...]:
    """Every finite point group the engine builds, in a stable order.

    Examples
    --------
    >>> "D5h" in all_group_names() and "Ih" in all_group_names()
    True
    """
    names = ["C1", "Ci", "Cs"]
    for n in range(2, MAX_AXIAL_ORDER + 1):
        names += [f"C{n}", f"C{n}v", f"C{n}h", f"D{n}", f"D{n}h", f"D{n}d"]
    for n in range(2, MAX_AXIAL_ORDER + 1):
        s = f"S{2 * n}"
        names.append(s)
    names += ["T", "Th", "Td", "O", "Oh", "I", "Ih"]
    return tuple(names)


_AXIAL = re.compile(r"^(C|D|S)(\d+)(v|h|d|i)?$")


def canonical_name(symbol: str) -> str:
    """Turn a user's spelling (Schoenflies, aliases, Hermann-Mauguin) into our Schoenflies name.

    Examples
    --------
    >>> canonical_name("C3i"), canonical_name("4/mmm"), canonical_name("d2h"), canonical_name("m-3m")
    ('S6', 'D4h', 'D2h', 'Oh')
    """
    s = symbol.strip().replace(" ", "").replace("_", "")
    if s in _HM_TO_SCHOENFLIES:
        return _HM_TO_SCHOENFLIES[s]
    if s in _ALIASES:
        return _ALIASES[s]
    if s in ("C∞v", "D∞h"):
        return s
    # case-insensitive Schoenflies: first letter upper, rest lower, except 'I', 'O', 'T'
    t = s[:1].upper() + s[1:].lower()
    if t in _ALIASES:
        return _ALIASES[t]
    if t in ("C∞v", "D∞h"):
        return t
    m = _AXIAL.match(t)
    if m:
        letter, n, suffix = m.group(1), int(m.group(2)), m.group(3) or ""
        if letter == "S":
            if suffix:
                raise SymmetryError(f"unknown point group {symbol!r}")
            if n == 1:
                return "Cs"
            if n == 2:
                return "Ci"
            if n % 2 == 1:  # S_n with n odd equals C_nh
                return f"C{n}h"
            if n // 2 > MAX_AXIAL_ORDER:
                raise SymmetryError(f"point group {symbol!r} is beyond S{2 * MAX_AXIAL_ORDER}")
            return f"S{n}"
        if n == 1:
            return {"": "C1", "v": "Cs", "h": "Cs", "i": "Ci"}.get(suffix, "") or _bad(symbol)
        if suffix == "i":
            return canonical_name(f"S{2 * n}") if n % 2 else f"C{n}h"
        if n > MAX_AXIAL_ORDER:
            raise SymmetryError(f"point group {symbol!r} has an axis of order above {MAX_AXIAL_ORDER}")
        name = f"{letter}{n}{suffix}"
        if name in all_group_names():
            return name
    if t in ("T", "Th", "Td", "O", "Oh", "I", "Ih", "Ci", "Cs"):
        return t
    return _bad(symbol)


def _bad(symbol: str) -> str:
    raise SymmetryError(
        f"unknown point group {symbol!r}; use a Schoenflies symbol such as C2v, D4h, Oh, Ih, D∞h "
        "or a Hermann-Mauguin symbol such as 4/mmm"
    )


def family(name: str) -> tuple[str, int]:
    """Family letter code and principal order: ('Cnv', 4) for C4v, ('O', 4) for Oh ... .

    Families: 'C1', 'Ci', 'Cs', 'Cn', 'Cnv', 'Cnh', 'Dn', 'Dnh', 'Dnd', 'S2n', 'T', 'Th', 'Td',
    'O', 'Oh', 'I', 'Ih'. The integer is the order of the principal axis
    (for S2n the order of the rotoreflection, 2n).
    """
    if name in ("C1", "Ci", "Cs"):
        return name, 1
    if name in ("T", "Th", "Td"):
        return name, 2
    if name in ("O", "Oh"):
        return name, 4
    if name in ("I", "Ih"):
        return name, 5
    m = _AXIAL.match(name)
    if not m:
        raise SymmetryError(f"unknown point group {name!r}")
    letter, n, suffix = m.group(1), int(m.group(2)), m.group(3) or ""
    if letter == "S":
        return "S2n", n
    return f"{letter}n{suffix}", n


def generators(name: str) -> list[np.ndarray]:
    """Generators of a finite point group in the standard orientation."""
    fam, n = family(name)
    z = [0.0, 0.0, 1.0]
    if fam == "C1":
        return []
    if fam == "Ci":
        return [INVERSION]
    if fam == "Cs":
        return [reflection(z)]
    if fam == "S2n":
        return [improper_rotation(z, 2 * np.pi / n)]
    if fam in ("Cn", "Cnv", "Cnh", "Dn", "Dnh", "Dnd"):
        cn = rotation(z, 2 * np.pi / n)
        if fam == "Cn":
            return [cn]
        if fam == "Cnv":
            return [cn, reflection([0.0, 1.0, 0.0])]
        if fam == "Cnh":
            return [cn, reflection(z)]
        c2x = rotation([1.0, 0.0, 0.0], np.pi)
        if fam == "Dn":
            return [cn, c2x]
        if fam == "Dnh":
            return [cn, c2x, reflection(z)]
        t = np.pi / (2 * n)
        return [cn, c2x, reflection([-np.sin(t), np.cos(t), 0.0])]
    c3 = rotation([1.0, 1.0, 1.0], 2 * np.pi / 3)
    if fam in ("O", "Oh"):
        c4z = rotation(z, np.pi / 2)
        return [c4z, c3] if fam == "O" else [c4z, c3, INVERSION]
    c2z = rotation(z, np.pi)
    if fam == "T":
        return [c2z, c3]
    if fam == "Th":
        return [c2z, c3, INVERSION]
    if fam == "Td":
        return [c2z, c3, reflection([1.0, -1.0, 0.0])]
    c5 = rotation([0.0, 1.0, GOLDEN], 2 * np.pi / 5)
    if fam == "I":
        return [c2z, c3, c5]
    if fam == "Ih":
        return [c2z, c3, c5, INVERSION]
    raise SymmetryError(f"unknown point group {name!r}")  # pragma: no cover

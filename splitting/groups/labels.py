"""Mulliken labels and class names, derived from characters at named operations.

The rules (R. S. Mulliken, J. Chem. Phys. 23, 1997 (1955); E. B. Wilson, J. C. Decius and
P. C. Cross, *Molecular Vibrations*, 1955, Appendix X):

* letter by dimension: A/B (1), E (2), T (3), G (4), H (5); a one-dimensional species is A
  when symmetric under the principal rotation (or rotoreflection) and B when antisymmetric;
* subscript 1/2: symmetric/antisymmetric under the C2' along x, else under sigma_v(xz);
  in D2 and D2h, B1, B2, B3 are the species symmetric under C2(z), C2(y), C2(x);
  cubic groups use C4 (O, Oh) or S4 (Td); icosahedral T1 carries the vector;
* E_k for the two-dimensional species whose character under the principal operation of
  order N is 2 cos(2 pi k / N), written only when more than one k occurs;
* g/u under inversion; ' and '' under sigma_h in groups without inversion;
* a complex-conjugate pair of one-dimensional irreps is one species E (common practice
  in vibrational spectroscopy).
"""

from __future__ import annotations

from collections.abc import Callable
from functools import cache
from typing import NamedTuple

import numpy as np

from ..errors import SymmetryError
from .catalogue import GOLDEN, family
from .operations import OperationKind, OperationKinds, classify, improper_rotation, reflection, rotation

__all__ = ["class_names", "fixed_operations", "mulliken_labels"]

_LETTERS = {1: "A", 2: "E", 3: "T", 4: "G", 5: "H"}

Z = np.array([0.0, 0.0, 1.0])
X = np.array([1.0, 0.0, 0.0])
Y = np.array([0.0, 1.0, 0.0])


@cache
def _principal(name: str) -> tuple[np.ndarray | None, int]:
    """Principal operation in standard orientation (read-only) and its order N."""
    op, big_n = _principal_made(name)
    if op is not None:
        op.setflags(write=False)
    return op, big_n


def _principal_made(name: str) -> tuple[np.ndarray | None, int]:
    fam, n = family(name)
    if fam in ("Cn", "Cnv", "Cnh", "Dn", "Dnh"):
        return rotation(Z, 2 * np.pi / n), n
    if fam == "Dnd":
        if n % 2 == 0:
            return improper_rotation(Z, np.pi / n), 2 * n
        return rotation(Z, 2 * np.pi / n), n
    if fam == "S2n":
        half = n // 2
        if half % 2 == 1:
            return rotation(Z, 2 * np.pi / half), half
        return improper_rotation(Z, 2 * np.pi / n), n
    return None, 1


_FIXED_NAMES = ("i", "σh", "σxz", "C2x", "C2y", "C2z", "C4z", "S4z", "C5")


@cache
def fixed_operations(name: str) -> np.ndarray:
    """Every operation :func:`mulliken_labels` may ask the character of for group ``name``, shape (m, 3, 3)."""
    principal, _ = _principal(name)
    fixed = [_fixed(k) for k in _FIXED_NAMES]
    out = np.array(fixed if principal is None else [*fixed, principal])
    out.setflags(write=False)
    return out


@cache
def _fixed(name: str) -> np.ndarray:
    """The operations of the standard orientation that the labelling rules test (read-only)."""
    m = {
        "i": lambda: -np.eye(3),
        "σh": lambda: reflection(Z),
        "σxz": lambda: reflection(Y),
        "C2x": lambda: rotation(X, np.pi),
        "C2y": lambda: rotation(Y, np.pi),
        "C2z": lambda: rotation(Z, np.pi),
        "C4z": lambda: rotation(Z, np.pi / 2),
        "S4z": lambda: improper_rotation(Z, np.pi / 2),
        "C5": lambda: rotation([0.0, 1.0, GOLDEN], 2 * np.pi / 5),
    }[name]()
    m.setflags(write=False)
    return m


def mulliken_labels(name: str, chi: Callable[[int, np.ndarray], float | None], dims: list[int]) -> list[str]:
    """Label the species of group ``name``.

    Parameters
    ----------
    name : str
        Canonical Schoenflies name.
    chi : callable
        ``chi(s, matrix)`` gives the (real) character of species ``s`` at the operation
        ``matrix`` of the standard orientation, or None when the group lacks it.
    dims : list of int
        Dimension of every species.
    """
    fam, _n = family(name)
    principal, big_n = _principal(name)
    inversion, sigma_h = _fixed("i"), _fixed("σh")
    has_i = chi(0, inversion) is not None
    has_sh = chi(0, sigma_h) is not None
    c2x = _fixed("C2x")
    sig_xz = _fixed("σxz")
    labels = []
    for s, d in enumerate(dims):
        letter = _LETTERS.get(d)
        if letter is None:
            raise SymmetryError(f"{name}: species of dimension {d} has no Mulliken letter")
        sub = ""
        if d == 1:
            if name in ("D2", "D2h"):
                tags = ["1", "2", "3"]  # symmetric under C2(z), C2(y), C2(x)
                sym = [chi(s, _fixed(op)) for op in ("C2z", "C2y", "C2x")]
                if all(v > 0 for v in sym):
                    letter = "A"
                else:
                    letter = "B"
                    sub = next(tag for tag, v in zip(tags, sym, strict=True) if v > 0)
            elif principal is not None:
                letter = "A" if chi(s, principal) > 0 else "B"
            else:
                letter = "A"
        if name not in ("D2", "D2h") and d in (1, 3):
            ref = None
            if fam in ("Dn", "Dnh", "Dnd") and d == 1:
                ref = chi(s, c2x)
            elif fam == "Cnv" and d == 1:
                ref = chi(s, sig_xz)
            elif fam in ("O", "Oh"):
                ref = chi(s, _fixed("C4z"))
            elif fam == "Td":
                ref = chi(s, _fixed("S4z"))
            elif fam in ("I", "Ih") and d == 3:
                c5 = chi(s, _fixed("C5"))
                ref = 1.0 if abs(c5 - GOLDEN) < 1e-6 else -1.0
            if ref is not None:
                sub = "1" if ref > 0 else "2"
        if d == 2 and principal is not None and (big_n - 1) // 2 > 1:
            c = chi(s, principal)
            ks = range(1, big_n // 2 + 1)
            k = min(ks, key=lambda kk: abs(c - 2 * np.cos(2 * np.pi * kk / big_n)))
            sub = str(k)
        label = letter + sub
        if has_i:
            label += "g" if chi(s, inversion) > 0 else "u"
        elif has_sh and fam not in ("C1",):
            label += "'" if chi(s, sigma_h) > 0 else "''"
        labels.append(label)
    if len(set(labels)) != len(labels):
        raise SymmetryError(f"{name}: Mulliken labelling is ambiguous: {labels}")
    return labels


class _Kind(NamedTuple):
    """The parts of an :class:`OperationKind` that name a class."""

    symbol: str
    proper: bool
    order: int


def _powers(kind: OperationKind, axes: np.ndarray, angles: np.ndarray) -> np.ndarray:
    """k of C_n^k / S_n^k for the members of one class (all of ``kind``), given their axes and angles.

    About +z when the axis is z, else about the canonical axis.
    """
    if kind.order <= 2 or kind.symbol in ("E", "i", "σ"):
        return np.ones(len(axes), dtype=int)
    on_z = np.abs(np.abs(axes[:, 2]) - 1) < 1e-6
    ang = np.where(on_z & (axes[:, 2] <= 0), -angles, angles)
    k = np.rint(ang / (2 * np.pi / kind.order)).astype(int) % kind.order
    if not kind.proper and kind.order % 2 == 1:
        k = np.where(k % 2 == 0, k + kind.order, k)  # S_n^k with n odd is written with k odd: sigma C_n^2 = S_n^(n+2)
    return k


def _all_powers(every: OperationKinds, on_z: np.ndarray) -> list[int]:
    """:func:`_powers` of every operation at once (by the same arithmetic), meaningful where the order is above 2.

    ``on_z`` marks the operations about z.
    """
    order = every.order
    ang = np.where(on_z & (every.axis[:, 2] <= 0), -every.angle, every.angle)
    k = np.rint(ang / (2 * np.pi / order)).astype(int) % order
    k = np.where(~every.proper & (order % 2 == 1) & (k % 2 == 0), k + order, k)
    return k.tolist()


def class_names(
    name: str, ops: np.ndarray, classes: list[np.ndarray], *, kinds: OperationKinds | None = None
) -> list[str]:
    """Names such as 'E', '2C3', "3C2'", 'σh', '2S6' for the classes of a standard group.

    ``kinds`` is ``classify(ops)`` when the caller has it already.
    """
    fam, _ = family(name)
    every = classify(ops) if kinds is None else kinds
    # the operations about x, y, z (|axis . v| within 1e-6 of 1: the axis component itself)
    on_axes = np.abs(np.abs(every.axis) - 1) < 1e-6
    along = on_axes.T.tolist()
    powers = _all_powers(every, on_axes[:, 2])
    proper, orders = every.proper.tolist(), every.order.tolist()
    names: list[str] = []
    for members in classes:
        listed = np.asarray(members, dtype=int).tolist()
        first = listed[0]  # conjugate operations are of one kind
        kind = _Kind(every.symbol[first], proper[first], orders[first])

        def has_axis(k: int, listed=listed) -> bool:
            """True when an operation of the class turns about (or is normal to) axis k (x, y, z)."""
            on = along[k]
            return any(on[m] for m in listed)

        sym = kind.symbol
        if kind.order > 2 and sym not in ("E", "i", "σ"):
            on_z = [powers[m] for m in listed if along[2][m]]
            k = min(on_z) if on_z else min(powers[m] for m in listed)
            letter = "C" if kind.proper else "S"
            sym = f"{letter}{kind.order}" if k == 1 else f"{letter}{kind.order}^{k}"
            base = f"{len(listed)}{sym}" if len(listed) > 1 else sym
            if base in names:  # a second class of the same rotations in the other sense
                k2 = (2 * kind.order if (not kind.proper and kind.order % 2) else kind.order) - k
                sym = f"{letter}{kind.order}^{k2}"
        if kind.symbol == "C2":
            if fam in ("T", "Th", "Td", "O", "Oh"):
                sym = "C2" if has_axis(2) else "C2'"
            elif name in ("D2", "D2h"):
                sym = "C2(z)" if has_axis(2) else ("C2(y)" if has_axis(1) else "C2(x)")
            elif not has_axis(2) and fam not in ("I", "Ih"):
                sym = "C2'" if has_axis(0) else "C2''"
        if kind.symbol == "σ":
            if fam in ("I", "Ih"):
                sym = "σ"
            elif name == "D2h":
                sym = "σ(xy)" if has_axis(2) else ("σ(xz)" if has_axis(1) else "σ(yz)")
            elif name == "C2v":
                sym = "σv(xz)" if has_axis(1) else "σv'(yz)"
            elif has_axis(2):
                sym = "σh"
            elif fam in ("Cnv", "Dnh") and has_axis(1):
                sym = "σv"
            else:
                sym = "σd"
        count = len(listed)
        names.append(sym if count == 1 else f"{count}{sym}")
    return names

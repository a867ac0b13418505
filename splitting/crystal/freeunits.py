"""Free-unit analyses for the units of a crystal, computed once per distinct unit shape.

Equivalent units (and units of related phases) differ only by a rotation or reflection
and a translation; the analysis of the first one is carried to the others by the
least-squares orthogonal map between their atoms, so the point-group search runs once
per shape.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ..errors import InputError
from ..groups import OrientedGroup, Representation
from ..molecule.analysis import analyse_unit
from .units import Unit

__all__ = ["FreeUnit", "FreeUnitCache"]


@dataclass(frozen=True, eq=False)
class FreeUnit:
    """What the crystal pipeline needs to know about one free unit in its crystal orientation.

    Attributes
    ----------
    group : OrientedGroup
        Free group, frame in the crystal's Cartesian axes.
    vibrations : Representation
        Internal modes in the free group.
    linear : bool
    deviation : float
        Largest distance (angstrom) of an atom from the ideal symmetric geometry.
    source : str
        ``"detected"`` or ``"given"``.
    """

    group: OrientedGroup
    vibrations: Representation
    linear: bool
    deviation: float
    source: str


@dataclass(eq=False)
class FreeUnitCache:
    """Analyses keyed by unit shape; share one cache between related structures."""

    tolerance: float
    given: dict[str, str] = field(default_factory=dict)
    _store: dict[tuple, list[tuple[np.ndarray, FreeUnit]]] = field(default_factory=dict)

    def get(self, unit: Unit) -> FreeUnit:
        """The free-unit analysis of ``unit`` in its own orientation."""
        centred = unit.positions - unit.centre
        key = _fingerprint(unit.numbers, centred, self.tolerance)
        for ref, ref_numbers, free in self._store.get(key, []):
            moved = _carry(ref, ref_numbers, centred, unit.numbers, free, self.tolerance)
            if moved is not None:
                return moved
        try:
            analysis = analyse_unit(
                unit.numbers, unit.positions, tolerance=self.tolerance, point_group=self.given.get(unit.formula)
            )
        except InputError as exc:
            raise InputError(f"unit {unit.formula}: {exc}") from None
        sym = analysis.symmetry
        free = FreeUnit(
            sym.group,
            analysis.vibrations,
            sym.linear,
            sym.max_deviation,
            "given" if unit.formula in self.given else "detected",
        )
        self._store.setdefault(key, []).append((centred, np.array(unit.numbers), free))
        return free


def _fingerprint(numbers, centred: np.ndarray, tolerance: float) -> tuple:
    """Shape key of a unit: its elements and, per element, the sorted distances from the centre.

    The distances are rounded on a grid of twice the tolerance, so units that can carry
    onto each other almost always share a key (a unit that falls just across a grid line
    is analysed afresh: slower, never wrong), while different shapes fall into different
    buckets.  A new unit is then compared with the few stored shapes of its bucket instead
    of with every stored shape.

    >>> import numpy as np
    >>> square = np.array([[1.0, 0, 0], [0, 1, 0], [-1, 0, 0], [0, -1, 0]])
    >>> _fingerprint([6, 6, 6, 6], square, 0.1) == _fingerprint([6, 6, 6, 6], square[::-1] * 1.01, 0.1)
    True
    """
    z = np.asarray(numbers, dtype=int)
    r = np.linalg.norm(centred, axis=1)
    grid = 2.0 * max(float(tolerance), 1e-3)
    order = np.lexsort((r, z))
    return (tuple(z[order].tolist()), tuple(np.round(r[order] / grid).astype(int).tolist()))


def _carry(
    ref: np.ndarray, ref_numbers: np.ndarray, new: np.ndarray, new_numbers: np.ndarray, free: FreeUnit, tolerance: float
) -> FreeUnit | None:
    """The stored analysis moved onto a unit of the same shape, or None if the shapes do not match."""
    from scipy.spatial import cKDTree

    orders = []
    if np.array_equal(ref_numbers, new_numbers):
        orders.append(np.arange(len(ref)))
    d, j = cKDTree(ref).query(new)  # same orientation, atoms listed in another order
    if np.max(d) < tolerance and len(set(j.tolist())) == len(j) and np.array_equal(ref_numbers[j], new_numbers):
        orders.append(j)
    for order in orders:
        a = ref[order]
        u, _, vt = np.linalg.svd(new.T @ a)
        r = u @ vt  # new ~ a @ r.T
        if np.max(np.linalg.norm(a @ r.T - new, axis=1)) <= tolerance:
            break
    else:
        return None
    if np.linalg.det(r) < 0:
        r = -r  # the same set of operations; keeps the frame a proper rotation
    frame = r @ free.group.frame
    return FreeUnit(OrientedGroup(free.group.group, frame), free.vibrations, free.linear, free.deviation, free.source)

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
from ..molecule.analysis import unit_vibrations
from ..molecule.symmetry import one_to_one
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
class _Shape:
    """Stored shapes of one element list: symmetrised geometries, sorted radii and analyses."""

    ideal: list[np.ndarray] = field(default_factory=list)
    numbers: list[np.ndarray] = field(default_factory=list)
    radii: list[np.ndarray] = field(default_factory=list)
    free: list[FreeUnit] = field(default_factory=list)
    trees: dict[int, object] = field(default_factory=dict)
    _stack: np.ndarray | None = None

    def add(self, ideal: np.ndarray, numbers: np.ndarray, radii: np.ndarray, free: FreeUnit) -> None:
        """Store one symmetrised geometry (about the centre) with its analysis in that orientation."""
        self.ideal.append(ideal)
        self.numbers.append(numbers)
        self.radii.append(radii)
        self.free.append(free)

    def tree(self, k: int):
        """k-d tree of stored shape k's atoms (built once, for matching atoms by proximity)."""
        found = self.trees.get(k)
        if found is None:
            found = self.trees[k] = _tree(self.ideal[k])
        return found

    def candidates(self, radii: np.ndarray, tolerance: float) -> np.ndarray:
        """Stored shapes whose sorted radii are all within ``tolerance`` of ``radii`` (a necessary
        condition for a match), closest first."""
        if self._stack is None or len(self._stack) != len(self.radii):
            self._stack = np.array(self.radii)
        gap = np.max(np.abs(self._stack - radii[None]), axis=1)
        near = np.flatnonzero(gap <= tolerance + 1e-9)
        return near[np.argsort(gap[near], kind="stable")]


@dataclass(eq=False)
class FreeUnitCache:
    """Analyses keyed by unit shape; share one cache between related structures.

    A new unit is compared with the symmetrised geometries already analysed for its list of
    elements: when one of them, turned (or reflected) and with the atoms matched by
    proximity, lies within the unit tolerance of every atom of the new unit, the new unit has
    that point group by the same criterion the point-group search applies (every atom within
    the tolerance of a geometry of that symmetry), and the stored analysis is carried onto it.
    Before any alignment the stored shapes are filtered, all at once, on their sorted
    distances from the centre, which no rotation changes.  The atoms are paired in the order
    listed, else by proximity in the stored orientation, else (a copy turned or reflected away
    from every stored orientation, with its atoms in another order) by proximity after a trial
    turn between the principal axes of the two shapes; whichever pairing is used, the match is
    accepted on the same criterion.
    """

    tolerance: float
    given: dict[str, str] = field(default_factory=dict)
    _store: dict[tuple, _Shape] = field(default_factory=dict)
    analyses: int = 0

    def get(self, unit: Unit) -> FreeUnit:
        """The free-unit analysis of ``unit`` in its own orientation."""
        centred = unit.positions - unit.centre
        key = _fingerprint(unit.numbers, centred, self.tolerance)
        shape = self._store.get(key)
        radii = _radii(unit.numbers, centred)
        if shape is not None and shape.radii:
            # first in a stored orientation; then a turned (or reflected) copy, paired on principal axes
            for pairing in (_carry, _carry_turned):
                for k in shape.candidates(radii, self.tolerance):
                    found = pairing(
                        shape.ideal[k],
                        shape.numbers[k],
                        centred,
                        unit.numbers,
                        shape.free[k],
                        self.tolerance,
                        shape.tree(k),
                    )
                    if found is None:
                        continue
                    if pairing is _carry:
                        return found
                    moved, turn = found
                    # kept as one more orientation of the shape: the units that follow in it carry directly
                    shape.add(shape.ideal[k] @ turn.T, shape.numbers[k], shape.radii[k], moved)
                    return moved
        try:
            sym, vibrations = unit_vibrations(
                unit.numbers, unit.positions, tolerance=self.tolerance, point_group=self.given.get(unit.formula)
            )
        except InputError as exc:
            raise InputError(f"unit {unit.formula}: {exc}") from None
        self.analyses += 1
        free = FreeUnit(
            sym.group,
            vibrations,
            sym.linear,
            sym.max_deviation,
            "given" if unit.formula in self.given else "detected",
        )
        if shape is None:
            shape = self._store.setdefault(key, _Shape())
        ideal = np.asarray(sym.symmetric_positions, dtype=float) + (sym.centre - unit.centre)
        shape.add(ideal, np.array(unit.numbers), _radii(unit.numbers, ideal), free)
        return free


def _fingerprint(numbers, centred: np.ndarray, tolerance: float) -> tuple:
    """Bucket of a unit's shape: its elements, sorted.

    Units of one bucket are then filtered on :func:`_radii` and aligned; ``centred`` and
    ``tolerance`` are accepted for callers that key on more.

    >>> _fingerprint([6, 1, 6], None, 0.1)
    (1, 6, 6)
    """
    return tuple(sorted(np.asarray(numbers, dtype=int).tolist()))


def _radii(numbers, centred: np.ndarray) -> np.ndarray:
    """Distances from the centre, sorted within each element (unchanged by rotations and reflections).

    Two units whose atoms can be matched within a distance t have these lists within t of
    each other entry by entry (sorting does not increase the largest difference).

    >>> import numpy as np
    >>> square = np.array([[1.0, 0, 0], [0, 1, 0], [-1, 0, 0], [0, -1, 0]])
    >>> _radii([6, 6, 6, 6], square).tolist()
    [1.0, 1.0, 1.0, 1.0]
    """
    z = np.asarray(numbers, dtype=int)
    r = np.linalg.norm(centred, axis=1)
    return r[np.lexsort((r, z))]


def _carry(
    ideal: np.ndarray,
    ideal_numbers: np.ndarray,
    new: np.ndarray,
    numbers,
    free: FreeUnit,
    tolerance: float,
    tree=None,
) -> FreeUnit | None:
    """The stored analysis moved onto a unit close to its symmetrised shape, or None if none is.

    ``ideal`` holds the stored symmetrised positions (about the centre) with their atomic
    numbers.  Atoms are matched in the order listed (when the element lists agree) or, failing
    that, to the nearest atom of the same element; the deviation reported is the new unit's
    largest distance from the carried symmetric geometry.
    """
    numbers = np.asarray(numbers)
    r = None
    if np.array_equal(ideal_numbers, numbers):
        r = _align(ideal, new)
        dev = float(np.max(np.linalg.norm(ideal @ r.T - new, axis=1)))
        if dev > tolerance:
            r = None
    if r is None:
        found = _align_by_proximity(ideal, ideal_numbers, new, numbers, tolerance, tree)
        if found is None:
            return None
        r, dev = found
    return _moved(free, r, dev)


def _moved(free: FreeUnit, r: np.ndarray, dev: float) -> FreeUnit:
    """``free`` turned by the orthogonal matrix ``r`` (stored orientation to the new one), deviation ``dev``."""
    if np.linalg.det(r) < 0:
        r = -r  # the same set of operations; keeps the frame a proper rotation
    frame = r @ free.group.frame
    return FreeUnit(OrientedGroup(free.group.group, frame), free.vibrations, free.linear, dev, free.source)


#: the eight sign choices of three principal axes
_SIGNS = np.array(
    [[1, 1, 1], [1, -1, -1], [-1, 1, -1], [-1, -1, 1], [-1, -1, -1], [-1, 1, 1], [1, -1, 1], [1, 1, -1]], dtype=float
)


def _carry_turned(
    ideal: np.ndarray,
    ideal_numbers: np.ndarray,
    new: np.ndarray,
    numbers,
    free: FreeUnit,
    tolerance: float,
    tree=None,
) -> tuple[FreeUnit, np.ndarray] | None:
    """:func:`_carry` for a unit turned (or reflected) away from the stored orientation, with the
    orthogonal map found (stored orientation to the new one), or None.

    The principal axes of the two second-moment tensors give eight trial turns, one per choice
    of the axes' signs; the new unit turned back by each trial has its atoms paired with the
    nearest stored atoms.  Of the trials that pair the atoms one to one and element to element,
    the first pairing in index order is fitted to all atoms as in :func:`_align_by_proximity`
    and accepted only when every atom lies within ``tolerance`` of the carried symmetric
    geometry (else the next pairing); the choice does not depend on the signs the eigenvector
    routine happens to give.  The trials only
    propose pairings: a unit whose axes are degenerate (a spherical or symmetric top) or badly
    determined finds none, and is analysed afresh.
    """
    tree = _tree(ideal, tree)
    numbers = np.asarray(numbers)
    n = len(new)
    _, v_old = np.linalg.eigh(ideal.T @ ideal)
    _, v_new = np.linalg.eigh(new.T @ new)
    turns = (v_new[None] * _SIGNS[:, None, :]) @ v_old.T  # stored principal axes onto the new ones
    _, j = tree.query((new[None] @ turns).reshape(-1, 3))
    j = j.reshape(len(turns), n)
    paired = one_to_one(j, ideal_numbers, numbers)
    for t in np.lexsort(j.T[::-1]):  # by pairing, first atom first; a repeated pairing is the same fit
        if not paired[t]:
            continue
        found = _fit(ideal[j[t]], new, tolerance)
        if found is not None:
            r, dev = found
            return _moved(free, r, dev), r
    return None


def _align(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Orthogonal matrix r (rotation or rotation-reflection) with b ~ a @ r.T in least squares."""
    u, _, vt = np.linalg.svd(b.T @ a)
    return u @ vt


def _align_by_proximity(
    ideal: np.ndarray, ideal_numbers: np.ndarray, new: np.ndarray, numbers: np.ndarray, tolerance: float, tree=None
) -> tuple[np.ndarray, float] | None:
    """Match each new atom to the nearest stored atom (same orientation) and align; None if that fails.

    ``tree`` is a k-d tree of ``ideal`` built before (one is built here if not given).
    """
    _, j = _tree(ideal, tree).query(new)
    if not one_to_one(j, ideal_numbers, numbers):
        return None
    return _fit(ideal[j], new, tolerance)


def _tree(points: np.ndarray, tree=None):
    """``tree`` when given, else a k-d tree of ``points``."""
    if tree is None:
        from scipy.spatial import cKDTree

        tree = cKDTree(points)
    return tree


def _fit(a: np.ndarray, new: np.ndarray, tolerance: float) -> tuple[np.ndarray, float] | None:
    """Orthogonal fit of the paired atoms ``a`` onto ``new`` and its largest miss; None beyond ``tolerance``."""
    r = _align(a, new)
    dev = float(np.max(np.linalg.norm(a @ r.T - new, axis=1)))
    return (r, dev) if dev <= tolerance else None

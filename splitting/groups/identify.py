"""Name a group given as operations in any orientation, and place it in its standard frame.

``identify(ops)`` answers three questions for a set of 3x3 orthogonal matrices (from a
molecule, a crystal site or a factor group): which point group it is, which rotation
carries the group's standard axes (see ``catalogue``) onto the given ones, and which
class every given operation belongs to.  When several frames are possible (D4h: is a
given C2 axis C2' or C2''?), a preference decides: for crystals, the frame closest to
the crystal axes; for molecules, the conventions of Mulliken (J. Chem. Phys. 23, 1997
(1955)), see :func:`molecular_preference`.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from functools import cached_property

import numpy as np

from ..errors import SymmetryError
from .catalogue import family
from .linear import LinearGroup, linear_group
from .operations import describe, multiplication_table, nearest_matrices
from .pointgroup import PointGroup, point_group
from .representation import Representation

__all__ = [
    "OrientedGroup",
    "crystal_preference",
    "identify",
    "identify_in_crystal",
    "molecular_preference",
    "name_of",
    "oriented",
]

Preference = Callable[[np.ndarray], tuple]


@dataclass(frozen=True, eq=False)
class OrientedGroup:
    """A point group placed in a given Cartesian frame.

    Attributes
    ----------
    group : PointGroup or LinearGroup
        The abstract group with its standard-orientation operations.
    frame : numpy.ndarray, shape (3, 3)
        Proper rotation whose columns are the standard x, y, z axes written in the
        given frame; the given operations are ``frame @ g @ frame.T``.
    """

    group: PointGroup | LinearGroup
    frame: np.ndarray = field(repr=False)

    @property
    def name(self) -> str:
        """Schoenflies name."""
        return self.group.name

    @cached_property
    def operations(self) -> np.ndarray:
        """Operations in the given frame, in the order of ``group.operations``."""
        if isinstance(self.group, LinearGroup):
            raise SymmetryError(f"{self.name} has infinitely many operations")
        ops = np.einsum("ij,njk,lk->nil", self.frame, self.group.operations, self.frame)
        ops.setflags(write=False)
        return ops

    @cached_property
    def _flat(self) -> np.ndarray:
        return self.group.operations.reshape(-1, 9)

    def to_standard(self, op: np.ndarray) -> np.ndarray:
        """An operation of the given frame written in the standard frame."""
        return self.frame.T @ np.asarray(op, dtype=float) @ self.frame

    def locate(self, op: np.ndarray, *, tol: float = 0.5) -> int:
        """Index (into ``group.operations``) of an operation given in this frame."""
        if isinstance(self.group, LinearGroup):
            raise SymmetryError(f"{self.name} operations are not enumerable")
        dd, jj = nearest_matrices(self._flat, self.to_standard(op).reshape(1, 9))
        d, j = float(dd[0]), int(jj[0])
        if d > tol:
            raise SymmetryError(f"operation is not an element of {self.name} in this orientation")
        return int(j)

    def contains(self, op: np.ndarray, *, tol: float = 0.5) -> bool:
        """True if the operation (given frame) belongs to the group."""
        if isinstance(self.group, LinearGroup):
            s = self.to_standard(op)
            z = s @ np.array([0.0, 0.0, 1.0])
            ok = abs(abs(z[2]) - 1) < min(tol, 0.05) and (self.group.centrosymmetric or z[2] > 0)
            return bool(ok)
        try:
            self.locate(op, tol=tol)
        except SymmetryError:
            return False
        return True

    def character(self, label: str, op: np.ndarray) -> float:
        """Character of a species at an operation given in this frame."""
        if isinstance(self.group, LinearGroup):
            return self.group.character(label, self.to_standard(op))
        s = self.group.get_species(label)
        return s.characters[self.group.class_of[self.locate(op)]]

    def rep_character(self, rep: Representation, op: np.ndarray) -> float:
        """Character of a reducible representation at an operation in this frame."""
        return float(sum(n * self.character(lab, op) for lab, n in rep))

    def reduce_at(self, characters: np.ndarray, *, what: str = "representation") -> Representation:
        """Reduce characters given at ``self.operations`` (finite groups only)."""
        return self.group.reduce_operations(np.asarray(characters, dtype=float), what=what)

    def restrict(self, rep: Representation | str, subgroup: OrientedGroup) -> Representation:
        """Restriction of a species or representation of this group to a subgroup.

        The subgroup's operations (in the same frame) are looked up in this group one by one,
        so the result depends on how the subgroup sits, not on its name.

        Raises
        ------
        SymmetryError
            If an operation of ``subgroup`` is not in this group.
        """
        if isinstance(rep, str):
            rep = self.group.representation({rep: 1})
        if isinstance(self.group, LinearGroup):
            chars = np.array([self.rep_character(rep, op) for op in subgroup.operations])
        else:
            classes = self.group.class_of[self.locate_all(subgroup.operations)]
            chars = np.zeros(len(classes))
            for lab, n in rep:
                chars += n * np.asarray(self.group.get_species(lab).characters, dtype=float)[classes]
        return subgroup.reduce_at(chars, what=f"restriction of {rep} to {subgroup.name}")

    def locate_all(self, ops: np.ndarray, *, tol: float = 0.5) -> np.ndarray:
        """:meth:`locate` for an array of operations at once (finite groups only)."""
        if isinstance(self.group, LinearGroup):
            raise SymmetryError(f"{self.name} operations are not enumerable")
        ops = np.asarray(ops, dtype=float)
        standard = np.einsum("ji,njk,kl->nil", self.frame, ops, self.frame)
        d, j = nearest_matrices(self._flat, standard.reshape(-1, 9))
        if len(d) and np.max(d) > tol:
            raise SymmetryError(f"operation is not an element of {self.name} in this orientation")
        return np.asarray(j, dtype=int)

    def axes(self) -> dict[str, np.ndarray]:
        """The standard x, y, z axes in the given frame."""
        return {"x": self.frame[:, 0], "y": self.frame[:, 1], "z": self.frame[:, 2]}

    def to_dict(self) -> dict[str, object]:
        """JSON-ready summary: name and axes."""
        return {"name": self.name, "axes": {k: [round(float(c), 6) for c in v] for k, v in self.axes().items()}}


def oriented(name: str, frame: np.ndarray | None = None) -> OrientedGroup:
    """A named group in a given frame (identity frame by default)."""
    from .catalogue import canonical_name

    canon = canonical_name(name)
    grp: PointGroup | LinearGroup = linear_group(canon) if "∞" in canon else point_group(canon)
    return OrientedGroup(grp, np.eye(3) if frame is None else np.asarray(frame, dtype=float))


# --------------------------------------------------------------------------- naming
@dataclass(frozen=True)
class _Axis:
    direction: np.ndarray
    order: int  # highest proper rotation order about it


def _axes(kinds) -> list[_Axis]:
    found: list[_Axis] = []
    for k in kinds:
        if not k.proper or k.order < 2:
            continue
        for i, a in enumerate(found):
            if abs(abs(float(np.dot(a.direction, k.axis))) - 1) < 1e-3:
                if k.order > a.order:
                    found[i] = _Axis(a.direction, k.order)
                break
        else:
            found.append(_Axis(k.axis / np.linalg.norm(k.axis), k.order))
    return found


def _parallel(u: np.ndarray, v: np.ndarray, tol: float = 1e-3) -> bool:
    return abs(abs(float(np.dot(u, v))) - 1) < tol


def name_of(ops: np.ndarray) -> str:
    """Schoenflies name of a finite group of operations in any orientation.

    Examples
    --------
    >>> from splitting.groups import point_group
    >>> from splitting.groups.operations import rotation
    >>> r = rotation([1, 2, 3], 0.7)
    >>> name_of(np.einsum("ij,njk,lk->nil", r, point_group("D3d").operations, r))
    'D3d'
    """
    ops = np.asarray(ops, dtype=float)
    multiplication_table(ops, tol=1e-3)  # raises unless the set is closed
    if len({np.round(o, 4).tobytes() for o in ops}) != len(ops):
        raise SymmetryError("the operations contain duplicates")
    kinds = [describe(o) for o in ops]
    proper = [k for k in kinds if k.proper]
    axes = _axes(kinds)
    has_i = any(k.symbol == "i" for k in kinds)
    improper = len(proper) != len(kinds)
    high = [a for a in axes if a.order >= 3]
    if len(high) >= 2:
        orders = {a.order for a in axes}
        rot = "I" if 5 in orders else ("O" if 4 in orders else "T")
        n = 0
        principal = None
    elif len(proper) == 1:
        rot, n, principal = "C1", 1, None
    else:
        principal = max(axes, key=lambda a: a.order)
        n = principal.order
        twofold = [a for a in axes if a.order == 2 and not _parallel(a.direction, principal.direction)]
        perp = [a for a in twofold if abs(float(np.dot(a.direction, principal.direction))) < 1e-3]
        rot = "Dn" if perp else "Cn"
        if n == 2 and len(axes) == 3:
            rot = "Dn"
    if not improper:
        name = {"C1": "C1", "Cn": f"C{n}", "Dn": f"D{n}", "T": "T", "O": "O", "I": "I"}[rot]
    elif has_i:
        if rot == "C1":
            name = "Ci"
        elif rot == "Cn":
            name = f"C{n}h" if n % 2 == 0 else f"S{2 * n}"
        elif rot == "Dn":
            name = f"D{n}h" if n % 2 == 0 else f"D{n}d"
        else:
            name = {"T": "Th", "O": "Oh", "I": "Ih"}[rot]
    else:
        sigma_h = principal is not None and any(
            k.symbol == "σ" and _parallel(k.axis, principal.direction) for k in kinds
        )
        s2n = principal is not None and any(
            (not k.proper)
            and k.symbol not in ("σ", "i")
            and _parallel(k.axis, principal.direction)
            and k.order == 2 * n
            for k in kinds
        )
        if rot == "C1":
            name = "Cs"
        elif rot == "Cn":
            name = f"C{n}h" if sigma_h else (f"S{2 * n}" if s2n else f"C{n}v")
        elif rot == "Dn":
            name = f"D{n}h" if sigma_h else f"D{n}d"
        elif rot == "T":
            name = "Td"
        else:
            raise SymmetryError("operations do not form a point group (improper part of O or I without i)")
    try:
        expected = point_group(name).order
    except SymmetryError as exc:
        raise SymmetryError(f"operations look like {name}, which the engine does not build: {exc}") from None
    if expected != len(ops):
        raise SymmetryError(f"{len(ops)} operations do not form a group (they look like {name} of order {expected})")
    return name


# ----------------------------------------------------------------------- frames
def _perpendicular(z: np.ndarray, hint: np.ndarray | None = None) -> np.ndarray:
    for cand in ([] if hint is None else [hint]) + [np.array([1.0, 0, 0]), np.array([0, 1.0, 0])]:
        x = cand - np.dot(cand, z) * z
        if np.linalg.norm(x) > 1e-3:
            return x / np.linalg.norm(x)
    raise AssertionError("unreachable")  # pragma: no cover


def _candidate_frames(name: str, ops: np.ndarray, kinds, reference: np.ndarray) -> list[np.ndarray]:
    fam, _n = family(name)
    axes = _axes(kinds)
    ref_x = reference[:, 0]
    zs: list[np.ndarray] = []
    xs_for: Callable[[np.ndarray], list[np.ndarray]]
    mirrors = [k.axis for k in kinds if k.symbol == "σ"]

    def signed(vs):
        out = []
        for v in vs:
            out += [v, -v]
        return out

    if fam in ("C1", "Ci"):
        return [reference.copy()]
    if fam in ("T", "Th", "Td", "O", "Oh", "I", "Ih"):
        order = 4 if fam in ("O", "Oh") else 2
        cube = [a.direction for a in axes if a.order == order]
        zs = signed(cube)

        def xs_for(z):
            return signed([a for a in cube if abs(np.dot(a, z)) < 1e-3])
    elif fam == "Cs":
        zs = signed(mirrors)

        def xs_for(z):
            return [_perpendicular(z, ref_x)]
    else:
        if name in ("D2", "D2h"):
            zs = signed([a.direction for a in axes])
        else:
            top = max(a.order for a in axes)
            zs = signed([a.direction for a in axes if a.order == top])
        if fam in ("Dn", "Dnh", "Dnd"):

            def xs_for(z):
                return signed([a.direction for a in axes if a.order == 2 and abs(np.dot(a.direction, z)) < 1e-3])
        elif fam == "Cnv":

            def xs_for(z):
                return signed(
                    [np.cross(z, m) / np.linalg.norm(np.cross(z, m)) for m in mirrors if abs(np.dot(m, z)) < 1e-3]
                )
        else:

            def xs_for(z):
                return [_perpendicular(z, ref_x)]

    frames = []
    for z in zs:
        for x in xs_for(z):
            x = x - np.dot(x, z) * z
            x = x / np.linalg.norm(x)
            frames.append(np.column_stack([x, np.cross(z, x), z]))
    return frames


def crystal_preference(reference: np.ndarray) -> Preference:
    """Prefer the frame whose z, then x, then y lie closest to the reference axes."""
    ref = np.asarray(reference, dtype=float)
    ref = ref / np.linalg.norm(ref, axis=0)

    def score(frame: np.ndarray) -> tuple:
        z = abs(float(np.dot(frame[:, 2], ref[:, 2])))
        x = abs(float(np.dot(frame[:, 0], ref[:, 0])))
        y = abs(float(np.dot(frame[:, 1], ref[:, 1])))
        return (
            round(z, 6),
            round(x, 6),
            round(y, 6),
            float(np.dot(frame[:, 2], ref[:, 2])),
            float(np.dot(frame[:, 0], ref[:, 0])),
        )

    return score


def molecular_preference(positions: np.ndarray, *, tol: float = 0.1) -> Preference:
    """Mulliken's axis conventions for a molecule (positions relative to its centre).

    In order: for a planar molecule whose z axis lies in its plane, x is perpendicular to
    the plane; z passes through as many atoms as possible; x passes through as many atoms
    as possible (C2' through atoms in D4h, D6h); the xz plane holds as many atoms as possible.
    (R. S. Mulliken, J. Chem. Phys. 23, 1997 (1955).)
    """
    pos = np.asarray(positions, dtype=float)
    centred = pos - pos.mean(axis=0)
    _, sv, vt = np.linalg.svd(centred, full_matrices=True) if len(pos) >= 3 else (None, [1, 1, 1], np.eye(3))
    planar = len(pos) >= 3 and sv[-1] < tol * 2 and sv[1] > tol
    normal = vt[-1] if planar else None
    far = np.linalg.norm(pos, axis=1) > tol

    def on_line(v: np.ndarray) -> int:
        d = np.linalg.norm(np.cross(pos, v), axis=1)
        return int(np.sum((d < tol) & far))

    def in_plane(normal_vec: np.ndarray) -> int:
        return int(np.sum(np.abs(pos @ normal_vec) < tol))

    def score(frame: np.ndarray) -> tuple:
        x, y, z = frame[:, 0], frame[:, 1], frame[:, 2]
        perp = 0
        if normal is not None and abs(np.dot(z, normal)) < 0.5:
            perp = int(abs(np.dot(x, normal)) > 0.9)
        return (perp, on_line(z), on_line(x), in_plane(y), round(float(x @ np.array([1.0, 2.0, 3.0])), 6))

    return score


def identify(
    ops: np.ndarray, *, prefer: Preference | None = None, reference: np.ndarray | None = None, tol: float = 0.05
) -> OrientedGroup:
    """Identify a finite group given as operations and find its standard frame.

    Parameters
    ----------
    ops : numpy.ndarray, shape (n, 3, 3)
        The operations (a complete group) in any Cartesian frame.
    prefer : callable, optional
        Scores a candidate frame (higher is better); see :func:`crystal_preference`
        and :func:`molecular_preference`. Default: closest to ``reference``.
    reference : numpy.ndarray, optional
        Reference axes as columns (default the identity).
    tol : float
        Largest difference of matrix elements accepted when matching operations.

    Returns
    -------
    OrientedGroup

    Raises
    ------
    SymmetryError
        If the operations are not one of the engine's point groups.

    Examples
    --------
    >>> from splitting.groups.operations import rotation
    >>> r = rotation([0.3, -1.0, 2.0], 1.1)
    >>> ops = np.einsum("ij,njk,lk->nil", r, point_group("D6h").operations, r)
    >>> og = identify(ops)
    >>> og.name, np.allclose(np.abs(og.frame[:, 2] @ r[:, 2]), 1.0)
    ('D6h', True)
    """
    ops = np.asarray(ops, dtype=float)
    if ops.ndim != 3 or ops.shape[1:] != (3, 3) or len(ops) == 0:
        raise SymmetryError("operations must be an array of shape (n, 3, 3)")
    if np.max(np.abs(np.einsum("nij,nkj->nik", ops, ops) - np.eye(3))) > 10 * tol:
        raise SymmetryError("operations are not orthogonal matrices")
    name = name_of(ops)
    group = point_group(name)
    ref = np.eye(3) if reference is None else np.asarray(reference, dtype=float)
    score = prefer or crystal_preference(ref)
    kinds = [describe(o) for o in ops]
    flat_ops = ops.reshape(-1, 9)
    best, best_score = None, None
    fam, _ = family(name)
    unique_frame = fam in ("T", "Th", "Td", "O", "Oh", "I", "Ih", "C1", "Ci")
    for frame in _candidate_frames(name, ops, kinds, ref):
        mapped = np.einsum("ij,njk,lk->nil", frame, group.operations, frame).reshape(-1, 9)
        d, _ = nearest_matrices(flat_ops, mapped)
        if np.max(d) > tol * 3:
            continue
        s = score(frame)
        if best is None or s > best_score:
            best, best_score = frame, s
            if unique_frame and prefer is not None and reference is None:
                break
    if best is None:
        raise SymmetryError(f"operations look like {name} but no standard frame matches them")
    return OrientedGroup(group, best)


# ------------------------------------------------------------- crystal groups, cached
_CRYSTAL_CACHE: dict[tuple[bytes, bytes, float], OrientedGroup] = {}
_CRYSTAL_CACHE_SIZE = 512


def _key_bytes(a: np.ndarray) -> bytes:
    # rounded far below any symmetry tolerance; + 0.0 makes -0.0 and 0.0 the same key
    return (np.round(np.asarray(a, dtype=float), 8) + 0.0).tobytes()


def identify_in_crystal(ops: np.ndarray, reference: np.ndarray, *, tol: float = 1e-3) -> OrientedGroup:
    """:func:`identify` with :func:`crystal_preference` for ``reference``, cached.

    Factor groups and site groups repeat from structure to structure (the same space group
    in the same setting gives the same Cartesian operations), so the identification is done
    once per set of operations, reference axes and tolerance in a process.  The operations
    are taken in the order given (the chosen frame can depend on it).

    Examples
    --------
    >>> ops = point_group("D2h").operations
    >>> identify_in_crystal(ops, np.eye(3)) is identify_in_crystal(ops.copy(), np.eye(3))
    True
    """
    key = (_key_bytes(ops), _key_bytes(reference), float(tol))
    found = _CRYSTAL_CACHE.get(key)
    if found is None:
        found = identify(ops, prefer=crystal_preference(reference), reference=reference, tol=tol)
        if len(_CRYSTAL_CACHE) >= _CRYSTAL_CACHE_SIZE:
            _CRYSTAL_CACHE.pop(next(iter(_CRYSTAL_CACHE)))
        _CRYSTAL_CACHE[key] = found
    return found

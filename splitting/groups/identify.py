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
from .operations import (
    IDENTITY,
    OperationKinds,
    classify,
    kronecker_squares,
    multiplication_table,
    nearest_matrices,
    row_norms,
)
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

    @cached_property
    def _identity_index(self) -> int:
        """Index of the identity in ``group.operations``."""
        return int(np.argmin(np.max(np.abs(self._flat - np.eye(3).reshape(9)), axis=1)))

    @cached_property
    def _to_standard_flat(self) -> np.ndarray:
        """The operand of :func:`_conjugated_flat` that writes flattened operations in the standard frame."""
        return kronecker_squares(self.frame.T[None]).transpose(0, 2, 1)

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
        ops = np.asarray(ops, dtype=float).reshape(-1, 3, 3)
        if len(ops) and np.max(np.abs(ops - np.eye(3))) < 1e-9:  # the identity in any frame (a site C1)
            return np.full(len(ops), self._identity_index, dtype=int)
        standard = ops.reshape(len(ops), 9) @ self._to_standard_flat  # as _conjugated_flat(self.frame.T[None], ops)
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


def _conjugated_flat(frames: np.ndarray, ops: np.ndarray) -> np.ndarray:
    """``frames[f] @ ops[n] @ frames[f].T`` flattened, shape (f, n, 9), for matching (not for results).

    One product of the flattened operations with the Kronecker squares of the frames; equal
    to the triple product up to rounding.
    """
    return ops.reshape(len(ops), 9) @ kronecker_squares(frames).transpose(0, 2, 1)


# --------------------------------------------------------------------------- naming
@dataclass(frozen=True)
class _Axis:
    direction: np.ndarray
    order: int  # highest proper rotation order about it


def _cross_rows(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """``np.cross(a, b)`` of (..., 3) arrays (broadcast): the same products and differences, without the wrapper."""
    a0, a1, a2 = a[..., 0], a[..., 1], a[..., 2]
    b0, b1, b2 = b[..., 0], b[..., 1], b[..., 2]
    return np.stack([a1 * b2 - a2 * b1, a2 * b0 - a0 * b2, a0 * b1 - a1 * b0], axis=-1)


def _dot_rows(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Row-wise dot products of (n, 3) arrays, summed in order (np.dot may differ in the last bit)."""
    return a[..., 0] * b[..., 0] + a[..., 1] * b[..., 1] + a[..., 2] * b[..., 2]


def _axes(kinds: OperationKinds) -> list[_Axis]:
    """Rotation axes, each with the highest order of a proper rotation about it (first seen first)."""
    sel = np.flatnonzero(kinds.proper & (kinds.order >= 2))
    if not len(sel):
        return []
    dirs = kinds.axis[sel]
    par = np.abs(np.abs(dirs @ dirs.T) - 1) < 1e-3
    reps, best = _join_axes(par, kinds.order[sel])
    rep_dirs = dirs[reps] / row_norms(dirs[reps])[:, None]
    return [_Axis(d, o) for d, o in zip(rep_dirs, best, strict=True)]


def _join_axes(par: np.ndarray, orders: np.ndarray) -> tuple[np.ndarray, list[int]]:
    """The first rotation about every axis and the highest order about it, as :func:`_join_one_by_one`.

    When "parallel" (``par[j, i]``) sorts the rotations into classes, every rotation joins the
    first rotation parallel to it, found for all at once.
    """
    first = np.argmax(par, axis=0)  # first[i]: the first rotation about an axis parallel to that of i
    if not np.all(first[first] == first):  # pragma: no cover - nearly parallel axes of different lines
        return _join_one_by_one(par, orders)
    reps = np.flatnonzero(first == np.arange(len(first)))
    best = np.zeros(len(first), dtype=int)
    np.maximum.at(best, first, orders)
    return reps, best[reps].tolist()


def _join_one_by_one(par: np.ndarray, orders: np.ndarray) -> tuple[np.ndarray, list[int]]:
    """Rotations in turn join the first axis already found parallel to theirs, or start a new one."""
    reps: list[int] = []  # positions of the first rotation about every axis
    best: list[int] = []
    for i in range(len(orders)):
        for r, j in enumerate(reps):
            if par[j, i]:
                best[r] = max(best[r], int(orders[i]))
                break
        else:
            reps.append(i)
            best.append(int(orders[i]))
    return np.array(reps, dtype=int), best


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
    if ops.ndim != 3 or ops.shape[1:] != (3, 3) or len(ops) == 0:
        raise SymmetryError("operations must be an array of shape (n, 3, 3)")
    return _name(ops, classify(ops), closed=False)


def _name(ops: np.ndarray, kinds: OperationKinds, *, closed: bool, axes: list[_Axis] | None = None) -> str:
    """:func:`name_of` with the operations classified; ``closed`` skips the closure check.

    ``axes`` is ``_axes(kinds)`` when the caller has it already.
    """
    if not closed:
        multiplication_table(ops, tol=1e-3)  # raises unless the set is closed
    rounded = np.ascontiguousarray(np.round(ops, 4)).reshape(len(ops), 9).view(np.dtype((np.void, 72)))
    if len(set(rounded.ravel().tolist())) != len(ops):
        raise SymmetryError("the operations contain duplicates")
    symbols = kinds.symbol
    n_proper = int(np.sum(kinds.proper))
    axes = _axes(kinds) if axes is None else axes
    has_i = "i" in symbols
    improper = n_proper != len(kinds)
    high = [a for a in axes if a.order >= 3]
    if len(high) >= 2:
        orders = {a.order for a in axes}
        rot = "I" if 5 in orders else ("O" if 4 in orders else "T")
        n = 0
        principal = None
    elif n_proper == 1:
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
        sigma_h = s2n = False
        if principal is not None:
            along = np.abs(np.abs(_dot_rows(kinds.axis, principal.direction[None])) - 1) < 1e-3
            mirror = np.array([s == "σ" for s in symbols])
            sigma_h = bool(np.any(mirror & along))
            rotoreflection = ~kinds.proper & ~mirror & np.array([s != "i" for s in symbols])
            s2n = bool(np.any(rotoreflection & along & (kinds.order == 2 * n)))
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


def _signed(vs: np.ndarray) -> np.ndarray:
    """Rows v0, -v0, v1, -v1, ... of the rows of ``vs``."""
    vs = np.asarray(vs, dtype=float).reshape(-1, 3)
    return np.stack([vs, -vs], axis=1).reshape(-1, 3)


def _pairs_perpendicular(zs: np.ndarray, lines: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Every (z, x) with x running over the signed ``lines`` perpendicular to z, z by z."""
    if not len(zs) or not len(lines):
        return np.zeros((0, 3)), np.zeros((0, 3))
    perp = np.abs(zs @ lines.T) < 1e-3  # (nz, nl)
    zi, li = np.nonzero(perp)
    xs = _signed(lines[li])
    return np.repeat(zs[zi], 2, axis=0), xs


def _candidate_frames(
    name: str, kinds: OperationKinds, reference: np.ndarray, *, axes: list[_Axis] | None = None
) -> np.ndarray:
    """Candidate standard frames, shape (n, 3, 3), in the order in which they are tried.

    ``axes`` is ``_axes(kinds)`` when the caller has it already.
    """
    fam, _n = family(name)
    if fam in ("C1", "Ci"):
        return reference.copy()[None]
    axes = _axes(kinds) if axes is None else axes
    ref_x = reference[:, 0]
    directions = np.array([a.direction for a in axes]).reshape(-1, 3)
    orders = np.array([a.order for a in axes], dtype=int)
    mirrors = kinds.axis[np.array([s == "σ" for s in kinds.symbol], dtype=bool)]
    if fam in ("T", "Th", "Td", "O", "Oh", "I", "Ih"):
        cube = directions[orders == (4 if fam in ("O", "Oh") else 2)]
        z, x = _pairs_perpendicular(_signed(cube), cube)
    elif fam == "Cs":
        zs = _signed(mirrors)
        z, x = zs, np.array([_perpendicular(v, ref_x) for v in zs]).reshape(-1, 3)
    else:
        zs = _signed(directions if name in ("D2", "D2h") else directions[orders == orders.max()])
        if fam in ("Dn", "Dnh", "Dnd"):
            z, x = _pairs_perpendicular(zs, directions[orders == 2])
        elif fam == "Cnv":
            # x along z x m for the mirror normals m perpendicular to z
            perp = np.abs(zs @ mirrors.T) < 1e-3
            zi, mi = np.nonzero(perp)
            c = _cross_rows(zs[zi], mirrors[mi])
            z, x = np.repeat(zs[zi], 2, axis=0), _signed(c / row_norms(c)[:, None])
        else:
            z, x = zs, np.array([_perpendicular(v, ref_x) for v in zs]).reshape(-1, 3)
    x = x - _dot_rows(x, z)[:, None] * z
    x = x / row_norms(x)[:, None]
    return np.stack([x, _cross_rows(z, x), z], axis=2)


def crystal_preference(reference: np.ndarray) -> Preference:
    """Prefer the frame whose z, then x, then y lie closest to the reference axes."""
    ref = np.asarray(reference, dtype=float)
    ref = ref / np.linalg.norm(ref, axis=0)

    def many(frames: np.ndarray) -> list[tuple]:
        """``[score(f) for f in frames]`` in one pass over the frames.

        Every part is rounded to 1e-6, the signed ones too: the last bit of a dot product
        depends on the BLAS kernel of the machine, and a tie between two frames must be
        broken the same way everywhere (by the order of the frames).
        """
        dz, dx, dy = (_dot_rows(frames[:, :, k], ref[None, :, k]).tolist() for k in (2, 0, 1))
        return [
            (round(abs(z), 6), round(abs(x), 6), round(abs(y), 6), round(z, 6), round(x, 6))
            for z, x, y in zip(dz, dx, dy, strict=True)
        ]

    def score(frame: np.ndarray) -> tuple:
        return many(np.asarray(frame, dtype=float)[None])[0]

    score.many = many  # type: ignore[attr-defined]
    return score


#: the last part of a molecular frame's score (a fixed order among frames that tie on the rest)
_ORDERING = np.array([1.0, 2.0, 3.0])


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
        d = row_norms(_cross_rows(pos, v))
        return int(np.sum((d < tol) & far))

    def in_plane(normal_vec: np.ndarray) -> int:
        return int(np.sum(np.abs(pos @ normal_vec) < tol))

    def keyed(frame: np.ndarray, through_z: int, through_x: int) -> tuple:
        x, y, z = frame[:, 0], frame[:, 1], frame[:, 2]
        perp = 0
        if normal is not None and abs(np.dot(z, normal)) < 0.5:
            perp = int(abs(np.dot(x, normal)) > 0.9)
        return (perp, through_z, through_x, in_plane(y), round(float(x @ _ORDERING), 6))

    def score(frame: np.ndarray) -> tuple:
        return keyed(frame, on_line(frame[:, 2]), on_line(frame[:, 0]))

    def on_lines(vs: np.ndarray) -> list[int]:
        """:func:`on_line` of every row of ``vs`` in one pass."""
        d = row_norms(_cross_rows(pos[None], vs[:, None]))
        return np.sum((d < tol) & far, axis=1).tolist()

    def many(frames: np.ndarray) -> list[tuple]:
        """``[score(f) for f in frames]`` in one pass over the frames.

        The counts and the perpendicular test compare with thresholds, so the products may be
        taken for all frames at once; the last part is the same dot product as in :func:`keyed`.
        """
        xs, ys, zs = frames[:, :, 0], frames[:, :, 1], frames[:, :, 2]
        if normal is None:
            perp = [0] * len(frames)
        else:
            perp = ((np.abs(zs @ normal) < 0.5) & (np.abs(xs @ normal) > 0.9)).astype(int).tolist()
        in_y = np.sum(np.abs(pos @ ys.T) < tol, axis=0).tolist()
        last = [round(float(x @ _ORDERING), 6) for x in xs]
        parts = (perp, on_lines(zs), on_lines(xs), in_y, last)
        return list(zip(*parts, strict=True))

    score.many = many  # type: ignore[attr-defined]
    return score


def identify(
    ops: np.ndarray,
    *,
    prefer: Preference | None = None,
    reference: np.ndarray | None = None,
    tol: float = 0.05,
    closed: bool = False,
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
    closed : bool
        True when the caller has just proved that the operations form a group (the
        free-unit search closes its atom permutations): the closure check is skipped.

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
    if np.abs(ops @ ops.transpose(0, 2, 1) - IDENTITY).max() > 10 * tol:  # R R^T = 1 (a check only)
        raise SymmetryError("operations are not orthogonal matrices")
    kinds = classify(ops)
    axes = _axes(kinds)
    name = _name(ops, kinds, closed=closed, axes=axes)
    group = point_group(name)
    ref = np.eye(3) if reference is None else np.asarray(reference, dtype=float)
    score = prefer or crystal_preference(ref)
    flat_ops = ops.reshape(-1, 9)
    best, best_score = None, None
    fam, _ = family(name)
    unique_frame = fam in ("T", "Th", "Td", "O", "Oh", "I", "Ih", "C1", "Ci")
    may_stop = unique_frame and prefer is not None and reference is None
    frames = _candidate_frames(name, kinds, ref, axes=axes)

    def misfit(frame: np.ndarray) -> float:
        mapped = _conjugated_flat(frame[None], group.operations).reshape(-1, 9)
        return float(np.max(nearest_matrices(flat_ops, mapped)[0]))

    scores = None
    if may_stop:  # the first frame that fits is taken: try them one by one
        misfits = (misfit(frame) for frame in frames)
    else:  # every frame is scored: match them all at once
        mapped = _conjugated_flat(frames, group.operations).reshape(-1, 9)
        misfits = iter(nearest_matrices(flat_ops, mapped)[0].reshape(len(frames), -1).max(axis=1).tolist())
        many = getattr(score, "many", None)  # a preference may score all frames in one pass
        scores = None if many is None else many(frames)
    for k, (frame, d) in enumerate(zip(frames, misfits, strict=True)):
        if d > tol * 3:
            continue
        s = score(frame) if scores is None else scores[k]
        if best is None or s > best_score:
            best, best_score = frame, s
            if may_stop:
                break
    if best is None:
        raise SymmetryError(f"operations look like {name} but no standard frame matches them")
    return OrientedGroup(group, best.copy())


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

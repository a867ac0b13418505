"""Point group of a molecule or ion from its coordinates.

Candidate operations are found by matching a few reference atoms to atoms of the same
element at the same distance from the centre (a least-squares orthogonal fit, proper or
improper), and kept when every atom lands within ``tolerance`` of an atom of its element.
The operations then act on the atoms as exact permutations; the matrices are refined
against the permutations and the geometry is symmetrised by averaging over the group,
which makes the operations an exact group whatever the distortion of the input.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from scipy.spatial import cKDTree

from ..defaults import DEFAULT_TOLERANCE, MAX_UNIT_TOLERANCE
from ..errors import InputError, SymmetryError
from ..groups.identify import OrientedGroup, identify, molecular_preference, oriented

__all__ = ["DEFAULT_TOLERANCE", "MIN_SEPARATION", "MoleculeSymmetry", "find_symmetry"]

#: two atoms closer than this (angstrom) are the same place: bad input
MIN_SEPARATION = 0.5


@dataclass(frozen=True, eq=False)
class MoleculeSymmetry:
    """Symmetry of one molecule or ion.

    Attributes
    ----------
    group : OrientedGroup
        Point group in the frame of the input coordinates (about ``centre``).
    centre : numpy.ndarray, shape (3,)
        Centre of the unit (angstrom), fixed by every operation.
    positions : numpy.ndarray, shape (n, 3)
        Input positions relative to ``centre`` (angstrom).
    symmetric_positions : numpy.ndarray, shape (n, 3)
        Symmetrised positions relative to ``centre`` (angstrom).
    operations : numpy.ndarray, shape (order, 3, 3)
        Operations in the input frame, aligned with ``group.group.operations``
        (empty for linear units).
    permutations : numpy.ndarray, shape (order, n)
        ``permutations[g, i]`` is the atom onto which operation g moves atom i.
    max_deviation : float
        Largest distance (angstrom) between an input atom and its symmetrised position.
    tolerance : float
        Tolerance used (angstrom).
    """

    group: OrientedGroup
    centre: np.ndarray
    numbers: np.ndarray
    positions: np.ndarray = field(repr=False)
    symmetric_positions: np.ndarray = field(repr=False)
    operations: np.ndarray = field(repr=False)
    permutations: np.ndarray = field(repr=False)
    max_deviation: float
    tolerance: float

    @property
    def linear(self) -> bool:
        """True for C∞v and D∞h units."""
        return "∞" in self.group.name

    def equivalent_sets(self) -> list[list[int]]:
        """Sets of symmetry-equivalent atoms (indices), in order of first appearance."""
        if self.linear:
            return _linear_sets(self.symmetric_positions, self.numbers, self.group)
        seen: dict[int, int] = {}
        sets: list[list[int]] = []
        for i in range(len(self.numbers)):
            if i in seen:
                continue
            orbit = sorted(set(int(j) for j in self.permutations[:, i]))
            for j in orbit:
                seen[j] = len(sets)
            sets.append(orbit)
        return sets

    def fixed_atoms(self, op: np.ndarray, *, tol: float = 1e-3) -> int:
        """Number of atoms that the operation (input frame, about the centre) leaves in place."""
        moved = self.symmetric_positions @ np.asarray(op).T
        return int(np.sum(np.linalg.norm(moved - self.symmetric_positions, axis=1) < max(tol, 1e-6)))


def _linear_sets(pos, numbers, group) -> list[list[int]]:
    axis = group.frame[:, 2]
    t = pos @ axis
    sets: list[list[int]] = []
    done: set[int] = set()
    for i in range(len(pos)):
        if i in done:
            continue
        s = [i]
        if group.group.centrosymmetric:
            s += [j for j in range(len(pos)) if j != i and numbers[j] == numbers[i] and abs(t[j] + t[i]) < 1e-3]
        done.update(s)
        sets.append(sorted(s))
    return sets


def _kabsch(a: np.ndarray, b: np.ndarray, det: float | None = None) -> np.ndarray:
    """Orthogonal R minimising sum |R a_i - b_i|^2 (rows are points), optionally of given determinant."""
    u, _, vt = np.linalg.svd(b.T @ a)
    r = u @ vt
    if det is not None and np.linalg.det(r) * det < 0:
        r = u @ np.diag([1.0, 1.0, -1.0]) @ vt
    return r


def _kabsch_many(a: np.ndarray, b: np.ndarray, det: np.ndarray) -> np.ndarray:
    """:func:`_kabsch` for stacks of point sets; ``det`` 0 leaves the determinant free."""
    u, _, vt = np.linalg.svd(np.transpose(b, (0, 2, 1)) @ a)
    r = u @ vt
    flip = (det != 0) & (np.linalg.det(r) * det < 0)
    if np.any(flip):
        r[flip] = u[flip] @ np.diag([1.0, 1.0, -1.0]) @ vt[flip]
    return r


def _match(r: np.ndarray, pos: np.ndarray, numbers: np.ndarray, tree: cKDTree, tol: float) -> np.ndarray | None:
    moved = pos @ r.T
    d, j = tree.query(moved)
    if np.max(d) > tol or np.any(numbers[j] != numbers) or len(set(j.tolist())) != len(j):
        return None
    return j


def _validate(numbers: np.ndarray, positions: np.ndarray) -> None:
    if len(numbers) == 0:
        raise InputError("the unit has no atoms")
    if len(numbers) == 1:
        raise InputError("a single atom has no internal vibrations; give a molecule or ion")
    if not np.all(np.isfinite(positions)):
        raise InputError("atomic positions contain NaN or infinite values")
    d, _ = cKDTree(positions).query(positions, k=2)
    if np.min(d[:, 1]) < MIN_SEPARATION:
        i = int(np.argmin(d[:, 1]))
        raise InputError(f"atoms overlap: atom {i + 1} has a neighbour {d[i, 1]:.3f} Å away")


def find_symmetry(numbers, positions, *, tolerance: float = DEFAULT_TOLERANCE, masses=None) -> MoleculeSymmetry:
    """Find the point group of a molecule or ion.

    Parameters
    ----------
    numbers : array_like of int
        Atomic numbers (any labels: atoms match only atoms with the same label).
    positions : array_like, shape (n, 3)
        Cartesian coordinates (angstrom).
    tolerance : float
        Largest displacement of an atom from its symmetric position (angstrom).
    masses : array_like, optional
        Masses used for the centre; defaults to ase's standard atomic masses.

    Examples
    --------
    >>> import numpy as np
    >>> s = find_symmetry([8, 1, 1], [[0, 0, 0.12], [0, 0.76, -0.47], [0, -0.76, -0.47]])
    >>> s.group.name
    'C2v'
    """
    if not (np.isfinite(tolerance) and 0 < tolerance <= MAX_UNIT_TOLERANCE):
        raise InputError(
            f"the symmetry tolerance {tolerance:g} Å is out of range: give a distance above 0 and at most "
            f"{MAX_UNIT_TOLERANCE:g} Å (beyond it any molecule looks more symmetric than it is)"
        )
    numbers = np.asarray(numbers, dtype=int)
    pos_in = np.asarray(positions, dtype=float).reshape(-1, 3)
    _validate(numbers, pos_in)
    if masses is None:
        from ase.data import atomic_masses

        masses = atomic_masses[np.clip(numbers, 0, len(atomic_masses) - 1)]
    masses = np.asarray(masses, dtype=float)
    if np.any(masses <= 0):
        masses = np.ones_like(masses)
    centre = masses @ pos_in / masses.sum()
    pos = pos_in - centre
    # ---- linear units
    _, sv, vt = np.linalg.svd(pos)
    if sv[1] < tolerance:
        return _linear(numbers, pos, centre, vt[0], tolerance)
    ops, perms = _search(numbers, pos, tolerance)
    ops, perms, sym = _refine(ops, perms, pos)
    dev = float(np.max(np.linalg.norm(sym - pos, axis=1)))
    if dev > tolerance:
        raise SymmetryError(
            f"symmetrising moved an atom by {dev:.3f} Å, more than the tolerance {tolerance} Å; use a smaller tolerance"
        )
    og = identify(ops, prefer=molecular_preference(sym, tol=max(0.05, min(tolerance, 0.2))), tol=1e-4)
    aligned = og.operations
    # reorder permutations to follow the group's operation order
    index = [int(np.argmin(np.abs(ops - a[None]).reshape(len(ops), -1).max(axis=1))) for a in aligned]
    return MoleculeSymmetry(og, centre, numbers, pos, sym, np.array(aligned), perms[index], dev, tolerance)


def _linear(numbers, pos, centre, axis, tolerance) -> MoleculeSymmetry:
    axis = axis / np.linalg.norm(axis)
    t = pos @ axis
    sym = np.outer(t, axis)
    inv = True
    tree = cKDTree(sym)
    d, j = tree.query(-sym)
    if np.max(d) > tolerance or np.any(numbers[j] != numbers):
        inv = False
    if inv:  # symmetrise along the axis
        t = (t - t[j]) / 2
        sym = np.outer(t, axis)
    x = np.cross(axis, [1.0, 0, 0] if abs(axis[0]) < 0.9 else [0, 1.0, 0])
    x /= np.linalg.norm(x)
    frame = np.column_stack([x, np.cross(axis, x), axis])
    og = oriented("D∞h" if inv else "C∞v", frame)
    dev = float(np.max(np.linalg.norm(sym - pos, axis=1)))
    return MoleculeSymmetry(
        og, centre, numbers, pos, sym, np.zeros((0, 3, 3)), np.zeros((0, len(pos)), int), dev, tolerance
    )


def _search(numbers: np.ndarray, pos: np.ndarray, tol: float) -> tuple[np.ndarray, np.ndarray]:
    radius = np.linalg.norm(pos, axis=1)
    tree = cKDTree(pos)
    n = len(pos)
    cand = [np.flatnonzero((numbers == numbers[i]) & (np.abs(radius - radius[i]) < tol)) for i in range(n)]
    far = radius > tol
    if not np.any(far):  # pragma: no cover - all atoms at the centre is caught as overlap
        raise SymmetryError("no atom away from the centre")
    a1 = min(np.flatnonzero(far), key=lambda i: (len(cand[i]), -radius[i]))
    dist1 = np.linalg.norm(pos - pos[a1], axis=1)

    def angle_ok(i):
        c = np.linalg.norm(np.cross(pos[a1], pos[i])) / (radius[a1] * radius[i] + 1e-12)
        return far[i] and c > 0.2

    second = [i for i in range(n) if i != a1 and angle_ok(i)]
    if not second:  # pragma: no cover - handled by the linear branch
        raise SymmetryError("molecule is linear")
    a2 = min(second, key=lambda i: (dist1[i], len(cand[i])))
    normal = np.cross(pos[a1], pos[a2])
    normal /= np.linalg.norm(normal)
    vol = np.abs(pos @ normal)
    third = [i for i in range(n) if vol[i] > max(tol, 0.3)]
    a3 = min(third, key=lambda i: (dist1[i], len(cand[i]))) if third else None
    dist = np.linalg.norm(pos[:, None, :] - pos[None, :, :], axis=2)
    d12 = dist[a1, a2]
    ops: list[np.ndarray] = []
    perms: list[np.ndarray] = []
    keys: set[bytes] = set()
    c2 = np.asarray(cand[a2])
    c3 = np.asarray(cand[a3]) if a3 is not None else None
    srcs: list[np.ndarray] = []
    dsts: list[np.ndarray] = []
    want: list[float] = []
    for b1 in cand[a1]:
        for b2 in c2[(np.abs(dist[b1, c2] - d12) <= 2 * tol) & (c2 != b1)]:
            if a3 is None:
                nb = np.cross(pos[b1], pos[b2])
                if np.linalg.norm(nb) < 1e-6:
                    continue
                nb /= np.linalg.norm(nb)
                src = np.array([pos[a1], pos[a2], normal * radius[a1]])
                for t in (nb, -nb):
                    srcs.append(src)
                    dsts.append(np.array([pos[b1], pos[b2], t * radius[a1]]))
                    want.append(0.0)
            else:
                src = np.array([pos[a1], pos[a2], pos[a3]])
                ok = (
                    (np.abs(dist[b1, c3] - dist[a1, a3]) <= 2 * tol)
                    & (np.abs(dist[b2, c3] - dist[a2, a3]) <= 2 * tol)
                    & (c3 != b1)
                    & (c3 != b2)
                )
                # both handednesses: three atoms nearly in a plane with the centre fit a rotation
                # and a reflection almost equally well
                for b3 in c3[ok]:
                    for d in (1.0, -1.0):
                        srcs.append(src)
                        dsts.append(np.array([pos[b1], pos[b2], pos[b3]]))
                        want.append(d)
    ops: list[np.ndarray] = []
    perms: list[np.ndarray] = []
    keys: set[bytes] = set()
    if srcs:
        # every trial rotation fitted and matched at once; the looser second try one by one
        rots = _kabsch_many(np.array(srcs), np.array(dsts), np.array(want))
        # a few atoms spread over the unit first: a trial that moves one of them too far fails anyway
        few = np.unique(np.linspace(0, n - 1, min(n, 8)).astype(int))
        dd, _ = tree.query((pos[few][None] @ np.transpose(rots, (0, 2, 1))).reshape(-1, 3))
        rots = rots[dd.reshape(len(rots), -1).max(axis=1) <= 3 * tol]
        moved = pos[None] @ np.transpose(rots, (0, 2, 1))
        d, j = tree.query(moved.reshape(-1, 3))
        d, j = d.reshape(len(rots), n), j.reshape(len(rots), n)  # no trial left: (0, n), not an error
        srt = np.sort(j, axis=1)
        paired = np.all(numbers[j] == numbers[None], axis=1) & np.all(srt[:, 1:] != srt[:, :-1], axis=1)
        good = paired & (d.max(axis=1) <= tol)
        loose = paired & (d.max(axis=1) <= 3 * tol)
        for t, r in enumerate(rots):
            p = j[t] if good[t] else None
            if p is None:
                # three nearby atoms fix the rotation only roughly when the positions are noisy:
                # pair the atoms under a looser bound, fit the rotation to all of them, check again
                if not loose[t]:
                    continue
                r = _kabsch(pos, pos[j[t]], np.linalg.det(r))
                p = _match(r, pos, numbers, tree, tol)
                if p is None:
                    continue
            key = p.tobytes() + (b"+" if np.linalg.det(r) > 0 else b"-")
            if key in keys:
                continue
            keys.add(key)
            ops.append(r)
            perms.append(p)
    if not ops:  # a tolerance below the precision of the coordinates (1e-300 Å): not even the identity matches
        raise SymmetryError(
            f"no symmetry operation found at the symmetry tolerance {tol:g} Å, not even the identity; "
            "give a larger tolerance"
        )
    return np.array(ops), np.array(perms)


def _closed(perms: np.ndarray, dets: np.ndarray) -> bool:
    """True when every product of two elements (permutation, sign of det) is already an element.

    Rows are found by a hash and then compared whole, so a false "closed" cannot come from a collision.
    """
    n = perms.shape[1]
    rows = np.column_stack([perms, dets > 0]).astype(np.int64)
    prod = np.empty((len(perms) ** 2, n + 1), dtype=np.int64)
    prod[:, :n] = perms[:, perms].reshape(-1, n)  # row (i, j): apply j, then i
    prod[:, n] = ((dets[:, None] * dets[None]) > 0).reshape(-1)
    weights = np.random.default_rng(0).integers(1, 2**62, size=n + 1, dtype=np.int64)
    with np.errstate(over="ignore"):
        h_rows, h_prod = rows @ weights, prod @ weights
    order = np.argsort(h_rows)
    at = order[np.clip(np.searchsorted(h_rows[order], h_prod), 0, len(rows) - 1)]
    return bool(np.all(rows[at] == prod))


def _refine(ops: np.ndarray, perms: np.ndarray, pos: np.ndarray, *, rounds: int = 60):
    """Close the permutations into a group and make matrices and geometry exactly symmetric."""
    # an element is (permutation, sign of det): a planar unit's own plane moves no atom
    dets = [1.0 if np.linalg.det(r) > 0 else -1.0 for r in ops]
    elements = [(p, d) for p, d in zip(perms, dets, strict=True)]
    keys = {p.tobytes() + str(d).encode() for p, d in elements}
    changed = not _closed(perms, np.array(dets))  # the search usually finds the whole group
    if not changed and len(elements) > 240:
        raise SymmetryError("tolerance is too loose: the atom permutations do not form a point group")
    while changed:
        changed = False
        for p, d in list(elements):
            for q, e in list(elements):
                c = (p[q], d * e)  # apply q then p
                key = c[0].tobytes() + str(c[1]).encode()
                if key not in keys:
                    keys.add(key)
                    elements.append(c)
                    changed = True
        if len(elements) > 240:
            raise SymmetryError("tolerance is too loose: the atom permutations do not form a point group")
    perms = np.array([p for p, _ in elements])
    dets = np.array([d for _, d in elements])
    sym = pos.copy()
    for _ in range(rounds):
        images = sym[perms]  # (G, n, 3)
        mats = _kabsch_many(np.broadcast_to(sym, images.shape), images, dets)
        new = np.mean(images @ mats, axis=0)
        # new_i = 1/|G| sum_g R_g^-1 r_{p_g(i)}
        if np.max(np.abs(new - sym)) < 1e-13:
            sym = new
            break
        sym = new
    mats = _kabsch_many(np.broadcast_to(sym, (len(perms), *sym.shape)), sym[perms], dets)
    return mats, perms, sym

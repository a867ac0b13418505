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
from ..groups.operations import HASH_WEIGHTS as _HASH_WEIGHTS

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


def _kabsch_both(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """:func:`_kabsch_many` of every pair of point sets with det +1 and with det -1, shape (m, 2, 3, 3).

    One singular-value decomposition serves both (the fits of one pair differ only in the sign
    given to the smallest singular direction).
    """
    u, _, vt = np.linalg.svd(np.transpose(b, (0, 2, 1)) @ a)
    r = u @ vt
    other = u @ np.diag([1.0, 1.0, -1.0]) @ vt
    det = np.linalg.det(r)[:, None, None]
    return np.stack([np.where(det < 0, other, r), np.where(det > 0, other, r)], axis=1)


def one_to_one(j: np.ndarray, target_numbers: np.ndarray, numbers: np.ndarray) -> np.ndarray:
    """Which rows of ``j`` pair every atom with a distinct target atom of the same element.

    ``j[..., i]`` is the target atom paired with atom i (its nearest, say); ``target_numbers``
    are the targets' elements and ``numbers`` the atoms' own.  Returns a boolean per row (a
    0-d array for a single pairing).

    >>> import numpy as np
    >>> one_to_one(np.array([[1, 0, 2], [1, 1, 2], [2, 1, 0]]), np.array([6, 6, 8]), np.array([6, 6, 8])).tolist()
    [True, False, False]
    """
    srt = np.sort(j, axis=-1)
    return np.all(target_numbers[j] == numbers, axis=-1) & np.all(srt[..., 1:] != srt[..., :-1], axis=-1)


def _distinct(perms: np.ndarray, plus: np.ndarray) -> bool:
    """True when no two rows of (``perms``, ``plus``) are sure to be equal: their hashes differ.

    A False answer can be wrong (a collision); the caller then compares the rows whole.
    """
    cols = np.unique(np.linspace(0, perms.shape[1] - 1, min(perms.shape[1], len(_HASH_WEIGHTS) - 1)).astype(int))
    with np.errstate(over="ignore"):
        h = perms[:, cols] @ _HASH_WEIGHTS[: len(cols)] + plus * _HASH_WEIGHTS[len(cols)]
    return len(np.unique(h)) == len(h)


class _Nearest:
    """Nearest atom of many points that mostly lie close to atoms: the k-d tree's answers, cheaper.

    Each point is first given the atom that owns its cell of a grid (an atom owns its own cell
    and the 26 around it; cells of a sixth of the smallest distance ``gap`` between two atoms
    make no cell owned twice).  When the point lies closer to that atom than ``gap / 2``, that
    atom is its nearest (any other is farther, by the triangle inequality) and the distance is
    computed as the tree computes it; every other point asks the tree.  :meth:`query` returns
    what ``tree.query(points, distance_upper_bound=bound)`` does.
    """

    #: fewer points than this go to the tree directly
    SMALL = 512
    #: the most cells a grid may have
    CELLS = 1 << 18

    def __init__(self, pos: np.ndarray, tree: cKDTree, gap: float) -> None:
        self.pos, self.tree, self.half = pos, tree, 0.5 * gap * (1 - 1e-9)
        self.owner: np.ndarray | None = None
        self.cell = cell = gap / 6
        lo, hi = pos.min(axis=0) - 2 * cell, pos.max(axis=0) + 2 * cell
        shape = np.ceil((hi - lo) / cell).astype(np.intp) + 1
        if cell > 0 and np.prod(shape.astype(float)) <= self.CELLS:
            self.lo, self.shape = lo, tuple(shape.tolist())
            near = ((pos - lo) * (1 / cell)).astype(np.intp)[:, None, :] + _NEIGHBOUR_CELLS[None]
            owner = np.full(int(np.prod(shape)), -1, dtype=np.intp)
            owner[np.ravel_multi_index(near.reshape(-1, 3).T, self.shape)] = np.repeat(
                np.arange(len(pos)), len(_NEIGHBOUR_CELLS)
            )
            self.owner = owner

    def query(self, points: np.ndarray, bound: float) -> tuple[np.ndarray, np.ndarray]:
        """Distance to the nearest atom and its index; beyond ``bound``: infinity and ``len(pos)``."""
        if self.owner is None or len(points) < self.SMALL:
            return self.tree.query(points, distance_upper_bound=bound)
        # a point off the grid is put in a border cell, which no atom owns
        idx = ((points - self.lo) * (1 / self.cell)).astype(np.intp)
        guess = self.owner[np.ravel_multi_index(idx.T, self.shape, mode="clip")]
        diff = points - self.pos[guess]
        d = np.sqrt(diff[:, 0] * diff[:, 0] + diff[:, 1] * diff[:, 1] + diff[:, 2] * diff[:, 2])
        sure = d < min(self.half, bound * (1 - 1e-9))
        sure &= guess >= 0
        rest = np.flatnonzero(~sure)
        if len(rest):
            d[rest], guess[rest] = self.tree.query(points[rest], distance_upper_bound=bound)
        return d, guess


#: a cell and its 26 neighbours, as index offsets
_NEIGHBOUR_CELLS = np.stack(np.meshgrid(*[np.arange(-1, 2)] * 3, indexing="ij"), axis=-1).reshape(-1, 3)


def _match(r: np.ndarray, pos: np.ndarray, numbers: np.ndarray, tree: cKDTree, tol: float) -> np.ndarray | None:
    moved = pos @ r.T
    d, j = tree.query(moved)
    if np.max(d) > tol or not one_to_one(j, numbers, numbers):
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
    og = identify(ops, prefer=molecular_preference(sym, tol=max(0.05, min(tolerance, 0.2))), tol=1e-4, closed=True)
    aligned = og.operations
    # reorder permutations to follow the group's operation order (the same matrices, re-expressed:
    # each is found as the nearest one; distinct operations are far apart)
    _, index = cKDTree(ops.reshape(len(ops), 9)).query(np.asarray(aligned).reshape(len(aligned), 9))
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


def _first_by(index: np.ndarray, *keys: np.ndarray) -> int:
    """The entry of ``index`` with the smallest ``keys`` (first key first), the earliest on a tie."""
    return int(index[np.lexsort(tuple(k[index] for k in reversed(keys)))[0]])


def _search(numbers: np.ndarray, pos: np.ndarray, tol: float) -> tuple[np.ndarray, np.ndarray]:
    radius = np.linalg.norm(pos, axis=1)
    tree = cKDTree(pos)
    n = len(pos)
    # same[i, j]: atom j is a possible image of atom i (same element, same distance from the centre)
    same = (numbers[:, None] == numbers[None, :]) & (np.abs(radius[None, :] - radius[:, None]) < tol)
    counts = np.sum(same, axis=1)
    far = radius > tol
    if not np.any(far):  # pragma: no cover - all atoms at the centre is caught as overlap
        raise SymmetryError("no atom away from the centre")
    a1 = _first_by(np.flatnonzero(far), counts, -radius)
    dist1 = np.linalg.norm(pos - pos[a1], axis=1)
    sine = np.linalg.norm(np.cross(pos[a1][None], pos), axis=1) / (radius[a1] * radius + 1e-12)
    second = np.flatnonzero((np.arange(n) != a1) & far & (sine > 0.2))
    if not len(second):  # pragma: no cover - handled by the linear branch
        raise SymmetryError("molecule is linear")
    a2 = _first_by(second, dist1, counts)
    normal = np.cross(pos[a1], pos[a2])
    normal /= np.linalg.norm(normal)
    vol = np.abs(pos @ normal)
    third = np.flatnonzero(vol > max(tol, 0.3))
    a3 = _first_by(third, dist1, counts) if len(third) else None
    dist = np.linalg.norm(pos[:, None, :] - pos[None, :, :], axis=2)
    d12 = dist[a1, a2]
    c1 = np.flatnonzero(same[a1])
    c2 = np.flatnonzero(same[a2])
    # every pair (b1, b2) of images of (a1, a2) at their distance, b1 by b1
    i1, i2 = np.nonzero((np.abs(dist[c1][:, c2] - d12) <= 2 * tol) & (c2[None, :] != c1[:, None]))
    b1, b2 = c1[i1], c2[i2]
    if a3 is None:
        nb = np.cross(pos[b1], pos[b2])
        size = np.linalg.norm(nb, axis=1)
        keep = size >= 1e-6
        b1, b2, nb = b1[keep], b2[keep], nb[keep] / size[keep][:, None]
        src = np.array([pos[a1], pos[a2], normal * radius[a1]])
        # each pair with both signs of the normal, +nb first
        tips = np.stack([nb, -nb], axis=1).reshape(-1, 3) * radius[a1]
        dsts = np.stack([np.repeat(pos[b1], 2, axis=0), np.repeat(pos[b2], 2, axis=0), tips], axis=1)
        want = np.zeros(len(dsts))
    else:
        c3 = np.flatnonzero(same[a3])
        src = np.array([pos[a1], pos[a2], pos[a3]])
        ok = (
            (np.abs(dist[b1][:, c3] - dist[a1, a3]) <= 2 * tol)
            & (np.abs(dist[b2][:, c3] - dist[a2, a3]) <= 2 * tol)
            & (c3[None, :] != b1[:, None])
            & (c3[None, :] != b2[:, None])
        )
        p, k = np.nonzero(ok)
        # both handednesses: three atoms nearly in a plane with the centre fit a rotation
        # and a reflection almost equally well
        dsts = pos[np.stack([b1[p], b2[p], c3[k]], axis=1)]
    ops: list[np.ndarray] = []
    perms: list[np.ndarray] = []
    keys: set[bytes] = set()
    if len(dsts):
        # every trial rotation fitted and matched at once; the looser second try one by one
        srcs = np.broadcast_to(src, dsts.shape).copy()
        if a3 is None:
            rots = _kabsch_many(srcs, dsts, want)
        else:  # each trio as a rotation, then as a rotoreflection
            rots = _kabsch_both(srcs, dsts).reshape(-1, 3, 3)
        # a few atoms spread over the unit first: a trial that moves one of them too far fails anyway
        # (one atom at a time, each on the trials still standing); the tree answers "nothing within
        # reach" for an atom farther than the looser bound from every atom, which fails the trial too
        reach = 3 * tol * (1 + 1e-9)
        atoms = np.unique(np.linspace(0, n - 1, min(n, 8)).astype(int))
        images = rots @ pos[atoms].T  # (trials, 3, atoms)
        alive = np.arange(len(rots))
        for k in range(len(atoms)):
            dd, _ = tree.query(images[alive, :, k], distance_upper_bound=reach)
            alive = alive[dd <= 3 * tol]
        rots = rots[alive]
        moved = pos[None] @ np.transpose(rots, (0, 2, 1))
        if len(moved) * n < _Nearest.SMALL:
            d, j = tree.query(moved.reshape(-1, 3), distance_upper_bound=reach)
        else:
            gap = np.min(dist + np.diag(np.full(n, np.inf)))
            d, j = _Nearest(pos, tree, gap).query(moved.reshape(-1, 3), reach)
        d, j = d.reshape(len(rots), n), j.reshape(len(rots), n)  # no trial left: (0, n), not an error
        # an atom with nothing within reach has d = inf (and j = n, an element no atom has)
        paired = one_to_one(j, np.append(numbers, -1), numbers)
        worst = d.max(axis=1)
        good = paired & (worst <= tol)
        loose = paired & (worst <= 3 * tol)
        proper = np.linalg.det(rots) > 0 if len(rots) else np.zeros(0, dtype=bool)
        take = np.flatnonzero(loose)
        if len(take) and good[take].all() and _distinct(j[take], proper[take]):
            return rots[take], j[take]  # every pairing final as found and none repeated
        for t in take.tolist():
            r = rots[t]
            if good[t]:
                p_t, plus = j[t], bool(proper[t])
            else:
                # three nearby atoms fix the rotation only roughly when the positions are noisy:
                # pair the atoms under a looser bound, fit the rotation to all of them, check again
                r = _kabsch(pos, pos[j[t]], np.linalg.det(r))
                p_t = _match(r, pos, numbers, tree, tol)
                if p_t is None:
                    continue
                plus = bool(np.linalg.det(r) > 0)
            key = p_t.tobytes() + (b"+" if plus else b"-")
            if key in keys:
                continue
            keys.add(key)
            ops.append(r)
            perms.append(p_t)
    if not ops:  # a tolerance below the precision of the coordinates (1e-300 Å): not even the identity matches
        raise SymmetryError(
            f"no symmetry operation found at the symmetry tolerance {tol:g} Å, not even the identity; "
            "give a larger tolerance"
        )
    return np.array(ops), np.array(perms)


def _closed(perms: np.ndarray, dets: np.ndarray) -> bool:
    """True when every product of two elements (permutation, sign of det) is already an element.

    Checked on a few generators instead of all pairs: the set S is closed when it holds the
    identity, S t lies in S for every generator t, and every element of S is reached from the
    identity by multiplying with generators (then S is the group they generate).  Generators are
    taken greedily, each the first element not yet reached.  Products are looked up by a hash
    of the images of a few atoms and compared whole, so a false "closed" cannot come from a
    collision (a collision between elements only sends the caller to its slower closure loop,
    which finds the same group).
    """
    g, n = perms.shape
    plus = dets > 0
    start = np.flatnonzero(np.all(perms == np.arange(n)[None], axis=1) & plus)
    if not len(start):  # a finite set closed under products holds the identity
        return False
    cols = np.unique(np.linspace(0, n - 1, min(n, len(_HASH_WEIGHTS) - 1)).astype(int))
    weights, w_sign = _HASH_WEIGHTS[: len(cols)], _HASH_WEIGHTS[len(cols)]

    def hashed(rows: np.ndarray, signs: np.ndarray) -> np.ndarray:
        with np.errstate(over="ignore"):
            return rows[:, cols] @ weights + signs * w_sign

    order = np.argsort(hashed(perms, plus))
    sorted_h = hashed(perms, plus)[order]
    reached = [False] * g
    reached[int(start[0])] = True
    count = 1
    steps: list[list[int]] = []  # steps[k][s]: index of s times the k-th generator
    while count < g:
        t = reached.index(False)  # the first element not reached yet becomes a generator
        rows, signs = perms[:, perms[t]], plus == plus[t]  # row s: apply t, then s
        at = order[np.clip(np.searchsorted(sorted_h, hashed(rows, signs)), 0, g - 1)]
        if not ((perms[at] == rows).all() and (plus[at] == signs).all()):
            return False
        steps.append(at.tolist())
        # everything reached so far, times every generator, and so on
        stack = [s for s in range(g) if reached[s]]
        while stack:
            s = stack.pop()
            for step in steps:
                x = step[s]
                if not reached[x]:
                    reached[x] = True
                    count += 1
                    stack.append(x)
    return True


def _refine(ops: np.ndarray, perms: np.ndarray, pos: np.ndarray, *, rounds: int = 60):
    """Close the permutations into a group and make matrices and geometry exactly symmetric."""
    # an element is (permutation, sign of det): a planar unit's own plane moves no atom
    dets = np.where(np.linalg.det(ops) > 0, 1.0, -1.0).tolist()
    elements = [(p, d) for p, d in zip(perms, dets, strict=True)]
    changed = not _closed(perms, np.array(dets))  # the search usually finds the whole group
    if not changed and len(elements) > 240:
        raise SymmetryError("tolerance is too loose: the atom permutations do not form a point group")
    keys = {p.tobytes() + str(d).encode() for p, d in elements} if changed else set()
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

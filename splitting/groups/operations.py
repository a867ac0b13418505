"""Point operations as 3x3 orthogonal matrices: construction, description, closure.

Every group of the project is generated here from a few generators, so that no
operation list is typed by hand.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import SymmetryError

__all__ = [
    "IDENTITY",
    "INVERSION",
    "MATRIX_TOL",
    "OperationKind",
    "close_group",
    "describe",
    "find_operation",
    "improper_rotation",
    "multiplication_table",
    "nearest_matrices",
    "reflection",
    "rotation",
]

MATRIX_TOL = 1e-6
IDENTITY = np.eye(3)
INVERSION = -np.eye(3)


def _unit(axis: np.ndarray | list[float] | tuple[float, ...]) -> np.ndarray:
    v = np.asarray(axis, dtype=float)
    n = np.linalg.norm(v)
    if n == 0:
        raise SymmetryError("an axis of zero length has no direction")
    return v / n


def rotation(axis, angle: float) -> np.ndarray:
    """Proper rotation by ``angle`` (radians, right-handed) about ``axis``.

    Examples
    --------
    >>> np.round(rotation([0, 0, 1], np.pi / 2) @ [1, 0, 0], 12) + 0.0
    array([0., 1., 0.])
    """
    u = _unit(axis)
    k = np.array([[0, -u[2], u[1]], [u[2], 0, -u[0]], [-u[1], u[0], 0]])
    return np.eye(3) + np.sin(angle) * k + (1 - np.cos(angle)) * (k @ k)


def reflection(normal) -> np.ndarray:
    """Reflection through the plane with the given normal."""
    n = _unit(normal)
    return np.eye(3) - 2 * np.outer(n, n)


def improper_rotation(axis, angle: float) -> np.ndarray:
    """Rotation by ``angle`` about ``axis`` followed by reflection in the perpendicular plane."""
    return reflection(axis) @ rotation(axis, angle)


@dataclass(frozen=True)
class OperationKind:
    """What an orthogonal matrix does, in the words of a character table.

    Attributes
    ----------
    proper : bool
        True for det = +1.
    order : int
        n of C_n^k for a proper operation; n of S_n^k for an improper one, written
        R = sigma_axis C(2 pi k / n) (sigma = S_1, i = S_2).
    power : int
        k, coprime to n, with the rotation angle 2 pi k / n at most pi.
    axis : numpy.ndarray
        Unit axis (z for the identity and the inversion).
    angle : float
        Rotation angle (radians, in [0, pi]) about ``axis``; for an improper operation the
        angle phi in R = sigma_axis C(phi).
    symbol : str
        "E", "i", "σ", "Cn", "Cn^k", "Sn", "Sn^k".
    """

    proper: bool
    order: int
    power: int
    axis: np.ndarray
    angle: float
    symbol: str


def _rotation_axis_angle(r: np.ndarray) -> tuple[np.ndarray, float]:
    """Axis and angle in [0, pi] of a proper rotation matrix."""
    c = np.clip((np.trace(r) - 1) / 2, -1.0, 1.0)
    angle = float(np.arccos(c))
    if angle < 1e-7:
        return np.array([0.0, 0.0, 1.0]), 0.0
    if np.pi - angle < 1e-5:
        # axis from the symmetric part: R + I = 2 u u^T
        m = (r + np.eye(3)) / 2
        j = int(np.argmax(np.diag(m)))
        u = m[:, j] / np.sqrt(max(m[j, j], 1e-300))
        return _canonical_direction(u), float(np.pi)
    u = np.array([r[2, 1] - r[1, 2], r[0, 2] - r[2, 0], r[1, 0] - r[0, 1]]) / (2 * np.sin(angle))
    return u / np.linalg.norm(u), angle


def _canonical_direction(u: np.ndarray) -> np.ndarray:
    """Pick the sign of a line direction so that its first clear component is positive."""
    u = u / np.linalg.norm(u)
    for comp in u:
        if abs(comp) > 1e-6:
            return u if comp > 0 else -u
    return u


def _order_power(angle: float, max_order: int = 64) -> tuple[int, int]:
    """n, k with angle = 2 pi k / n (k coprime to n, k <= n/2)."""
    if angle < 1e-7:
        return 1, 0
    frac = angle / (2 * np.pi)
    for n in range(2, max_order + 1):
        k = round(frac * n)
        if k > 0 and abs(frac * n - k) < 1e-5 and np.gcd(n, k) == 1:
            return n, k
    raise SymmetryError(f"rotation by {np.degrees(angle):.4f} degrees is not of finite order")


def describe(r: np.ndarray) -> OperationKind:
    """Classify an orthogonal matrix as E, C_n^k, i, sigma or S_n^k.

    Examples
    --------
    >>> describe(rotation([0, 0, 1], 2 * np.pi / 3)).symbol
    'C3'
    >>> describe(-np.eye(3)).symbol
    'i'
    >>> describe(reflection([1, 0, 0])).symbol
    'σ'
    """
    r = np.asarray(r, dtype=float)
    det = np.linalg.det(r)
    if det > 0:
        axis, angle = _rotation_axis_angle(r)
        n, k = _order_power(angle)
        if n == 1:
            return OperationKind(True, 1, 0, axis, 0.0, "E")
        sym = f"C{n}" if k == 1 else f"C{n}^{k}"
        return OperationKind(True, n, k, axis, angle, sym)
    # improper: r = sigma_u C(phi) = -C(phi + pi) about u
    axis, angle_p = _rotation_axis_angle(-r)
    phi = np.pi - angle_p  # rotation angle of the proper part of sigma_u C(phi)
    if angle_p < 1e-7:
        return OperationKind(False, 2, 1, np.array([0.0, 0.0, 1.0]), np.pi, "i")
    if phi < 1e-7:
        return OperationKind(False, 1, 1, axis, 0.0, "σ")
    n, k = _order_power(phi)
    sym = f"S{n}" if k == 1 else f"S{n}^{k}"
    return OperationKind(False, n, k, axis, phi, sym)


def _key(m: np.ndarray) -> bytes:
    return np.round(np.asarray(m) * 1e5).astype(np.int64).tobytes()


def close_group(generators: list[np.ndarray], *, max_order: int = 240) -> np.ndarray:
    """All products of the generators: the finite group they generate.

    Returns an array of shape (n, 3, 3) with the identity first.

    Raises
    ------
    SymmetryError
        If the generators do not generate a finite group of at most ``max_order`` elements.
    """
    elements = [np.eye(3)]
    keys = {_key(np.eye(3))}
    gens = [np.asarray(g, dtype=float) for g in generators]
    frontier = [np.eye(3)]
    while frontier:
        new = []
        for a in frontier:
            for g in gens:
                p = g @ a
                k = _key(p)
                if k not in keys:
                    keys.add(k)
                    elements.append(p)
                    new.append(p)
                    if len(elements) > max_order:
                        raise SymmetryError(
                            f"operations do not close into a finite group of at most {max_order} elements"
                        )
        frontier = new
    return np.array(elements)


def find_operation(ops: np.ndarray, m: np.ndarray, *, tol: float = MATRIX_TOL) -> int:
    """Index of matrix ``m`` in the stack ``ops`` (max abs difference below ``tol``), or -1."""
    diff = np.abs(ops - np.asarray(m)[None]).reshape(len(ops), -1).max(axis=1)
    j = int(np.argmin(diff))
    return j if diff[j] < tol else -1


def multiplication_table(ops: np.ndarray, *, tol: float = 1e-5) -> np.ndarray:
    """Table ``T[a, b] = index of ops[a] @ ops[b]``.

    Raises
    ------
    SymmetryError
        If the set is not closed under multiplication.
    """
    n = len(ops)
    prods = np.einsum("aij,bjk->abik", ops, ops).reshape(n * n, 9)
    flat = ops.reshape(n, 9)
    # match by nearest neighbour on the flattened matrices
    dist, idx = nearest_matrices(flat, prods)
    if np.max(dist) > tol * 10:
        raise SymmetryError("the operations are not closed under multiplication")
    return idx.reshape(n, n)


def nearest_matrices(reference: np.ndarray, queries: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """For each query, the distance to and index of the nearest reference (flattened 3x3 matrices).

    A brute-force search in blocks: point groups hold at most 120 operations, where this is
    faster than building a k-d tree and keeps scipy off the start-up path of ``group``.

    Examples
    --------
    >>> d, i = nearest_matrices(np.eye(3).reshape(1, 9), -np.eye(3).reshape(1, 9))
    >>> int(i[0]), round(float(d[0]) ** 2, 6)
    (0, 12.0)
    """
    ref = np.asarray(reference, dtype=float).reshape(len(reference), -1)
    q = np.asarray(queries, dtype=float).reshape(-1, ref.shape[1])
    if len(q) * len(ref) > 20_000 and len(ref) > 4 and _separated(ref):
        return _nearest_by_projection(ref, q)
    return _nearest_brute(ref, q)


#: a query this close to a reference is its unique nearest (operations of a point group
#: differ by at least ~0.5 in this distance)
_UNIQUE = 0.05
_PROJECT = np.array([0.9133, -0.4821, 0.2287, 0.6671, 0.1357, -0.7759, 0.3493, 0.5519, -0.2261])


def _separated(ref: np.ndarray) -> bool:
    """True when no two references are within ``3 * _UNIQUE`` of each other."""
    sq = np.einsum("ij,ij->i", ref, ref)
    d2 = sq[:, None] + sq[None, :] - 2.0 * ref @ ref.T
    np.fill_diagonal(d2, np.inf)
    return bool(np.min(d2) > (3 * _UNIQUE) ** 2)


def _nearest_by_projection(ref: np.ndarray, q: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """:func:`nearest_matrices` for many queries: candidates from one sorted projection, the rest brute force.

    The references are at least ``3 * _UNIQUE`` apart (checked by the caller), so a reference
    within :data:`_UNIQUE` of a query is its unique nearest.  The two references on either
    side of the query in one sorted projection are compared in full; a query with none of
    them that close is searched by brute force.  The answers are those of the brute-force
    search.
    """
    w = _PROJECT[: ref.shape[1]]
    pr = ref @ w
    order = np.argsort(pr, kind="stable")
    pos = np.searchsorted(pr[order], q @ w)
    cand = order[np.clip(pos[:, None] + np.arange(-2, 2)[None, :], 0, len(ref) - 1)]  # (nq, 4)
    d2 = np.sum((ref[cand] - q[:, None, :]) ** 2, axis=2)
    k = np.argmin(d2, axis=1)
    idx = cand[np.arange(len(q)), k]
    dist = np.sqrt(d2[np.arange(len(q)), k])
    doubt = np.flatnonzero(dist > _UNIQUE)
    if len(doubt):
        dist[doubt], idx[doubt] = _nearest_brute(ref, q[doubt])
    return dist, idx


def _nearest_brute(ref: np.ndarray, q: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    dist = np.empty(len(q))
    idx = np.empty(len(q), dtype=np.intp)
    block = max(1, 200_000 // max(len(ref), 1))
    ref_sq = np.einsum("ij,ij->i", ref, ref)
    for start in range(0, len(q), block):
        part = q[start : start + block]
        d2 = np.einsum("ij,ij->i", part, part)[:, None] + ref_sq[None, :] - 2.0 * part @ ref.T
        j = np.argmin(d2, axis=1)
        idx[start : start + block] = j
        dist[start : start + block] = np.sqrt(np.maximum(d2[np.arange(len(part)), j], 0.0))
    return dist, idx

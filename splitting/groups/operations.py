"""Point operations as 3x3 orthogonal matrices: construction, description, closure.

Every group of the project is generated here from a few generators, so that no
operation list is typed by hand.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import SymmetryError

__all__ = [
    "HASH_WEIGHTS",
    "IDENTITY",
    "INVERSION",
    "MATRIX_TOL",
    "OperationKind",
    "OperationKinds",
    "classify",
    "close_group",
    "close_group_with_table",
    "describe",
    "find_operation",
    "improper_rotation",
    "kronecker_squares",
    "multiplication_table",
    "nearest_matrices",
    "reflection",
    "rotation",
    "row_norms",
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


@dataclass(frozen=True, eq=False)
class OperationKinds:
    """:class:`OperationKind` of a stack of operations, as arrays (see :func:`classify`).

    Attributes
    ----------
    proper : numpy.ndarray of bool, shape (n,)
    order, power : numpy.ndarray of int, shape (n,)
    axis : numpy.ndarray, shape (n, 3)
    angle : numpy.ndarray, shape (n,)
    symbol : tuple of str
    """

    proper: np.ndarray
    order: np.ndarray
    power: np.ndarray
    axis: np.ndarray
    angle: np.ndarray
    symbol: tuple[str, ...]

    def __len__(self) -> int:
        return len(self.symbol)

    def __getitem__(self, i: int) -> OperationKind:
        return OperationKind(
            bool(self.proper[i]),
            int(self.order[i]),
            int(self.power[i]),
            self.axis[i].copy(),
            float(self.angle[i]),
            self.symbol[i],
        )

    def __iter__(self):
        return (self[i] for i in range(len(self)))


_ROWS, _COLS = np.array([2, 0, 1]), np.array([1, 2, 0])


def _rotation_axes_angles(r: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Axis and angle in [0, pi] of every proper rotation matrix of a stack (n, 3, 3)."""
    n = len(r)
    c = np.minimum(np.maximum((np.trace(r, axis1=1, axis2=2) - 1) / 2, -1.0), 1.0)  # np.clip, without its overhead
    angle = np.arccos(c)
    axis = np.empty((n, 3))
    small = angle < 1e-7
    half = ~small & (np.pi - angle < 1e-5)
    general = ~small & ~half
    axis[small] = (0.0, 0.0, 1.0)
    angle[small] = 0.0
    if half.any():
        # axis from the symmetric part: R + I = 2 u u^T
        m = (r[half] + IDENTITY) / 2
        rows = np.arange(len(m))
        diag = m.diagonal(axis1=1, axis2=2)
        j = diag.argmax(axis=1)
        u = m[rows, :, j] / np.sqrt(np.maximum(diag[rows, j], 1e-300))[:, None]
        axis[half] = _canonical_directions(u)
        angle[half] = np.pi
    if general.any():
        g = r[general]
        u = g[:, _ROWS, _COLS] - g[:, _COLS, _ROWS]  # (R32 - R23, R13 - R31, R21 - R12)
        u = u / (2 * np.sin(angle[general]))[:, None]
        axis[general] = u / row_norms(u)[:, None]
    return axis, angle


def row_norms(u: np.ndarray) -> np.ndarray:
    """``np.linalg.norm(u, axis=-1)`` for real rows, by the same ufuncs without the wrapper."""
    return np.sqrt(np.add.reduce(u * u, axis=-1))


def _canonical_directions(u: np.ndarray) -> np.ndarray:
    """Pick the sign of line directions (rows) so that the first clear component is positive."""
    u = u / row_norms(u)[:, None]
    clear = np.abs(u) > 1e-6
    first = clear.argmax(axis=1)
    lead = u[np.arange(len(u)), first]
    flip = clear.any(axis=1) & (lead < 0)
    u[flip] = -u[flip]
    return u


_ORDERS = np.arange(2, 65)
_COPRIME = np.gcd.outer(_ORDERS, np.arange(0, 65)) == 1  # _COPRIME[n - 2, k]
_ORDER_ROWS = np.arange(len(_ORDERS))[None, :]


def _orders_powers(angle: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """n, k with angle = 2 pi k / n (k coprime to n, k <= n/2) for every angle; (1, 0) for ~0."""
    frac = angle / (2 * np.pi)
    scaled = frac[:, None] * _ORDERS[None, :]
    k = scaled.round()
    ki = k.astype(np.int64)
    ok = (k > 0) & (np.abs(scaled - k) < 1e-5) & _COPRIME[_ORDER_ROWS, np.minimum(np.maximum(ki, 0), 64)]
    zero = angle < 1e-7
    bad = ~zero & ~ok.any(axis=1)
    if bad.any():
        worst = float(angle[np.flatnonzero(bad)[0]])
        raise SymmetryError(f"rotation by {np.degrees(worst):.4f} degrees is not of finite order")
    first = ok.argmax(axis=1)
    order = np.where(zero, 1, _ORDERS[first])
    power = np.where(zero, 0, ki[np.arange(len(angle)), first])
    return order, power


def classify(ops: np.ndarray) -> OperationKinds:
    """:func:`describe` for a stack of orthogonal matrices at once (one numpy pass).

    Examples
    --------
    >>> k = classify(np.array([np.eye(3), -np.eye(3), rotation([0, 0, 1], np.pi / 2)]))
    >>> k.symbol, k.order.tolist()
    (('E', 'i', 'C4'), [1, 2, 4])
    """
    ops = np.asarray(ops, dtype=float).reshape(-1, 3, 3)
    n = len(ops)
    proper = np.linalg.det(ops) > 0 if n else np.zeros(0, dtype=bool)
    # improper: r = sigma_u C(phi) = -C(phi + pi) about u
    axis, angle_p = _rotation_axes_angles(np.where(proper[:, None, None], ops, -ops))
    inversion = ~proper & (angle_p < 1e-7)
    angle = np.where(proper, angle_p, np.pi - angle_p)  # rotation angle of the proper part of sigma_u C(phi)
    mirror = ~proper & ~inversion & (angle < 1e-7)
    turn = np.where(inversion | mirror, 0.0, angle)
    order, power = _orders_powers(turn)
    order = np.where(inversion, 2, np.where(mirror, 1, order))
    power = np.where(inversion | mirror, 1, power)
    angle = np.where(inversion, np.pi, np.where(mirror | (proper & (order == 1)), 0.0, angle))
    axis[inversion] = (0.0, 0.0, 1.0)
    symbols = []
    columns = (proper.tolist(), inversion.tolist(), mirror.tolist(), order.tolist(), power.tolist())
    for p, i, m, nn, k in zip(*columns, strict=True):
        if i:
            symbols.append("i")
        elif m:
            symbols.append("σ")
        elif p and nn == 1:
            symbols.append("E")
        else:
            letter = "C" if p else "S"
            symbols.append(f"{letter}{nn}" if k == 1 else f"{letter}{nn}^{k}")
    return OperationKinds(proper, order, power, axis, angle, tuple(symbols))


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
    return classify(np.asarray(r, dtype=float)[None])[0]


_KEY = np.dtype((np.void, 72))  # a rounded 3x3 matrix as one value


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
    return close_group_with_table(generators, max_order=max_order)[0]


def close_group_with_table(generators: list[np.ndarray], *, max_order: int = 240) -> tuple[np.ndarray, np.ndarray]:
    """:func:`close_group` and the group's multiplication table, read off the closure.

    Every element after the identity is first found as ``g @ a`` (a generator times an earlier
    element), and every generator times every element is looked up on the way, so the table
    ``T[a, b]`` (see :func:`multiplication_table`) follows row by row without multiplying
    matrices again: ``T[g a, b] = L_g[T[a, b]]`` with ``L_g`` the left multiplication by g.
    """
    elements = np.empty((max_order + 2, 3, 3))  # the elements found, in order (one past the limit)
    elements[0] = np.eye(3)
    count = 1
    index = {_key(np.eye(3)): 0}
    gens = np.array([np.asarray(g, dtype=float) for g in generators]).reshape(-1, 3, 3)
    n_gen = len(gens)
    lmul = np.zeros((n_gen, max_order + 1), dtype=np.intp)  # lmul[g, a]: index of generator g times element a
    parent, via = [0], [0]
    levels = []  # the elements found from each frontier, in the order found
    frontier = [0]
    while frontier:
        # every generator times every new element at once, taken in the order (element, generator)
        prods = (gens[None] @ elements[frontier][:, None]).reshape(-1, 3, 3)
        keys = (prods * 1e5).round().astype(np.int64).reshape(len(prods), 9).view(_KEY)  # the keys of _key
        found = []
        new = []
        for t, k in enumerate(keys.ravel().tolist()):
            j = index.get(k)
            if j is None:
                j = index[k] = count
                elements[count] = prods[t]
                count += 1
                parent.append(frontier[t // n_gen])
                via.append(t % n_gen)
                new.append(j)
                if count > max_order:
                    raise SymmetryError(f"operations do not close into a finite group of at most {max_order} elements")
            found.append(j)
        if len(frontier) == 1:
            lmul[:, frontier[0]] = found
        else:
            lmul[:, frontier] = np.array(found, dtype=np.intp).reshape(len(frontier), n_gen).T
        levels.append(new)
        frontier = new
    n = count
    lmul = lmul[:, :n]
    table = np.empty((n, n), dtype=np.intp)
    table[0] = np.arange(n)
    parent_arr, via_arr = np.array(parent, dtype=np.intp), np.array(via, dtype=np.intp)
    for level in levels[:-1]:  # the parents of a level all lie in earlier levels
        if len(level) == 1:
            j = level[0]
            table[j] = lmul[via[j], table[parent[j]]]
        else:
            rows = np.array(level, dtype=np.intp)
            table[rows] = lmul[via_arr[rows][:, None], table[parent_arr[rows]]]
    return elements[:n].copy(), table


def kronecker_squares(ops: np.ndarray) -> np.ndarray:
    """``R x R`` (9x9) of every 3x3 matrix: ``vec(R T R^T) = (R x R) vec(T)``, rows flattened in C order.

    The action of the operations on second-rank tensors, for many tensors in one matrix product.

    Examples
    --------
    >>> r = rotation([0, 0, 1], np.pi / 2)
    >>> t = np.arange(9.0).reshape(3, 3)
    >>> bool(np.allclose(kronecker_squares(r[None])[0] @ t.ravel(), (r @ t @ r.T).ravel()))
    True
    """
    m = np.asarray(ops, dtype=float).reshape(-1, 3, 3)
    return (m[:, :, None, :, None] * m[:, None, :, None, :]).reshape(len(m), 9, 9)


def find_operation(ops: np.ndarray, m: np.ndarray, *, tol: float = MATRIX_TOL) -> int:
    """Index of matrix ``m`` in the stack ``ops`` (max abs difference below ``tol``), or -1."""
    diff = np.abs(ops - np.asarray(m)[None]).reshape(len(ops), -1).max(axis=1)
    j = int(np.argmin(diff))
    return j if diff[j] < tol else -1


#: up to this order :func:`multiplication_table` finds every product by the nearest-matrix search
#: (a product whose key matches is the nearest operation, so the table is the same either way)
_SMALL_TABLE = 24


def multiplication_table(ops: np.ndarray, *, tol: float = 1e-5) -> np.ndarray:
    """Table ``T[a, b] = index of ops[a] @ ops[b]``.

    Raises
    ------
    SymmetryError
        If the set is not closed under multiplication.
    """
    ops = np.asarray(ops, dtype=float)
    n = len(ops)
    prods = (ops[:, None] @ ops[None]).reshape(n * n, 9)
    flat = ops.reshape(n, 9)
    if n <= _SMALL_TABLE:  # a few hundred distances: the search itself is cheaper than the keys
        dist, idx = nearest_matrices(flat, prods)
        if len(dist) and np.max(dist) > tol * 10:
            raise SymmetryError("the operations are not closed under multiplication")
        return idx.reshape(n, n)
    return _table_by_keys(flat, prods, tol)


def _table_by_keys(flat: np.ndarray, prods: np.ndarray, tol: float) -> np.ndarray:
    """:func:`multiplication_table` from the rounded keys, the products no key matches searched."""
    n = len(flat)
    idx = _lookup_by_keys(flat, prods)
    miss = np.flatnonzero(idx < 0)
    if len(miss):
        # match by nearest neighbour on the flattened matrices
        dist, idx[miss] = nearest_matrices(flat, prods[miss])
        if np.max(dist) > tol * 10:
            raise SymmetryError("the operations are not closed under multiplication")
    return idx.reshape(n, n)


def _splitmix(i: int) -> int:
    """A well-mixed 62-bit number from ``i`` (the splitmix64 finaliser)."""
    z = (i * 0x9E3779B97F4A7C15) % 2**64
    z = ((z ^ (z >> 30)) * 0xBF58476D1CE4E5B9) % 2**64
    z = ((z ^ (z >> 27)) * 0x94D049BB133111EB) % 2**64
    return (z ^ (z >> 31)) >> 2


#: weights of a hash of an integer row (wrapping in int64 is harmless: rows are compared whole after)
HASH_WEIGHTS = np.array([_splitmix(i + 1) for i in range(16)], dtype=np.int64)


def _rounded(m: np.ndarray) -> np.ndarray:
    """Entries times 1e5, rounded to integers (the keys of :func:`close_group`)."""
    scaled = np.multiply(m, 1e5)
    return np.rint(scaled, out=scaled).astype(np.int64)


def _lookup_by_keys(reference: np.ndarray, queries: np.ndarray) -> np.ndarray:
    """Index of the reference whose rounded entries (1e-5) equal a query's, or -1 (flattened matrices).

    Used only when the references are rounded to distinct keys and lie at least ``3 * _UNIQUE``
    apart: a query matching a key is then within 3e-5 of that reference and farther than 0.1
    from every other, so the index is the nearest reference's, as :func:`nearest_matrices`
    would give it; every query left at -1 is for the caller to search.
    """
    out = -np.ones(len(queries), dtype=np.intp)
    if len(reference) < 2 or not _separated(reference):
        return out
    ref_keys = _rounded(reference)
    q_keys = _rounded(queries)
    weights = HASH_WEIGHTS[: reference.shape[1]]
    with np.errstate(over="ignore"):
        h_ref, h_q = ref_keys @ weights, q_keys @ weights
    order = np.argsort(h_ref, kind="stable")
    if np.any(h_ref[order][1:] == h_ref[order][:-1]):
        return out
    at = order[np.clip(np.searchsorted(h_ref[order], h_q), 0, len(reference) - 1)]
    hit = np.all(ref_keys[at] == q_keys, axis=1)  # the whole rounded row, so no hash collision passes
    out[hit] = at[hit]
    return out


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

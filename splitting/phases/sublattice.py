"""Sublattices and the space subgroups they carry: the search behind :mod:`splitting.phases.lower`.

A subgroup of index ``i x m`` of a space group keeps a subgroup ``H`` of the point group
(index ``i``) and a sublattice ``L'`` of the primitive lattice (index ``m``, a Hermite normal
form kept by every rotation of ``H``); each generator of ``H`` gets one of the ``m``
translation cosets of ``L'``.  A choice is a subgroup when the operations close modulo ``L'``.
The translation of every operation is linear in the generators' coset vectors, so the closure
conditions of all ``m^k`` choices for ``k`` generators are tested at once
(:func:`closing_choices`); only the choices that close are built operation by operation.
"""

from __future__ import annotations

import functools
import itertools

import numpy as np

from ..errors import InputError

__all__ = [
    "canonical_key",
    "close_operations",
    "closing_choices",
    "coset_vectors",
    "hermite_normal_form",
    "kept_lattices",
    "sublattices",
]


def sublattices(index: int) -> list[np.ndarray]:
    """Every sublattice of Z^3 of the given index, as lower-triangular Hermite normal forms.

    Rows are the new basis vectors in the old basis.

    Examples
    --------
    >>> len(sublattices(2)), len(sublattices(4))
    (7, 35)
    """
    out = []
    for a in range(1, index + 1):
        if index % a:
            continue
        for c in range(1, index // a + 1):
            if (index // a) % c:
                continue
            f = index // (a * c)
            for b, d, e in itertools.product(range(a), range(a), range(c)):
                out.append(np.array([[a, 0, 0], [b, c, 0], [d, e, f]]))
    return out


def hermite_normal_form(basis: np.ndarray) -> np.ndarray:
    """Lower-triangular Hermite normal form of an integer lattice basis given as rows.

    Examples
    --------
    >>> hermite_normal_form(np.array([[0, 1, 1], [1, 0, 1], [1, 1, 0]])).tolist()
    [[2, 0, 0], [1, 1, 0], [1, 0, 1]]
    """
    h = np.array(basis, dtype=np.int64)
    for col, row in ((2, 2), (1, 1), (0, 0)):
        # bring the gcd of h[:row+1, col] into h[row, col] and zero the rows above
        while True:
            nz = [r for r in range(row + 1) if h[r, col] != 0]
            if len(nz) <= 1:
                break
            piv = min(nz, key=lambda r: abs(h[r, col]))
            for r in nz:
                if r != piv:
                    h[r] -= (h[r, col] // h[piv, col]) * h[piv]
        nz = [r for r in range(row + 1) if h[r, col] != 0]
        if not nz:
            raise InputError("lattice basis is singular")
        h[[row, nz[0]]] = h[[nz[0], row]]
        if h[row, col] < 0:
            h[row] = -h[row]
    for r, c in ((1, 0), (2, 1), (2, 0)):
        h[r] -= (h[r, c] // h[c, c]) * h[c]
    return h


def canonical_key(
    m: np.ndarray, ops: list[tuple[np.ndarray, np.ndarray]], parent: list[tuple[np.ndarray, np.ndarray]]
) -> tuple:
    """A key shared by all subgroups conjugate under the parent space group (rotations and lattice).

    Each conjugate (by a parent operation and a lattice translation of the parent) is written as
    one row of integers: its sublattice in Hermite normal form, its rotations (coded and sorted;
    a subgroup holds each rotation once modulo the sublattice) and their translations in the
    sublattice's fractional coordinates (in millionths, in the order of the rotations); the key
    is the smallest row.  All parent operations and their translations are done at once.
    """
    ws = np.array([w for w, _ in ops], dtype=np.int64)
    ts = np.array([t for _, t in ops], dtype=float)
    wg = np.array([w for w, _ in parent], dtype=np.int64)  # (P, 3, 3)
    tg = np.array([t for _, t in parent], dtype=float)
    n_par, n_ops = len(wg), len(ws)
    winv = np.rint(np.linalg.inv(wg)).astype(np.int64)
    m2 = np.array([_hnf_cached(w @ m.T) for w in wg])  # (P, 3, 3)
    w2 = wg[:, None] @ ws[None] @ winv[:, None]  # (P, n, 3, 3)
    code = (w2.reshape(n_par, n_ops, 9) + 8) @ (16 ** np.arange(9, dtype=np.int64))  # entries |w| < 8
    order = np.argsort(code, axis=1, kind="stable")
    minv = np.linalg.inv(np.transpose(m2, (0, 2, 1)).astype(float))
    # shifts s = t_g + u for the coset vectors u of each conjugated sublattice: (P, k, 3)
    shifts = tg[:, None, :] + np.array([coset_vectors(h) for h in m2])
    # t2 = W_g t + s - W2 s for every shift s, rotations in sorted order
    w2s = np.take_along_axis(w2, order[:, :, None, None], axis=1)
    wt = np.take_along_axis(ts[None] @ np.transpose(wg, (0, 2, 1)), order[:, :, None], axis=1)  # (P, n, 3)
    t2 = wt[:, None] + shifts[:, :, None, :] - (w2s[:, None].astype(float) @ shifts[:, :, None, :, None])[..., 0]
    frac = t2 @ np.transpose(minv, (0, 2, 1))[:, None]  # (P, k, n, 3)
    frac = np.round((frac - np.floor(frac + 1e-8)) * 1e6).astype(np.int64) % 1_000_000
    n_cos = frac.shape[1]
    head = np.concatenate([m2.reshape(n_par, 9), np.take_along_axis(code, order, axis=1)], axis=1)  # (P, 9 + n)
    table = np.concatenate(
        [np.broadcast_to(head[:, None], (n_par, n_cos, head.shape[1])), frac.reshape(n_par, n_cos, -1)], axis=2
    ).reshape(n_par * n_cos, -1)
    best = table[np.lexsort(table.T[::-1])[0]]
    return (len(ops), best.tobytes())


@functools.lru_cache(maxsize=4096)
def _hnf_bytes(data: bytes) -> bytes:
    return hermite_normal_form(np.frombuffer(data, dtype=np.int64).reshape(3, 3)).astype(np.int64).tobytes()


def _hnf_cached(basis_t: np.ndarray) -> np.ndarray:
    """Hermite normal form of the rows of ``basis_t.T`` (kept for repeated bases)."""
    data = np.ascontiguousarray(np.rint(basis_t.T).astype(np.int64)).tobytes()
    return np.frombuffer(_hnf_bytes(data), dtype=np.int64).reshape(3, 3)


def close_operations(
    gens: list[tuple[np.ndarray, np.ndarray]], m: np.ndarray, order: int
) -> list[tuple[np.ndarray, np.ndarray]] | None:
    """Close (W, t) pairs modulo the sublattice m; None if some rotation gets two translations."""
    minv = np.linalg.inv(m.T)

    def key(w: np.ndarray, t: np.ndarray) -> tuple[bytes, bytes]:
        f = minv @ t
        f = np.round((f - np.floor(f + 1e-8)) * 1e6).astype(np.int64) % 1_000_000
        return w.astype(np.int64).tobytes(), f.tobytes()

    ident = (np.eye(3, dtype=int), np.zeros(3))
    found = {key(*ident)[0]: ident}
    tkeys = {key(*ident)[0]: key(*ident)[1]}
    frontier = [ident]
    while frontier:
        new = []
        for w1, t1 in frontier:
            for w2, t2 in gens:
                w, t = w1 @ w2, w1 @ t2 + t1
                kw, kt = key(w, t)
                if kw in tkeys:
                    if tkeys[kw] != kt:
                        return None
                    continue
                tkeys[kw] = kt
                found[kw] = (w, t)
                new.append((w, t))
        frontier = new
        if len(found) > order:
            return None
    return list(found.values())


def coset_vectors(m: np.ndarray) -> np.ndarray:
    """Integer vectors (rows) of the primitive lattice, one per coset of the sublattice with basis ``m``
    (rows; any basis, its Hermite normal form is taken when it is not triangular).

    Examples
    --------
    >>> coset_vectors(np.array([[2, 0, 0], [1, 1, 0], [0, 0, 1]])).tolist()
    [[0.0, 0.0, 0.0], [1.0, 0.0, 0.0]]
    >>> coset_vectors(np.array([[0, 1, 0], [2, 0, 0], [0, 0, 1]])).tolist()
    [[0.0, 0.0, 0.0], [1.0, 0.0, 0.0]]
    """
    m = np.asarray(m)
    if np.any(np.triu(m, 1)) and np.any(np.tril(m, -1)):
        m = hermite_normal_form(m)
    a, c, f = (abs(int(m[k, k])) for k in range(3))
    return np.array(list(itertools.product(range(a), range(c), range(f))), dtype=float).reshape(-1, 3)


def kept_lattices(lattices: np.ndarray, rotations: np.ndarray) -> np.ndarray:
    """Which sublattices (stack of HNFs, rows in the primitive basis) every fractional rotation keeps.

    Generators of a group suffice: a lattice kept by them is kept by all their products.

    Examples
    --------
    >>> two = np.array([[[2, 0, 0], [0, 1, 0], [0, 0, 1]], [[1, 0, 0], [0, 1, 0], [0, 0, 2]]])
    >>> swap_ab = np.array([[[0, 1, 0], [1, 0, 0], [0, 0, 1]]])
    >>> kept_lattices(two, swap_ab).tolist()
    [False, True]
    """
    lat = np.asarray(lattices, dtype=float).reshape(-1, 3, 3)
    rotations = np.asarray(rotations, dtype=float).reshape(-1, 3, 3)
    if len(lat) == 0 or len(rotations) == 0:
        return np.ones(len(lat), dtype=bool)
    inv_t = np.linalg.inv(np.transpose(lat, (0, 2, 1)))
    c = inv_t[:, None] @ rotations[None] @ np.transpose(lat, (0, 2, 1))[:, None]
    return np.all(np.abs(c - np.round(c)) <= 1e-8, axis=(1, 2, 3))


def closing_choices(gens: list[tuple[np.ndarray, np.ndarray]], m: np.ndarray, cosets: np.ndarray) -> np.ndarray:
    """Every choice of one coset vector per generator for which the operations close modulo ``m``.

    Returns the choices (rows of coset indices, one column per generator) in lexicographic
    order, the order of ``itertools.product``.  Each operation reached from the identity by
    the generators has a translation ``c + sum_k A_k u_k`` linear in the generators' coset
    vectors ``u_k``; an operation reached a second time must get the same translation modulo
    ``m``, and those conditions are evaluated for all choices at once.

    Examples
    --------
    A two-fold screw axis along c does not close in the cell doubled along c (its square, the
    translation c, is not a vector of the doubled lattice); a two-fold rotation closes with either coset:

    >>> w = np.diag([-1, -1, 1]); m = np.diag([1, 1, 2])
    >>> closing_choices([(w, np.array([0, 0, 0.5]))], m, coset_vectors(m)).tolist()
    []
    >>> closing_choices([(w, np.zeros(3))], m, coset_vectors(m)).tolist()
    [[0], [1]]
    """
    k_gens, n_cos = len(gens), len(cosets)
    if k_gens == 0:  # the trivial group: the one empty choice
        return np.zeros((1, 0), dtype=np.int64)
    minv = np.linalg.inv(np.asarray(m, dtype=float).T)
    eye = np.eye(3, dtype=np.int64)
    seen = {eye.tobytes(): 0}
    elems = [(eye, np.zeros(3), np.zeros((k_gens, 3, 3)))]
    base, lin = [], []
    i = 0
    while i < len(elems):
        wh, ch, ah = elems[i]
        for k, (wk, tk) in enumerate(gens):
            w = wh @ np.asarray(wk, dtype=np.int64)
            c = wh @ tk + ch
            a = ah.copy()
            a[k] += wh
            j = seen.get(w.tobytes())
            if j is None:
                seen[w.tobytes()] = len(elems)
                elems.append((w, c, a))
            else:
                base.append(minv @ (c - elems[j][1]))
                lin.append(np.einsum("ij,kjl,nl->kni", minv, a - elems[j][2], cosets))
        i += 1
    shape = (n_cos,) * k_gens
    b = np.array(base)  # (E, 3)
    v = np.array(lin)  # (E, K, J, 3)
    out = []
    for first in range(n_cos):  # one generator's coset at a time keeps the arrays small
        r = np.broadcast_to(b + v[:, 0, first], (*shape[1:], *b.shape)).copy()
        for k in range(1, k_gens):
            idx = (None,) * (k - 1) + (slice(None),) + (None,) * (k_gens - 1 - k)
            r += np.transpose(v[:, k], (1, 0, 2))[idx]
        ok = np.all(np.abs(r - np.round(r)) <= 1e-6, axis=(-2, -1))
        for rest in np.argwhere(ok.reshape(shape[1:])) if k_gens > 1 else ([()] if ok else []):
            out.append((first, *(int(x) for x in rest)))
    return np.array(out, dtype=np.int64).reshape(-1, k_gens)

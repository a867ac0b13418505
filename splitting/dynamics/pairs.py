"""Sparse k = 0 force constants of radial pair functions, built in time and memory linear in pairs.

A pair function f(|r_j + L - r_i|) couples only atoms closer than the cut-off, so its
force constants have about 3 x 3 x (neighbours per atom) entries per atom.  They are
assembled block by block into a ``scipy.sparse`` matrix (pairs taken in chunks, so the
temporary 3 x 3 blocks never hold more than ``CHUNK`` pairs at once).  Only the dense
dynamical matrix built from them later (and its diagonalisation) grows faster than the
number of atoms.
"""

from __future__ import annotations

import numpy as np

from .potential import radial_hessian

__all__ = ["CHUNK", "pair_blocks", "pair_force_constants"]

#: pairs turned into 3 x 3 blocks at one time (bounds the temporary memory)
CHUNK = 200_000


def pair_blocks(
    n: int, i: np.ndarray, vec: np.ndarray, d1: np.ndarray, d2: np.ndarray, j: np.ndarray
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The nonzero 3 x 3 blocks of the k = 0 force constants of ordered pairs (i, j).

    Each ordered pair adds ``-phi`` to block (i, j) and ``+phi`` to block (i, i), as
    :func:`splitting.dynamics.potential.add_pairs` does for dense arrays; blocks of the
    same atoms from different lattice images are summed.

    Parameters
    ----------
    n : int
        Number of atoms.
    i, j : numpy.ndarray of int, shape (m,)
        Ordered pairs (both orders present for a symmetric result).
    vec : numpy.ndarray, shape (m, 3)
        Separation ``r_j + L - r_i`` (angstrom).
    d1, d2 : numpy.ndarray, shape (m,)
        First and second radial derivatives of the pair function.

    Returns
    -------
    rows, cols : numpy.ndarray of int, shape (k,)
        Atom indices of each block, sorted by row and then column, no repeats.
    blocks : numpy.ndarray, shape (k, 3, 3)
    """
    i = np.asarray(i, dtype=np.int64)
    j = np.asarray(j, dtype=np.int64)
    if len(i) > 1 and np.any(np.diff(i) < 0):  # chunks below must be runs of rows
        order = np.argsort(i, kind="stable")
        i, j, vec, d1, d2 = i[order], j[order], vec[order], d1[order], d2[order]
    every = np.arange(n, dtype=np.int64)
    keys = np.sort(np.concatenate([i * n + j, every * (n + 1)]))
    keys = keys[np.concatenate([[True], keys[1:] != keys[:-1]])]
    blocks = np.zeros((len(keys), 9))
    for start in range(0, len(i), CHUNK):
        s = slice(start, start + CHUNK)
        ii, jj = i[s], j[s]
        # the keys of these rows form one contiguous range of the sorted keys
        lo = np.searchsorted(keys, ii[0] * n)
        hi = np.searchsorted(keys, (ii[-1] + 1) * n)
        phi = radial_hessian(vec[s], d1[s], d2[s]).reshape(-1, 9)
        off = np.searchsorted(keys[lo:hi], ii * n + jj)
        on = np.searchsorted(keys[lo:hi], ii * (n + 1))
        for c in range(9):
            blocks[lo:hi, c] += np.bincount(on, weights=phi[:, c], minlength=hi - lo)
            blocks[lo:hi, c] -= np.bincount(off, weights=phi[:, c], minlength=hi - lo)
    return keys // n, keys % n, blocks.reshape(-1, 3, 3)


def pair_force_constants(n: int, i: np.ndarray, vec: np.ndarray, d1: np.ndarray, d2: np.ndarray, j: np.ndarray):
    """k = 0 force constants (3n, 3n) of ordered pairs as a ``scipy.sparse`` block (BSR) matrix.

    See :func:`pair_blocks` for the parameters.

    Examples
    --------
    One pair in both orders: the blocks sum to zero along a row (acoustic sum rule).

    >>> import numpy as np
    >>> fc = pair_force_constants(2, np.array([0, 1]), np.array([[1.0, 0, 0], [-1.0, 0, 0]]),
    ...                           np.zeros(2), np.ones(2), np.array([1, 0]))
    >>> fc.shape, float(abs(fc.toarray().reshape(2, 3, 2, 3).sum(axis=2)).max())
    ((6, 6), 0.0)
    """
    from scipy.sparse import bsr_matrix

    rows, cols, blocks = pair_blocks(n, i, vec, d1, d2, j)
    indptr = np.concatenate([[0], np.cumsum(np.bincount(rows, minlength=n))])
    return bsr_matrix((blocks, cols, indptr), shape=(3 * n, 3 * n))

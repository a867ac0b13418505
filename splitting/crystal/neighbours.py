"""Pairs of atoms closer than a cut-off in a periodic cell, in time and memory linear in atoms.

The cell is first reduced (Minkowski reduction: the shortest basis of the same lattice),
so that every cell height is close to a lattice-vector length; a cell whose reduced height
is below a fraction of an angstrom is flat or degenerate and refused, because its atoms
would lie on top of their own periodic images.  Atoms wrapped into the reduced cell, plus
those periodic images that lie within the cut-off of the cell's faces (a skin, so the
number of image points stays proportional to the atoms), go into two k-d trees
(``scipy.spatial.cKDTree``) and the pairs within the cut-off are read off in one call.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import InputError

__all__ = ["MAX_PAIRS", "MIN_HEIGHT", "Pairs", "cell_heights", "periodic_pairs", "reduce_cell"]

#: smallest cell height (angstrom) of a usable crystal: below it atoms overlap their own images
MIN_HEIGHT = 0.5
#: largest number of pairs a search may return (about 1.6 GB of arrays); beyond it the cut-off is absurd
MAX_PAIRS = 50_000_000


@dataclass(frozen=True)
class Pairs:
    """Ordered pairs ``(i, j)`` with ``|x_j + shift @ lattice - x_i| < cutoff``; both orders listed.

    Attributes
    ----------
    i, j : numpy.ndarray of int
        Atom indices.
    shift : numpy.ndarray of int, shape (n, 3)
        Lattice translation of atom ``j`` (in the basis of the lattice given), relative to the
        fractional positions given.
    distance : numpy.ndarray
        Distances (angstrom).
    """

    i: np.ndarray
    j: np.ndarray
    shift: np.ndarray
    distance: np.ndarray


def cell_heights(lattice: np.ndarray) -> np.ndarray:
    """Distances between opposite faces of the cell (angstrom), one per lattice vector.

    Examples
    --------
    >>> cell_heights(np.diag([3.0, 4.0, 5.0])).round(9).tolist()
    [3.0, 4.0, 5.0]
    """
    lat = np.asarray(lattice, dtype=float)
    volume = abs(np.linalg.det(lat))
    areas = np.linalg.norm(np.cross(lat[[1, 2, 0]], lat[[2, 0, 1]]), axis=1)
    return volume / areas


def reduce_cell(lattice: np.ndarray, *, minimum: float = MIN_HEIGHT) -> tuple[np.ndarray, np.ndarray]:
    """The Minkowski-reduced basis ``op @ lattice`` and the integer matrix ``op``.

    Raises
    ------
    InputError
        Non-finite lattice, or a flat or degenerate cell (a reduced height below ``minimum``).

    Examples
    --------
    >>> sheared = np.array([[4.0, 0, 0], [40.0, 4, 0], [0, 0, 4]])
    >>> reduced, op = reduce_cell(sheared)
    >>> np.round(np.linalg.norm(reduced, axis=1), 6).tolist()
    [4.0, 4.0, 4.0]
    """
    from ase.geometry import minkowski_reduce

    lat = np.asarray(lattice, dtype=float)
    with np.errstate(all="ignore"):
        lengths = np.linalg.norm(lat, axis=1)
        volume = abs(float(np.linalg.det(lat))) if np.all(np.isfinite(lat)) else float("nan")
    if not np.all(np.isfinite(lengths)) or not np.isfinite(volume):
        raise InputError("the cell vectors are not finite numbers")
    if volume <= 1e-9 * float(np.prod(lengths)) or volume == 0:
        raise InputError(_flat_message(lengths, volume, minimum))
    try:
        reduced, op = minkowski_reduce(lat)
    except (RuntimeError, FloatingPointError, ValueError):
        raise InputError(_flat_message(lengths, volume, minimum)) from None
    reduced = np.asarray(reduced, dtype=float)
    if cell_heights(reduced).min() < minimum:
        raise InputError(_flat_message(lengths, volume, minimum))
    return reduced, np.asarray(op, dtype=np.int64)


def _flat_message(lengths: np.ndarray, volume: float, minimum: float) -> str:
    edges = ", ".join(f"{x:.4g}" for x in lengths)
    return (
        f"the cell is flat or degenerate (edges {edges} Å, volume {volume:.3g} Å^3): some lattice "
        f"translation is shorter than {minimum:g} Å, so atoms would overlap their own periodic images; "
        "check the cell lengths and angles"
    )


def periodic_pairs(
    lattice: np.ndarray,
    frac: np.ndarray,
    cutoff: float,
    *,
    max_pairs: int = MAX_PAIRS,
) -> Pairs:
    """Every pair of atoms, periodic images included, closer than ``cutoff`` angstrom.

    Parameters
    ----------
    lattice : array_like, shape (3, 3)
        Lattice vectors as rows (angstrom).
    frac : array_like, shape (n, 3)
        Fractional positions.
    cutoff : float
        Largest distance (angstrom), positive and finite.
    max_pairs : int
        Refuse (InputError) a search expected to return more pairs than this.

    Examples
    --------
    >>> cube = np.eye(3) * 3.0
    >>> p = periodic_pairs(cube, np.array([[0.0, 0.0, 0.0]]), 3.5)
    >>> len(p.i), sorted(p.distance.round(3).tolist())[:2]
    (6, [3.0, 3.0])
    """
    from scipy.spatial import cKDTree

    if not (np.isfinite(cutoff) and cutoff > 0):
        raise InputError(f"the neighbour cut-off {cutoff!r} Å must be a positive finite distance")
    lat = np.asarray(lattice, dtype=float)
    frac = np.asarray(frac, dtype=float).reshape(-1, 3)
    n = len(frac)
    reduced, op = reduce_cell(lat)
    volume = abs(float(np.linalg.det(reduced)))
    expected = n * n / volume * 4.0 / 3.0 * np.pi * cutoff**3
    if expected > max_pairs:
        raise InputError(
            f"a neighbour search to {cutoff:g} Å in this cell ({n} atoms) would give about {expected:.3g} pairs; "
            "the bond cut-offs are too long"
        )
    empty = np.zeros(0, dtype=np.int64)
    if n == 0:
        return Pairs(empty, empty, np.zeros((0, 3), dtype=np.int64), np.zeros(0))
    to_reduced = np.linalg.inv(op.astype(float))  # frac_reduced = frac @ inv(op)
    fr = frac @ to_reduced
    wrap = -np.floor(fr)
    fr = fr + wrap
    over = fr >= 1.0  # rounding of values just below an integer
    fr[over] -= 1.0
    wrap[over] -= 1.0
    heights = cell_heights(reduced)
    skin = cutoff / heights  # in fractions of each reduced vector
    reach = np.ceil(skin).astype(int)
    # every image within the skin, ordered by image (the last axis fastest), then atom;
    # an image is inside when it is along each axis (one test per axis and step)
    steps = [np.arange(-r, r + 1) for r in reach]
    along = []
    for axis, step in enumerate(steps):
        x = fr[:, axis][None] + step[:, None].astype(float)  # (steps, atoms)
        along.append((x > -skin[axis]) & (x < 1.0 + skin[axis]))
    inside = along[0][:, None, None] & along[1][None, :, None] & along[2][None, None, :]
    which, own = np.nonzero(inside.reshape(-1, n))
    images = np.stack(np.meshgrid(*steps, indexing="ij"), axis=-1).reshape(-1, 3).astype(np.int64)
    img = images[which]
    pts = (fr[own] + img.astype(float)) @ reduced
    centre = cKDTree(fr @ reduced)
    found = centre.sparse_distance_matrix(cKDTree(pts), cutoff, output_type="ndarray")
    i = found["i"].astype(np.int64)
    k = found["j"].astype(np.int64)
    d = found["v"]
    j = own[k]
    s_red = img[k] + wrap[j] - wrap[i]
    keep = (i != j) | np.any(s_red != 0, axis=1)
    keep &= d < cutoff
    i, j, d, s_red = i[keep], j[keep], d[keep], s_red[keep]
    shift = np.rint(s_red if np.array_equal(op, np.eye(3)) else s_red @ op).astype(np.int64)
    order = np.lexsort((d, j, i))
    return Pairs(i[order], j[order], shift[order], d[order])

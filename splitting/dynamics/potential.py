"""Atom-atom exp-6 (Buckingham) potential between atoms of different units: parameters and force constants.

``E(r) = -A / r^6 + B exp(-C r)`` for every pair of atoms that belong to different units
(or to different periodic images of one unit), summed to a stated cut-off.  Pairs of unlike
elements follow the usual combining rules of these sets: ``A_ij = sqrt(A_ii A_jj)``,
``B_ij = sqrt(B_ii B_jj)``, ``C_ij = (C_ii + C_jj) / 2`` (common practice), except where a set
gives the unlike pair itself.

Neighbours are found with a k-d tree over the periodic images inside the cut-off, so the
cost grows linearly with the number of atoms at fixed density.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..defaults import DEFAULT_CUTOFF
from ..errors import InputError
from .constants import KCAL_MOL, KJ_MOL

__all__ = ["DEFAULT_CUTOFF", "PARAMETER_SETS", "ParameterSet", "exp6_force_constants", "neighbour_pairs"]


@dataclass(frozen=True)
class ParameterSet:
    """One published exp-6 parameter set.

    Attributes
    ----------
    name : str
        Short name used on the command line.
    source : str
        Where the numbers come from (and whether they were recalled from memory).
    like : dict
        ``element -> (A, B, C)``: A in eV angstrom^6, B in eV, C in 1/angstrom.
    unlike : dict
        ``(element, element) -> (A, B, C)`` given by the set itself (sorted pair).
    """

    name: str
    source: str
    like: dict[str, tuple[float, float, float]]
    unlike: dict[tuple[str, str], tuple[float, float, float]]

    def covers(self, elements) -> bool:
        """True when every element has parameters."""
        return all(e in self.like for e in elements)

    def pair(self, a: str, b: str) -> tuple[float, float, float]:
        """(A, B, C) of the pair a-b (eV angstrom^6, eV, 1/angstrom)."""
        key = tuple(sorted((a, b)))
        if key in self.unlike:
            return self.unlike[key]
        for e in (a, b):
            if e not in self.like:
                raise InputError(
                    f"element {e} is not covered by the exp-6 set {self.name!r} "
                    f"(it covers {', '.join(sorted(self.like))}); choose another --potential"
                )
        (a1, b1, c1), (a2, b2, c2) = self.like[a], self.like[b]
        return (float(np.sqrt(a1 * a2)), float(np.sqrt(b1 * b2)), (c1 + c2) / 2)


def _kcal(a: float, b: float, c: float) -> tuple[float, float, float]:
    return (a * KCAL_MOL, b * KCAL_MOL, c)


def _kj(a: float, b: float, c: float) -> tuple[float, float, float]:
    """Gavezzotti's order (A exp(-B r) - C / r^6) into ours."""
    return (c * KJ_MOL, a * KJ_MOL, b)


WILLIAMS = ParameterSet(
    "williams",
    "C and H: D. E. Williams, J. Chem. Phys. 47, 4680 (1967), set IV; N and O: D. E. Williams and "
    "S. R. Cox, Acta Cryst. B40, 404 (1984); every number from memory",
    {
        "H": _kcal(27.3, 2654.0, 3.74),
        "C": _kcal(568.0, 83630.0, 3.60),
        "N": _kcal(691.0, 67220.0, 3.78),
        "O": _kcal(259.0, 42000.0, 3.96),
    },
    {("C", "H"): _kcal(125.0, 8766.0, 3.67)},
)

GAVEZZOTTI = ParameterSet(
    "gavezzotti",
    "A. Gavezzotti and G. Filippini, J. Phys. Chem. 98, 4831 (1994) and G. Filippini and "
    "A. Gavezzotti, Acta Cryst. B49, 868 (1993); C and H only; numbers from memory",
    {"H": _kj(24158.0, 4.01, 109.2), "C": _kj(226145.0, 3.47, 2418.0)},
    {("C", "H"): _kj(120000.0, 4.10, 472.8)},
)

#: the published sets, first one the default
PARAMETER_SETS: dict[str, ParameterSet] = {s.name: s for s in (WILLIAMS, GAVEZZOTTI)}


def neighbour_pairs(
    lattice: np.ndarray, positions: np.ndarray, cutoff: float
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Every ordered pair (i, j + L) of atoms closer than ``cutoff``, L a lattice vector.

    Parameters
    ----------
    lattice : numpy.ndarray, shape (3, 3)
        Lattice vectors as rows (angstrom).
    positions : numpy.ndarray, shape (n, 3)
        Cartesian positions (angstrom), not necessarily inside the cell.
    cutoff : float

    Returns
    -------
    i, j : numpy.ndarray of int
    shift : numpy.ndarray of int, shape (m, 3)
        Lattice translation (integer multiples of the rows of ``lattice``) of atom j.

    Examples
    --------
    >>> import numpy as np
    >>> i, j, s = neighbour_pairs(np.eye(3) * 3.0, np.zeros((1, 3)), 3.1)
    >>> len(i)  # six nearest images of a simple cubic lattice
    6
    """
    from scipy.spatial import cKDTree

    lattice = np.asarray(lattice, dtype=float)
    pos = np.asarray(positions, dtype=float)
    frac = pos @ np.linalg.inv(lattice)
    span = np.ptp(frac, axis=0) if len(frac) else np.zeros(3)
    # interplanar spacings: 1 / |row of the inverse transpose|
    heights = 1.0 / np.linalg.norm(np.linalg.inv(lattice).T, axis=1)
    reach = np.ceil(cutoff / heights + span).astype(int)
    grid = np.array(
        [
            (a, b, c)
            for a in range(-reach[0], reach[0] + 1)
            for b in range(-reach[1], reach[1] + 1)
            for c in range(-reach[2], reach[2] + 1)
        ]
    )
    images = (pos[None, :, :] + (grid @ lattice)[:, None, :]).reshape(-1, 3)
    tree = cKDTree(images)
    # all pairs at once as arrays (no Python lists), rows of each atom together
    found = cKDTree(pos).sparse_distance_matrix(tree, cutoff, output_type="ndarray")
    order = np.argsort(found["i"], kind="stable")
    ii = found["i"][order].astype(int)
    kk = found["j"][order].astype(int)
    jj = kk % len(pos)
    shift = grid[kk // len(pos)]
    keep = ~((ii == jj) & np.all(shift == 0, axis=1))
    return ii[keep], jj[keep], shift[keep]


def radial_hessian(vec: np.ndarray, d1: np.ndarray, d2: np.ndarray) -> np.ndarray:
    """Hessian blocks phi = f'' r r / r^2 + f' / r (1 - r r / r^2) of radial pair functions.

    ``vec`` (m, 3) separations, ``d1`` and ``d2`` the first and second radial derivatives.
    """
    r = np.linalg.norm(vec, axis=1)
    u = vec / r[:, None]
    uu = u[:, :, None] * u[:, None, :]
    return d2[:, None, None] * uu + (d1 / r)[:, None, None] * (np.eye(3)[None] - uu)


def add_pairs(fc: np.ndarray, i: np.ndarray, j: np.ndarray, phi: np.ndarray) -> None:
    """Add ordered-pair Hessian blocks to k = 0 force constants ``fc`` (n, 3, n, 3) in place.

    Each ordered pair adds ``-phi`` to block (i, j) and ``+phi`` to (i, i): translation
    invariance (the acoustic sum rule) holds by construction.
    """
    n = fc.shape[0]
    flat = fc.reshape(n, 3, n, 3)
    np.add.at(flat, (i, slice(None), j, slice(None)), -phi)
    np.add.at(flat, (i, slice(None), i, slice(None)), phi)


def exp6_force_constants(
    lattice: np.ndarray,
    positions: np.ndarray,
    symbols,
    unit_of: np.ndarray,
    params: ParameterSet,
    *,
    cutoff: float = DEFAULT_CUTOFF,
    sparse: bool = False,
) -> tuple[np.ndarray, np.ndarray, float]:
    """k = 0 force constants (eV/angstrom^2, (3n, 3n)), gradient (eV/angstrom, (n, 3)) and energy per cell (eV).

    Pairs inside one unit (same unit, no lattice shift) are left out: the free-unit
    Hessian holds them.  With ``sparse`` the force constants come as a ``scipy.sparse``
    CSR matrix, built in time and memory linear in the number of atoms.
    """
    symbols = list(symbols)
    n = len(symbols)
    i, j, shift = neighbour_pairs(lattice, positions, cutoff)
    inter = ~((unit_of[i] == unit_of[j]) & np.all(shift == 0, axis=1))
    i, j, shift = i[inter], j[inter], shift[inter]
    vec = positions[j] + shift @ lattice - positions[i]
    r = np.linalg.norm(vec, axis=1)
    elements = sorted(set(symbols))
    code = np.array([elements.index(s) for s in symbols])
    table = np.array([[params.pair(a, b) for b in elements] for a in elements])  # (k, k, 3)
    abc = table[code[i], code[j]]
    a, b, c = abc[:, 0], abc[:, 1], abc[:, 2]
    ex = b * np.exp(-c * r)
    energy = float(np.sum(-a / r**6 + ex) / 2)
    d1 = 6 * a / r**7 - c * ex
    d2 = -42 * a / r**8 + c * c * ex
    if sparse:
        from .pairs import pair_force_constants

        return pair_force_constants(n, i, vec, d1, d2, j), pair_gradient(n, i, vec, d1), energy
    fc = np.zeros((n, 3, n, 3))
    add_pairs(fc, i, j, radial_hessian(vec, d1, d2))
    return fc.reshape(3 * n, 3 * n), pair_gradient(n, i, vec, d1), energy


def pair_gradient(n: int, i: np.ndarray, vec: np.ndarray, d1: np.ndarray) -> np.ndarray:
    """Gradient (n, 3) on atoms i of ordered pair functions f(|r_j - r_i|): -f' r / |r| on i."""
    r = np.linalg.norm(vec, axis=1)
    grad = np.zeros((n, 3))
    np.add.at(grad, i, -(d1 / r)[:, None] * vec)
    return grad

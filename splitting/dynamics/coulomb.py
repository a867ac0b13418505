"""Point charges between units: the Ewald lattice sum, or the damped shifted-force pair sum.

Two ways to the Coulomb terms of the k = 0 force constants:

``"ewald"``
    The full lattice sum (:mod:`splitting.dynamics.ewald`): exact to about 1e-7, but its
    reciprocal part couples every pair of charges, so its force constants are a dense
    matrix (time and memory of order n^2 in the number of atoms).
``"dsf"``
    The damped shifted-force pair sum of C. J. Fennell and J. D. Gezelter, J. Chem. Phys.
    124, 234104 (2006), a development of the damped, charge-neutralised sum of D. Wolf,
    P. Keblinski, S. R. Phillpot and J. Eggebrecht, J. Chem. Phys. 110, 8254 (1999).  Every
    pair of atoms of different units (or of different images of one unit) closer than the
    cut-off ``R`` interacts by

    ``V(r) = q_i q_j [f(r) - f(R) - f'(R) (r - R)]``, ``f(r) = erfc(alpha r) / r``,

    so that energy and force go to zero at the cut-off; beyond it nothing.  Pairs inside
    one unit are left out (the free-unit Hessian holds them).  The energy adds Wolf's
    neutralising self term ``-(f(R) / 2 + alpha / sqrt(pi)) Q^2`` of every unit of net
    charge Q (for a single-atom ion exactly Wolf's; for a compact unit it is what is left
    of the self terms of its atoms and of its pairs; a constant, no force).  A pair sum over the
    k-d-tree neighbours: time and memory linear in the number of atoms, sparse force
    constants.  The damping ``alpha = 2.4 / R`` (0.2 per angstrom at the 12 angstrom
    default, the value Fennell and Gezelter recommend for that cut-off; from memory).

How close the two come for the bundled crystals is stated in docs/estimate.md and
checked in tests/test_coulomb.py.
"""

from __future__ import annotations

import numpy as np
from scipy.special import erfc

from .constants import COULOMB
from .ewald import ewald_terms
from .pairs import pair_force_constants
from .potential import neighbour_pairs, pair_gradient

__all__ = ["COULOMB_METHODS", "DSF_DAMPING", "coulomb_terms", "dsf_terms"]

#: the ways to sum the point charges, first one the default
COULOMB_METHODS = ("ewald", "dsf")
#: alpha * cut-off of the damped shifted-force sum (alpha = 0.2 / angstrom at 12 angstrom)
DSF_DAMPING = 2.4


def dsf_terms(
    lattice: np.ndarray,
    positions: np.ndarray,
    charges: np.ndarray,
    unit_of: np.ndarray,
    *,
    cutoff: float,
    alpha: float | None = None,
):
    """Damped shifted-force force constants (sparse, (3n, 3n)), gradient (n, 3) and energy per cell (eV).

    Parameters
    ----------
    lattice : numpy.ndarray, shape (3, 3)
        Lattice vectors as rows (angstrom).
    positions : numpy.ndarray, shape (n, 3)
        Cartesian positions (angstrom), each unit whole.
    charges : numpy.ndarray, shape (n,)
        Point charges (e).
    unit_of : numpy.ndarray, shape (n,)
        Unit of every atom; pairs of one unit (no lattice shift) are left out.
    cutoff : float
        The cut-off R (angstrom).
    alpha : float, optional
        Damping (1/angstrom), by default ``DSF_DAMPING / cutoff``.

    Returns
    -------
    fc : scipy.sparse.bsr_matrix, shape (3n, 3n)
        Force constants in eV/angstrom^2.
    grad : numpy.ndarray, shape (n, 3)
        Energy gradient in eV/angstrom.
    energy : float
        Coulomb energy between units per cell (eV).

    Examples
    --------
    >>> import numpy as np
    >>> fc, grad, e = dsf_terms(np.eye(3) * 20, np.array([[0, 0, 0], [3.0, 0, 0]]),
    ...                         np.array([1.0, -1.0]), np.array([0, 1]), cutoff=12.0)
    >>> bool(abs(fc.toarray().reshape(2, 3, 2, 3).sum(axis=2)).max() < 1e-12), bool(e < 0)
    (True, True)
    """
    lattice = np.asarray(lattice, dtype=float)
    pos = np.asarray(positions, dtype=float)
    q = np.asarray(charges, dtype=float)
    unit_of = np.asarray(unit_of)
    n = len(q)
    a = DSF_DAMPING / cutoff if alpha is None else float(alpha)
    i, j, shift = neighbour_pairs(lattice, pos, cutoff)
    inter = ~((unit_of[i] == unit_of[j]) & np.all(shift == 0, axis=1))
    i, j, shift = i[inter], j[inter], shift[inter]
    vec = pos[j] + shift @ lattice - pos[i]
    r = np.linalg.norm(vec, axis=1)
    qq = COULOMB * q[i] * q[j]
    f, f1, f2 = _screened(r, a)
    fc_, f1c, _ = _screened(np.array([cutoff]), a)
    energy = float(np.sum(qq * (f - fc_[0] - f1c[0] * (r - cutoff))) / 2)
    # the neutralising self term of each unit (constant: no force), with its net charge
    net = np.bincount(np.unique(unit_of, return_inverse=True)[1], weights=q)
    energy -= COULOMB * (fc_[0] / 2 + a / np.sqrt(np.pi)) * float(net @ net)
    d1 = qq * (f1 - f1c[0])
    d2 = qq * f2
    return pair_force_constants(n, i, vec, d1, d2, j), pair_gradient(n, i, vec, d1), energy


def _screened(r: np.ndarray, alpha: float) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """erfc(alpha r) / r and its first and second derivatives."""
    ec = erfc(alpha * r)
    g = 2 * alpha / np.sqrt(np.pi) * np.exp(-((alpha * r) ** 2))
    return ec / r, -ec / r**2 - g / r, 2 * ec / r**3 + 2 * g / r**2 + 2 * alpha**2 * g


def coulomb_terms(
    lattice: np.ndarray,
    positions: np.ndarray,
    charges: np.ndarray,
    unit_of: np.ndarray,
    *,
    cutoff: float,
    method: str = "ewald",
):
    """Force constants (dense array for ``"ewald"``, sparse matrix for ``"dsf"``), gradient and energy."""
    if method == "ewald":
        return ewald_terms(lattice, positions, charges, unit_of, cutoff=cutoff)
    if method == "dsf":
        return dsf_terms(lattice, positions, charges, unit_of, cutoff=cutoff)
    raise ValueError(f"unknown Coulomb sum {method!r}")

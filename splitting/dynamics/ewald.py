"""Coulomb force constants of point charges at k = 0 by Ewald summation.

The Coulomb energy of the periodic array of point charges is split into a short-ranged
real-space sum (``erfc(alpha r) / r``) and a reciprocal-space sum (P. P. Ewald, Ann. Phys.
369, 253 (1921); the form of e.g. M. P. Allen and D. J. Tildesley, Computer Simulation of
Liquids, Oxford (1987), ch. 5).  The G = 0 term is left out: the force constants are those
of the transverse (analytic) limit k -> 0, without the macroscopic field of longitudinal
polar modes.  Interactions of charges inside one unit are removed again (the free-unit
Hessian holds them).
"""

from __future__ import annotations

import numpy as np
from scipy.special import erfc

from .constants import COULOMB
from .potential import add_pairs, neighbour_pairs, pair_gradient, radial_hessian

__all__ = ["coulomb_force_constants"]

#: erfc(alpha * cutoff) = erfc(_REACH) ~ 1e-7 sets alpha from the real-space cut-off
_REACH = 3.7


def coulomb_force_constants(
    lattice: np.ndarray, positions: np.ndarray, charges: np.ndarray, unit_of: np.ndarray, *, cutoff: float
) -> tuple[np.ndarray, np.ndarray]:
    """Ewald k = 0 force constants (eV/angstrom^2, (3n, 3n)) and gradient (eV/angstrom, (n, 3)) of point charges.

    Examples
    --------
    A neutral pair of opposite charges in a big box: the force constants vanish for a
    rigid translation of the whole cell (acoustic sum rule).

    >>> import numpy as np
    >>> fc, grad = coulomb_force_constants(np.eye(3) * 6, np.array([[0, 0, 0], [3.0, 0, 0]]),
    ...                              np.array([1.0, -1.0]), np.array([0, 1]), cutoff=6.0)
    >>> bool(np.allclose(fc.reshape(2, 3, 2, 3).sum(axis=2), 0, atol=1e-10))
    True
    """
    lattice = np.asarray(lattice, dtype=float)
    pos = np.asarray(positions, dtype=float)
    q = np.asarray(charges, dtype=float)
    n = len(q)
    alpha = _REACH / cutoff
    fc = np.zeros((n, 3, n, 3))
    # ---- real space
    i, j, shift = neighbour_pairs(lattice, pos, cutoff)
    vec = pos[j] + shift @ lattice - pos[i]
    r = np.linalg.norm(vec, axis=1)
    qq = COULOMB * q[i] * q[j]
    g = 2 * alpha / np.sqrt(np.pi) * np.exp(-((alpha * r) ** 2))
    ec = erfc(alpha * r)
    d1 = qq * (-ec / r**2 - g / r)
    d2 = qq * (2 * ec / r**3 + 2 * g / r**2 + 2 * alpha**2 * g)
    add_pairs(fc, i, j, radial_hessian(vec, d1, d2))
    grad = pair_gradient(n, i, vec, d1)
    # ---- inside one unit: take the bare Coulomb pair out again
    same = (unit_of[i] == unit_of[j]) & np.all(shift == 0, axis=1)
    if np.any(same):
        vs, rs, qs = vec[same], r[same], qq[same]
        add_pairs(fc, i[same], j[same], -radial_hessian(vs, -qs / rs**2, 2 * qs / rs**3))
        grad -= pair_gradient(n, i[same], vs, -qs / rs**2)
    # bonded partners beyond the cut-off cannot occur in a unit, but a unit larger than the
    # cut-off would leave pairs in: take them out explicitly
    far = _intra_pairs_beyond(pos, unit_of, cutoff)
    if len(far[0]):
        a, b = far
        v = pos[b] - pos[a]
        rr = np.linalg.norm(v, axis=1)
        qf = COULOMB * q[a] * q[b]
        gf = 2 * alpha / np.sqrt(np.pi) * np.exp(-((alpha * rr) ** 2))
        ef = erfc(alpha * rr)
        # Ewald pair minus bare pair = -(erf part); only the smooth part remains to remove
        d1 = qf * (-(1 - ef) / rr**2 + gf / rr)
        d2 = qf * (2 * (1 - ef) / rr**3 - 2 * gf / rr**2 - 2 * alpha**2 * gf)
        add_pairs(fc, a, b, -radial_hessian(v, d1, d2))
        grad -= pair_gradient(n, a, v, d1)
    # ---- reciprocal space, G != 0
    volume = abs(np.linalg.det(lattice))
    recip = 2 * np.pi * np.linalg.inv(lattice).T
    gmax = 2 * alpha * _REACH
    m = np.ceil(gmax / np.linalg.norm(recip, axis=1)).astype(int)
    hkl = np.array(
        [(h, k, l) for h in range(-m[0], m[0] + 1) for k in range(-m[1], m[1] + 1) for l in range(-m[2], m[2] + 1)]
    )
    gv = hkl @ recip
    g2 = np.einsum("ij,ij->i", gv, gv)
    keep = (g2 > 1e-12) & (g2 <= gmax**2)
    gv, g2 = gv[keep], g2[keep]
    w = 4 * np.pi * COULOMB / volume * np.exp(-g2 / (4 * alpha**2)) / g2
    phase = pos @ gv.T  # (n, nG)
    c = q[:, None] * np.cos(phase)
    s = q[:, None] * np.sin(phase)
    # dE/dr_i = sum_G w q_i (S cos(G r_i) - C sin(G r_i)) G, S and C the sums over all charges
    grad += (c * s.sum(axis=0)[None] * w - s * c.sum(axis=0)[None] * w) @ gv
    for a in range(3):
        for b in range(a, 3):
            wab = w * gv[:, a] * gv[:, b]
            block = (c * wab) @ c.T + (s * wab) @ s.T  # q_i q_j sum_G w G_a G_b cos(G.(r_i - r_j))
            np.fill_diagonal(block, 0.0)
            fc[:, a, :, b] += block
            fc[np.arange(n), a, np.arange(n), b] -= block.sum(axis=1)
            if b != a:
                fc[:, b, :, a] += block
                fc[np.arange(n), b, np.arange(n), a] -= block.sum(axis=1)
    return fc.reshape(3 * n, 3 * n), grad


def _intra_pairs_beyond(pos: np.ndarray, unit_of: np.ndarray, cutoff: float) -> tuple[np.ndarray, np.ndarray]:
    """Ordered pairs of atoms of one unit farther apart than the cut-off (no lattice shift)."""
    a_list, b_list = [], []
    for u in np.unique(unit_of):
        idx = np.flatnonzero(unit_of == u)
        if len(idx) < 2:
            continue
        d = np.linalg.norm(pos[idx][:, None] - pos[idx][None], axis=2)
        a, b = np.nonzero(d >= cutoff)
        a_list.append(idx[a])
        b_list.append(idx[b])
    if not a_list:
        return np.zeros(0, int), np.zeros(0, int)
    return np.concatenate(a_list), np.concatenate(b_list)

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
from .pairs import pair_blocks
from .potential import neighbour_pairs, pair_gradient

__all__ = ["REACH", "coulomb_force_constants", "ewald_terms", "half_sphere"]

#: erfc(alpha * cutoff) = erfc(REACH) ~ 1e-7 sets alpha from the real-space cut-off
REACH = 3.7
#: alpha (1/angstrom) times n^(1/3) at which real and reciprocal parts cost about the same
#: (measured on CO2 supercells of molecular-crystal density)
_BALANCE = 3.2


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
    fc, grad, _ = ewald_terms(lattice, positions, charges, unit_of, cutoff=cutoff)
    return fc, grad


def ewald_terms(
    lattice: np.ndarray,
    positions: np.ndarray,
    charges: np.ndarray,
    unit_of: np.ndarray,
    *,
    cutoff: float,
    alpha: float | None = None,
) -> tuple[np.ndarray, np.ndarray, float]:
    """Ewald force constants (3n, 3n), gradient (n, 3) and energy per cell (eV) between units.

    The energy is the Coulomb energy of the periodic array of charges without the pairs
    inside one unit (and without the G = 0 term).  ``alpha`` (1/angstrom) splits real and
    reciprocal space; by default ``3.7 / cutoff`` (erfc(3.7) ~ 1e-7 at the cut-off), made
    smaller for large cells (``_BALANCE * n^(-1/3)``, a longer real-space reach) so that
    the two parts cost about the same.  The result does not depend on it beyond that
    accuracy.  The reciprocal part couples every pair of charges: its force constants are
    a dense matrix, built in time of order n^2 (n^3 at a fixed splitting).
    """
    lattice = np.asarray(lattice, dtype=float)
    pos = np.asarray(positions, dtype=float)
    q = np.asarray(charges, dtype=float)
    unit_of = np.asarray(unit_of)
    n = len(q)
    if alpha is None:
        alpha = min(REACH / cutoff, _BALANCE / max(n, 1) ** (1 / 3))
        cutoff = REACH / alpha
    else:
        cutoff = REACH / alpha
    # ---- real space: every pair inside the reach, as radial derivatives
    i, j, shift = neighbour_pairs(lattice, pos, cutoff)
    vec = pos[j] + shift @ lattice - pos[i]
    r = np.linalg.norm(vec, axis=1)
    qq = COULOMB * q[i] * q[j]
    g = 2 * alpha / np.sqrt(np.pi) * np.exp(-((alpha * r) ** 2))
    ec = erfc(alpha * r)
    energy = float(np.sum(qq * ec / r) / 2) - COULOMB * alpha / np.sqrt(np.pi) * float(q @ q)
    d1 = qq * (-ec / r**2 - g / r)
    d2 = qq * (2 * ec / r**3 + 2 * g / r**2 + 2 * alpha**2 * g)
    parts = [(i, j, vec, d1, d2)]
    # ---- inside one unit: take the bare Coulomb pair out again
    same = (unit_of[i] == unit_of[j]) & np.all(shift == 0, axis=1)
    if np.any(same):
        rs, qs = r[same], qq[same]
        energy -= float(np.sum(qs / rs) / 2)
        parts.append((i[same], j[same], vec[same], qs / rs**2, -2 * qs / rs**3))
    # bonded partners beyond the cut-off cannot occur in a unit, but a unit larger than the
    # cut-off would leave pairs in: take them out explicitly
    a, b = _intra_pairs_beyond(pos, unit_of, cutoff)
    if len(a):
        v = pos[b] - pos[a]
        rr = np.linalg.norm(v, axis=1)
        qf = COULOMB * q[a] * q[b]
        gf = 2 * alpha / np.sqrt(np.pi) * np.exp(-((alpha * rr) ** 2))
        ef = erfc(alpha * rr)
        energy -= float(np.sum(qf * (1 - ef) / rr) / 2)
        # Ewald pair minus bare pair = -(erf part); only the smooth part remains to remove
        d1f = qf * (-(1 - ef) / rr**2 + gf / rr)
        d2f = qf * (2 * (1 - ef) / rr**3 - 2 * gf / rr**2 - 2 * alpha**2 * gf)
        parts.append((a, b, v, -d1f, -d2f))
    pi, pj, pv, p1, p2 = (np.concatenate(x) for x in zip(*parts, strict=True))
    grad = pair_gradient(n, pi, pv, p1)
    rows, cols, blocks = pair_blocks(n, pi, pv, p1, p2, pj)
    fc = np.zeros((n, 3, n, 3))
    fc[rows, :, cols, :] = blocks
    del rows, cols, blocks, parts, pi, pj, pv, p1, p2, i, j, shift, vec, r, qq, g, ec, d1, d2
    # ---- reciprocal space, G != 0 (half of the G vectors: G and -G give the same terms)
    gv, w = _reciprocal_vectors(lattice, alpha)
    diag = np.zeros((n, 3, 3))
    for start in range(0, len(gv), _G_CHUNK):
        gc, wc = gv[start : start + _G_CHUNK], 2 * w[start : start + _G_CHUNK]
        phase = pos @ gc.T  # (n, nG)
        c = q[:, None] * np.cos(phase)
        s = q[:, None] * np.sin(phase)
        sc, ss = c.sum(axis=0), s.sum(axis=0)
        energy += float(np.sum(wc * (sc**2 + ss**2)) / 2)
        # dE/dr_i = sum_G w q_i (S cos(G r_i) - C sin(G r_i)) G, S and C the sums over all charges
        grad += ((c * ss[None] - s * sc[None]) * wc) @ gc
        # q_i q_j sum_G w G_a G_b cos(G.(r_i - r_j)) for every pair, as one product per (a, b)
        cs = np.concatenate([c, s], axis=1)
        for a in range(3):
            for b in range(a, 3):
                wab = np.tile(wc * gc[:, a] * gc[:, b], 2)
                block = (cs * wab) @ cs.T
                rows = block.sum(axis=1) - np.diag(block)
                np.fill_diagonal(block, 0.0)
                fc[:, a, :, b] += block
                diag[:, a, b] -= rows
                if b != a:
                    fc[:, b, :, a] += block
                    diag[:, b, a] -= rows
    every = np.arange(n)
    fc[every, :, every, :] += diag
    return fc.reshape(3 * n, 3 * n), grad, energy


#: G vectors handled at once in the reciprocal sum (bounds the (n, nG) temporaries)
_G_CHUNK = 2048


def half_sphere(lattice: np.ndarray, gmax: float) -> np.ndarray:
    """Indices hkl of one of each pair +-G of reciprocal vectors with |G| <= ``gmax`` (1/angstrom),
    the half whose first nonzero index is positive; G = hkl @ (2 pi lattice^-T)."""
    recip = 2 * np.pi * np.linalg.inv(lattice).T
    m = np.ceil(gmax / np.linalg.norm(recip, axis=1)).astype(int)
    h, k, l = np.meshgrid(*(np.arange(-mm, mm + 1) for mm in m), indexing="ij")
    hkl = np.stack([h.ravel(), k.ravel(), l.ravel()], axis=1)
    first = np.where(hkl[:, 0] != 0, hkl[:, 0], np.where(hkl[:, 1] != 0, hkl[:, 1], hkl[:, 2]))
    hkl = hkl[first > 0]
    g = hkl @ recip
    return hkl[np.einsum("ij,ij->i", g, g) <= gmax**2]


def _reciprocal_vectors(lattice: np.ndarray, alpha: float) -> tuple[np.ndarray, np.ndarray]:
    """One of each pair +-G of reciprocal vectors inside the Ewald sphere, and their weights (eV angstrom)."""
    volume = abs(np.linalg.det(lattice))
    gv = half_sphere(lattice, 2 * alpha * REACH) @ (2 * np.pi * np.linalg.inv(lattice).T)
    g2 = np.einsum("ij,ij->i", gv, gv)
    w = 4 * np.pi * COULOMB / volume * np.exp(-g2 / (4 * alpha**2)) / g2
    return gv, w


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

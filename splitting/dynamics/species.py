"""Eigenvectors of the dynamical matrix by factor-group species, and what each line comes from.

The 3n-dimensional displacement space of the primitive cell carries the representation
``Gamma(g) u_{p(i)} = R_g u_i`` of the factor group (p the atom permutation of the cell
operation g, modulo lattice translations).  For every species the projector
``P = (d / |F|) sum_g chi(g) Gamma(g)`` (d the dimension of one irreducible component,
chi the real character of the physical species) picks out its subspace; the dynamical
matrix is diagonalised inside each subspace, so every line carries its species by
construction.  The dimension of each subspace is checked against the engine's whole-cell
count Gamma_3N.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from functools import lru_cache

import numpy as np

from ..errors import BookkeepingError
from .constants import WAVENUMBER, ZERO_CM1
from .freemodes import rigid_basis

__all__ = ["SpeciesBasis", "SpeciesBlock", "atom_permutations", "origin_weights", "species_bases", "split_by_species"]


@dataclass(frozen=True, eq=False)
class SpeciesBlock:
    """The lines of one factor-group species.

    Attributes
    ----------
    label : str
    dimension : int
        Degeneracy of each line.
    wavenumbers : numpy.ndarray
        One value per distinct line (cm-1; negative = imaginary).
    vectors : list of numpy.ndarray
        Orthonormal mass-weighted eigenvectors (3n, dimension) of each line.
    """

    label: str
    dimension: int
    wavenumbers: np.ndarray = field(repr=False)
    vectors: list[np.ndarray] = field(repr=False)


def atom_permutations(cell, positions: np.ndarray) -> np.ndarray:
    """``perm[k, i]``: the atom onto which cell operation k moves atom i (modulo the lattice)."""
    inv = np.linalg.inv(cell.lattice)
    frac = positions @ inv
    out = np.zeros((len(cell.rotations), len(positions)), dtype=int)
    for k in range(len(cell.rotations)):
        img = cell.apply(k, positions) @ inv
        d = img[:, None, :] - frac[None, :, :]
        d -= np.round(d)
        dist = np.linalg.norm(d @ cell.lattice, axis=2)
        j = np.argmin(dist, axis=1)
        if np.max(dist[np.arange(len(j)), j]) > 0.05 or len(set(j.tolist())) != len(j):
            raise BookkeepingError(f"cell operation {k} does not permute the atoms")
        out[k] = j
    return out


def _gamma(perm: np.ndarray, rot: np.ndarray) -> np.ndarray:
    n = len(perm)
    g = np.zeros((n, 3, n, 3))
    g[perm, :, np.arange(n), :] = rot[None]
    return g.reshape(3 * n, 3 * n)


@dataclass(frozen=True, eq=False)
class SpeciesBasis:
    """Orthonormal basis (3n, count * dimension) of the displacements of one factor-group species."""

    label: str
    dimension: int
    count: int
    basis: np.ndarray = field(repr=False)


def species_bases(cell, factor, perms: np.ndarray, gamma_3n) -> list[SpeciesBasis]:
    """The displacement subspace of every factor-group species (independent of the force constants).

    The rank of each projector is its trace (exact for a projector) and is checked against
    the engine's whole-cell count; the subspace is spanned by the projector applied to a
    fixed random block of that many columns, orthonormalised (cost ~ (3n)^2 per species,
    instead of diagonalising the (3n, 3n) projector).
    """
    group = factor.oriented.group
    chars = group.characters_at_operations()  # (species, order)
    gammas = [_gamma(perms[k], cell.rotations[k]) for k in range(len(cell.rotations))]
    order = len(gammas)
    rng = np.random.default_rng(20240611)
    out = []
    for s_idx, sp in enumerate(group.species):
        dim_phys = round(chars[s_idx][0])
        d_irrep = dim_phys / len(sp.irreps)
        chi = chars[s_idx][factor.index]  # at each cell operation
        proj = sum(c * g for c, g in zip(chi, gammas, strict=True)) * (d_irrep / order)
        proj = (proj + proj.T) / 2
        rank = round(float(np.trace(proj)))
        expected = gamma_3n[sp.label] * dim_phys
        if rank != expected:
            raise BookkeepingError(
                f"{sp.label}: the displacements give {rank} dimensions, the whole-cell count {expected}"
            )
        if not expected:
            continue
        q, _ = np.linalg.qr(proj @ rng.standard_normal((len(proj), expected)))
        q, _ = np.linalg.qr(proj @ q)  # once more through the projector: clean to rounding
        if np.max(np.abs(proj @ q - q)) > 1e-8:
            raise BookkeepingError(f"{sp.label}: the species subspace is not invariant")
        out.append(SpeciesBasis(sp.label, dim_phys, expected // dim_phys, q))
    return out


def split_by_species(dmat: np.ndarray, cell, factor, perms: np.ndarray, gamma_3n, bases=None) -> list[SpeciesBlock]:
    """Diagonalise ``dmat`` species by species of the factor group (``bases`` from :func:`species_bases`)."""
    if bases is None:
        bases = species_bases(cell, factor, perms, gamma_3n)
    blocks = []
    for b in bases:
        lam, v = np.linalg.eigh(b.basis.T @ dmat @ b.basis)
        full = b.basis @ v
        wn, vecs = [], []
        for k in range(b.count):
            sl = slice(k * b.dimension, (k + 1) * b.dimension)
            mean = float(np.mean(lam[sl]))
            wn.append(np.sign(mean) * WAVENUMBER * np.sqrt(abs(mean)))
            vecs.append(full[:, sl])
        blocks.append(SpeciesBlock(b.label, b.dimension, np.array(wn), vecs))
    return blocks


@lru_cache(maxsize=4)
def _unit_context(model) -> tuple:
    """Per unit, what :func:`origin_weights` projects on (computed once per cell model).

    For every unit: its orbit, its columns in the 3n space, the normalised translations and
    the rigid-body basis (None for one atom) on those columns, and the stacked free-mode
    vectors on those columns with the slice of each mode.  Plus the uniform translation
    of the whole cell.
    """
    n = len(model.masses)
    units = []
    for u in range(int(model.unit_of.max()) + 1):
        idx = np.flatnonzero(model.unit_of == u)
        cols = (3 * idx[:, None] + np.arange(3)[None, :]).ravel()
        sq = np.sqrt(model.masses[idx])
        t = np.zeros((len(cols), 3))
        for k in range(3):
            t[k::3, k] = sq
        t /= np.linalg.norm(t, axis=0)
        rb = rigid_basis(model.positions[idx], model.masses[idx]) if len(idx) > 1 else None
        placed = model.unit_modes.get(u, []) if len(idx) > 1 else []
        stacked = np.hstack([vec[cols] for _, vec in placed]) if placed else np.zeros((len(cols), 0))
        slices, start = [], 0
        for mode, vec in placed:
            slices.append((mode, start, start + vec.shape[1]))
            start += vec.shape[1]
        units.append((model.orbit_of_unit[u], cols, t, rb, stacked, tuple(slices)))
    uniform = np.zeros((3 * n, 3))
    for k in range(3):
        uniform[k::3, k] = np.sqrt(model.masses)
    uniform /= np.linalg.norm(uniform, axis=0)
    return tuple(units), uniform


def origin_weights(model, vectors: np.ndarray) -> dict[str, object]:
    """Share of a line's (mass-weighted) eigenvectors in translations, librations and internal modes.

    Returns a dict with ``translational``, ``librational``, ``internal`` (fractions adding to 1),
    ``acoustic`` (overlap with a uniform translation of the whole cell), ``orbit`` (the orbit
    carrying most of the motion) and ``band`` (``(orbit, FreeMode, weight)`` of the free
    fundamental carrying most of the internal part, or None).
    """
    d = vectors.shape[1]
    trans = lib = 0.0
    per_orbit: dict[int, float] = {}
    bands: dict[tuple[int, str], list] = {}
    units, uniform = _unit_context(model)
    for o, cols, t, rb, stacked, slices in units:
        part = vectors[cols]
        total = float(np.sum(part**2)) / d
        per_orbit[o] = per_orbit.get(o, 0.0) + total
        wt = float(np.sum((t.T @ part) ** 2)) / d
        trans += wt
        if rb is not None:
            wr = float(np.sum((rb.T @ part) ** 2)) / d - wt
            lib += max(wr, 0.0)
            if slices:
                over = np.sum((stacked.T @ part) ** 2, axis=1) / d
                for mode, a, b in slices:
                    key = (o, mode.name)
                    if key not in bands:
                        bands[key] = [o, mode, 0.0]
                    bands[key][2] += float(np.sum(over[a:b]))
    acoustic = float(np.sum((uniform.T @ vectors) ** 2)) / d
    best = max(bands.values(), key=lambda b: b[2]) if bands else None
    return {
        "translational": trans,
        "librational": lib,
        "internal": max(0.0, 1.0 - trans - lib),
        "acoustic": acoustic,
        "orbit": max(per_orbit, key=per_orbit.get),
        "band": tuple(best) if best else None,
    }


def is_zero(wavenumber: float) -> bool:
    """True for |wavenumber| below the zero threshold (cm-1)."""
    return abs(wavenumber) < ZERO_CM1

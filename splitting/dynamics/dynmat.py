"""The k = 0 dynamical matrix of the primitive cell: free-unit blocks plus the atom-atom part.

Each unit of an orbit gets the Hessian of the orbit's first unit, carried onto it by the
cell operation that maps one onto the other (``H_u[pi(a), pi(b)] = R H_0[a, b] R^T``), with
the rigid-body motions of the unit *as it sits in the crystal* projected out (the free
Hessian was computed at the relaxed geometry, whose rigid motions differ slightly; without
the projection the intramolecular block would put a spurious stiffness on librations).
The intermolecular part (exp-6, and Ewald for charges) is added, and the sum is mass
weighted: ``D = M^-1/2 Phi M^-1/2``.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np

from ..errors import InputError
from .constants import WAVENUMBER
from .coulomb import coulomb_terms
from .freemodes import FreeMode, free_modes, rigid_basis
from .freeunit import FreeHessian, free_hessian
from .potential import ParameterSet, exp6_force_constants
from .sites import ChargeSites

__all__ = ["CellModel", "build_cell_model", "dynamical_matrix", "ion_charge"]

Progress = Callable[[str], None]

#: formal charges of single-atom ions (common practice)
_ION_CHARGES = {
    **{e: 1 for e in ("Li", "Na", "K", "Rb", "Cs", "Ag", "Tl")},
    **{e: 2 for e in ("Be", "Mg", "Ca", "Sr", "Ba", "Zn", "Cd", "Pb")},
    **{e: -1 for e in ("F", "Cl", "Br", "I")},
    **{e: 3 for e in ("Al", "La", "Y")},
}


def ion_charge(formula: str, kind: str, given: dict[str, int]) -> int:
    """Charge of a unit: given on the command line, else the bundled mode table, else 0 (ions: formal)."""
    if formula in given:
        return given[formula]
    if kind == "atom":
        return _ION_CHARGES.get(formula, 0)
    from ..errors import SplittingError
    from ..spectra.catalogue import find_table

    try:
        return int(find_table(formula).charge)
    except SplittingError:
        return 0


@dataclass(frozen=True, eq=False)
class CellModel:
    """Everything of the cell that does not depend on the intermolecular parameter set.

    Attributes
    ----------
    positions : numpy.ndarray, shape (n, 3)
        Atom positions (angstrom), each unit whole (unwrapped), primitive-cell order.
    masses : numpy.ndarray, shape (n,)
    symbols : tuple of str
    unit_of : numpy.ndarray, shape (n,)
        Index of the unit of every atom.
    orbit_of_unit : tuple of int
    intra : numpy.ndarray, shape (3n, 3n)
        Mass-weighted intramolecular block-diagonal part, eV/(angstrom^2 amu).
    charges : numpy.ndarray, shape (n,)
        Tight-binding partial charges (e); formal charges for single-atom ions.
    free : dict
        ``orbit index -> FreeHessian`` for molecular orbits.
    modes : dict
        ``orbit index -> tuple of FreeMode`` in the frame of the orbit's first unit.
    unit_modes : dict
        ``unit index -> list of (FreeMode, vectors in the whole cell's 3n space)``.
    scaled : bool
        True when free fundamentals were scaled to the measured values.
    sites : ChargeSites or None
        Point charges on sites off the atoms (:mod:`splitting.dynamics.sites`); None for
        the charges on the atoms (``charges``).
    """

    lattice: np.ndarray = field(repr=False)
    positions: np.ndarray = field(repr=False)
    masses: np.ndarray = field(repr=False)
    symbols: tuple[str, ...]
    unit_of: np.ndarray = field(repr=False)
    orbit_of_unit: tuple[int, ...]
    intra: np.ndarray = field(repr=False)
    charges: np.ndarray = field(repr=False)
    free: dict[int, FreeHessian] = field(repr=False)
    modes: dict[int, tuple[FreeMode, ...]] = field(repr=False)
    unit_modes: dict[int, list[tuple[FreeMode, np.ndarray]]] = field(repr=False)
    scaled: bool = False
    sites: ChargeSites | None = field(default=None, repr=False)


def _atom_map(cell, h: int, src: np.ndarray, dst: np.ndarray) -> np.ndarray:
    """For every atom of ``src`` (positions), the atom of ``dst`` onto which cell operation h moves it."""
    inv = np.linalg.inv(cell.lattice)
    img = cell.apply(h, src) @ inv
    d = img[:, None, :] - (dst @ inv)[None, :, :]
    d -= np.round(d)
    dist = np.linalg.norm(d @ cell.lattice, axis=2)
    out = np.argmin(dist, axis=1)
    if np.max(dist[np.arange(len(src)), out]) > 0.05 or len(set(out.tolist())) != len(out):
        raise InputError("the atoms of two equivalent units do not match; try a different --tolerance")
    return out


def build_cell_model(
    cell,
    units,
    orbits,
    *,
    unit_tolerance: float,
    charges_given: dict[str, int],
    cache=None,
    scale_to_measured: bool = False,
    progress: Progress | None = None,
    turns: dict[int, tuple[np.ndarray, np.ndarray]] | None = None,
) -> CellModel:
    """Free-unit Hessians of every orbit, carried onto every unit of the cell.

    ``turns`` (from :func:`splitting.dynamics.relax.relax_structure`) maps an orbit to the
    positions of its first unit as given and the rotation carrying them onto the unit as it
    sits now: the free-unit Hessian is that of the unit as given (cached), turned.
    """
    from ase.data import atomic_masses, chemical_symbols

    n = len(cell.numbers)
    positions = np.zeros((n, 3))
    unit_of = np.zeros(n, dtype=int)
    for k, u in enumerate(units):
        if u.kind == "framework":
            raise InputError(
                f"unit {u.formula} is part of an extended framework; the model needs molecules or ions "
                "(name the molecular units with --units, or give bond cut-offs with --bond)"
            )
        positions[list(u.atoms)] = u.positions
        unit_of[list(u.atoms)] = k
    numbers = np.asarray(cell.numbers)
    masses = atomic_masses[numbers]
    symbols = tuple(chemical_symbols[z] for z in numbers)
    intra = np.zeros((3 * n, 3 * n))
    charges = np.zeros(n)
    orbit_of_unit = [0] * len(units)
    free: dict[int, FreeHessian] = {}
    modes: dict[int, tuple[FreeMode, ...]] = {}
    unit_modes: dict[int, list] = {}
    for o, orbit in enumerate(orbits):
        u0 = units[orbit[0][0]]
        for k, _ in orbit:
            orbit_of_unit[k] = o
        q_formal = ion_charge(u0.formula, u0.kind, charges_given)
        if len(u0.atoms) == 1:
            for k, _ in orbit:
                charges[list(units[k].atoms)] = q_formal
            continue
        if progress:
            progress(f"{u0.formula}: free-unit Hessian ({len(u0.atoms)} atoms, charge {q_formal:+d})")
        reference, turn = (turns or {}).get(o, (u0.positions, np.eye(3)))
        fh = free_hessian(
            u0.formula,
            u0.numbers,
            reference,
            charge=q_formal,
            tolerance=unit_tolerance,
            cache=cache,
            progress=progress,
        )
        if progress and fh.from_cache:
            progress(f"{u0.formula}: free-unit Hessian read from the cache")
        free[o] = fh
        m0 = atomic_masses[u0.numbers]
        w0 = np.repeat(1 / np.sqrt(m0), 3)
        d0 = fh.hessian * np.outer(w0, w0)
        p0 = rigid_basis(fh.positions, m0)
        proj = np.eye(len(d0)) - p0 @ p0.T
        d0 = proj @ d0 @ proj
        fm = free_modes(d0, m0, fh.symmetry, u0.formula)
        if scale_to_measured:
            for mode in fm:
                if mode.measured_cm1 and mode.wavenumber_cm1 > 0:
                    lam_old = (mode.wavenumber_cm1 / WAVENUMBER) ** 2
                    lam_new = (mode.measured_cm1 / WAVENUMBER) ** 2
                    d0 = d0 + (lam_new - lam_old) * mode.vectors @ mode.vectors.T
            fm = free_modes(d0, m0, fh.symmetry, u0.formula)
        modes[o] = fm
        for k, h in orbit:
            u = units[k]
            amap = _atom_map(cell, h, u0.positions, u.positions)
            r = cell.rotations[h] @ turn
            rot = np.kron(np.eye(len(amap)), r)
            du = rot @ d0 @ rot.T  # in u0's atom order, rotated
            idx = np.array(u.atoms)[amap]  # cell index of every u0 atom's image
            pu = rigid_basis(positions[idx], masses[idx])
            proj = np.eye(len(du)) - pu @ pu.T
            du = proj @ du @ proj
            cols = (3 * idx[:, None] + np.arange(3)[None, :]).ravel()
            intra[np.ix_(cols, cols)] += du
            charges[idx] = fh.charges
            placed = []
            carry = proj @ rot  # once per unit: onto the unit as it sits, rigid motions removed
            for mode in fm:
                v = np.zeros((3 * n, mode.dimension))
                v[cols], _ = np.linalg.qr(carry @ mode.vectors)  # nonzero on the unit's columns only
                placed.append((mode, v))
            unit_modes[k] = placed
    return CellModel(
        np.asarray(cell.lattice, dtype=float),
        positions,
        masses,
        symbols,
        unit_of,
        tuple(orbit_of_unit),
        intra,
        charges,
        free,
        modes,
        unit_modes,
        scale_to_measured,
    )


def dynamical_matrix(
    model: CellModel, params: ParameterSet, *, cutoff: float, use_charges: bool, coulomb: str = "ewald"
) -> tuple[np.ndarray, float]:
    """Mass-weighted k = 0 dynamical matrix (eV/(angstrom^2 amu)) and the exp-6 lattice energy per cell (eV).

    At a structure that is not a minimum of the model the intermolecular forces do not
    vanish; a rigid rotation theta of a unit then also moves its atoms to second order,
    ``1/2 theta x (theta x r)``, against those forces.  That term,
    ``K = sum_i [(F_i . r_i) 1 - (F_i r_i^T + r_i F_i^T) / 2]`` for each unit (r_i from its
    centre of mass), is added in the rotational subspace of each unit (the rigid-molecule
    treatment of lattice dynamics; common practice).

    The intermolecular terms are built as sparse matrices (time and memory linear in the
    number of atoms), except the reciprocal part of the Ewald sum (``coulomb="ewald"``),
    which is dense; the matrix returned is dense (3n, 3n).
    """
    fc, grad, energy = exp6_force_constants(
        model.lattice, model.positions, model.symbols, model.unit_of, params, cutoff=cutoff, sparse=True
    )
    w = np.repeat(1 / np.sqrt(model.masses), 3)
    d = model.intra.copy()
    sites = model.sites
    if use_charges and (sites is not None or np.any(np.abs(model.charges) > 1e-6)):
        if sites is None:
            pos, q, unit_of = model.positions, model.charges, model.unit_of
        else:
            pos, q, unit_of = sites.positions(model.positions), sites.charges, sites.unit_of
        fq, gq, _ = coulomb_terms(model.lattice, pos, q, unit_of, cutoff=cutoff, method=coulomb)
        if sites is not None:  # from the sites onto the atoms they follow (exact: a linear map)
            fq, gq = sites.atom_force_constants(fq), sites.atom_gradient(gq)
        grad = grad + gq
        if isinstance(fq, np.ndarray):
            d += fq * np.outer(w, w)
        else:
            fc = fc + fq
    _add_sparse(d, fc + _rotation_term(model, -grad), w)
    d += d.T
    d /= 2
    return d, energy


def _add_sparse(d: np.ndarray, fc, w: np.ndarray) -> None:
    """Add the mass-weighted sparse force constants ``fc`` to the dense matrix ``d`` in place."""
    coo = fc.tocoo()
    coo.sum_duplicates()
    d[coo.row, coo.col] += coo.data * w[coo.row] * w[coo.col]


def _rotation_term(model: CellModel, forces: np.ndarray):
    """Force constants (3n, 3n, sparse) of the second-order rigid-rotation term of every molecular unit."""
    from scipy.sparse import coo_matrix

    n = len(model.masses)
    rows, cols, data = [], [], []
    for u in range(int(model.unit_of.max()) + 1):
        idx = np.flatnonzero(model.unit_of == u)
        if len(idx) < 2:
            continue
        m = model.masses[idx]
        r = model.positions[idx] - m @ model.positions[idx] / m.sum()
        f = forces[idx]
        k = np.sum(f * r) * np.eye(3) - (f.T @ r + r.T @ f) / 2
        # displacement u = theta x r  ->  theta = Rplus u (mass-weighted least squares)
        rot = np.stack([np.cross(np.eye(3)[c], r).ravel() for c in range(3)], axis=1)  # (3n_u, 3)
        mw = np.repeat(m, 3)
        gram = rot.T @ (mw[:, None] * rot)
        rplus = np.linalg.pinv(gram, rcond=1e-8) @ (rot.T * mw[None, :])
        c = (3 * idx[:, None] + np.arange(3)[None, :]).ravel()
        rr, cc = np.meshgrid(c, c, indexing="ij")
        rows.append(rr.ravel())
        cols.append(cc.ravel())
        data.append((rplus.T @ k @ rplus).ravel())
    if not rows:
        return coo_matrix((3 * n, 3 * n))
    return coo_matrix((np.concatenate(data), (np.concatenate(rows), np.concatenate(cols))), shape=(3 * n, 3 * n))

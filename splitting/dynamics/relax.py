"""Relaxing the lattice within its space group: rigid units (and optionally the cell) at the model's minimum.

The model's lattice energy (the atom-atom sum (exp-6 or Lennard-Jones) and the point charges between units,
the same terms as the dynamical matrix) is minimised over the degrees of freedom the space
group leaves free, with the units kept rigid (their internal geometry as given):

* the centre of the first unit of every orbit moves only inside the subspace its site
  group leaves fixed (``(1/|S|) sum_s R_s``), its orientation turns only about axes the
  site group leaves fixed (axial vectors, ``(1/|S|) sum_s det(R_s) R_s``; the axis of a
  linear unit is dropped, a turn about it moves nothing);
* optionally the cell: a symmetric strain that commutes with every rotation of the factor
  group (the lattice system's free parameters: one for a cubic cell, four for a monoclinic
  one), so the cell keeps its metric symmetry and no rigid rotation of the crystal enters;
* every other unit of an orbit is rebuilt from the first by the cell operation that
  carries one onto the other, ``x -> R x + t`` (t strained with the cell), so the relaxed
  structure has the space group of the engine exactly; no symmetry search of its own.

This is the usual route of rigid-molecule lattice dynamics (compute the frequencies at the
minimum of the potential used for them; e.g. D. E. Williams, Acta Cryst. A30, 71 (1974),
from memory).  The atom-atom terms are shifted to zero at the cut-off for the minimisation
(no jumps when a pair crosses it; the force constants are unchanged); the Coulomb energy is
the Ewald sum without the G = 0 term, as for the force constants.  The minimiser is
L-BFGS-B with central-difference gradients, inside bounds: a minimum on a bound is a
runaway and is refused.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, replace

import numpy as np
from scipy.special import erf, erfc

from ..errors import InputError
from .constants import COULOMB
from .ewald import REACH, half_sphere
from .potential import ParameterSet, neighbour_pairs, pair_terms

__all__ = ["Relaxation", "lattice_energy", "relax_structure"]

Progress = Callable[[str], None]

#: bounds of the minimiser: strain component, rotation (radians per axis), centre shift (angstrom)
MAX_STRAIN = 0.15
MAX_TURN = 0.6
MAX_SHIFT = 1.5
#: a relaxation larger than these is reported with a warning
WARN_CELL_PERCENT = 5.0
WARN_TURN_DEGREES = 10.0
WARN_SHIFT = 0.3
#: the minimiser works in steps of this size (strain, radians, angstrom): its first trial
#: step is one such unit, small enough not to jump into the collapse of the exp-6 form
_SCALE = 0.01
#: central-difference step (in units of _SCALE)
_STEP = 1e-3


@dataclass(frozen=True)
class Relaxation:
    """How far the lattice moved to the model's minimum within its space group.

    Attributes
    ----------
    cell : bool
        True when the cell parameters were relaxed too.
    degrees_of_freedom : int
        Parameters the space group leaves free (shifts, turns, strains).
    energy_before_ev, energy_after_ev : float
        Model lattice energy per primitive cell (eV) as given and relaxed.
    length_change_percent : tuple of float
        Change of the cell lengths a, b, c (per cent; the axes of the file's cell).
    angle_change_degrees : tuple of float
        Change of the cell angles alpha, beta, gamma (degrees).
    volume_change_percent : float
    largest_turn_degrees : float
        Largest rotation of a unit (degrees).
    largest_shift_angstrom : float
        Largest displacement of a unit's centre, the strain of the cell left out (angstrom).
    iterations : int
        Minimiser iterations.
    residual : float
        Largest remaining derivative of the energy (eV per unit of each parameter: per
        angstrom, per radian, per unit strain).
    """

    cell: bool
    degrees_of_freedom: int
    energy_before_ev: float
    energy_after_ev: float
    length_change_percent: tuple[float, float, float]
    angle_change_degrees: tuple[float, float, float]
    volume_change_percent: float
    largest_turn_degrees: float
    largest_shift_angstrom: float
    iterations: int
    residual: float

    @property
    def summary(self) -> str:
        """One line: what moved and by how much."""
        what = "units and cell" if self.cell else "units (cell kept)"
        text = (
            f"relaxed within the space group ({what}, {self.degrees_of_freedom} free parameter(s)): "
            f"energy {self.energy_before_ev:.4f} -> {self.energy_after_ev:.4f} eV per cell"
        )
        if self.cell:
            lengths = "/".join(f"{x:+.2f}" for x in self.length_change_percent)
            text += f", cell lengths {lengths} %, volume {self.volume_change_percent:+.2f} %"
        return text + (
            f", largest turn {self.largest_turn_degrees:.2f} deg, largest shift {self.largest_shift_angstrom:.3f} Å"
        )

    def to_dict(self) -> dict[str, object]:
        """JSON-ready form."""
        return {
            "cell": self.cell,
            "degrees_of_freedom": self.degrees_of_freedom,
            "energy_before_ev": round(self.energy_before_ev, 5),
            "energy_after_ev": round(self.energy_after_ev, 5),
            "length_change_percent": [round(x, 3) for x in self.length_change_percent],
            "angle_change_degrees": [round(x, 3) for x in self.angle_change_degrees],
            "volume_change_percent": round(self.volume_change_percent, 3),
            "largest_turn_degrees": round(self.largest_turn_degrees, 3),
            "largest_shift_angstrom": round(self.largest_shift_angstrom, 4),
            "iterations": self.iterations,
            "residual": float(f"{self.residual:.3g}"),
        }


# ----------------------------------------------------------------------------- the energy
class _Energy:
    """Model lattice energy per cell (eV) between rigid units: atom-atom terms shifted at the cut-off, plus Ewald.

    With ``sites`` (:class:`splitting.dynamics.sites.ChargeSites`) the point charges sit on
    the sites, which follow the atoms, instead of on the atoms.
    """

    def __init__(
        self, lattice, positions, symbols, unit_of, charges, params: ParameterSet, *, cutoff, use_charges, sites=None
    ):
        self.unit_of = np.asarray(unit_of)
        self.sites = sites
        if sites is not None:
            charges = sites.charges
        self.cutoff = float(cutoff)
        elements = sorted(set(symbols))
        self.code = np.array([elements.index(s) for s in symbols])
        self.table = np.array([[params.pair(a, b) for b in elements] for a in elements])
        flat = self.table.reshape(-1, 4)
        self.shift = pair_terms(flat, np.full(len(flat), self.cutoff))[0].reshape(self.table.shape[:2])
        # the exp-6 form has a spurious maximum at short range and falls to -infinity inside
        # it; a pair inside the maximum means the structure collapsed (the minimiser backs off)
        self.collapse = np.array([[_hump(p) for p in row] for row in self.table])
        self.q = np.asarray(charges, dtype=float) if use_charges else None
        if self.q is not None and not np.any(np.abs(self.q) > 1e-6):
            self.q = None
        self.alpha = REACH / cutoff
        if self.q is not None:
            # a fixed set of G, chosen at the start with room to spare: smooth under strain
            self.hkl = half_sphere(lattice, 2 * self.alpha * REACH * 1.15)
            # pairs inside one unit (all of them, whatever their distance): their erf part is removed
            ia, ib = [], []
            self.q_unit = self.unit_of if sites is None else np.asarray(sites.unit_of)
            for u in np.unique(self.q_unit):
                idx = np.flatnonzero(self.q_unit == u)
                a_, b_ = np.triu_indices(len(idx), 1)
                ia.append(idx[a_])
                ib.append(idx[b_])
            self.intra = (np.concatenate(ia), np.concatenate(ib))

    def __call__(self, lattice: np.ndarray, pos: np.ndarray) -> float:
        i, j, shift = neighbour_pairs(lattice, pos, self.cutoff)
        inter = ~((self.unit_of[i] == self.unit_of[j]) & np.all(shift == 0, axis=1))
        i, j, shift = i[inter], j[inter], shift[inter]
        r = np.linalg.norm(pos[j] + shift @ lattice - pos[i], axis=1)
        ci, cj = self.code[i], self.code[j]
        if np.any(r < self.collapse[ci, cj]):
            return _COLLAPSED
        e6 = pair_terms(self.table[ci, cj], r)[0] - self.shift[ci, cj]
        energy = float(np.sum(e6) / 2)
        if self.q is None:
            return energy
        q, alpha = self.q, self.alpha
        if self.sites is not None:  # the charges' own pairs, on the sites
            pos = self.sites.positions(pos)
            i, j, shift = neighbour_pairs(lattice, pos, self.cutoff)
            inter = ~((self.q_unit[i] == self.q_unit[j]) & np.all(shift == 0, axis=1))
            i, j, shift = i[inter], j[inter], shift[inter]
            r = np.linalg.norm(pos[j] + shift @ lattice - pos[i], axis=1)
        energy += COULOMB * float(np.sum(q[i] * q[j] * erfc(alpha * r) / r)) / 2
        a, b = self.intra
        if len(a):
            rr = np.linalg.norm(pos[b] - pos[a], axis=1)
            energy -= COULOMB * float(np.sum(q[a] * q[b] * erf(alpha * rr) / rr))
        energy -= COULOMB * alpha / np.sqrt(np.pi) * float(q @ q)
        volume = abs(np.linalg.det(lattice))
        g = self.hkl @ (2 * np.pi * np.linalg.inv(lattice).T)
        g2 = np.einsum("ij,ij->i", g, g)
        phase = pos @ g.T
        s2 = (q @ np.cos(phase)) ** 2 + (q @ np.sin(phase)) ** 2
        # the half set of G counts each +-G pair once: 2 * (2 pi / V) = 4 pi / V
        energy += COULOMB * 4 * np.pi / volume * float(np.sum(np.exp(-g2 / (4 * alpha**2)) / g2 * s2))
        return energy


#: energy (eV) returned for a collapsed structure
_COLLAPSED = 1e6


def _hump(abcd: np.ndarray) -> float:
    """Distance (angstrom) of the short-range maximum of a pair function (exp-6), 10 % padded; 0 if none."""
    from scipy.optimize import brentq

    row = np.asarray(abcd, dtype=float)[None, :]

    def slope(r: float) -> float:
        return float(pair_terms(row, np.array([r]))[1][0])

    lo, hi = 0.05, 1.0
    while slope(hi) > 0 and hi < 5:  # beyond the hump the force is repulsive (slope < 0)
        hi += 0.5
    if slope(lo) < 0 or slope(hi) > 0:
        return 0.0
    return 1.1 * brentq(slope, lo, hi)


def lattice_energy(
    lattice,
    positions,
    symbols,
    unit_of,
    charges,
    params: ParameterSet,
    *,
    cutoff: float,
    use_charges: bool = True,
    sites=None,
) -> float:
    """Model lattice energy per cell (eV) between units: atom-atom terms (shifted to zero at the cut-off) plus Ewald.

    Examples
    --------
    Two neon-like carbon atoms far apart in a big cell attract weakly:

    >>> import numpy as np
    >>> from splitting.dynamics.potential import WILLIAMS
    >>> e = lattice_energy(np.eye(3) * 30, np.array([[0, 0, 0], [4.0, 0, 0]]), ["C", "C"], np.array([0, 1]),
    ...                    np.zeros(2), WILLIAMS, cutoff=12.0)
    >>> bool(-0.01 < e < 0)
    True
    """
    fn = _Energy(
        lattice, positions, symbols, unit_of, charges, params, cutoff=cutoff, use_charges=use_charges, sites=sites
    )
    return fn(np.asarray(lattice, dtype=float), np.asarray(positions, dtype=float))


# ----------------------------------------------------------------------------- the free parameters
def _fixed_basis(mats: list[np.ndarray]) -> np.ndarray:
    """Orthonormal basis (columns) of the vectors every matrix of a group leaves fixed."""
    avg = np.mean(mats, axis=0)
    w, v = np.linalg.eigh((avg + avg.T) / 2)
    return v[:, w > 0.5]


def _strain_basis(rotations: np.ndarray) -> list[np.ndarray]:
    """Orthonormal symmetric strains that commute with every rotation (the lattice system's free parameters)."""
    basis = []
    for a in range(3):
        for b in range(a, 3):
            e = np.zeros((3, 3))
            e[a, b] = e[b, a] = 1.0
            basis.append(e.ravel())
    sym = np.array(basis).T  # (9, 6)
    avg = np.mean([np.kron(r, r) for r in rotations], axis=0)  # vec(R E R^T) = (R kron R) vec(E)
    proj = avg @ sym
    u, s, _ = np.linalg.svd(proj, full_matrices=False)
    return [u[:, k].reshape(3, 3) for k in range(len(s)) if s[k] > 1e-6]


def _turn(omega: np.ndarray) -> np.ndarray:
    """Rotation matrix of the rotation vector omega (radians), Rodrigues' formula."""
    theta = float(np.linalg.norm(omega))
    k = np.array([[0, -omega[2], omega[1]], [omega[2], 0, -omega[0]], [-omega[1], omega[0], 0]])
    if theta < 1e-12:
        return np.eye(3) + k
    k /= theta
    return np.eye(3) + np.sin(theta) * k + (1 - np.cos(theta)) * (k @ k)


@dataclass
class _Orbit:
    first: int  # unit index
    centre: np.ndarray  # mass centre of the first unit as given
    local: np.ndarray  # first unit's atoms about the centre, as given
    shift_basis: np.ndarray  # (3, ks)
    turn_basis: np.ndarray  # (3, kt)
    members: list  # (atom indices of unit k in the order of the first unit's atoms, op, lattice shifts (n, 3))


def _orbit_data(cell, units, orbits) -> list[_Orbit]:
    from ase.data import atomic_masses

    from ..crystal.predict import _site_ops
    from .dynmat import _atom_map

    inv = np.linalg.inv(cell.lattice)
    out = []
    for orbit in orbits:
        u0 = units[orbit[0][0]]
        m = atomic_masses[u0.numbers]
        c0 = m @ u0.positions / m.sum()
        site = _site_ops(cell, c0)
        shift_basis = _fixed_basis([cell.rotations[s] for s in site])
        if len(u0.atoms) > 1:
            turn_basis = _fixed_basis([np.linalg.det(cell.rotations[s]) * cell.rotations[s] for s in site])
            local = u0.positions - c0
            inertia = (m[:, None] * local).T @ local
            w, v = np.linalg.eigh(inertia)
            if w[-1] > 0 and w[-2] / w[-1] < 1e-3:  # linear unit: the axis turns nothing
                axis = v[:, -1]
                turn_basis = turn_basis - np.outer(axis, axis @ turn_basis)
                uu, ss, _ = np.linalg.svd(turn_basis, full_matrices=False)
                turn_basis = uu[:, ss > 1e-6]
        else:
            turn_basis = np.zeros((3, 0))
        members = []
        for k, h in orbit:
            u = units[k]
            amap = _atom_map(cell, h, u0.positions, u.positions)
            idx = np.array(u.atoms)[amap]
            target = u.positions[amap]
            lat_shift = np.round((target - cell.apply(h, u0.positions)) @ inv).astype(int)
            members.append((idx, h, lat_shift))
        out.append(_Orbit(orbit[0][0], c0, u0.positions - c0, shift_basis, turn_basis, members))
    return out


class _Structure:
    """Positions and lattice as functions of the free parameters x (zero = as given)."""

    def __init__(self, cell, units, orbits, n_atoms: int, with_cell: bool):
        self.cell = cell
        self.orbits = _orbit_data(cell, units, orbits)
        self.strains = _strain_basis(cell.rotations) if with_cell else []
        self.n = n_atoms
        self.kinds: list[str] = []
        for o in self.orbits:
            self.kinds += ["shift"] * o.shift_basis.shape[1] + ["turn"] * o.turn_basis.shape[1]
        self.kinds += ["strain"] * len(self.strains)

    @property
    def size(self) -> int:
        return len(self.kinds)

    def split(self, x: np.ndarray):
        at = 0
        parts = []
        for o in self.orbits:
            ks, kt = o.shift_basis.shape[1], o.turn_basis.shape[1]
            parts.append((o.shift_basis @ x[at : at + ks], o.turn_basis @ x[at + ks : at + ks + kt]))
            at += ks + kt
        strain = sum((s * v for s, v in zip(self.strains, x[at:], strict=True)), np.zeros((3, 3)))
        return parts, strain

    def build(self, x: np.ndarray) -> tuple[np.ndarray, np.ndarray, list[np.ndarray]]:
        """Lattice (rows), positions (n, 3) and the turn of every orbit's first unit."""
        parts, strain = self.split(x)
        s = np.eye(3) + strain
        lattice = self.cell.lattice @ s
        pos = np.zeros((self.n, 3))
        turns = []
        for o, (d, w) in zip(self.orbits, parts, strict=True):
            q = _turn(w)
            turns.append(q)
            first = (o.centre + d) @ s + o.local @ q.T
            for idx, h, lat_shift in o.members:
                r = self.cell.rotations[h]
                t = self.cell.translations[h] @ s
                pos[idx] = first @ r.T + t + lat_shift @ lattice
        return lattice, pos, turns


def relax_structure(
    cell,
    units,
    orbits,
    model,
    params: ParameterSet,
    *,
    cutoff: float,
    use_charges: bool,
    with_cell: bool = False,
    progress: Progress | None = None,
):
    """Minimise the model's lattice energy within the space group; the relaxed cell, units and turns.

    Parameters
    ----------
    cell : CellSymmetry
        The engine's cell (its operations are kept).
    units, orbits
        The units of the cell and their orbits (unit index, operation) as the engine found them.
    model : CellModel
        The cell model as given (charges, symbols, which unit every atom belongs to).
    params : ParameterSet
    cutoff : float
    use_charges : bool
    with_cell : bool
        Relax the cell parameters too (within the lattice system).

    Returns
    -------
    cell : CellSymmetry
        The relaxed cell, with the same operations (translations strained with the cell).
    units : tuple of Unit
        The relaxed units, same atoms in the same order.
    turns : dict
        ``orbit index -> (positions of its first unit as given, rotation onto the relaxed unit)``,
        for :func:`splitting.dynamics.dynmat.build_cell_model`.
    relaxation : Relaxation
    """
    from scipy.optimize import minimize

    structure = _Structure(cell, units, orbits, len(model.masses), with_cell)
    energy = _Energy(
        cell.lattice,
        model.positions,
        model.symbols,
        model.unit_of,
        model.charges,
        params,
        cutoff=cutoff,
        use_charges=use_charges,
        sites=model.sites,
    )

    def fun(x: np.ndarray) -> float:
        return energy(*structure.build(x * _SCALE)[:2])

    def grad(x: np.ndarray) -> np.ndarray:
        g = np.zeros_like(x)
        for k in range(len(x)):
            e = np.zeros_like(x)
            e[k] = _STEP
            g[k] = (fun(x + e) - fun(x - e)) / (2 * _STEP)
        return g

    x0 = np.zeros(structure.size)
    e0 = fun(x0)
    limit = {"shift": MAX_SHIFT, "turn": MAX_TURN, "strain": MAX_STRAIN}
    bounds = [(-limit[k] / _SCALE, limit[k] / _SCALE) for k in structure.kinds]
    if progress:
        progress(f"relaxing within the space group: {structure.size} free parameter(s)")
    if structure.size:
        res = minimize(
            fun,
            x0,
            jac=grad,
            method="L-BFGS-B",
            bounds=bounds,
            options={"maxiter": 300, "gtol": 1e-8, "ftol": 1e-15},
        )
        x, iterations = res.x, int(res.nit)
    else:
        x, iterations = x0, 0
    residual = float(np.max(np.abs(grad(x)))) / _SCALE if structure.size else 0.0
    e1 = fun(x)
    x = x * _SCALE
    bound = [abs(abs(v) - limit[k]) < 1e-6 * limit[k] for v, k in zip(x, structure.kinds, strict=True)]
    if e1 >= _COLLAPSED:  # pragma: no cover - the start is never collapsed, and the minimiser only descends
        bound = [True]
    if any(bound):
        kind = structure.kinds[bound.index(True)]
        what = {"shift": "a unit moved", "turn": "a unit turned", "strain": "the cell changed"}[kind]
        raise InputError(
            f"the relaxation within the space group ran away ({what} to the limit of "
            f"{limit[kind]:g} {'A' if kind == 'shift' else 'rad' if kind == 'turn' else 'strain'}): the structure "
            f"is far from any minimum of the {params.label}; check the structure or try another "
            "--potential or --charges"
        )
    lattice, pos, turns = structure.build(x)
    relaxation = _summary(cell, structure, x, lattice, turns, e0, e1, iterations, residual, with_cell)
    if progress:
        progress(relaxation.summary)
    new_cell = _cell_at(cell, lattice, pos, structure.split(x)[1])
    new_units = tuple(replace(u, positions=pos[list(u.atoms)]) for u in units)
    reference = {o: (units[orbit[0][0]].positions, q) for o, (orbit, q) in enumerate(zip(orbits, turns, strict=True))}
    return new_cell, new_units, reference, relaxation


def _cell_at(cell, lattice: np.ndarray, pos: np.ndarray, strain: np.ndarray):
    """The engine's cell with strained lattice and translations and the new positions (operations kept)."""
    s = np.eye(3) + strain
    frac = pos @ np.linalg.inv(lattice)
    frac -= np.floor(frac + 1e-9)
    return replace(
        cell,
        lattice=lattice,
        frac=frac,
        translations=cell.translations @ s,
        conventional=cell.conventional @ s,
        given_lattice=None if cell.given_lattice is None else cell.given_lattice @ s,
    )


def _angles(rows: np.ndarray) -> np.ndarray:
    a, b, c = rows
    cos = [b @ c / np.linalg.norm(b) / np.linalg.norm(c), a @ c / np.linalg.norm(a) / np.linalg.norm(c)]
    cos.append(a @ b / np.linalg.norm(a) / np.linalg.norm(b))
    return np.degrees(np.arccos(np.clip(cos, -1, 1)))


def _summary(cell, structure, x, lattice, turns, e0, e1, iterations, residual, with_cell) -> Relaxation:
    parts, strain = structure.split(x)
    before = cell.label_basis
    after = before @ (np.eye(3) + strain)
    lengths = (np.linalg.norm(after, axis=1) / np.linalg.norm(before, axis=1) - 1) * 100
    angles = _angles(after) - _angles(before)
    volume = (abs(np.linalg.det(lattice)) / abs(np.linalg.det(cell.lattice)) - 1) * 100
    turn = max((np.degrees(np.arccos(np.clip((np.trace(q) - 1) / 2, -1, 1))) for q in turns), default=0.0)
    shift = max((float(np.linalg.norm(d)) for d, _ in parts), default=0.0)
    return Relaxation(
        cell=with_cell,
        degrees_of_freedom=structure.size,
        energy_before_ev=float(e0),
        energy_after_ev=float(e1),
        length_change_percent=tuple(float(v) for v in lengths),
        angle_change_degrees=tuple(float(v) for v in angles),
        volume_change_percent=float(volume),
        largest_turn_degrees=float(turn),
        largest_shift_angstrom=shift,
        iterations=iterations,
        residual=residual,
    )


def warnings_of(relaxation: Relaxation) -> list[str]:
    """Warnings for a relaxation that moved the structure far (it may not describe the measured crystal)."""
    out = []
    if relaxation.cell and max(abs(v) for v in relaxation.length_change_percent) > WARN_CELL_PERCENT:
        out.append(
            f"the relaxed cell differs from the given one by more than {WARN_CELL_PERCENT:g} % in a length: "
            "the model's minimum is far from the measured structure"
        )
    if relaxation.largest_turn_degrees > WARN_TURN_DEGREES:
        out.append(
            f"a unit turned by {relaxation.largest_turn_degrees:.0f} degrees in the relaxation: the model's "
            "minimum is far from the measured orientation"
        )
    if relaxation.largest_shift_angstrom > WARN_SHIFT:
        out.append(
            f"a unit moved by {relaxation.largest_shift_angstrom:.2f} Å in the relaxation: the model's minimum "
            "is far from the measured structure"
        )
    return out

"""Hessian of a free unit from GFN2-xTB, reduced by the unit's own symmetry, cached on disk.

The tight-binding model is GFN2-xTB (C. Bannwarth, S. Ehlert and S. Grimme, J. Chem. Theory
Comput. 15, 1652 (2019)) through the ``tblite`` package, which works in bohr and hartree;
everything returned here is in angstrom, eV and amu.

Route:

1. the point group of the unit and its operations come from
   :func:`splitting.molecule.symmetry.find_symmetry` (the engine's search, never a second one);
2. the geometry is relaxed with gradients averaged over the group, so it stays in the group;
3. only one atom of each set of symmetry-equivalent atoms is displaced (central differences);
   the columns of the other atoms are rebuilt from the operations,
   ``H[p(i), p(a)] = R H[i, a] R^T``; C60 needs the displacements of one atom.
"""

from __future__ import annotations

import functools
import hashlib
import io
import os
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from ..errors import DataError, InputError
from ..molecule.symmetry import MoleculeSymmetry, find_symmetry
from .constants import BOHR, HARTREE

__all__ = ["METHOD", "FreeHessian", "free_hessian"]

#: the tight-binding method used for every free unit
METHOD = "GFN2-xTB"
#: finite-difference step (angstrom)
STEP = 0.005
#: largest residual gradient after relaxation (eV/angstrom)
GRADIENT_TOLERANCE = 2e-4
_CACHE_VERSION = "1"

Progress = Callable[[str], None]


@dataclass(frozen=True, eq=False)
class FreeHessian:
    """The relaxed free unit and its Cartesian Hessian.

    Attributes
    ----------
    formula : str
    numbers : numpy.ndarray, shape (n,)
    positions : numpy.ndarray, shape (n, 3)
        Relaxed positions (angstrom) about the centre of mass, in the frame of the unit as given.
    hessian : numpy.ndarray, shape (3n, 3n)
        Second derivatives of the energy (eV/angstrom^2) at ``positions``.
    charges : numpy.ndarray, shape (n,)
        Atomic partial charges (e) of the tight-binding calculation.
    charge : int
        Total charge of the unit (e).
    energy : float
        Energy at the relaxed geometry (eV).
    displaced_atoms : int
        Atoms actually displaced (one per set of equivalent atoms).
    method : str
    from_cache : bool
    symmetry : MoleculeSymmetry
        The engine's symmetry of the unit (operations and atom permutations).
    """

    formula: str
    numbers: np.ndarray = field(repr=False)
    positions: np.ndarray = field(repr=False)
    hessian: np.ndarray = field(repr=False)
    charges: np.ndarray = field(repr=False)
    charge: int
    energy: float
    displaced_atoms: int
    method: str = METHOD
    from_cache: bool = False
    symmetry: MoleculeSymmetry | None = field(default=None, repr=False)


class _Engine:
    """One tblite calculator reused for every geometry of a unit."""

    def __init__(self, formula: str, numbers: np.ndarray, positions: np.ndarray, charge: int) -> None:
        # tblite runs OpenMP threads; on a shared machine their start-up costs seconds for a
        # unit that needs milliseconds.  One thread unless the user says otherwise (read when
        # the library is first loaded).
        os.environ.setdefault("OMP_NUM_THREADS", "1")
        from tblite.interface import Calculator

        self.formula = formula
        self.calls = 0
        try:
            self.calc = Calculator(METHOD, np.asarray(numbers), positions / BOHR, charge=float(charge))
            self.calc.set("verbosity", 0)
            self.calc.set("accuracy", 0.01)
        except Exception:  # tblite raises plain exceptions
            raise InputError(
                f"unit {formula}: the tight-binding model cannot be set up for it (an element the model does not "
                "cover, a charge it cannot hold, or atoms on top of each other)"
            ) from None

    def __call__(self, positions: np.ndarray) -> tuple[float, np.ndarray, np.ndarray]:
        """Energy (eV), gradient (eV/angstrom) and charges at ``positions`` (angstrom)."""
        self.calls += 1
        try:
            self.calc.update(positions / BOHR)
            res = self.calc.singlepoint()
        except Exception:
            raise InputError(
                f"unit {self.formula}: the tight-binding calculation did not converge; "
                "check the unit's charge and geometry (bond cut-offs, missing hydrogen atoms)"
            ) from None
        return (
            float(res.get("energy")) * HARTREE,
            np.asarray(res.get("gradient")) * HARTREE / BOHR,
            np.asarray(res.get("charges"), dtype=float),
        )


def _symmetriser(sym: MoleculeSymmetry) -> Callable[[np.ndarray], np.ndarray]:
    """Average a vector field on the atoms (gradient, displacement) over the free group."""
    if sym.linear:
        axis = sym.group.frame[:, 2]
        sets = sym.equivalent_sets()

        def linear(v: np.ndarray) -> np.ndarray:
            out = np.outer(v @ axis, axis)
            for s in sets:
                if len(s) == 2:  # inversion partners: v_j = -v_i
                    i, j = s
                    avg = (out[i] - out[j]) / 2
                    out[i], out[j] = avg, -avg
            return out

        return linear
    ops, perms = sym.operations, sym.permutations

    def finite(v: np.ndarray) -> np.ndarray:
        out = np.zeros_like(v)
        for r, p in zip(ops, perms, strict=True):
            out += v[p] @ r  # R^T v_{p(i)}
        return out / len(ops)

    return finite


def _relax(engine: _Engine, start: np.ndarray, sym: MoleculeSymmetry, progress: Progress | None) -> np.ndarray:
    """Relax within the free group (gradients symmetrised)."""
    from scipy.optimize import minimize

    symmetrise = _symmetriser(sym)
    shape = start.shape

    def fun(x: np.ndarray) -> tuple[float, np.ndarray]:
        e, g, _ = engine(x.reshape(shape))
        return e, symmetrise(g).ravel()

    res = minimize(
        fun,
        start.ravel(),
        jac=True,
        method="L-BFGS-B",
        options={"gtol": GRADIENT_TOLERANCE / 4, "ftol": 1e-16, "maxiter": 500},
    )
    pos = res.x.reshape(shape)
    _, g, _ = engine(pos)
    worst = float(np.max(np.abs(symmetrise(g))))
    if worst > 10 * GRADIENT_TOLERANCE:
        raise InputError(
            f"unit {engine.formula}: relaxation of the free unit stopped with a gradient of {worst:.2g} eV/Å; "
            "check its geometry and charge"
        )
    if progress:
        progress(f"{engine.formula}: relaxed in {engine.calls} tight-binding calls")
    return pos


def _hessian(engine: _Engine, pos: np.ndarray, sym: MoleculeSymmetry, progress: Progress | None) -> tuple:
    """Central-difference Hessian with one displaced atom per set of equivalent atoms."""
    n = len(pos)
    hess = np.zeros((n, 3, n, 3))
    done = np.zeros(n, dtype=bool)
    sets = [list(range(n))] if sym.linear else sym.equivalent_sets()
    if sym.linear:
        sets = [[i] for i in range(n)]
    for s in sets:
        a = s[0]
        for c in range(3):
            plus = pos.copy()
            plus[a, c] += STEP
            minus = pos.copy()
            minus[a, c] -= STEP
            gp = engine(plus)[1]
            gm = engine(minus)[1]
            hess[:, :, a, c] = (gp - gm) / (2 * STEP)
        done[a] = True
        for b in s[1:]:
            g = int(np.flatnonzero(sym.permutations[:, a] == b)[0])
            r, p = sym.operations[g], sym.permutations[g]
            # H[p(i), b] = R H[i, a] R^T
            hess[p, :, b, :] = np.einsum("kl,ilm,nm->ikn", r, hess[:, :, a, :], r)
            done[b] = True
        if progress:
            progress(f"{engine.formula}: displaced atom {a + 1} ({len(s)} equivalent)")
    if not np.all(done):  # pragma: no cover - the sets cover every atom
        raise DataError("the equivalent-atom sets do not cover the unit")
    h = hess.reshape(3 * n, 3 * n)
    return (h + h.T) / 2, len(sets)


@functools.lru_cache(maxsize=1)
def _engine_version() -> str:
    """The installed tblite's version: a cached Hessian is reused only with the engine that made it."""
    from importlib.metadata import PackageNotFoundError, version

    try:
        return version("tblite")
    except PackageNotFoundError:  # pragma: no cover - tblite is a dependency
        return "unknown"


def _key(formula: str, numbers: np.ndarray, positions: np.ndarray, charge: int) -> str:
    text = f"{_CACHE_VERSION}|{METHOD}|tblite {_engine_version()}|{STEP}|{charge}|{formula}|{list(map(int, numbers))}|"
    text += ",".join(f"{x:.4f}" for x in np.round(positions, 4).ravel() + 0.0)
    return hashlib.sha256(text.encode()).hexdigest()[:24]


def free_hessian(
    formula: str,
    numbers,
    positions,
    *,
    charge: int = 0,
    tolerance: float = 0.25,
    cache: str | os.PathLike[str] | None = None,
    progress: Progress | None = None,
) -> FreeHessian:
    """Relax a free unit within its point group and compute its Hessian (GFN2-xTB).

    Parameters
    ----------
    formula : str
        Name used in messages.
    numbers : array_like of int
    positions : array_like, shape (n, 3)
        Cartesian positions (angstrom), e.g. the unit as found in the crystal.
    charge : int
        Total charge of the unit.
    tolerance : float
        Free-unit symmetry tolerance (angstrom).
    cache : path, optional
        Folder for cached results (one ``.npz`` file per unit, named by a hash of
        method, tblite version, charge and geometry).
    progress : callable, optional
        Called with one line of text per step.

    Examples
    --------
    >>> import numpy as np
    >>> h = free_hessian("N2", [7, 7], [[0, 0, 0.55], [0, 0, -0.55]])
    >>> h.hessian.shape, h.displaced_atoms
    ((6, 6), 2)
    """
    numbers = np.asarray(numbers, dtype=int)
    pos_in = np.asarray(positions, dtype=float).reshape(-1, 3)
    sym = find_symmetry(numbers, pos_in, tolerance=tolerance)
    start = sym.symmetric_positions
    key = _key(formula, numbers, start, charge)
    path = Path(cache) / f"{key}.npz" if cache is not None else None
    if path is not None and path.is_file():
        try:
            with np.load(path) as data:
                return FreeHessian(
                    formula,
                    numbers,
                    data["positions"],
                    data["hessian"],
                    data["charges"],
                    charge,
                    float(data["energy"]),
                    int(data["displaced"]),
                    from_cache=True,
                    symmetry=sym,
                )
        except (OSError, KeyError, ValueError):
            pass  # an unreadable cache entry is recomputed and rewritten
    engine = _Engine(formula, numbers, start, charge)
    pos = _relax(engine, start, sym, progress)
    energy, _, charges = engine(pos)
    hess, displaced = _hessian(engine, pos, sym, progress)
    out = FreeHessian(formula, numbers, pos, hess, charges, charge, energy, displaced, symmetry=sym)
    if path is not None:
        from .._io import atomic_write_bytes

        if not path.parent.is_dir():
            raise InputError(f"cache folder {path.parent} does not exist")
        buf = io.BytesIO()
        np.savez(buf, positions=pos, hessian=hess, charges=charges, energy=energy, displaced=displaced)
        atomic_write_bytes(path, buf.getvalue())
    return out

"""Normal modes of a free unit, labelled by the species of its free group and named nu_i.

Species come from the characters of each degenerate set of eigenvectors under the unit's
own operations (the engine's :class:`~splitting.molecule.symmetry.MoleculeSymmetry`).
Names follow the bundled mode table of the unit when it has one (matched species by
species in order of decreasing wavenumber); otherwise the modes are numbered in the
order of the character table and, within a species, of decreasing wavenumber
(G. Herzberg's convention, common practice).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ..errors import BookkeepingError, SplittingError
from .constants import WAVENUMBER, ZERO_CM1

__all__ = ["FreeMode", "free_modes", "rigid_basis"]


@dataclass(frozen=True, eq=False)
class FreeMode:
    """One fundamental of a free unit (all its degenerate components).

    Attributes
    ----------
    name : str
        ``"nu1"``, ``"nu2"`` ...
    species : str
        Species of the free group.
    wavenumber_cm1 : float
        Computed wavenumber (cm-1).
    measured_cm1 : float or None
        Value of the bundled mode table, when the unit has one.
    vectors : numpy.ndarray, shape (3n, d)
        Orthonormal mass-weighted eigenvectors in the frame of the unit as given.
    """

    name: str
    species: str
    wavenumber_cm1: float
    measured_cm1: float | None
    vectors: np.ndarray = field(repr=False)

    @property
    def dimension(self) -> int:
        """Degeneracy."""
        return self.vectors.shape[1]


def rigid_basis(positions: np.ndarray, masses: np.ndarray) -> np.ndarray:
    """Orthonormal mass-weighted rigid-body motions (3n, 5 or 6) of atoms at ``positions``.

    Examples
    --------
    >>> import numpy as np
    >>> rigid_basis(np.array([[0, 0, 1.0], [0, 0, -1.0]]), np.array([14.0, 14.0])).shape
    (6, 5)
    """
    sq = np.sqrt(np.asarray(masses, dtype=float))
    com = masses @ positions / masses.sum()
    r = positions - com
    vecs = []
    for k in range(3):
        e = np.zeros(3)
        e[k] = 1.0
        vecs.append((sq[:, None] * np.broadcast_to(e, r.shape)).ravel())
        vecs.append((sq[:, None] * np.cross(e, r)).ravel())
    u, s, _ = np.linalg.svd(np.array(vecs).T, full_matrices=False)
    return u[:, s > 1e-6 * s.max()]


def _species_of(chars: np.ndarray, group, sym) -> str:
    """Name the species whose characters at the unit's operations are ``chars``."""
    table = group.characters_at_operations()
    for k, s in enumerate(group.species):
        if np.allclose(table[k], chars, atol=0.2):
            return s.label
    raise BookkeepingError(f"a normal mode of the free unit is no species of {group.name}")


def _linear_species(vecs: np.ndarray, sym) -> str:
    axis = sym.group.frame[:, 2]
    n = vecs.shape[0] // 3
    along = np.sum((vecs.reshape(n, 3, -1) * axis[None, :, None]).sum(axis=1) ** 2)
    sigma = along > 0.5 * vecs.shape[1]
    letter = "Σ" if sigma else "Π"
    if not sym.group.group.centrosymmetric:
        return "Σ+" if sigma else "Π"
    # parity under inversion: atom i -> partner, u -> -u
    perm = np.arange(n)
    for s in sym.equivalent_sets():
        if len(s) == 2:
            perm[s[0]], perm[s[1]] = s[1], s[0]
    inv = -vecs.reshape(n, 3, -1)[perm].reshape(3 * n, -1)
    parity = np.trace(vecs.T @ inv)
    return letter + ("g" if parity > 0 else "u") + ("+" if sigma else "")


def free_modes(dmat: np.ndarray, masses: np.ndarray, sym, formula: str) -> tuple[FreeMode, ...]:
    """Fundamentals of a free unit from its mass-weighted Hessian (rigid motions projected out).

    Parameters
    ----------
    dmat : numpy.ndarray, shape (3n, 3n)
        Mass-weighted Hessian, eV/(angstrom^2 amu), with the rigid-body motions projected out.
    masses : numpy.ndarray, shape (n,)
    sym : MoleculeSymmetry
        The unit's symmetry (positions about its centre).
    formula : str
    """
    n = len(masses)
    lam, vec = np.linalg.eigh(dmat)
    keep = np.sqrt(np.abs(lam)) * WAVENUMBER > ZERO_CM1
    rigid = rigid_basis(sym.symmetric_positions, masses)
    overlap = np.sum((rigid.T @ vec) ** 2, axis=0)
    keep &= overlap < 0.5
    lam, vec = lam[keep], vec[:, keep]
    wn = np.sign(lam) * WAVENUMBER * np.sqrt(np.abs(lam))
    # degenerate sets
    groups: list[list[int]] = []
    for k in range(len(wn)):
        if groups and abs(wn[k] - wn[groups[-1][0]]) < max(0.05, 1e-4 * abs(wn[k])):
            groups[-1].append(k)
        else:
            groups.append([k])
    modes = []
    for g in groups:
        v = vec[:, g]
        if sym.linear:
            label = _linear_species(v, sym)
        else:
            chars = []
            for r, p in zip(sym.operations, sym.permutations, strict=True):
                moved = np.zeros_like(v.reshape(n, 3, -1))
                moved[p] = np.einsum("kl,ilc->ikc", r, v.reshape(n, 3, -1))
                chars.append(np.trace(v.T @ moved.reshape(3 * n, -1)))
            label = _species_of(np.array(chars), sym.group.group, sym)
        modes.append((label, float(np.mean(wn[g])), v))
    return _name(modes, sym, formula)


def _name(modes, sym, formula: str) -> tuple[FreeMode, ...]:
    measured: dict[int, tuple[str, float]] = {}
    try:
        from ..spectra.catalogue import find_table

        table = find_table(formula)
    except SplittingError:
        table = None
    if table is not None:
        for label in {m[0] for m in modes}:
            mine = sorted((k for k, m in enumerate(modes) if m[0] == label), key=lambda k: -modes[k][1])
            theirs = sorted((t for t in table.modes if t.species == label), key=lambda t: -t.wavenumber_cm1)
            if len(mine) != len(theirs):
                table = None
                break
            for k, t in zip(mine, theirs, strict=True):
                measured[k] = (t.name, t.wavenumber_cm1)
    if table is None:
        measured = {}
        order = list(sym.group.group.labels) if not sym.linear else ["Σg+", "Σ+", "Σu+", "Πg", "Π", "Πu"]
        ranked = sorted(
            range(len(modes)), key=lambda k: (order.index(modes[k][0]) if modes[k][0] in order else 99, -modes[k][1])
        )
        names = {k: f"nu{i + 1}" for i, k in enumerate(ranked)}
    else:
        names = {k: measured[k][0] for k in range(len(modes))}
    out = [
        FreeMode(names[k], lab, wn, measured[k][1] if k in measured else None, v)
        for k, (lab, wn, v) in enumerate(modes)
    ]
    return tuple(sorted(out, key=lambda m: m.wavenumber_cm1))

"""Isotopomers of a free unit at natural abundance: classes, shares, symmetry and shifts.

A unit with rare isotopes on some of its atoms is an *isotopologue*; the different ways
of placing them that no symmetry operation of the free unit relates are *isotopomers*.
They are the orbits of atom sets under the free group, found here from the permutations
of the atoms by the group's operations.

For each class :func:`isotopomers` reports

* ``count``: the orbit size (number of equivalent placements);
* ``abundance``: the share of all units that carry exactly this placement class of the
  element, ``count * p**k * p0**(n - k)`` (``p`` the natural fraction of the rare
  isotope, ``p0`` that of the most abundant one, ``n`` atoms of the element in the
  unit, ``k`` substituted); the isotopes of the other elements are not constrained
  (a binomial over the atoms of that element only; with three or more isotopes the
  other atoms are all taken as the most abundant one);
* ``point_group``: the stabiliser of the substituted atom set in the free group, named
  by :func:`splitting.groups.identify`;
* ``mass_shift``: a first-order **estimate** of the relative wavenumber shift
  ``delta nu / nu`` for each vibrational species of the free group (see below).

The shift estimate (crude; no force field)
------------------------------------------
First-order perturbation of the mass-weighted eigenvalue problem gives, for one mode
with mass-weighted eigenvector ``e``,
``delta nu / nu = -(1/2) * sum_a (delta m_a / m_a) * |e_a|**2`` over the substituted
atoms ``a`` (E. B. Wilson, J. C. Decius and P. C. Cross, *Molecular Vibrations* (1955),
perturbation of the secular equation; common practice). Without eigenvectors the weight
``|e_a|**2`` is estimated from symmetry alone: the vibrational subspace of a species
(the species projector times the projector that removes the mass-weighted translations
and rotations) is shared **equally** among the fundamentals of that species, so the
weight of atom ``a`` in one band (averaged over degenerate partners) is
``trace_a(P_sigma P_vib) / trace(P_sigma P_vib)``. This is exact when a species has one
fundamental (for example the A2'' out-of-plane mode of a planar XY3 unit) and is zero,
exactly, for every species in which the substituted atom cannot move (a centre atom in a
totally symmetric mode). For species with several fundamentals it is only an estimate:
it can be off by a factor of two or more. A shift read from a mode table, when one is
given, should always be preferred.

Examples
--------
>>> import numpy as np
>>> r = 1.56
>>> sf6 = [[0, 0, 0], [r, 0, 0], [-r, 0, 0], [0, r, 0], [0, -r, 0], [0, 0, r], [0, 0, -r]]
>>> classes = isotopomers(["S"] + ["F"] * 6, np.array(sf6, float), element="S")
>>> [(c.substitution or c.isotope, round(c.abundance, 4), c.point_group) for c in classes]
[('32S', 0.9499, 'Oh'), ('33S', 0.0075, 'Oh'), ('34S', 0.0425, 'Oh'), ('36S', 0.0001, 'Oh')]
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from itertools import combinations
from typing import Any

import numpy as np

from ..errors import DataError, InputError, SymmetryError
from .isotope_data import Isotope, isotopes, most_abundant

__all__ = ["MAX_SUBSETS", "Isotopomer", "isotopomers"]

#: Largest number of atom sets enumerated for one element and one number of substitutions.
MAX_SUBSETS = 200_000

# Species of D8h / C8v that stand for the species of D∞h / C∞v (|m| <= 3; enough for
# vibrations, which are Σ and Π only). z is Σu+ in D∞h and A2u in D8h (characters:
# +1 under σv, -1 under C2' and i), so A2u -> Σu+ and A1u -> Σu-.
_LINEAR_PROXY = {
    "D∞h": (
        "D8h",
        {
            "A1g": "Σg+",
            "A2g": "Σg-",
            "E1g": "Πg",
            "E2g": "Δg",
            "E3g": "Φg",
            "A1u": "Σu-",
            "A2u": "Σu+",
            "E1u": "Πu",
            "E2u": "Δu",
            "E3u": "Φu",
        },
    ),
    "C∞v": ("C8v", {"A1": "Σ+", "A2": "Σ-", "E1": "Π", "E2": "Δ", "E3": "Φ"}),
}


@dataclass(frozen=True)
class Isotopomer:
    """One class of isotopically substituted units (an orbit of atom sets).

    Attributes
    ----------
    element : str
        Element whose isotopes vary, e.g. ``"C"``.
    isotope : str
        The isotope placed on ``atoms``, e.g. ``"13C"``; for the parent (no
        substitution) the most abundant isotope, e.g. ``"12C"``.
    substitution : str
        ``"13C"`` (one atom), ``"13C2"`` (two atoms), or ``""`` for the parent unit in
        which every atom of the element is the most abundant isotope.
    atoms : tuple of int
        Indices (into the unit's atoms) of one representative substituted set; empty
        for the parent.
    count : int
        Number of equivalent sets: the orbit size under the free group.
    abundance : float
        Fraction (0 to 1) of all units that belong to this class at natural abundance
        (binomial over the atoms of ``element``; see the module docstring).
    point_group : str
        Schoenflies symbol of the substituted unit (stabiliser of ``atoms``).
    mass_shift : dict of str to float
        Estimated relative shift ``delta nu / nu`` (dimensionless, <= 0 for a heavier
        isotope) of a fundamental of each vibrational species of the free group. An
        **estimate** from symmetry alone (module docstring); 0 for the parent.
    """

    element: str
    isotope: str
    substitution: str
    atoms: tuple[int, ...]
    count: int
    abundance: float
    point_group: str
    mass_shift: dict[str, float] = field(default_factory=dict)

    @property
    def parent(self) -> bool:
        """True for the unit with no rare isotope of ``element``."""
        return not self.atoms

    def shift_cm1(self, species: str, wavenumber_cm1: float) -> float:
        """Estimated shift (cm-1) of a fundamental of ``species`` at ``wavenumber_cm1``.

        Raises
        ------
        InputError
            If ``species`` is not a vibrational species of the free group.
        """
        if species not in self.mass_shift:
            known = ", ".join(self.mass_shift) or "none"
            raise InputError(f"{species!r} is not a vibrational species of the unit (species: {known})")
        return self.mass_shift[species] * float(wavenumber_cm1)

    def to_dict(self) -> dict[str, Any]:
        """Plain, JSON-ready dictionary of the fields."""
        return {
            "element": self.element,
            "isotope": self.isotope,
            "substitution": self.substitution,
            "atoms": list(self.atoms),
            "count": self.count,
            "abundance": self.abundance,
            "point_group": self.point_group,
            "mass_shift": {k: round(v, 8) for k, v in self.mass_shift.items()},
            "mass_shift_is_estimate": True,
        }


# --------------------------------------------------------------------------- symmetry


@dataclass(frozen=True, eq=False)
class _Frame:
    """Operations, permutations and species projectors of one free unit."""

    name: str  # free group (D∞h / C∞v for linear units)
    ops: np.ndarray  # (n, 3, 3), finite (proxy group for linear units)
    perms: np.ndarray  # (n, N)
    positions: np.ndarray  # (N, 3) relative to the centre
    species: tuple[tuple[str, float, np.ndarray], ...]  # (label, projector factor, characters per op)
    linear: bool


def _permutations(ops: np.ndarray, pos: np.ndarray, numbers: np.ndarray, tol: float) -> np.ndarray:
    perms = np.empty((len(ops), len(pos)), dtype=int)
    for g, r in enumerate(ops):
        moved = pos @ r.T
        d = np.linalg.norm(moved[:, None, :] - pos[None, :, :], axis=2)
        j = np.argmin(d, axis=1)
        if np.max(d[np.arange(len(pos)), j]) > tol or np.any(numbers[j] != numbers) or len(set(j.tolist())) != len(j):
            raise InputError(f"operation {g} of the given group does not map the unit onto itself within {tol} Å")
        perms[g] = j
    return perms


def _frame(symbols: Sequence[str], positions: np.ndarray, operations: np.ndarray | None) -> _Frame:
    from ase.data import atomic_numbers

    from ..groups import identify, oriented, point_group
    from ..molecule.symmetry import DEFAULT_TOLERANCE, find_symmetry

    try:
        numbers = np.array([atomic_numbers[s] for s in symbols], dtype=int)
    except KeyError as exc:
        raise InputError(f"unknown element symbol {exc.args[0]!r}") from None
    pos = np.asarray(positions, dtype=float).reshape(-1, 3)
    if len(pos) != len(numbers):
        raise InputError(f"{len(numbers)} symbols but {len(pos)} positions")
    if operations is None:
        sym = find_symmetry(numbers, pos)
        centred = sym.symmetric_positions
        if sym.linear:
            proxy, _ = _LINEAR_PROXY[sym.group.name]
            og = oriented(proxy, sym.group.frame)
            ops = np.asarray(og.operations)
            perms = _permutations(ops, centred, numbers, 1e-3)
            return _finish(sym.group.name, ops, perms, centred, point_group(proxy), linear=True)
        return _finish(
            sym.group.name,
            np.asarray(sym.operations),
            np.asarray(sym.permutations),
            centred,
            sym.group.group,
            linear=False,
        )
    ops = np.asarray(operations, dtype=float)
    if ops.ndim != 3 or ops.shape[1:] != (3, 3) or len(ops) == 0:
        raise InputError("operations must be an array of shape (n, 3, 3)")
    try:
        og = identify(ops)
    except SymmetryError as exc:
        raise InputError(f"the given operations are not a point group: {exc}") from None
    aligned = np.asarray(og.operations)
    perms = _permutations(aligned, pos, numbers, DEFAULT_TOLERANCE)
    return _finish(og.name, aligned, perms, pos, og.group, linear=False)


def _finish(name: str, ops: np.ndarray, perms: np.ndarray, pos: np.ndarray, group, *, linear: bool) -> _Frame:
    chars = group.characters_at_operations()
    relabel = _LINEAR_PROXY[name][1] if linear else None
    species = []
    for k, s in enumerate(group.species):
        label = relabel.get(s.label, s.label) if relabel else s.label
        species.append((label, s.dimension / len(s.irreps), chars[k]))
    return _Frame(name, ops, perms, pos, tuple(species), linear)


def _stabiliser_name(frame: _Frame, atoms: tuple[int, ...]) -> str:
    from ..groups import identify

    if not atoms:
        return frame.name
    target = sorted(atoms)
    keep = [g for g in range(len(frame.ops)) if sorted(frame.perms[g, list(atoms)].tolist()) == target]
    if frame.linear:
        inversion = any(np.allclose(frame.ops[g], -np.eye(3), atol=1e-6) for g in keep)
        return "D∞h" if inversion else "C∞v"
    return identify(frame.ops[keep]).name


def _vibrational_weights(frame: _Frame, masses: np.ndarray) -> dict[str, np.ndarray]:
    """Per species: the weight of every atom in one fundamental (equal-share estimate)."""
    pos = frame.positions
    n = len(pos)
    sqm = np.sqrt(masses)
    ext = []
    for axis in np.eye(3):
        ext.append((sqm[:, None] * axis[None, :]).reshape(-1))
        ext.append((sqm[:, None] * np.cross(axis[None, :], pos)).reshape(-1))
    u, s, _ = np.linalg.svd(np.array(ext).T, full_matrices=False)
    basis = u[:, s > 1e-6 * s.max()]
    p_vib = np.eye(3 * n) - basis @ basis.T
    big = np.zeros((len(frame.ops), 3 * n, 3 * n))
    for g, (r, perm) in enumerate(zip(frame.ops, frame.perms, strict=True)):
        for i, j in enumerate(perm):
            big[g, 3 * j : 3 * j + 3, 3 * i : 3 * i + 3] = r
    order = len(frame.ops)
    weights: dict[str, np.ndarray] = {}
    for label, factor, chi in frame.species:
        proj = factor / order * np.einsum("g,gij->ij", chi, big)
        m = proj @ p_vib
        diag = np.diag(m).reshape(n, 3).sum(axis=1)
        total = float(diag.sum())
        if total > 0.5:  # at least one vibrational mode of this species
            w = diag / total
            w[np.abs(w) < 1e-10] = 0.0  # atoms that cannot move in this species: exactly zero
            weights[label] = w
    return weights


# --------------------------------------------------------------------------- orbits


def _orbits(perms: np.ndarray, atoms: list[int], k: int) -> list[tuple[tuple[int, ...], int]]:
    """Orbits of k-subsets of ``atoms``: (lexicographically smallest member, orbit size)."""
    total = math.comb(len(atoms), k)
    if total > MAX_SUBSETS:
        raise InputError(
            f"{total} sets of {k} atoms out of {len(atoms)}: too many to enumerate (limit {MAX_SUBSETS}); "
            "lower max_substitutions"
        )
    subsets = np.array(list(combinations(atoms, k)), dtype=np.int64).reshape(-1, k)
    base = perms.shape[1]
    images = np.sort(perms[:, subsets], axis=2)  # (ops, M, k)
    weights = base ** np.arange(k - 1, -1, -1, dtype=np.int64)
    codes = images @ weights  # (ops, M)
    canonical = codes.min(axis=0)
    found: dict[int, int] = {}
    for c in canonical.tolist():
        found[c] = found.get(c, 0) + 1
    out = []
    for code in sorted(found):
        rep = tuple(int(code // w % base) for w in weights)
        out.append((rep, found[code]))
    return out


def isotopomers(
    symbols: Sequence[str],
    positions: np.ndarray | Sequence[Sequence[float]],
    *,
    element: str | None = None,
    max_substitutions: int = 1,
    operations: np.ndarray | None = None,
) -> tuple[Isotopomer, ...]:
    """Classes of isotopically substituted units at natural abundance.

    Parameters
    ----------
    symbols : sequence of str
        Element symbols of the unit's atoms.
    positions : array_like, shape (n, 3)
        Cartesian positions, angstrom (any origin when ``operations`` is None; relative
        to the unit's centre when ``operations`` is given).
    element : str or None
        Only substitute this element; ``None``: every element of the unit that has more
        than one natural isotope.
    max_substitutions : int
        Largest number of atoms of one element carrying the same rare isotope
        (1: singly substituted units only). Mixed placements of two different rare
        isotopes are not enumerated.
    operations : array_like, shape (m, 3, 3) or None
        The free group as Cartesian operations about the unit's centre; ``None``: found
        with :func:`splitting.molecule.symmetry.find_symmetry`.

    Returns
    -------
    tuple of Isotopomer
        For each element: the parent first, then for each rare isotope (by mass number)
        and each number of substitutions the classes in order of their representative
        atom sets.

    Raises
    ------
    InputError
        Bad symbols or positions, an element absent from the unit, a bad
        ``max_substitutions``, or too many atom sets to enumerate.
    DataError
        No bundled isotope data for an element.
    """
    if not isinstance(max_substitutions, int) or isinstance(max_substitutions, bool) or max_substitutions < 1:
        raise InputError(f"max_substitutions must be a positive integer, got {max_substitutions!r}")
    symbols = [str(s).strip() for s in symbols]
    frame = _frame(symbols, np.asarray(positions, dtype=float), operations)
    if element is not None:
        wanted = element.strip()
        if wanted not in symbols:
            raise InputError(f"element {element!r} is not in the unit ({', '.join(sorted(set(symbols)))})")
        elements = [wanted]
    else:
        elements = []
        for s in symbols:
            if s not in elements:
                elements.append(s)
    data: dict[str, tuple[Isotope, ...]] = {}
    for el in set(symbols):
        try:
            data[el] = isotopes(el)
        except DataError:
            if el in elements:
                raise
    from ase.data import atomic_masses, atomic_numbers

    masses = np.array(
        [most_abundant(s).mass_u if s in data else float(atomic_masses[atomic_numbers[s]]) for s in symbols]
    )
    weights = _vibrational_weights(frame, masses)
    out: list[Isotopomer] = []
    for el in elements:
        main = most_abundant(el)
        rare = [i for i in data[el] if i.mass_number != main.mass_number and i.abundance > 0]
        if element is None and not rare:
            continue
        idx = [i for i, s in enumerate(symbols) if s == el]
        n = len(idx)
        out.append(Isotopomer(el, main.label, "", (), 1, main.abundance**n, frame.name, dict.fromkeys(weights, 0.0)))
        for iso in rare:
            rel = (iso.mass_u - main.mass_u) / main.mass_u
            for k in range(1, min(max_substitutions, n) + 1):
                share = iso.abundance**k * main.abundance ** (n - k)
                for atoms, count in _orbits(frame.perms, idx, k):
                    shift = {lab: -0.5 * rel * float(w[list(atoms)].sum()) + 0.0 for lab, w in weights.items()}
                    out.append(
                        Isotopomer(
                            element=el,
                            isotope=iso.label,
                            substitution=iso.label + (str(k) if k > 1 else ""),
                            atoms=atoms,
                            count=count,
                            abundance=count * share,
                            point_group=_stabiliser_name(frame, atoms),
                            mass_shift=shift,
                        )
                    )
    return tuple(out)

"""Vibrational analysis of a free molecule or ion: Gamma_3N, Gamma_vib and activity."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .._display import Summarised
from ..activity import activity_table
from ..errors import InputError, SymmetryError
from ..groups import Representation
from ..groups.catalogue import canonical_name
from ..groups.identify import OrientedGroup, molecular_preference
from ..groups.linear import LinearGroup
from .symmetry import DEFAULT_TOLERANCE, MoleculeSymmetry, find_symmetry

__all__ = [
    "FreeUnitAnalysis",
    "ModeSpecies",
    "analyse_unit",
    "external_representations",
    "gamma_3n",
    "hill_formula",
    "unit_vibrations",
]


@dataclass(frozen=True)
class ModeSpecies:
    """One species of the vibrational representation.

    Attributes
    ----------
    label : str
        Mulliken label.
    dimension : int
        Degeneracy.
    count : int
        Number of fundamentals (distinct frequencies) of this species.
    ir : tuple of str
        Dipole components (empty: IR inactive).
    raman : tuple of str
        Polarisability components (empty: Raman inactive).
    raman_tensor : tuple of tuple of str
        3x3 pattern of the Raman tensor in the unit's axes ("0" where an element vanishes).
    """

    label: str
    dimension: int
    count: int
    ir: tuple[str, ...]
    raman: tuple[str, ...]
    raman_tensor: tuple[tuple[str, ...], ...] = ()

    @property
    def activity(self) -> str:
        """'IR', 'Raman', 'IR+Raman' or 'silent'."""
        parts = [name for name, on in (("IR", self.ir), ("Raman", self.raman)) if on]
        return "+".join(parts) if parts else "silent"

    def to_dict(self) -> dict[str, object]:
        """JSON-ready form."""
        return {
            "label": self.label,
            "dimension": self.dimension,
            "count": self.count,
            "ir": bool(self.ir),
            "raman": bool(self.raman),
            "ir_components": list(self.ir),
            "raman_components": list(self.raman),
            "raman_tensor": [list(r) for r in self.raman_tensor],
        }


def hill_formula(symbols: list[str]) -> str:
    """Hill-order formula: C first, H second, then alphabetical (C-free: all alphabetical).

    Examples
    --------
    >>> hill_formula(["O", "C", "O"]), hill_formula(["O", "H", "H"])
    ('CO2', 'H2O')
    """
    from collections import Counter

    c = Counter(symbols)
    first = [k for k in ("C", "H") if k in c] if "C" in c else []
    order = first + sorted(k for k in c if k not in first)
    return "".join(f"{k}{c[k] if c[k] > 1 else ''}" for k in order)


def gamma_3n(sym: MoleculeSymmetry) -> Representation:
    """Gamma_3N: character U(R) tr(R), U = atoms left in place by R."""
    grp = sym.group.group
    if isinstance(grp, LinearGroup):
        frame = sym.group.frame

        def chi(r_std: np.ndarray) -> float:
            return sym.fixed_atoms(frame @ r_std @ frame.T) * float(np.trace(r_std))

        return grp.reduce_function(chi, 3 * len(sym.numbers), what="Γ3N")
    fixed = np.sum(sym.permutations == np.arange(len(sym.numbers))[None, :], axis=1)
    chars = fixed * np.trace(grp.operations, axis1=1, axis2=2)
    # planar units: the plane itself moves no atom but is not the identity; permutations are per operation
    return grp.reduce_operations(chars, what="Γ3N")


def external_representations(
    group: OrientedGroup | object, *, linear: bool, single_atom: bool = False
) -> tuple[Representation, Representation]:
    """Translations and rotations of a free unit in its own group."""
    grp = group.group if isinstance(group, OrientedGroup) else group
    trans = grp.vector
    if single_atom:
        return trans, trans * 0
    rot = grp.axial
    if linear:  # no rotation about the axis
        sigma_minus = next(lab for lab, _ in rot if lab.startswith("Σ"))
        rot = rot - grp.representation({sigma_minus: 1})
    return trans, rot


@dataclass(frozen=True, eq=False, repr=False)
class FreeUnitAnalysis(Summarised):
    """Everything group theory says about the vibrations of one free unit.

    Attributes
    ----------
    formula : str
        Hill formula.
    symmetry : MoleculeSymmetry
        Point group, frame, symmetrised geometry, deviations.
    gamma_3n, translations, rotations, vibrations : Representation
        Representations in the unit's point group.
    modes : tuple of ModeSpecies
        Species of ``vibrations`` with their activity.
    """

    formula: str
    symmetry: MoleculeSymmetry
    gamma_3n: Representation
    translations: Representation
    rotations: Representation
    vibrations: Representation
    modes: tuple[ModeSpecies, ...]

    @property
    def point_group(self) -> str:
        """Schoenflies symbol of the unit's group."""
        return self.symmetry.group.name

    @property
    def ir_active(self) -> int:
        """Number of IR-active fundamentals (distinct frequencies)."""
        return sum(m.count for m in self.modes if m.ir)

    @property
    def raman_active(self) -> int:
        """Number of Raman-active fundamentals (distinct frequencies)."""
        return sum(m.count for m in self.modes if m.raman)

    def to_dict(self) -> dict[str, object]:
        """JSON-ready form; ``species`` lists the vibrational species."""
        sym = self.symmetry
        return {
            "formula": self.formula,
            "atoms": len(sym.numbers),
            "point_group": self.point_group,
            "axes": sym.group.to_dict()["axes"],
            "tolerance_angstrom": sym.tolerance,
            "max_deviation_angstrom": round(sym.max_deviation, 6),
            "equivalent_atom_sets": sym.equivalent_sets(),
            "gamma_3n": str(self.gamma_3n),
            "translations": str(self.translations),
            "rotations": str(self.rotations),
            "vibrations": str(self.vibrations),
            "vibration_count": self.vibrations.dimension,
            "species": [m.to_dict() for m in self.modes],
            "ir_active_fundamentals": self.ir_active,
            "raman_active_fundamentals": self.raman_active,
        }


def _with_group(sym: MoleculeSymmetry, name: str) -> MoleculeSymmetry:
    """Re-express a unit's symmetry in a user-chosen subgroup of its full group."""
    from ..groups.subgroups import embeddings

    canon = canonical_name(name)
    if canon == sym.group.name:
        return sym
    if sym.linear:
        raise InputError(f"a lower group than {sym.group.name} for a linear unit is not supported")
    try:
        options = embeddings(sym.group.name, canon)
    except SymmetryError:
        raise InputError(
            f"{canon} is not a subgroup of the unit's group {sym.group.name} "
            f"(tolerance {sym.tolerance} Å); a larger tolerance may find more symmetry"
        ) from None
    pref = molecular_preference(sym.symmetric_positions)
    best = None
    for emb in options:
        ops = np.einsum("ij,njk,lk->nil", sym.group.frame, emb.subgroup.operations, sym.group.frame)
        from ..groups.identify import identify

        og = identify(ops, prefer=pref, tol=1e-4)
        score = pref(og.frame)
        if best is None or score > best[0]:
            best = (score, og, emb)
    assert best is not None
    og = best[1]
    idx = [sym.group.locate(op) for op in og.operations]
    return MoleculeSymmetry(
        og,
        sym.centre,
        sym.numbers,
        sym.positions,
        sym.symmetric_positions,
        og.operations,
        sym.permutations[idx],
        sym.max_deviation,
        sym.tolerance,
    )


def _representations(
    numbers, positions, tolerance: float, point_group: str | None
) -> tuple[MoleculeSymmetry, Representation, Representation, Representation, Representation]:
    """Symmetry, Γ3N, translations, rotations and vibrations of a free unit (see :func:`analyse_unit`)."""
    sym = find_symmetry(numbers, positions, tolerance=tolerance)
    if point_group is not None:
        sym = _with_group(sym, point_group)
    g3n = gamma_3n(sym)
    trans, rot = external_representations(sym.group, linear=sym.linear)
    return sym, g3n, trans, rot, g3n - trans - rot


def unit_vibrations(
    numbers, positions, *, tolerance: float = DEFAULT_TOLERANCE, point_group: str | None = None
) -> tuple[MoleculeSymmetry, Representation]:
    """Symmetry and internal-mode representation of a free unit, without the selection rules.

    The same search and reduction as :func:`analyse_unit` (same parameters), for callers that
    need only the group and Γvib: the activity table of the unit's group is not built.

    Examples
    --------
    >>> sym, vib = unit_vibrations([8, 1, 1], [[0, 0, 0.12], [0, 0.76, -0.47], [0, -0.76, -0.47]])
    >>> sym.group.name, str(vib)
    ('C2v', '2A1 + B2')
    """
    sym, _, _, _, vib = _representations(numbers, positions, tolerance, point_group)
    return sym, vib


def analyse_unit(
    numbers,
    positions,
    *,
    tolerance: float = DEFAULT_TOLERANCE,
    point_group: str | None = None,
    symbols: list[str] | None = None,
) -> FreeUnitAnalysis:
    """Vibrational species of a free molecule or ion.

    Parameters
    ----------
    numbers : array_like of int
        Atomic numbers.
    positions : array_like, shape (n, 3)
        Cartesian coordinates (angstrom).
    tolerance : float
        Symmetry tolerance (angstrom).
    point_group : str, optional
        Use this subgroup of the detected group instead (e.g. to follow a lower
        convention); must be a subgroup of what the geometry allows.

    Examples
    --------
    >>> a = analyse_unit([8, 1, 1], [[0, 0, 0.12], [0, 0.76, -0.47], [0, -0.76, -0.47]])
    >>> a.point_group, str(a.vibrations)
    ('C2v', '2A1 + B2')
    """
    from ase.data import chemical_symbols

    sym, g3n, trans, rot, vib = _representations(numbers, positions, tolerance, point_group)
    act = {a.label: a for a in activity_table(sym.group.name)}
    modes = tuple(
        ModeSpecies(lab, d, n, act[lab].ir, act[lab].raman, act[lab].raman_tensor)
        for (lab, n), d in zip(vib.counts, vib.dimensions, strict=True)
        if n
    )
    syms = symbols or [chemical_symbols[int(z)] for z in numbers]
    return FreeUnitAnalysis(hill_formula(list(syms)), sym, g3n, trans, rot, vib, modes)

"""First overtones and binary combinations of fundamentals, with their symmetry and activity.

Symmetry (E. B. Wilson, J. C. Decius and P. C. Cross, *Molecular Vibrations* (1955),
chapter 7 and Appendix X; G. Herzberg, *Infrared and Raman Spectra of Polyatomic
Molecules* (1945)):

* a binary combination ``nu_i + nu_j`` (two different fundamentals) has the symmetry of
  the direct product of the two species;
* a first overtone ``2 nu_i`` has the symmetry of the *symmetric* square of the species
  (for a non-degenerate species that is the totally symmetric species).

A level is infrared (Raman) active when its representation contains a species that
carries a dipole (polarisability) component; the activity table of the group
(:func:`splitting.activity.activity_table`) decides.

In a crystal (optional ``crystal`` argument) each fundamental is replaced by its
components in the site or factor group (the correlation of one fundamental): the
two-quantum states of ``nu_i + nu_j`` span the direct product of the two crystal
representations, those of ``2 nu_i`` the symmetric square of the crystal representation
of ``nu_i`` (all pairs of its components). Only k = 0 components are combined, which is
the usual approximation for internal modes whose dispersion is small (common practice);
two-phonon states from the rest of the Brillouin zone are not counted.

Position
--------
The harmonic estimate is the sum of the fundamentals, ``nu_i + nu_j`` or ``2 nu_i``.
Real overtones and combinations usually lie a little *below* the sum (negative
anharmonicity, a few to some tens of cm-1) and may be moved further by Fermi resonance;
:func:`splitting.spectra.assign.explain` allows for that with its tolerance.

Examples
--------
>>> bands = overtones_and_combinations("Td", [("nu2", "E", 1533.0), ("nu4", "T2", 1300.0)])
>>> [(b.name, str(b.species), b.ir, b.raman) for b in bands]
[('2nu4', 'A1 + E + T2', True, True), ('nu2 + nu4', 'T1 + T2', True, True), ('2nu2', 'A1 + E', False, True)]
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import InputError, SplittingError
from ..groups import LinearGroup, PointGroup, Representation, linear_group, point_group

__all__ = ["CombinationBand", "overtones_and_combinations", "representation_activity"]


def _group(group: str | PointGroup | LinearGroup) -> PointGroup | LinearGroup:
    if isinstance(group, (PointGroup, LinearGroup)):
        return group
    from ..groups.catalogue import canonical_name

    try:
        name = canonical_name(str(group))
        return linear_group(name) if "∞" in name else point_group(name)
    except SplittingError as exc:
        raise InputError(f"unknown point group {group!r}: {exc}") from None


def representation_activity(rep: Representation) -> tuple[bool, bool]:
    """Whether a representation contains an infrared- and a Raman-active species.

    Examples
    --------
    >>> representation_activity(point_group("Oh").product("T1u", "T1u"))
    (False, True)
    """
    from ..activity import activity_table

    table = {a.label: a for a in activity_table(rep.group)}
    ir = any(table[lab].ir_active for lab in rep.labels)
    raman = any(table[lab].raman_active for lab in rep.labels)
    return ir, raman


@dataclass(frozen=True)
class CombinationBand:
    """A first overtone or a binary combination of two fundamentals.

    Attributes
    ----------
    kind : {"overtone", "combination"}
    modes : tuple of str
        Names of the two fundamentals (the same name twice for an overtone).
    name : str
        ``"2nu3"`` or ``"nu1 + nu4"``.
    wavenumber_cm1 : float
        Harmonic estimate, the sum of the fundamentals, cm-1 (real bands lie somewhat
        lower: see the module docstring).
    species : Representation
        Symmetry in the free group.
    ir, raman : bool
        Activity in the free group.
    crystal_species : Representation or None
        Symmetry in the crystal group (site or factor group) when a correlation was given.
    crystal_ir, crystal_raman : bool or None
        Activity in the crystal group, ``None`` without a correlation.
    """

    kind: str
    modes: tuple[str, str]
    name: str
    wavenumber_cm1: float
    species: Representation
    ir: bool
    raman: bool
    crystal_species: Representation | None = None
    crystal_ir: bool | None = None
    crystal_raman: bool | None = None

    def active(self, technique: str | None) -> bool:
        """Allowed in ``technique`` ("ir", "raman", or None for either), in the crystal if known."""
        ir = self.ir if self.crystal_ir is None else self.crystal_ir
        raman = self.raman if self.crystal_raman is None else self.crystal_raman
        if technique == "ir":
            return ir
        if technique == "raman":
            return raman
        return ir or raman

    def to_dict(self) -> dict[str, Any]:
        """Plain, JSON-ready dictionary of the fields."""
        return {
            "kind": self.kind,
            "modes": list(self.modes),
            "name": self.name,
            "wavenumber_cm1": self.wavenumber_cm1,
            "position_rule": "harmonic sum of the fundamentals",
            "species": str(self.species),
            "ir": self.ir,
            "raman": self.raman,
            "crystal_species": None if self.crystal_species is None else str(self.crystal_species),
            "crystal_group": None if self.crystal_species is None else self.crystal_species.group,
            "crystal_ir": self.crystal_ir,
            "crystal_raman": self.crystal_raman,
        }


def _crystal_square(rep: Representation) -> Representation:
    g = point_group(rep.group)
    chi = g.characters_of(rep)
    return g.reduce(g.symmetric_square_characters(chi), what=f"symmetric square of {rep}")


def _crystal_product(a: Representation, b: Representation) -> Representation:
    if a.group != b.group:
        raise InputError(f"crystal representations of two groups given: {a.group} and {b.group}")
    g = point_group(a.group)
    return g.reduce(g.characters_of(a) * g.characters_of(b), what=f"product of {a} and {b}")


def overtones_and_combinations(
    group: str | PointGroup | LinearGroup,
    fundamentals: Sequence[tuple[str, str, float]],
    *,
    max_order: int = 2,
    crystal: Mapping[str, Representation] | None = None,
) -> tuple[CombinationBand, ...]:
    """All first overtones and binary combinations of a set of fundamentals.

    Parameters
    ----------
    group : str, PointGroup or LinearGroup
        Free group of the unit (``"Td"``, ``"D3h"``, ``"D∞h"``...).
    fundamentals : sequence of (name, species, wavenumber_cm1)
        The fundamentals; species are labels of ``group``; wavenumbers in cm-1.
    max_order : int
        Number of quanta; only 2 (overtones ``2 nu_i`` and combinations ``nu_i + nu_j``)
        is implemented.
    crystal : mapping of str to Representation, optional
        For every species of the fundamentals, the crystal representation (site or
        factor group, one group for all) of one fundamental of that species, e.g.
        ``{c.free: c.factor for c in unit.correlation}`` from a crystal prediction.

    Returns
    -------
    tuple of CombinationBand
        Sorted by wavenumber, then name.

    Raises
    ------
    InputError
        Unknown group or species, repeated names, ``max_order`` other than 2, a
        species missing from ``crystal``.
    """
    if max_order != 2:
        raise InputError(f"max_order={max_order!r}: only two-quantum levels (max_order=2) are implemented")
    grp = _group(group)
    rows: list[tuple[str, str, float]] = []
    seen: set[str] = set()
    for item in fundamentals:
        try:
            name, species, wavenumber = item
        except (TypeError, ValueError):
            raise InputError(f"each fundamental must be (name, species, wavenumber), got {item!r}") from None
        name = str(name)
        if name in seen:
            raise InputError(f"fundamental {name!r} is listed twice")
        seen.add(name)
        try:
            grp.get_species(species)
        except SplittingError:
            raise InputError(f"{species!r} ({name}) is not a species of {grp.name}") from None
        w = float(wavenumber)
        if not (np.isfinite(w) and w > 0):
            raise InputError(f"wavenumber of {name} must be a positive number, got {wavenumber!r}")
        if crystal is not None and species not in crystal:
            raise InputError(f"no crystal representation given for species {species!r} ({name})")
        rows.append((name, species, w))

    out: list[CombinationBand] = []
    for i, (ni, si, wi) in enumerate(rows):
        for nj, sj, wj in rows[i:]:
            overtone = nj == ni
            rep = grp.symmetric_square(si) if overtone else grp.product(si, sj)
            ir, raman = representation_activity(rep)
            crep = cir = craman = None
            if crystal is not None:
                crep = _crystal_square(crystal[si]) if overtone else _crystal_product(crystal[si], crystal[sj])
                cir, craman = representation_activity(crep)
            out.append(
                CombinationBand(
                    kind="overtone" if overtone else "combination",
                    modes=(ni, nj),
                    name=f"2{ni}" if overtone else f"{ni} + {nj}",
                    wavenumber_cm1=wi + wj,
                    species=rep,
                    ir=ir,
                    raman=raman,
                    crystal_species=crep,
                    crystal_ir=cir,
                    crystal_raman=craman,
                )
            )
    out.sort(key=lambda b: (b.wavenumber_cm1, b.name))
    return tuple(out)

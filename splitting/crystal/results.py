"""Result objects of the crystal pipeline (immutable, with ``to_dict()``)."""

from __future__ import annotations

from dataclasses import dataclass

from .._display import Summarised
from ..groups import Representation
from .setting import Setting
from .spacegroup import SpaceGroupInfo

__all__ = ["Correlation", "CrystalPrediction", "FactorSpecies", "UnitOrbit"]


def _rep_list(rep: Representation) -> list[dict[str, object]]:
    return [{"label": lab, "count": n} for lab, n in rep]


@dataclass(frozen=True)
class Correlation:
    """How one species of the free unit splits.

    Attributes
    ----------
    free : str
        Species of the free unit.
    free_dimension : int
        Its degeneracy.
    modes : int
        Number of fundamentals of that species in the free unit.
    site : Representation
        Components in the site group (for one fundamental).
    factor : Representation
        Components in the factor group (for one fundamental, all units of the orbit).
    """

    free: str
    free_dimension: int
    modes: int
    site: Representation
    factor: Representation

    def to_dict(self) -> dict[str, object]:
        """JSON-ready form (``site`` and ``factor`` as label/count lists)."""
        return {
            "free": self.free,
            "free_dimension": self.free_dimension,
            "modes": self.modes,
            "site": _rep_list(self.site),
            "factor": _rep_list(self.factor),
            "site_text": str(self.site),
            "factor_text": str(self.factor),
        }


@dataclass(frozen=True)
class UnitOrbit:
    """One set of symmetry-equivalent units (molecules, ions or atoms).

    Attributes
    ----------
    formula : str
    kind : str
        ``"molecule"``, ``"atom"`` or ``"framework"``.
    atoms_per_unit : int
    count : int
        Number of units of this orbit in the primitive cell (Z = |F| / |S|).
    count_conventional : int
        Number in the conventional cell (the Wyckoff multiplicity).
    wyckoff : str
        Multiplicity and letter of the centre, e.g. ``"4a"``.
    site_symmetry : str
        Oriented site-symmetry symbol (International Tables), e.g. ``".-3."``.
    site_group : str
        Schoenflies symbol of the site group.
    site_axes : dict
        Crystal directions of the site group's x, y, z.
    free_group : str or None
        Point group of the free unit (None for single atoms).
    free_group_source : str
        ``"detected"``, ``"given"`` or ``"atom"``.
    free_axes : dict
        Crystal directions of the free group's x, y, z for the first unit of the orbit.
    max_deviation : float
        Largest displacement (angstrom) of an atom from the ideal free-unit geometry.
    centre : tuple of float
        Fractional coordinates (primitive cell) of the first unit's centre.
    correlation : tuple of Correlation
    internal, translations, librations : Representation
        Contributions of this orbit to the factor-group modes.
    symbols : tuple of str
        Elements of the first unit's atoms.
    geometry : tuple of (float, float, float)
        Cartesian positions (angstrom) of the first unit's atoms relative to its centre,
        in the crystal's Cartesian frame.
    site_to_factor : tuple of (str, Representation)
        For every species of the site group, the factor-group species it induces (the
        second step of the correlation, shared by internal and external modes).
    """

    formula: str
    kind: str
    atoms_per_unit: int
    count: int
    count_conventional: int
    wyckoff: str
    site_symmetry: str
    site_group: str
    site_axes: dict[str, str]
    free_group: str | None
    free_group_source: str
    free_axes: dict[str, str]
    max_deviation: float
    centre: tuple[float, float, float]
    free_vibrations: Representation | None
    correlation: tuple[Correlation, ...]
    internal: Representation
    translations: Representation
    librations: Representation
    symbols: tuple[str, ...] = ()
    geometry: tuple[tuple[float, float, float], ...] = ()
    site_to_factor: tuple[tuple[str, Representation], ...] = ()

    @property
    def name(self) -> str:
        """The unit as spectroscopists write it (``SO4^2-``, ``NH4+``; :mod:`splitting.crystal.names`)."""
        from .names import unit_name

        return unit_name(self.formula)

    @property
    def charge(self) -> int | None:
        """Charge from the common-ion table (:mod:`splitting.crystal.names`); ``None`` if not listed."""
        from .names import unit_charge

        return unit_charge(self.formula)

    def induced(self, site_label: str) -> Representation:
        """Factor-group components induced by one site species (all units of the orbit)."""
        for lab, rep in self.site_to_factor:
            if lab == site_label:
                return rep
        raise KeyError(site_label)

    def to_dict(self) -> dict[str, object]:
        """JSON-ready form."""
        return {
            "name": self.name,
            "formula": self.formula,
            "charge": self.charge,
            "kind": self.kind,
            "atoms_per_unit": self.atoms_per_unit,
            "count": self.count,
            "count_conventional": self.count_conventional,
            "wyckoff": self.wyckoff,
            "site_symmetry": self.site_symmetry,
            "site_group": self.site_group,
            "site_axes": self.site_axes,
            "free_group": self.free_group,
            "free_group_source": self.free_group_source,
            "free_axes": self.free_axes,
            "max_deviation_angstrom": round(self.max_deviation, 4),
            "centre_fractional": [round(c, 5) for c in self.centre],
            "free_vibrations": str(self.free_vibrations) if self.free_vibrations is not None else None,
            "correlation": [c.to_dict() for c in self.correlation],
            "internal": str(self.internal),
            "translations": str(self.translations),
            "librations": str(self.librations),
            "site_to_factor": [
                {"site": lab, "factor": _rep_list(rep), "factor_text": str(rep)} for lab, rep in self.site_to_factor
            ],
            "symbols": list(self.symbols),
            "geometry_angstrom": [[round(c, 5) for c in p] for p in self.geometry],
        }


@dataclass(frozen=True)
class FactorSpecies:
    """Counts and activity of one factor-group species (k = 0).

    Counts are numbers of distinct frequencies (multiplicities), not of modes with degeneracy.
    ``translational`` excludes the acoustic modes, which are counted in ``acoustic``.

    ``polar`` is true for every IR-active species, in any crystal (centrosymmetric ones
    included): the oscillating dipole carries a macroscopic field, so near k = 0 each such
    frequency splits into a transverse (TO) and a longitudinal (LO) component (M. Born and
    K. Huang, *Dynamical Theory of Crystal Lattices*, Oxford 1954, ch. II).
    :attr:`lo_to_seen_in` says where the two components show.
    """

    label: str
    dimension: int
    acoustic: int
    translational: int
    librational: int
    internal: int
    ir: tuple[str, ...]
    raman: tuple[str, ...]
    raman_tensor: tuple[tuple[str, ...], ...]
    polar: bool

    @property
    def optical(self) -> int:
        """Optical modes: internal + translational + librational."""
        return self.internal + self.translational + self.librational

    @property
    def lo_to_seen_in(self) -> tuple[str, ...]:
        """Where the TO and LO components of a polar species can be seen.

        IR reflectance (and oblique-incidence transmission of thin films) always; Raman
        only when the species is Raman active too, which needs a non-centrosymmetric
        crystal (mutual exclusion). Empty for a non-polar species.
        """
        if not self.polar:
            return ()
        return ("IR reflectance", "Raman") if self.raman else ("IR reflectance",)

    @property
    def activity(self) -> str:
        """'IR', 'Raman', 'IR+Raman' or 'silent'."""
        parts = [n for n, on in (("IR", self.ir), ("Raman", self.raman)) if on]
        return "+".join(parts) if parts else "silent"

    def to_dict(self) -> dict[str, object]:
        """JSON-ready form."""
        return {
            "label": self.label,
            "dimension": self.dimension,
            "acoustic": self.acoustic,
            "optical": self.optical,
            "internal": self.internal,
            "translational": self.translational,
            "librational": self.librational,
            "ir": bool(self.ir),
            "raman": bool(self.raman),
            "ir_components": list(self.ir),
            "raman_components": list(self.raman),
            "raman_tensor": [list(r) for r in self.raman_tensor],
            "polar": self.polar,
            "lo_to_seen_in": list(self.lo_to_seen_in),
        }


@dataclass(frozen=True, repr=False)
class CrystalPrediction(Summarised):
    """The full k = 0 prediction for a crystal.

    Attributes
    ----------
    source : str
        File name or description.
    formula : str
        Formula of the primitive cell.
    space_group : SpaceGroupInfo
    factor_group : str
        Schoenflies symbol of the factor group (crystal class).
    factor_axes : dict
        Crystal directions carrying the factor group's x, y, z (labels and polarisations refer
        to them), as axes of the file's cell (of the standard setting's with ``--standard-axes``).
    centrosymmetric : bool
    atoms_primitive, atoms_input : int
    units : tuple of UnitOrbit
    species : tuple of FactorSpecies
    gamma_3n, acoustic : Representation
        Whole-cell count (computed independently) and the acoustic modes.
    warnings : tuple of str
    cell_volume : float
        Primitive-cell volume (cubic angstrom).
    cell_parameters : tuple of float
        a, b, c (angstrom) and alpha, beta, gamma (degrees) of the cell as given in the file;
        empty when the prediction was not made from a file's cell (a candidate phase).
    setting : Setting or None
        The setting of the file's cell, the standard setting, the transformation between
        them, and which of the two the labels use (None for a cell built from operations).
    """

    source: str
    formula: str
    space_group: SpaceGroupInfo
    factor_group: str
    factor_axes: dict[str, str]
    centrosymmetric: bool
    atoms_primitive: int
    atoms_input: int
    units: tuple[UnitOrbit, ...]
    species: tuple[FactorSpecies, ...]
    gamma_3n: Representation
    acoustic: Representation
    warnings: tuple[str, ...]
    cell_volume: float = float("nan")
    cell_parameters: tuple[float, ...] = ()
    setting: Setting | None = None

    @property
    def symbol(self) -> str:
        """Short Hermann-Mauguin symbol of the setting the labels refer to: the file's own
        (``"P2_1/a"``) unless the file's cell is not a tabulated setting or the labels use the
        standard axes; ``space_group.symbol`` is always the standard setting's."""
        return self.setting.label_symbol if self.setting is not None else self.space_group.symbol

    def species_by_label(self, label: str) -> FactorSpecies:
        """The factor-group species with this label."""
        for s in self.species:
            if s.label == label:
                return s
        raise KeyError(label)

    def unit(self, formula: str) -> UnitOrbit:
        """The first orbit with this formula (Hill formula or written name, ``SO4^2-``)."""
        from .names import find_unit

        return find_unit(self.units, formula)

    def seen_in(self, geometry: str) -> list[tuple[str, int]]:
        """Raman species (with their optical counts) allowed in a scattering geometry.

        The geometry is written in the notation of Damen, Porto and Tell (Phys. Rev. 142, 570
        (1966)) in the factor group's axes, which ``factor_axes`` ties to the crystal.

        Examples
        --------
        >>> from pathlib import Path
        >>> from splitting.crystal.predict import predict
        >>> p = predict(Path(__file__).parents[2] / "structures" / "calcite.cif")
        >>> p.seen_in("z(xx)-z"), p.seen_in("z(xy)-z")
        ([('A1g', 1), ('Eg', 4)], [('Eg', 4)])
        """
        from ..activity import parse_geometry

        g = parse_geometry(geometry)
        i, j = g.element()
        return [(s.label, s.optical) for s in self.species if s.raman_tensor[i][j] != "0" and s.optical]

    def totals(self) -> dict[str, int]:
        """Numbers of distinct IR-active, Raman-active, silent and polar optical frequencies."""
        ir = sum(s.optical for s in self.species if s.ir)
        raman = sum(s.optical for s in self.species if s.raman)
        silent = sum(s.optical for s in self.species if not s.ir and not s.raman)
        polar = sum(s.optical for s in self.species if s.polar)
        return {
            "ir": ir,
            "raman": raman,
            "silent": silent,
            "polar": polar,
            "optical": sum(s.optical for s in self.species),
        }

    def to_dict(self) -> dict[str, object]:
        """JSON-ready form (schema in docs/json-schema.md)."""
        return {
            "source": self.source,
            "formula": self.formula,
            "space_group": self.space_group.to_dict(),
            "factor_group": self.factor_group,
            "factor_axes": self.factor_axes,
            "centrosymmetric": self.centrosymmetric,
            "state": "ordered",
            "state_meaning": "every unit in one orientation: factor-group (Davydov) components with the "
            "k = 0 selection rules; sharp librations",
            "atoms_primitive": self.atoms_primitive,
            "atoms_input": self.atoms_input,
            "cell_volume_angstrom3": round(self.cell_volume, 4),
            "cell_parameters": [round(v, 5) for v in self.cell_parameters],
            "setting": self.setting.to_dict() if self.setting is not None else None,
            "units": [u.to_dict() for u in self.units],
            "species": [s.to_dict() for s in self.species],
            "gamma_3n": str(self.gamma_3n),
            "acoustic": str(self.acoustic),
            "totals": self.totals(),
            "warnings": list(self.warnings),
        }

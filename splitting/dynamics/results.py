"""Result objects of the lattice-dynamics estimate (immutable, with ``to_dict()``)."""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from .relax import Relaxation

__all__ = ["BandEstimate", "Estimate", "Line"]


def _r(x: float | None, nd: int = 2) -> float | None:
    return None if x is None else round(float(x), nd)


@dataclass(frozen=True)
class Line:
    """One computed k = 0 line (a set of degenerate modes).

    Attributes
    ----------
    wavenumber_cm1 : float
        Model wavenumber (cm-1); negative means imaginary.
    uncertainty_cm1 : float
        Estimated uncertainty (cm-1); see ``Estimate.uncertainty_rule``.
    species : str
        Factor-group species (the engine's label).
    dimension : int
    activity : str
        ``"IR"``, ``"Raman"``, ``"IR+Raman"`` or ``"silent"`` (the engine's selection rules).
    origin : str
        ``"internal"``, ``"translational"``, ``"librational"`` or ``"acoustic"``.
    unit : str
        Formula of the unit carrying most of the motion.
    band : str or None
        Free fundamental (``"nu2"``) for internal lines.
    free_species : str or None
        Species of that fundamental in the free group.
    weights : tuple of (str, float)
        Shares of translation, libration and internal motion.
    neutron_weight : float
        Incoherent neutron weight sum_i sigma_i |e_i|^2 / m_i (barn/amu) of the line.
    """

    wavenumber_cm1: float
    uncertainty_cm1: float
    species: str
    dimension: int
    activity: str
    origin: str
    unit: str
    band: str | None
    free_species: str | None
    weights: tuple[tuple[str, float], ...]
    neutron_weight: float

    @property
    def label(self) -> str:
        """Short description, e.g. ``"nu2 of CO2"`` or ``"librational (CO2)"``."""
        if self.origin == "internal" and self.band:
            return f"{self.band} of {self.unit}"
        return f"{self.origin} ({self.unit})"

    def to_dict(self) -> dict[str, object]:
        """JSON-ready form."""
        return {
            "wavenumber_cm1": _r(self.wavenumber_cm1),
            "uncertainty_cm1": _r(self.uncertainty_cm1),
            "species": self.species,
            "dimension": self.dimension,
            "activity": self.activity,
            "origin": self.origin,
            "unit": self.unit,
            "band": self.band,
            "free_species": self.free_species,
            "weights": {k: _r(v, 3) for k, v in self.weights},
            "neutron_weight": _r(self.neutron_weight, 4),
        }


@dataclass(frozen=True)
class BandEstimate:
    """How one free fundamental of one orbit of units comes out in the crystal.

    Attributes
    ----------
    unit : str
    band : str
    free_species : str
    free_cm1 : float
        Model wavenumber of the free unit (after scaling, if asked for).
    measured_free_cm1 : float or None
        Gas-phase value of the bundled mode table.
    components : tuple of (str, float)
        Factor-group species and model wavenumber (cm-1) of every component.
    site_shift_cm1 : float
        Centre of the components (weighted by degeneracy) minus the free value.
    splitting_cm1 : float
        Factor-group (Davydov) splitting: highest minus lowest component.
    """

    unit: str
    band: str
    free_species: str
    free_cm1: float
    measured_free_cm1: float | None
    components: tuple[tuple[str, float], ...]
    site_shift_cm1: float
    splitting_cm1: float

    def to_dict(self) -> dict[str, object]:
        """JSON-ready form."""
        return {
            "unit": self.unit,
            "band": self.band,
            "free_species": self.free_species,
            "free_cm1": _r(self.free_cm1),
            "measured_free_cm1": self.measured_free_cm1,
            "components": [{"species": s, "wavenumber_cm1": _r(w)} for s, w in self.components],
            "site_shift_cm1": _r(self.site_shift_cm1),
            "splitting_cm1": _r(self.splitting_cm1),
        }


@dataclass(frozen=True)
class Estimate:
    """A model estimate of the k = 0 spectrum of a crystal, every line labelled.

    Attributes
    ----------
    source : str
    factor_group : str
    model : str
        One sentence naming the model (shown next to every number).
    parameter_set : str
        Name of the atom-atom parameter set used for the lines.
    parameter_source : str
    cutoff_angstrom : float
    charges : bool
        Point charges included (Ewald sum).
    scaled_to_measured : bool
    lines : tuple of Line
        Optical and acoustic lines, lowest first.
    bands : tuple of BandEstimate
    acoustic_max_cm1 : float
        Largest |wavenumber| of the acoustic modes (should be 0).
    uncertainty_rule : str
        How ``uncertainty_cm1`` was obtained.
    lattice_energy_ev : float
        Atom-atom (exp-6 or Lennard-Jones) lattice energy per primitive cell (eV), without the charges.
    warnings : tuple of str
    relaxation : Relaxation or None
        How far the structure moved when it was relaxed within its space group first
        (None: the structure as given).
    """

    source: str
    factor_group: str
    model: str
    parameter_set: str
    parameter_source: str
    cutoff_angstrom: float
    charges: bool
    scaled_to_measured: bool
    lines: tuple[Line, ...]
    bands: tuple[BandEstimate, ...]
    acoustic_max_cm1: float
    uncertainty_rule: str
    lattice_energy_ev: float
    warnings: tuple[str, ...] = ()
    relaxation: Relaxation | None = None

    def lattice_lines(self) -> tuple[Line, ...]:
        """Translational and librational optical lines."""
        return tuple(line for line in self.lines if line.origin in ("translational", "librational"))

    def positions(self) -> dict[tuple[str, str], tuple[float, ...]]:
        """Model wavenumbers per (band, factor-group species).

        Keys are ``("nu2", "Tu")`` for internal bands (``"UNIT/nu2"`` when the cell has more
        than one molecular unit) and ``("lattice", species)`` for lattice modes; values
        are sorted wavenumbers (cm-1).  Figures and assignments use this.
        """
        units = {b.unit for b in self.bands}
        out: dict[tuple[str, str], list[float]] = {}
        for line in self.lines:
            if line.origin == "acoustic":
                continue
            if line.origin == "internal" and line.band:
                band = line.band if len(units) <= 1 else f"{line.unit}/{line.band}"
            else:
                band = "lattice"
            out.setdefault((band, line.species), []).append(line.wavenumber_cm1)
        return {k: tuple(sorted(v)) for k, v in out.items()}

    def to_dict(self) -> dict[str, object]:
        """JSON-ready form (every number with the model named beside it)."""
        return {
            "source": self.source,
            "factor_group": self.factor_group,
            "model": self.model,
            "parameter_set": self.parameter_set,
            "parameter_source": self.parameter_source,
            "cutoff_angstrom": self.cutoff_angstrom,
            "charges": self.charges,
            "scaled_to_measured": self.scaled_to_measured,
            "uncertainty_rule": self.uncertainty_rule,
            "acoustic_max_cm1": _r(self.acoustic_max_cm1, 4),
            "lattice_energy_ev": _r(self.lattice_energy_ev, 4),
            "lines": [line.to_dict() for line in self.lines],
            "bands": [b.to_dict() for b in self.bands],
            "warnings": list(self.warnings),
            "relaxation": None if self.relaxation is None else self.relaxation.to_dict(),
        }

"""Result objects of the assignment of measured lines (immutable, with ``to_dict()``)."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from .._display import Summarised
from .measured import Peak
from .scoring import PRIORS, SURPLUS_FACTOR

__all__ = ["BandCount", "Candidate", "Explanation", "LineExplanation", "PhaseComparison"]


# --------------------------------------------------------------------------- results


@dataclass(frozen=True)
class Candidate:
    """One possible explanation of a measured line.

    Attributes
    ----------
    kind : str
        One of the keys of :data:`PRIORS`.
    unit : str
        Formula of the unit (empty for lattice modes).
    band : str
        Mode name (``"nu3"``), combination name (``"nu1 + nu4"``), ``"lattice"``.
    species : tuple of str
        Crystal (factor-group, or site-group for ``disorder_activated``) species of the
        components that can give the line.
    predicted_cm1 : float or None
        Reference position, cm-1: free wavenumber, harmonic sum, or expected satellite
        position; ``None`` for lattice modes.
    score : float
        Between 0 and 1 (module docstring).
    reason : str
        One-line explanation.
    phase : str
        Source of the prediction the candidate comes from.
    """

    kind: str
    unit: str
    band: str
    species: tuple[str, ...]
    predicted_cm1: float | None
    score: float
    reason: str
    phase: str

    @property
    def label(self) -> str:
        """Short text, e.g. ``"CO3 nu3 (fundamental)"``."""
        head = f"{self.unit} {self.band}".strip()
        return f"{head} ({self.kind.replace('_', ' ')})"

    def to_dict(self) -> dict[str, Any]:
        """Plain, JSON-ready dictionary of the fields."""
        return {
            "kind": self.kind,
            "unit": self.unit,
            "band": self.band,
            "species": list(self.species),
            "predicted_cm1": self.predicted_cm1,
            "score": self.score,
            "reason": self.reason,
            "phase": self.phase,
            "label": self.label,
        }


@dataclass(frozen=True)
class LineExplanation:
    """A measured line with its ranked candidates (best first; empty if unexplained)."""

    peak: Peak
    candidates: tuple[Candidate, ...]

    @property
    def explained(self) -> bool:
        """True when at least one candidate was found."""
        return bool(self.candidates)

    @property
    def label(self) -> str:
        """Label of the best candidate, or ``"unexplained"``."""
        return self.candidates[0].label if self.candidates else "unexplained"

    @property
    def species(self) -> tuple[str, ...]:
        """Factor-group species the best candidate leaves for this line (empty if not one of the crystal's)."""
        if not self.candidates:
            return ()
        best = self.candidates[0]
        factor = ("fundamental", "site_activated", "lo_to", "lattice", "overtone", "combination")
        return best.species if best.kind in factor else ()

    @property
    def species_decided(self) -> bool:
        """True when the data leave exactly one factor-group species for the line."""
        return len(self.species) == 1

    def to_dict(self) -> dict[str, Any]:
        """Plain, JSON-ready dictionary of the fields."""
        return {
            "peak": self.peak.to_dict(),
            "explained": self.explained,
            "best": self.label,
            "assigned_species": list(self.species),
            "species_decided": self.species_decided,
            "candidates": [c.to_dict() for c in self.candidates],
        }


@dataclass(frozen=True)
class BandCount:
    """Observed and predicted numbers of lines of one free band.

    Attributes
    ----------
    band : str
        Mode name.
    species : str
        Free-unit species.
    free_cm1 : float
        Free wavenumber, cm-1.
    observed : int
        Lines counted in the band's window (:func:`count_components`).
    predicted : int
        Factor-group components active in the technique (distinct frequencies).
    predicted_site : int
        Site-group components active under the site group's rules (what a phase with
        orientational disorder would show).
    measured : bool
        False when the band's window lies wholly outside the measured lines (below the
        lowest or above the highest): such a band says nothing and is left out of the misfit.
    """

    band: str
    species: str
    free_cm1: float
    observed: int
    predicted: int
    predicted_site: int
    measured: bool = True

    def to_dict(self) -> dict[str, Any]:
        """Plain, JSON-ready dictionary of the fields."""
        return {
            "band": self.band,
            "species": self.species,
            "free_cm1": self.free_cm1,
            "observed": self.observed,
            "predicted": self.predicted,
            "predicted_site": self.predicted_site,
            "in_measured_range": self.measured,
        }


@dataclass(frozen=True)
class PhaseComparison:
    """Band-by-band counts of one prediction against the measured lines.

    Attributes
    ----------
    phase : str
        Source of the prediction.
    factor_group, site_group : str
        Groups of the crystal and of the unit's site.
    unit : str
        Unit formula.
    bands : tuple of BandCount
    """

    phase: str
    factor_group: str
    site_group: str
    unit: str
    bands: tuple[BandCount, ...]

    @property
    def mismatch(self) -> int:
        """Sum over the measured bands of ``|observed - predicted|`` (0 is a perfect count)."""
        return sum(abs(b.observed - b.predicted) for b in self.bands if b.measured)

    @property
    def site_mismatch(self) -> int:
        """As :attr:`mismatch`, against the site-group counts (disordered reading)."""
        return sum(abs(b.observed - b.predicted_site) for b in self.bands if b.measured)

    @property
    def outside(self) -> tuple[str, ...]:
        """Names of the bands outside the measured range (left out of the misfit)."""
        return tuple(b.band for b in self.bands if not b.measured)

    def to_dict(self) -> dict[str, Any]:
        """Plain, JSON-ready dictionary of the fields."""
        return {
            "phase": self.phase,
            "factor_group": self.factor_group,
            "site_group": self.site_group,
            "unit": self.unit,
            "bands": [b.to_dict() for b in self.bands],
            "mismatch": self.mismatch,
            "site_mismatch": self.site_mismatch,
        }


@dataclass(frozen=True, repr=False)
class Explanation(Summarised):
    """Assignment of a measured spectrum against a crystal prediction.

    Attributes
    ----------
    phase : str
        Source of the prediction (structure file).
    peaks_source : str or None
        Where the lines came from.
    technique : {"ir", "raman"} or None
        Technique used for the selection rules (``None``: either).
    tolerance_cm1, lattice_max_cm1 : float
        Settings used, cm-1.
    units : tuple of str
        ``"formula: table name (point group)"`` for every unit with a mode table.
    lines : tuple of LineExplanation
        Every measured line, ascending.
    comparisons : tuple of PhaseComparison
        Band counts for the given prediction first, then for each alternative.
    lattice_predicted : int
        Lattice (translational + librational) frequencies active in the technique.
    notes : tuple of str
        Remarks (units without a mode table, ...).
    states : tuple of (str, str)
        State of every molecular unit used (``ordered``, ``static``, ``dynamic``).
    """

    phase: str
    peaks_source: str | None
    technique: str | None
    tolerance_cm1: float
    lattice_max_cm1: float
    units: tuple[str, ...]
    lines: tuple[LineExplanation, ...]
    comparisons: tuple[PhaseComparison, ...]
    lattice_predicted: int
    notes: tuple[str, ...]
    states: tuple[tuple[str, str], ...] = ()

    @property
    def state(self) -> str:
        """State of the phase: ``ordered``, ``static``, ``dynamic`` or ``mixed``."""
        found = {st for _, st in self.states} or {"ordered"}
        return found.pop() if len(found) == 1 else "mixed"

    @property
    def unexplained(self) -> tuple[Peak, ...]:
        """Lines with no candidate."""
        return tuple(line.peak for line in self.lines if not line.explained)

    def to_dict(self) -> dict[str, Any]:
        """Plain, JSON-ready dictionary of the fields."""
        return {
            "phase": self.phase,
            "peaks_source": self.peaks_source,
            "technique": self.technique,
            "tolerance_cm1": self.tolerance_cm1,
            "lattice_max_cm1": self.lattice_max_cm1,
            "scoring": {
                "priors": dict(PRIORS),
                "surplus_factor": SURPLUS_FACTOR,
                "rule": "prior * (1 - 0.5 * distance / window)",
            },
            "units": list(self.units),
            "lines": [line.to_dict() for line in self.lines],
            "unexplained_cm1": [p.position_cm1 for p in self.unexplained],
            "comparisons": [c.to_dict() for c in self.comparisons],
            "lattice_predicted": self.lattice_predicted,
            "notes": list(self.notes),
            "state": self.state,
            "unit_states": dict(self.states),
        }


# --------------------------------------------------------------------------- helpers

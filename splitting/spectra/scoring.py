"""The scoring rules of :func:`splitting.spectra.assign.explain`: windows, priors, factors.

The method is described in :mod:`splitting.spectra.assign`; the numbers live here so the
result objects (:mod:`splitting.spectra.explanation`) can quote them without importing
the scorer.
"""

from __future__ import annotations

__all__ = [
    "ABOVE_HARMONIC_FRACTION",
    "DEFAULT_TOLERANCE_CM1",
    "LATTICE_MAX_CM1",
    "LO_TO_WINDOW_CM1",
    "MAX_CANDIDATES",
    "MIN_ISOTOPE_SHIFT_CM1",
    "MIN_ISOTOPOMER_SHARE",
    "PRIORS",
    "SURPLUS_FACTOR",
]

#: Largest distance (cm-1) of a line from a free fundamental (or a harmonic sum) that is
#: still read as belonging to it: solid-state shifts of internal modes from gas or
#: solution values reach a few tens of cm-1 (common practice).
DEFAULT_TOLERANCE_CM1 = 40.0
#: An overtone or a combination lies below its harmonic sum (negative anharmonicity); a
#: line is read as one at most this fraction of the window *above* the sum (shifts of the
#: fundamentals in the solid and reading error; common practice).
ABOVE_HARMONIC_FRACTION = 0.25
#: Lines below this (cm-1) may be lattice modes (translations, librations) (common practice).
LATTICE_MAX_CM1 = 250.0
#: Largest distance (cm-1) above a strong line of a polar (IR-active) band at which a weaker
#: line is offered as its longitudinal (LO) partner. The LO frequency lies above the TO one
#: (Lyddane-Sachs-Teller relation, Born and Huang 1954); splittings of strong bands reach
#: about 100 cm-1 in ionic crystals (NaCl: TO 164, LO 264 cm-1, from memory, e.g. C. Kittel,
#: Introduction to Solid State Physics, table of optical-phonon frequencies).
LO_TO_WINDOW_CM1 = 150.0
#: Prior weight of each kind of explanation; the order also breaks ties.
PRIORS: dict[str, float] = {
    "fundamental": 1.0,
    "lattice": 0.7,
    "site_activated": 0.6,
    "lo_to": 0.5,
    "second_phase": 0.5,
    "isotopologue": 0.45,
    "disorder_activated": 0.35,
    "overtone": 0.3,
    "combination": 0.3,
}
#: Factor on the fundamental score of lines beyond the predicted number of components.
SURPLUS_FACTOR = 0.4
#: Smallest share of all units an isotopomer must have to explain a satellite line.
MIN_ISOTOPOMER_SHARE = 1e-3
#: Isotope shifts smaller than this (cm-1) are not resolved from the parent line.
MIN_ISOTOPE_SHIFT_CM1 = 0.2
#: Most candidates kept per line.
MAX_CANDIDATES = 6

_KIND_ORDER = {kind: i for i, kind in enumerate(PRIORS)}


def _active(ir: bool, raman: bool, technique: str | None) -> bool:
    if technique == "ir":
        return ir
    if technique == "raman":
        return raman
    return ir or raman


def _technique_word(technique: str | None) -> str:
    return {"ir": "IR", "raman": "Raman"}.get(technique or "", "IR- or Raman")


def _closeness(d: float, window: float) -> float:
    return 1.0 - 0.5 * d / window

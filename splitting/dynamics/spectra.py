"""Simulated IR, Raman and inelastic-neutron spectra from the labelled lines of an estimate.

Pure computation (no plotting): every computed line becomes a stick, and the sticks are
broadened by a Lorentzian of a stated full width at half maximum.

* IR and Raman: which lines appear comes from the engine's selection rules (the
  ``activity`` of each line's factor-group species).  The model computes no dipole or
  polarisability derivatives, so every active line is drawn with a height equal to its
  degeneracy (the number of components it carries); only positions and counts are model
  results, relative heights are not.
* Inelastic neutron scattering (incoherent, one-phonon fundamentals): the height of a line
  is ``sum_i sigma_i |e_i|^2 / m_i`` over its atoms and degenerate components (sigma_i the
  bound incoherent cross-section of V. F. Sears, Neutron News 3 (3), 26 (1992), e_i the
  mass-weighted eigenvector), divided by the wavenumber: the intensity at a fixed momentum
  transfer, low temperature, Debye-Waller factor and overtones left out (common practice for
  a first look; hydrogen dominates).  Every line appears, whatever its optical activity.

Acoustic and imaginary lines are left out of every spectrum.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ..errors import InputError
from .results import Estimate, Line

__all__ = ["TECHNIQUES", "SimulatedSpectrum", "Stick", "lorentzian", "simulate", "simulate_all"]

#: techniques simulated, in the order they are drawn
TECHNIQUES = ("IR", "Raman", "INS")

#: how the stick heights of each technique are obtained (shown next to every spectrum)
HEIGHT_RULE = {
    "IR": "height = degeneracy of each IR-active line (selection rules of the engine; no intensities computed)",
    "Raman": "height = degeneracy of each Raman-active line (selection rules of the engine; no intensities computed)",
    "INS": "height = sum sigma_inc |e|^2 / m over atoms and components, divided by the wavenumber "
    "(incoherent, fundamentals only, fixed momentum transfer, no Debye-Waller factor; cross-sections "
    "of Sears 1992)",
}


@dataclass(frozen=True)
class Stick:
    """One line of a simulated spectrum.

    Attributes
    ----------
    wavenumber_cm1 : float
    height : float
        Relative height before broadening (largest stick of the spectrum = 1).
    species : str
        Factor-group species.
    label : str
        What the line comes from (``"nu2 of CO2"``, ``"librational (CO2)"``).
    """

    wavenumber_cm1: float
    height: float
    species: str
    label: str

    def to_dict(self) -> dict[str, object]:
        """JSON-ready form."""
        return {
            "wavenumber_cm1": round(self.wavenumber_cm1, 2),
            "height": round(self.height, 5),
            "species": self.species,
            "label": self.label,
        }


@dataclass(frozen=True)
class SimulatedSpectrum:
    """A broadened stick spectrum of one technique.

    Attributes
    ----------
    technique : str
        ``"IR"``, ``"Raman"`` or ``"INS"``.
    width_cm1 : float
        Full width at half maximum of every Lorentzian (cm-1).
    shape : str
    height_rule : str
        How the stick heights were obtained.
    model : str
        The model of the estimate the lines come from.
    sticks : tuple of Stick
    wavenumber_cm1 : numpy.ndarray
        Grid (cm-1), evenly spaced.
    intensity : numpy.ndarray
        Broadened spectrum on the grid (largest value 1, or all zero without sticks).
    """

    technique: str
    width_cm1: float
    shape: str
    height_rule: str
    model: str
    sticks: tuple[Stick, ...]
    wavenumber_cm1: np.ndarray = field(repr=False)
    intensity: np.ndarray = field(repr=False)

    def to_dict(self) -> dict[str, object]:
        """JSON-ready form (the curve rounded to 5 digits)."""
        return {
            "technique": self.technique,
            "width_cm1": self.width_cm1,
            "shape": self.shape,
            "height_rule": self.height_rule,
            "model": self.model,
            "sticks": [s.to_dict() for s in self.sticks],
            "wavenumber_cm1": [round(float(x), 3) for x in self.wavenumber_cm1],
            "intensity": [round(float(y), 5) for y in self.intensity],
        }


def lorentzian(x: np.ndarray, centre: float, fwhm: float) -> np.ndarray:
    """Lorentzian of unit height at ``centre`` with full width ``fwhm`` at half maximum.

    Examples
    --------
    >>> import numpy as np
    >>> [round(float(v), 3) for v in lorentzian(np.array([10.0, 11.0, 12.0]), 10.0, 2.0)]
    [1.0, 0.5, 0.2]
    """
    half = fwhm / 2
    return half**2 / ((x - centre) ** 2 + half**2)


def _raw_height(line: Line, technique: str) -> float:
    if technique == "IR":
        return float(line.dimension) if "IR" in line.activity else 0.0
    if technique == "Raman":
        return float(line.dimension) if "Raman" in line.activity else 0.0
    return line.neutron_weight / line.wavenumber_cm1


def simulate(
    est: Estimate,
    technique: str,
    *,
    width_cm1: float,
    upper_cm1: float | None = None,
    step_cm1: float | None = None,
) -> SimulatedSpectrum:
    """Simulated spectrum of one technique from the lines of an estimate.

    Parameters
    ----------
    est : Estimate
    technique : {"IR", "Raman", "INS"}
    width_cm1 : float
        Full width at half maximum of the Lorentzian of every line (cm-1), positive.
    upper_cm1 : float, optional
        Upper end of the grid (default: the highest line plus ten widths).
    step_cm1 : float, optional
        Grid spacing (default: a fifth of the width, at most 1 cm-1).

    Raises
    ------
    InputError
        An unknown technique, or a width or grid that is not positive.
    """
    if technique not in TECHNIQUES:
        raise InputError(f"no simulated spectrum {technique!r}; techniques: {', '.join(TECHNIQUES)}")
    if not (np.isfinite(width_cm1) and width_cm1 > 0):
        raise InputError(f"the line width must be a positive number of cm-1, not {width_cm1}")
    lines = [ln for ln in est.lines if ln.origin != "acoustic" and ln.wavenumber_cm1 > 0]
    raw = [(ln, _raw_height(ln, technique)) for ln in lines]
    raw = [(ln, h) for ln, h in raw if h > 0]
    top = max((h for _, h in raw), default=1.0)
    sticks = tuple(Stick(float(ln.wavenumber_cm1), h / top, ln.species, ln.label) for ln, h in raw)
    highest = max((ln.wavenumber_cm1 for ln in lines), default=100.0)
    upper = float(upper_cm1) if upper_cm1 is not None else highest + 10 * width_cm1
    step = float(step_cm1) if step_cm1 is not None else min(width_cm1 / 5, 1.0)
    if not (upper > 0 and step > 0):
        raise InputError("the grid of a simulated spectrum needs a positive upper end and step")
    grid = np.arange(0.0, upper + step / 2, step)
    curve = np.zeros_like(grid)
    for s in sticks:
        curve += s.height * lorentzian(grid, s.wavenumber_cm1, width_cm1)
    if curve.size and curve.max() > 0:
        curve /= curve.max()
    return SimulatedSpectrum(
        technique=technique,
        width_cm1=float(width_cm1),
        shape="Lorentzian",
        height_rule=HEIGHT_RULE[technique],
        model=est.model,
        sticks=sticks,
        wavenumber_cm1=grid,
        intensity=curve,
    )


def simulate_all(est: Estimate, *, width_cm1: float, upper_cm1: float | None = None) -> tuple[SimulatedSpectrum, ...]:
    """IR, Raman and INS spectra on one common grid."""
    lines = [ln.wavenumber_cm1 for ln in est.lines if ln.origin != "acoustic" and ln.wavenumber_cm1 > 0]
    upper = upper_cm1 if upper_cm1 is not None else max(lines, default=100.0) + 10 * width_cm1
    return tuple(simulate(est, t, width_cm1=width_cm1, upper_cm1=upper) for t in TECHNIQUES)

"""Counting observed lines per free band and setting the counts against predictions.

:func:`count_components` assigns each line to the nearest free fundamental within the
window and counts lines per band; :func:`compare_counts` sets these counts against the
number of factor-group components active in the technique (and, for a disordered phase,
against the site-group count). The total absolute difference ranks candidate phases.
"""

from __future__ import annotations

import math
import os
from collections.abc import Mapping, Sequence
from typing import Any

from ..errors import InputError
from .bands import _positions, _resolve, _UnitBands
from .catalogue import FreeMode, ModeTable
from .explanation import BandCount, PhaseComparison
from .measured import Peak, PeakList, normalise_technique
from .scoring import DEFAULT_TOLERANCE_CM1

__all__ = ["compare_counts", "count_components", "observed_counts"]


def count_components(
    peaks: PeakList | Sequence[Peak] | Sequence[float],
    modes: ModeTable | Sequence[FreeMode],
    window_cm1: float = DEFAULT_TOLERANCE_CM1,
) -> dict[str, int]:
    """Number of observed lines per free band.

    Each line goes to the nearest free fundamental (first in table order on a tie) if
    it lies within ``window_cm1`` of it; lines outside every window are not counted.

    Parameters
    ----------
    peaks : PeakList, sequence of Peak, or sequence of float
        Line positions, cm-1.
    modes : ModeTable or sequence of FreeMode
        The free fundamentals.
    window_cm1 : float
        Half width of a band's window, cm-1 (> 0).

    Returns
    -------
    dict of str to int
        Mode name to number of lines, for every mode (zeros included), in table order.

    Examples
    --------
    >>> from splitting.spectra.catalogue import find_table
    >>> count_components([1085.0, 1090.0, 712.0, 300.0], find_table("CO3"), 40.0)
    {'nu1': 2, 'nu2': 0, 'nu3': 0, 'nu4': 1}
    """
    if not (isinstance(window_cm1, (int, float)) and window_cm1 > 0 and math.isfinite(window_cm1)):
        raise InputError(f"window_cm1 must be a positive number of cm-1, got {window_cm1!r}")
    mode_list = list(modes.modes if isinstance(modes, ModeTable) else modes)
    counts = {m.name: 0 for m in mode_list}
    for x in _positions(peaks):
        best: FreeMode | None = None
        for m in mode_list:
            d = abs(x - m.wavenumber_cm1)
            if d <= window_cm1 and (best is None or d < abs(x - best.wavenumber_cm1)):
                best = m
        if best is not None:
            counts[best.name] += 1
    return counts


def observed_counts(
    peaks: PeakList,
    modes: ModeTable,
    *,
    technique: str,
    window_cm1: float = 15.0,
    unit: str | None = None,
) -> tuple[tuple[str, str, int], ...]:
    """Observed components per free species, for ranking candidate phases.

    For every species of the mode table, the number of lines that most of its fundamentals
    show (lines assigned to the nearest fundamental within ``window_cm1``); lines below the
    lowest fundamental minus the window are counted as lattice lines.

    Returns
    -------
    tuple of (band, technique, count)
        ``band`` is the species, prefixed ``"unit/"`` when ``unit`` is given, or ``"lattice"``.

    Examples
    --------
    >>> from splitting.spectra.catalogue import find_table
    >>> c60 = find_table("C60")
    >>> observed_counts([524.8, 526.9, 528.3, 20.0], c60, technique="ir")
    (('T1u', 'ir', 3), ('lattice', 'ir', 1))
    """
    tech = normalise_technique(technique)
    positions = _positions(peaks)
    out: list[tuple[str, str, int]] = []
    counts = count_components(positions, modes, window_cm1)
    for species in dict.fromkeys(m.species for m in modes.modes):
        per_mode = [counts.get(m.name, 0) for m in modes.modes if m.species == species]
        seen = [n for n in per_mode if n]
        if not seen:
            continue
        typical = max(sorted(set(seen)), key=seen.count)
        out.append((f"{unit}/{species}" if unit else species, tech, typical))
    lowest = min(m.wavenumber_cm1 for m in modes.modes)
    lattice = sum(1 for x in positions if x < lowest - window_cm1)
    if lattice:
        out.append(("lattice", tech, lattice))
    return tuple(out)


def _comparison(
    prediction: Any,
    ub: _UnitBands,
    observed: Mapping[str, int],
    measured: tuple[float, float] | None = None,
    window_cm1: float = DEFAULT_TOLERANCE_CM1,
) -> PhaseComparison:
    """Band counts of one unit; a band whose window misses ``measured`` (lowest, highest line) is marked."""

    def inside(x: float) -> bool:
        return measured is None or measured[0] - window_cm1 <= x <= measured[1] + window_cm1

    bands = tuple(
        BandCount(
            b.mode.name,
            b.mode.species,
            b.mode.wavenumber_cm1,
            int(observed.get(b.mode.name, 0)),
            b.factor_count,
            b.site_count,
            inside(b.mode.wavenumber_cm1),
        )
        for b in ub.bands
    )
    return PhaseComparison(prediction.source, prediction.factor_group, ub.orbit.site_group, ub.orbit.formula, bands)


def compare_counts(
    observed: Mapping[str, int],
    prediction: Any,
    *,
    modes: ModeTable | str | os.PathLike[str] | None = None,
    unit: str | None = None,
    technique: str | None = None,
) -> tuple[PhaseComparison, ...]:
    """Observed line counts per band against the counts one prediction allows.

    Parameters
    ----------
    observed : mapping of str to int
        Output of :func:`count_components`.
    prediction : CrystalPrediction
        A candidate phase.
    modes, unit
        Mode table and unit, as in :func:`explain`.
    technique : {"ir", "raman"} or None
        Selection rules used (``None``: a component counts if IR or Raman active).

    Returns
    -------
    tuple of PhaseComparison
        One per unit with a mode table; :attr:`PhaseComparison.mismatch` ranks phases.
    """
    tech = normalise_technique(technique)
    units, _ = _resolve(prediction, modes, unit, tech)
    return tuple(_comparison(prediction, ub, observed) for ub in units)

"""Isotopologue satellites: weaker lines at ``y + shift`` of a stronger band member ``y``.

For every member line ``y`` of a band and every isotopomer class, the lines within the
satellite window of ``y + shift`` are found in the position-sorted peak list by bisection,
and each line keeps only its best candidate per band, so the work grows with the number
of lines that fall in windows, not with the square of the peak list.  The rule itself
(window, priors, which line wins a tie) is the one described in
:mod:`splitting.spectra.assign`.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np

from .bands import _UnitBands
from .explanation import Candidate
from .measured import Peak
from .scoring import MIN_ISOTOPE_SHIFT_CM1, PRIORS, _closeness

__all__ = ["isotopologue_candidates"]

# a few ulps of slack on the bisection bounds; the exact window test is applied afterwards
_SLACK = 1e-9


def isotopologue_candidates(
    lines: Sequence[Peak],
    units: Sequence[_UnitBands],
    members: Mapping[tuple[str, str], Sequence[int]],
    isotopomer_lists: Mapping[str, Sequence[Any]],
    phase: str,
) -> dict[int, list[Candidate]]:
    """Best isotopologue candidate per line and band.

    Parameters
    ----------
    lines : sequence of Peak
        The measured lines, in input order.
    units : sequence of _UnitBands
        Units with their bands.
    members : mapping
        ``(unit formula, band name)`` to the indices of the lines that are members of the band.
    isotopomer_lists : mapping
        Unit formula to its isotopomer classes (:func:`splitting.spectra.isotopologues.isotopomers`).
    phase : str
        Source of the prediction (the candidates' phase).

    Returns
    -------
    dict of int to list of Candidate
        Line index to its candidates (at most one per band), in band order.

    Notes
    -----
    For one line and one band the candidate with the highest (rounded) score is kept; on a
    tie the first in the order member line, then isotopomer class.
    """
    x = np.array([p.position_cm1 for p in lines], dtype=float)
    intensity = np.array([p.intensity for p in lines], dtype=float)
    order = np.argsort(x, kind="stable")
    xs = x[order]
    out: dict[int, list[Candidate]] = {}
    prior = PRIORS["isotopologue"]
    for ub in units:
        formula = ub.orbit.formula
        by_name = {b.mode.name: b for b in ub.bands}
        classes = list(isotopomer_lists.get(formula, ()))
        for (unit_formula, name), idx in members.items():
            if unit_formula != formula or not classes:
                continue
            b = by_name[name]
            best = np.full(len(lines), -np.inf)
            source = np.full(len(lines), -1, dtype=np.int64)
            sources: list[tuple[int, Any, float, float, str, float]] = []
            for y_i in idx:
                y = lines[y_i]
                for iso_class in classes:
                    given = b.mode.isotope_shifts.get(iso_class.substitution)
                    if given is not None:
                        shift, how = given, "shift from the mode table"
                    else:
                        shift = iso_class.shift_cm1(b.mode.species, y.position_cm1)
                        how = "estimated shift (symmetry only, crude)"
                    if abs(shift) < MIN_ISOTOPE_SHIFT_CM1:
                        continue
                    expected = y.position_cm1 + shift
                    window = max(1.0, 0.5 * abs(shift))
                    slack = _SLACK * max(1.0, abs(expected) + window)
                    lo = int(np.searchsorted(xs, expected - window - slack, side="left"))
                    hi = int(np.searchsorted(xs, expected + window + slack, side="right"))
                    if lo >= hi:
                        continue
                    cand = order[lo:hi]
                    d = np.abs(x[cand] - expected)
                    keep = (d <= window) & (intensity[cand] < y.intensity) & (cand != y_i)
                    if not keep.any():
                        continue
                    cand, d = cand[keep], d[keep]
                    score = np.round(prior * (1.0 - 0.5 * d / window), 4)
                    better = score > best[cand]
                    if not better.any():
                        continue
                    sources.append((y_i, iso_class, shift, expected, how, window))
                    best[cand[better]] = score[better]
                    source[cand[better]] = len(sources) - 1
            for i in np.flatnonzero(source >= 0).tolist():
                y_i, iso_class, shift, expected, how, window = sources[int(source[i])]
                y = lines[y_i]
                d = abs(lines[i].position_cm1 - expected)
                out.setdefault(i, []).append(
                    Candidate(
                        "isotopologue",
                        formula,
                        name,
                        (),
                        round(expected, 3),
                        round(prior * _closeness(d, window), 4),
                        f"{iso_class.substitution} isotopomer ({100 * iso_class.abundance:.2g} % of units, "
                        f"{iso_class.point_group}) of the {name} line at {y.position_cm1:.1f} cm-1: "
                        f"{how} {shift:+.1f} cm-1",
                        phase,
                    )
                )
    return out

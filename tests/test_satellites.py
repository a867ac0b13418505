"""Isotopologue satellites in ``explain``: the sorted-array search gives what the direct
search over every pair of lines gives, and a 30,000-row peak list is handled (R08).

Reproducer R08: a peak list of 30,000 lines spread over 10-1210 cm-1 made the direct search
compare every band member with every line (about 100 s and 1 GB).  The checks here are of
results (speed goals live in benchmarks/, not in timed unit tests).
"""

from __future__ import annotations

import numpy as np
import pytest

import splitting.spectra.assign as assign
from splitting.spectra.explanation import Candidate
from splitting.spectra.measured import Peak, PeakList
from splitting.spectra.scoring import MIN_ISOTOPE_SHIFT_CM1, PRIORS, _closeness


def _direct(lines, units, members, iso, phase):
    """The rule of splitting.spectra.assign written as the plain loop over every line."""
    out: dict[int, list[Candidate]] = {}
    for ub in units:
        by_name = {b.mode.name: b for b in ub.bands}
        for (formula, name), idx in members.items():
            if formula != ub.orbit.formula:
                continue
            b = by_name[name]
            for y_i in idx:
                y = lines[y_i]
                for iso_class in iso.get(formula, ()):
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
                    for i, p in enumerate(lines):
                        d = abs(p.position_cm1 - expected)
                        if i == y_i or d > window or not p.intensity < y.intensity:
                            continue
                        out.setdefault(i, []).append(
                            Candidate(
                                "isotopologue",
                                formula,
                                name,
                                (),
                                round(expected, 3),
                                round(PRIORS["isotopologue"] * _closeness(d, window), 4),
                                f"{iso_class.substitution} isotopomer ({100 * iso_class.abundance:.2g} % of units, "
                                f"{iso_class.point_group}) of the {name} line at {y.position_cm1:.1f} cm-1: "
                                f"{how} {shift:+.1f} cm-1",
                                phase,
                            )
                        )
    return out


def _peaks(rng: np.random.Generator, n: int, lo: float, hi: float) -> PeakList:
    # invented lines: uniform positions, random heights (test data only)
    x = rng.uniform(lo, hi, n)
    h = rng.uniform(1.0, 100.0, n)
    return PeakList(tuple(Peak(float(a), float(b)) for a, b in zip(x, h, strict=True)), source="invented")


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_R08_sorted_search_equals_direct_search(calcite, monkeypatch: pytest.MonkeyPatch, seed: int) -> None:
    rng = np.random.default_rng(seed)
    # dense around the carbonate fundamentals of the bundled table (680, 879, 1063, 1415 cm-1)
    # and sparse elsewhere, so that satellites are found
    parts = [_peaks(rng, 60, c - 45, c + 45).peaks for c in (680.0, 879.0, 1063.0, 1415.0)]
    peaks = PeakList(tuple(p for part in parts for p in part) + _peaks(rng, 100, 10, 1600).peaks)
    fast = assign.explain(calcite, peaks).to_dict()
    monkeypatch.setattr(assign, "isotopologue_candidates", _direct)
    slow = assign.explain(calcite, peaks).to_dict()
    assert fast == slow
    kinds = [c["kind"] for line in fast["lines"] for c in line["candidates"]]
    assert kinds.count("isotopologue") > 0


def test_R08_thirty_thousand_lines(calcite) -> None:
    """As the reproducer: 30,000 lines over 10-1210 cm-1; each line keeps few candidates."""
    rng = np.random.default_rng(8)
    peaks = _peaks(rng, 30_000, 10.0, 1210.0)
    result = assign.explain(calcite, peaks)
    assert len(result.lines) == 30_000
    assert max(len(line.candidates) for line in result.lines) <= assign.MAX_CANDIDATES
    per_band = {}
    for line in result.lines:
        keys = [(c.kind, c.unit, c.band) for c in line.candidates]
        assert len(keys) == len(set(keys))  # at most one candidate of a kind per band and line
        for c in line.candidates:
            per_band[c.kind] = per_band.get(c.kind, 0) + 1
    assert per_band.get("fundamental", 0) > 0

"""Rescoring the candidates of :func:`~splitting.spectra.assign.explain` with a model estimate.

Without an estimate a fundamental candidate is scored by the distance of the line from the
free-unit value, and every lattice candidate of a line scores the same.  With a model
estimate (:mod:`splitting.dynamics`) the closer match ranks higher:

* a fundamental (or site-activated) candidate is scored by the distance to the nearest
  active component *expected* from the estimate: the free value of the mode table plus the
  model's offset of that component from the model's own free value (its site shift and
  factor-group splitting; the model's absolute internal wavenumbers are not used, as the
  free-unit method is off by up to tens of cm-1);
* a lattice candidate is scored by the distance to the nearest active model lattice line,
  over a window of twice that line's stated uncertainty (at least 10 cm-1).

The reason of every rescored candidate names the model component it was matched to.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import replace

from .explanation import Candidate
from .scoring import PRIORS

__all__ = ["rescore"]

#: smallest window (cm-1) of a lattice match to a model line
LATTICE_WINDOW_CM1 = 10.0


def _active(activity: str, technique: str | None) -> bool:
    if technique == "ir":
        return "IR" in activity
    if technique == "raman":
        return "Raman" in activity
    return activity != "silent"


def _score(prior: float, d: float, window: float) -> float:
    return round(prior * max(0.0, 1.0 - 0.5 * d / window), 4)


def rescore(
    x: float, candidates: Sequence[Candidate], estimate, *, tolerance_cm1: float, technique: str | None, phase: str
) -> list[Candidate]:
    """The candidates of a line at ``x`` cm-1, scored against the model ``estimate``."""
    out = []
    for c in candidates:
        if c.phase != phase:
            out.append(c)
            continue
        if c.kind in ("fundamental", "site_activated") and c.predicted_cm1 is not None:
            band = next((b for b in estimate.bands if b.unit == c.unit and b.band == c.band), None)
            comps = [
                (ln.species, c.predicted_cm1 + ln.wavenumber_cm1 - band.free_cm1)
                for ln in estimate.lines
                if band is not None
                and ln.origin == "internal"
                and ln.unit == c.unit
                and ln.band == c.band
                and _active(ln.activity, technique)
            ]
            if comps:
                species, expected = min(comps, key=lambda s: abs(x - s[1]))
                d = abs(x - expected)
                out.append(
                    replace(
                        c,
                        predicted_cm1=round(expected, 2),
                        score=_score(PRIORS[c.kind], d, tolerance_cm1),
                        reason=c.reason + f"; model estimate: component {species} expected at {expected:.1f} cm-1 "
                        f"(free value + model shift), {x - expected:+.1f} cm-1",
                    )
                )
                continue
        if c.kind == "lattice":
            near = [ln for ln in estimate.lattice_lines() if _active(ln.activity, technique)]
            if near:
                ln = min(near, key=lambda ln: abs(x - ln.wavenumber_cm1))
                window = max(2 * ln.uncertainty_cm1, LATTICE_WINDOW_CM1)
                d = abs(x - ln.wavenumber_cm1)
                out.append(
                    replace(
                        c,
                        predicted_cm1=round(ln.wavenumber_cm1, 2),
                        score=_score(PRIORS["lattice"], d, window),
                        reason=c.reason + f"; model estimate: nearest {ln.origin} line {ln.species} at "
                        f"{ln.wavenumber_cm1:.1f} +/- {ln.uncertainty_cm1:.0f} cm-1",
                    )
                )
                continue
        out.append(c)
    return out

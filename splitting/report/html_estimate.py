"""The report section of a model estimate (:mod:`splitting.dynamics`), when one is supplied.

For every phase with an estimate: the model named in words, the line-pattern figure at the
estimated positions, the lattice lines and the site shift and factor-group splitting of
every band, each number marked as a model value.
"""

from __future__ import annotations

from collections.abc import Sequence
from html import escape

from ..errors import InputError
from ..plot.mulliken import formula_html
from ..plot.mulliken import html as species_html
from ._htmlkit import Figures, table

__all__ = ["estimate_section"]


def _wn(x: float) -> str:
    return f"{-x:.1f}i" if x < 0 else f"{x:.1f}"


def estimate_section(predictions: Sequence, estimates: Sequence, figures: Figures) -> str:
    """HTML of the model-estimate section (empty without estimates).

    ``estimates`` holds one :class:`~splitting.dynamics.results.Estimate` (or None) per
    prediction, in the same order.
    """
    if not estimates:
        return ""
    if len(estimates) != len(predictions):
        raise InputError(f"{len(estimates)} estimate(s) for {len(predictions)} phase(s); give one per phase")
    from ..plot.lines import line_pattern

    out = []
    for (label, pred), est in zip(predictions, estimates, strict=True):
        if est is None:
            continue
        if est.factor_group != pred.factor_group:
            raise InputError(f"{label}: the estimate is for factor group {est.factor_group}, not {pred.factor_group}")
        parts = [
            f"<h3>{escape(label)}</h3>",
            f"<p>{escape(est.model)}. Uncertainty: {escape(est.uncertainty_rule)}.</p>",
        ]
        for u in pred.units:
            if not u.correlation or not any(b.unit == u.formula for b in est.bands):
                continue
            art = line_pattern([(label, pred)], u.formula, estimates=[est])
            parts.append(
                f"<figure class=pattern>{figures.svg(art.figure)}<figcaption>Components of every band of "
                f"{formula_html(u.formula)} and the lattice modes at the model's wavenumbers (each panel its own "
                "axis); a model estimate, not a measurement.</figcaption></figure>"
            )
        rows = [
            [_wn(ln.wavenumber_cm1), f"{ln.uncertainty_cm1:.0f}", species_html(ln.species), ln.activity, ln.origin]
            for ln in est.lattice_lines()
        ]
        if rows:
            parts.append(
                table(
                    ["cm-1 (model)", "+/-", "species", "activity", "origin"],
                    rows,
                    numeric=(0, 1),
                    caption="Lattice lines of the model",
                )
            )
        rows = [
            [
                formula_html(b.unit),
                escape(b.band),
                species_html(b.free_species),
                f"{b.free_cm1:.1f}",
                f"{b.site_shift_cm1:+.1f}",
                f"{b.splitting_cm1:.1f}",
                ", ".join(f"{species_html(s)} {w:.1f}" for s, w in b.components),
            ]
            for b in est.bands
        ]
        if rows:
            parts.append(
                table(
                    ["unit", "band", "free species", "free (model)", "site shift", "splitting", "components"],
                    rows,
                    numeric=(3, 4, 5),
                    caption="Site shift and factor-group splitting of every band (model, cm-1)",
                )
            )
        for w in est.warnings:
            parts.append(f"<p class=warning>{escape(w)}</p>")
        out.append("".join(parts))
    if not out:
        return ""
    return (
        '<section class="phase" id="estimate"><h2>Model estimate of the positions</h2>'
        "<p>Every number in this section comes from a model (harmonic lattice dynamics), not from a "
        "measurement.</p>" + "\n".join(out) + "</section>"
    )

"""A self-contained HTML report of one or more predictions.

The page holds everything (style inline, figures as inline SVG; no scripts, no network):
for every phase the structure file (its name only), cell parameters, setting and state when
known, space group, factor group and the axis convention of the species labels, the units
and their sites, the free-unit bands with their wavenumbers and components, the correlation
table and diagram of every molecular unit, the factor-group species with their activity, the
Raman tensors with what common scattering geometries see, the totals and the warnings.  With
several phases a table and a line pattern show each band of the units they share, phase by
phase.  The assignment of measured lines and the candidate lower-symmetry phases follow when
given, then the methods with their published sources and the versions of the software.  Each
phase starts on a new page when printed (styles in ``report.css``).
"""

from __future__ import annotations

import os
import re
from collections.abc import Mapping, Sequence
from datetime import date
from html import escape
from importlib import resources
from pathlib import Path
from typing import TYPE_CHECKING

from .._io import atomic_write_text
from ..crystal.names import unit_name
from ..errors import InputError
from ..plot.mulliken import formula_html, hermann_mauguin_html, schoenflies_html
from ..plot.mulliken import html as species_html
from . import html_sections as sections
from ._htmlkit import MARK_IR, MARK_RAMAN, Figures, axes_html, rep_html, table

if TYPE_CHECKING:  # pragma: no cover
    from ..crystal.results import CrystalPrediction, UnitOrbit
    from ..phases.lower import Lowering
    from ..spectra.catalogue import ModeTable
    from ..spectra.explanation import Explanation

__all__ = ["html_report", "write_report"]


def _css() -> str:
    return resources.files("splitting.report").joinpath("report.css").read_text(encoding="utf-8")


_MARK_IR = MARK_IR
_MARK_RAMAN = MARK_RAMAN
_rep_html = rep_html
_axes_html = axes_html
_table = table
_Figures = Figures


def _point_group_hm(symbol: str) -> str:
    """Hermann-Mauguin point-group symbol, upright, with bars: ``m-3`` -> m3&#773;."""
    return re.sub(r"-(\d)", r'<span class="bar">\1</span>', escape(symbol))


def _facts(pred: CrystalPrediction, state: str | None = None) -> str:
    sg = pred.space_group
    centro = "centrosymmetric" if pred.centrosymmetric else "non-centrosymmetric"
    items = sections.cell_items(pred, state)
    items += [
        (
            "cell",
            f"{formula_html(pred.formula)} (primitive cell, {pred.atoms_primitive} atoms; {pred.atoms_input} as given)",
        ),
        (
            "space group",
            f"{hermann_mauguin_html(pred.symbol)} (No. {sg.number}, {schoenflies_html(sg.schoenflies)}"
            f"{sections.standard_beside_html(pred)}), "
            f"{escape(sg.crystal_system)}; distance tolerance {sg.tolerance:g} &#197;",
        ),
        ("factor group", f"{schoenflies_html(pred.factor_group)} ({_point_group_hm(sg.point_group)}), {centro}"),
        (
            "axes of the labels",
            f"{_axes_html(pred.factor_axes)} "
            "<span class=muted>(species, dipole and polarisability components refer to these "
            "crystal directions)</span>",
        ),
    ]
    if sg.other_tolerances:
        tried = "; ".join(
            f"{t:g} &#197; &rarr; {hermann_mauguin_html(sym)} (No. {n})" for t, n, sym in sg.other_tolerances
        )
        items.append(("other tolerances", tried))
    rows = "".join(f"<dt>{k}</dt><dd>{v}</dd>" for k, v in items)
    return f'<dl class="facts">{rows}</dl>'


def _units(pred: CrystalPrediction) -> str:
    rows = []
    for u in pred.units:
        rows.append(
            [
                formula_html(u.name),
                escape(u.kind),
                schoenflies_html(u.free_group) if u.free_group else "&ndash;",
                escape(u.wyckoff),
                escape(u.site_symmetry),
                schoenflies_html(u.site_group),
                str(u.count),
                f"{u.max_deviation:.3f}" if u.free_group else "&ndash;",
                _axes_html(u.site_axes),
            ]
        )
    return _table(
        [
            "unit",
            "kind",
            "free group",
            "Wyckoff",
            "site symmetry",
            "site group",
            "Z (primitive)",
            "deviation / &#197;",
            "site axes",
        ],
        rows,
        numeric=(6, 7),
        caption="Units: Z is the number in the primitive cell; deviation is the largest displacement "
        "of an atom from the ideal free-unit geometry.",
    )


def _correlation(pred: CrystalPrediction, u: UnitOrbit, figures: _Figures) -> str:
    from ..plot.correlation import correlation_diagram

    rows = [
        [species_html(c.free), str(c.free_dimension), str(c.modes), _rep_html(c.site), _rep_html(c.factor)]
        for c in u.correlation
    ]
    table = _table(
        [
            f"free ({schoenflies_html(u.free_group or 'C1')})",
            "dim",
            "fundamentals",
            f"site {escape(u.wyckoff)} ({schoenflies_html(u.site_group)})",
            f"factor group ({schoenflies_html(pred.factor_group)})",
        ],
        rows,
        numeric=(1, 2),
        caption="Site and factor-group components of one fundamental of each free species "
        "(all units of the orbit together in the factor group).",
    )
    art = correlation_diagram(pred, u)
    svg = figures.svg(art.figure)
    caption = (
        f"Correlation diagram of {formula_html(u.name)}: free group {schoenflies_html(u.free_group)} "
        f"&rarr; site group {schoenflies_html(u.site_group)} (Wyckoff {escape(u.wyckoff)}) &rarr; factor "
        f"group {schoenflies_html(pred.factor_group)}. {_MARK_IR} IR active, {_MARK_RAMAN} Raman active; "
        "small grey numbers give the degeneracy, numbers on lines the multiplicity."
    )
    lattice = (
        f"<p>Lattice modes from {formula_html(u.name)}: translations {_rep_html(u.translations)}; "
        f"librations {_rep_html(u.librations)}.</p>"
    )
    sa = _axes_html(u.site_axes)
    axes = f"<p class=muted>Site-group labels use {sa}.</p>" if sa else ""
    return (
        f"<h3>Correlation: {formula_html(u.name)}</h3>{axes}{table}"
        f'<figure class="diagram">{svg}<figcaption>{caption}</figcaption></figure>{lattice}'
    )


def _species(pred: CrystalPrediction) -> str:
    rows = []
    for s in pred.species:
        marks = (_MARK_IR if s.ir else "") + (_MARK_RAMAN if s.raman else "")
        activity = escape(s.activity) + (" (polar)" if s.polar else "")
        rows.append(
            [
                species_html(s.label),
                str(s.dimension),
                str(s.internal),
                str(s.translational),
                str(s.librational),
                str(s.acoustic),
                str(s.optical),
                f"{marks} {activity}",
                escape(", ".join(s.ir)) or "&ndash;",
                escape(", ".join(s.raman)) or "&ndash;",
            ]
        )
    table = _table(
        ["species", "dim", "internal", "transl.", "librat.", "acoustic", "optical", "activity", "IR", "Raman"],
        rows,
        numeric=(1, 2, 3, 4, 5, 6),
        caption="Factor-group species at k = 0; counts are distinct frequencies (optical = internal "
        "+ translational + librational; acoustic modes are not optical).",
    )
    t = pred.totals()
    lines = [
        f"&Gamma;<sub>3N</sub> = {_rep_html(pred.gamma_3n)} (whole-cell count, checked against the sum over units); "
        f"acoustic: {_rep_html(pred.acoustic)}.",
        f"<strong>{t['optical']}</strong> optical frequencies: <strong>{t['ir']}</strong> IR-active, "
        f"<strong>{t['raman']}</strong> Raman-active, <strong>{t['silent']}</strong> silent"
        + (f", {t['polar']} polar (split into LO and TO, seen in IR reflectance)" if t["polar"] else "")
        + ".",
    ]
    if pred.centrosymmetric:
        lines.append("Centrosymmetric factor group: no frequency is both IR and Raman active (mutual exclusion).")
    lines.append("Inelastic neutron scattering: every mode is allowed.")
    summary = "".join(f"<p>{x}</p>" for x in lines)
    return f'<h3>Factor-group species</h3>{table}<div class="summary">{summary}</div>'


def _phase(
    index: int,
    label: str,
    pred: CrystalPrediction,
    figures: _Figures,
    modes: Mapping[str, ModeTable],
    state: str | None = None,
) -> str:
    out = [f'<section class="phase" id="phase-{index}">', f"<h2>{escape(label)}</h2>", _facts(pred, state)]
    for w in pred.warnings:
        out.append(f'<div class="warning" role="note"><strong>Warning.</strong>{escape(w)}</div>')
    if pred.space_group.tolerance_sensitive:
        out.append(
            '<div class="warning" role="note"><strong>Warning.</strong>another distance tolerance gives '
            "another space group; check the structure.</div>"
        )
    out.append("<h3>Units and sites</h3>")
    out.append(_units(pred))
    out.append(sections.bands_section(pred, modes))
    for u in pred.units:
        if u.correlation:
            out.append(_correlation(pred, u, figures))
    out.append(_species(pred))
    out.append(sections.tensor_section(pred))
    out.append("</section>")
    return "\n".join(out)


def _across(
    predictions: Sequence[tuple[str, CrystalPrediction]], modes: Mapping[str, ModeTable], figures: _Figures
) -> str:
    from ..plot.lines import line_pattern

    shared = None
    for _, pred in predictions:
        formulas = {u.formula for u in pred.units if u.correlation}
        shared = formulas if shared is None else shared & formulas
    out = []
    for formula in sorted(shared or ()):
        groups = {next(u for u in p.units if u.formula == formula and u.correlation).free_group for _, p in predictions}
        if len(groups) != 1:
            continue
        tables = {t.name: t for _, p in predictions for u, t in sections.unit_tables(p, modes) if u.formula == formula}
        art = line_pattern(predictions, formula, modes=next(iter(tables.values())) if len(tables) == 1 else None)
        caption = (
            f"Bands of {formula_html(unit_name(formula))} across the phases: each bar is one factor-group species, "
            "the number before it counts its components (length grows with the degeneracy); "
            f"{_MARK_IR} IR active, {_MARK_RAMAN} Raman active. No frequencies are predicted: every bar "
            "sits at the free-unit value."
        )
        out.append(
            f"<h3>{formula_html(unit_name(formula))}</h3><figure class=pattern>{figures.svg(art.figure)}"
            f"<figcaption>{caption}</figcaption></figure>"
        )
    bands = sections.bands_across(predictions, modes)
    if not out and not bands:
        return ""
    return '<section class="phase" id="across"><h2>Across the phases</h2>' + bands + "\n".join(out) + "</section>"


def html_report(
    predictions: Sequence[tuple[str, CrystalPrediction]],
    *,
    title: str | None = None,
    notes: Sequence[str] = (),
    modes: Mapping[str, ModeTable] | None = None,
    explanations: Sequence[Explanation] = (),
    lowering: Lowering | None = None,
    estimates: Sequence = (),
    states: Sequence[str | None] = (),
) -> str:
    """The whole report as one self-contained HTML document.

    Parameters
    ----------
    predictions : sequence of (str, CrystalPrediction)
        Phase label and prediction, in the order to show.
    title : str, optional
        Page title (default: the phase labels).
    notes : sequence of str
        Free text shown under the title (plain text; escaped).
    modes : mapping of str to ModeTable, optional
        Free-unit mode tables by unit formula (default: the bundled table of each molecular
        unit, where there is one): the band tables and the line pattern across phases use
        their wavenumbers (cm-1) and cite their sources.
    explanations : sequence of Explanation
        Assignments of measured lines (:func:`splitting.spectra.assign.explain`) to show.
    lowering : Lowering, optional
        Candidate lower-symmetry phases (:func:`splitting.phases.lower.lower`) to show.
    estimates : sequence of Estimate or None
        Model estimates (:func:`splitting.dynamics.estimate`), one per prediction: a section
        with the positions of the model (:mod:`splitting.report.html_estimate`).
    states : sequence of str, optional
        State of each phase in order (``"ordered"``, ``"static"``, ``"dynamic"``), shown
        with what it means for the lines.

    Returns
    -------
    str

    Raises
    ------
    InputError
        If ``predictions`` is empty.
    """
    if not predictions:
        raise InputError("the report needs at least one prediction")
    figures = _Figures()
    modes = dict(modes or {})
    heading = title or "Band splitting in the crystal: " + ", ".join(lab for lab, _ in predictions)
    toc = "".join(f'<li><a href="#phase-{k}">{escape(lab)}</a></li>' for k, (lab, _) in enumerate(predictions, 1))
    if states and len(states) != len(predictions):
        raise InputError(f"{len(states)} states for {len(predictions)} phases; give one per phase")
    given = list(states) or [None] * len(predictions)
    phases = [_phase(k, lab, pred, figures, modes, given[k - 1]) for k, (lab, pred) in enumerate(predictions, 1)]
    across = _across(predictions, modes, figures) if len(predictions) > 1 else ""
    if across:
        toc += '<li><a href="#across">Across the phases</a></li>'
    from .html_estimate import estimate_section

    estimated = estimate_section(predictions, estimates, figures)
    if estimated:
        toc += '<li><a href="#estimate">Model estimate of the positions</a></li>'
    assigned = sections.assignment_section(explanations, figures)
    if assigned:
        toc += '<li><a href="#assignment">Assignment of the measured lines</a></li>'
    candidates = sections.candidates_section(lowering)
    if candidates:
        toc += '<li><a href="#candidates">Candidate lower-symmetry phases</a></li>'
    toc += '<li><a href="#methods">Methods</a></li>'
    mode_sources = [
        f"{t.name} ({t.formula}, {t.phase}): {t.source}"
        for _, p in predictions
        for _, t in sections.unit_tables(p, modes)
    ]
    methods = sections.methods_section(mode_sources)
    software = sections.versions()
    note_html = ("<ul class=notes>" + "".join(f"<li>{escape(n)}</li>" for n in notes) + "</ul>") if notes else ""
    legend = (
        f'<p class="legend">{_MARK_IR} IR active &nbsp; {_MARK_RAMAN} Raman active. Species labels follow '
        "Mulliken's conventions in the axes stated for each phase; counts are at the centre of the "
        "Brillouin zone (k = 0).</p>"
    )
    return "\n".join(
        [
            "<!DOCTYPE html>",
            '<html lang="en">',
            "<head>",
            '<meta charset="utf-8">',
            '<meta name="viewport" content="width=device-width, initial-scale=1">',
            '<meta name="generator" content="splitting">',
            f"<title>{escape(heading)}</title>",
            f"<style>\n{_css()}</style>",
            "</head>",
            "<body>",
            f"<header><h1>{escape(heading)}</h1>",
            f'<p class="meta">Computed on {date.today().isoformat()} with {escape(software)}; '
            f"{len(predictions)} phase{'s' if len(predictions) != 1 else ''}.</p>",
            note_html,
            legend,
            f'<nav class="contents" aria-label="Contents"><h2>Contents</h2><ol>{toc}</ol></nav>',
            "</header>",
            "<main>",
            *phases,
            across,
            estimated,
            assigned,
            candidates,
            methods,
            "</main>",
            f"<footer>Computed with {escape(software)}. Self-contained report: styles and figures are inline; "
            "no scripts and no network access are needed.</footer>",
            "</body>",
            "</html>",
            "",
        ]
    )


def write_report(
    path: str | os.PathLike[str],
    predictions: Sequence[tuple[str, CrystalPrediction]],
    *,
    title: str | None = None,
    notes: Sequence[str] = (),
    modes: Mapping[str, ModeTable] | None = None,
    explanations: Sequence[Explanation] = (),
    lowering: Lowering | None = None,
    estimates: Sequence = (),
    states: Sequence[str | None] = (),
) -> Path:
    """Write :func:`html_report` to ``path`` atomically (the suffix should be ``.html``).

    Raises
    ------
    InputError
        If the suffix is not ``.html``/``.htm`` or the folder does not exist.
    """
    target = Path(path)
    if target.suffix.lower() not in (".html", ".htm"):
        raise InputError(f"{target}: the report is HTML; give a file name ending in .html")
    return atomic_write_text(
        target,
        html_report(
            predictions,
            title=title,
            notes=notes,
            modes=modes,
            explanations=explanations,
            lowering=lowering,
            estimates=estimates,
            states=states,
        ),
    )

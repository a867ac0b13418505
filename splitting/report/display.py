"""Short summaries of results: the text of ``repr`` and the HTML table Jupyter shows.

One function per result type, chosen by class name, so the result modules need not be
imported here. Every summary fits a few lines; the full text is in
:mod:`splitting.report.text`, the full page in :mod:`splitting.report.html`.
"""

from __future__ import annotations

import os
from collections.abc import Sequence
from html import escape
from typing import Any

__all__ = ["summary", "summary_html"]


def _name(source: str) -> str:
    """File name only: a summary never shows a local folder."""
    return os.path.basename(source) or source


def _plural(n: int, word: str) -> str:
    return f"{n} {word}" if n == 1 else f"{n} {word}s"


def _units(pred: Any) -> str:
    parts = []
    for u in pred.units:
        parts.append(f"{u.name} ×{u.count} at {u.wyckoff} (site {u.site_group})")
    return ", ".join(parts) or "none"


def _totals(pred: Any) -> str:
    t = pred.totals()
    text = f"{t['optical']} optical frequencies: {t['ir']} IR, {t['raman']} Raman, {t['silent']} silent"
    return text + (f" ({t['polar']} polar)" if t["polar"] else "")


def _crystal(pred: Any) -> list[str]:
    sg = pred.space_group
    return [
        f"CrystalPrediction: {_name(pred.source)}",
        f"  space group {pred.symbol} (No. {sg.number}), factor group {pred.factor_group}, "
        f"{_plural(pred.atoms_primitive, 'atom')} in the primitive cell",
        f"  units: {_units(pred)}",
        f"  {_totals(pred)}",
    ]


def _sequence(seq: Any) -> list[str]:
    out = [f"PhaseSequence: {_plural(len(seq.phases), 'phase')}"]
    for p in seq.phases:
        state = "ordered" if p.ordered else "disordered"
        out.append(f"  {p.label}: {p.symbol}, factor group {p.factor_group}, {state}")
    changed = [b for b in seq.bands if getattr(b, "changes", True)]
    out.append(f"  {_plural(len(changed), 'band')} compared")
    return out


def _lowering(low: Any) -> list[str]:
    parent = low.parent
    out = [
        f"Lowering: {_name(parent.source)} ({parent.symbol}), "
        f"{_plural(len(low.candidates), 'candidate')} up to index {low.max_index}"
    ]
    for c in low.candidates[:3]:
        score = "" if c.score is None else f", misfit {c.score:.3g}"
        out.append(f"  {c.name}, index {c.index}{score}")
    if len(low.candidates) > 3:
        out.append(f"  ... {len(low.candidates) - 3} more")
    return out


def _explanation(ex: Any) -> list[str]:
    tech = {"ir": "IR", "raman": "Raman"}.get(ex.technique or "", "IR or Raman")
    n, bad = len(ex.lines), len(ex.unexplained)
    out = [
        f"Explanation: {_plural(n, 'line')} ({tech}) against {_name(ex.phase)}",
        f"  {n - bad} explained, {bad} unexplained; window {ex.tolerance_cm1:g} cm-1",
    ]
    for line in ex.lines[:5]:
        best = line.candidates[0] if line.candidates else None
        what = f"{best.band} ({best.kind.replace('_', ' ')})" if best else "?"
        out.append(f"  {line.peak.position_cm1:8.1f} cm-1  {what}")
    if n > 5:
        out.append(f"  ... {n - 5} more")
    return out


def _molecule(m: Any) -> list[str]:
    return [
        f"FreeUnitAnalysis: {m.formula}, point group {m.point_group}",
        f"  vibrations: {m.vibrations}",
        f"  {m.ir_active} IR-active and {m.raman_active} Raman-active fundamentals",
    ]


_TEXT = {
    "CrystalPrediction": _crystal,
    "PhaseSequence": _sequence,
    "Lowering": _lowering,
    "Explanation": _explanation,
    "FreeUnitAnalysis": _molecule,
}


def summary(result: Any) -> str:
    """A few readable lines about a result (what ``repr`` shows).

    Examples
    --------
    >>> import splitting
    >>> p = splitting.predict(splitting.bundled_structure("calcite.cif"))
    >>> print(summary(p).splitlines()[1])
      space group R-3c (No. 167), factor group D3d, 10 atoms in the primitive cell
    """
    make = _TEXT.get(type(result).__name__)
    if make is None:
        return object.__repr__(result)
    return "\n".join(make(result))


def _table(headers: Sequence[str], rows: Sequence[Sequence[Any]]) -> str:
    """HTML table; string cells are escaped, :class:`_Html` cells are used as they are."""
    head = "".join(f"<th>{escape(h)}</th>" for h in headers)
    cell = lambda c: c if isinstance(c, _Html) else escape(str(c))  # noqa: E731
    body = "".join("<tr>" + "".join(f"<td>{cell(c)}</td>" for c in r) + "</tr>" for r in rows)
    return f"<table><thead><tr>{head}</tr></thead><tbody>{body}</tbody></table>"


class _Html(str):
    """Text that is already HTML."""


def summary_html(result: Any) -> str:
    """The summary as HTML for Jupyter: a heading line and a table.

    For a crystal prediction the table lists the factor-group species with their counts and
    activity; for other results, their summary lines.

    Examples
    --------
    >>> import splitting
    >>> p = splitting.predict(splitting.bundled_structure("calcite.cif"))
    >>> html = summary_html(p)
    >>> html.startswith("<div") and "<th>species</th>" in html and "<td>A<sub>1g</sub></td>" in html
    True
    """
    lines = summary(result).splitlines()
    head = "".join(f"<div>{escape(x.strip())}</div>" for x in lines[:1])
    if type(result).__name__ == "CrystalPrediction":
        from ..plot.mulliken import html as species_html

        rows = [
            (
                _Html(species_html(s.label)),
                s.optical,
                s.translational,
                s.librational,
                ", ".join(s.ir) or "–",
                ", ".join(s.raman) or "–",
            )
            for s in result.species
        ]
        info = "".join(f"<div>{escape(x.strip())}</div>" for x in lines[1:])
        table = _table(["species", "optical", "transl.", "librat.", "IR", "Raman"], rows)
        return f'<div class="splitting-summary">{head}{info}{table}</div>'
    rows = [(x.strip(),) for x in lines[1:]]
    return f'<div class="splitting-summary">{head}{_table([""], rows) if rows else ""}</div>'

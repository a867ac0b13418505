"""Line pattern at the positions of a model estimate: one panel per band, each with its own axis.

Called by :func:`splitting.plot.lines.line_pattern` when an estimate is given for every
phase.  Each band of the unit (and the lattice modes) gets a panel whose wavenumber axis
spans just that band, so a splitting of a few cm-1 stays visible next to a band at
2000 cm-1.  Every component is a bar at its estimated wavenumber; labels that would collide
are moved apart and joined to their bar by a thin leader, the bars never move.
"""

from __future__ import annotations

from collections.abc import Sequence

from ..errors import InputError
from .correlation import COLOURS, activity_mark
from .lines import (
    _FONT,
    LinePatternArtists,
    Stick,
    _bar_in,
    _headings,
    _mode_mathtext,
    legend_and_note,
)
from .mulliken import mathtext

__all__ = ["estimated_pattern"]

_COL_IN = 1.95
_LABEL_GAP_PT = 9.5
_PANEL_GAP_IN = 0.28
_SHORT = {"translational": "transl.", "librational": "libr."}


def _check(phases, estimates) -> None:
    if len(estimates) != len(phases):
        raise InputError(f"{len(estimates)} estimate(s) for {len(phases)} phase(s); give one per phase")
    for (label, pred), est in zip(phases, estimates, strict=True):
        if est.factor_group != pred.factor_group:
            raise InputError(
                f"{label}: the estimate is for factor group {est.factor_group}, the prediction for {pred.factor_group}"
            )


def _rows(formula: str, estimates, band: str | None) -> list[tuple[str, str | None, float | None, object]]:
    """(free species or "lattice", mode name, model free value, BandEstimate of the first phase)."""
    first = [b for b in estimates[0].bands if b.unit == formula]
    names = set.intersection(*({b.band for b in e.bands if b.unit == formula} for e in estimates))
    rows = [
        (b.free_species, b.band, b.free_cm1, b) for b in sorted(first, key=lambda b: -b.free_cm1) if b.band in names
    ]
    rows.append(("lattice", None, None, None))
    if band is not None:
        rows = [r for r in rows if band in (r[0], r[1])]
        if not rows:
            raise InputError(f"{formula} has no band {band!r} in the estimate")
    return rows


def _lines_of(est, formula: str, row) -> list[tuple[str, float, int, str, str]]:
    """(species, wavenumber, dimension, activity, short origin) of the lines of one row."""
    species, name = row[0], row[1]
    if species == "lattice":
        return [
            (ln.species, ln.wavenumber_cm1, ln.dimension, ln.activity, _SHORT[ln.origin])
            for ln in est.lines
            if ln.origin in ("translational", "librational")
        ]
    return [
        (ln.species, ln.wavenumber_cm1, ln.dimension, ln.activity, "")
        for ln in est.lines
        if ln.origin == "internal" and ln.unit == formula and ln.band == name
    ]


def _spread_labels(ys: Sequence[float], height: float) -> list[float]:
    """Label heights (points) near ``ys``, at least _LABEL_GAP_PT apart, inside [0, height]."""
    order = sorted(range(len(ys)), key=lambda i: ys[i])
    out = [0.0] * len(ys)
    prev = None
    for i in order:
        y = ys[i] if prev is None else max(ys[i], prev + _LABEL_GAP_PT)
        out[i] = prev = y
    over = max((out[i] for i in order), default=0.0) - (height - _LABEL_GAP_PT / 2)
    if over > 0:
        for i in order:
            out[i] -= over
        prev = None
        for i in reversed(order):
            y = out[i] if prev is None else min(out[i], prev - _LABEL_GAP_PT)
            out[i] = prev = y
    return out


def estimated_pattern(phases, units, estimates, *, band: str | None, free_act) -> LinePatternArtists:
    """Draw the line pattern at estimated positions (see the module docstring)."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure
    from matplotlib.ticker import MaxNLocator

    _check(phases, estimates)
    u0 = units[0]
    rows = _rows(u0.formula, estimates, band)
    columns = ["free", *[lab for lab, _ in phases]]
    content = [[_lines_of(est, u0.formula, row) for est in estimates] for row in rows]
    heights = [max(0.95, max(len(c) for c in cols) * _LABEL_GAP_PT / 72 + 0.3) for cols in content]
    widths = [_COL_IN] * len(columns)
    lefts = [_COL_IN * k for k in range(len(columns))]
    left_in, right_in, head_in, foot_in = 0.75, 0.2, 1.05, 0.9
    total_w = left_in + sum(widths) + right_in
    total_h = head_in + sum(heights) + _PANEL_GAP_IN * (len(rows) - 1) + foot_in
    fig = Figure(figsize=(total_w, total_h))
    FigureCanvasAgg(fig)
    small = _FONT * 0.86
    sticks, labels, marks, panels = [], [], [], []
    headers = []
    top_in = total_h - head_in
    for r, (row, cols, h) in enumerate(zip(rows, content, heights, strict=True)):
        ax = fig.add_axes((left_in / total_w, (top_in - h) / total_h, sum(widths) / total_w, h / total_h))
        top_in -= h + _PANEL_GAP_IN
        species0, name, free_wn, band_est = row
        values = [wn for col in cols for _, wn, *_ in col] + ([free_wn] if free_wn is not None else [])
        lo, hi = (min(values), max(values)) if values else (0.0, 1.0)
        pad = max(0.12 * (hi - lo), 0.6)
        lo, hi = lo - pad, hi + pad
        ax.set_xlim(0, sum(widths))
        ax.set_ylim(lo, hi)
        ax.set_xticks([])
        ax.yaxis.set_major_locator(MaxNLocator(nbins=4))
        ax.tick_params(axis="y", labelsize=small * 0.9, colors=COLOURS["ink"], length=3, width=0.7)
        for side in ("top", "right", "bottom"):
            ax.spines[side].set_visible(False)
        ax.spines["left"].set_color(COLOURS["muted"])
        ax.set_ylabel("cm$^{-1}$", fontsize=small * 0.9, color=COLOURS["muted"])
        for k in range(1, len(columns)):
            ax.axvline(lefts[k], color="#e6e6e6", linewidth=0.8, zorder=0)
        panels.append((species0, ax))
        band_key = species0
        ph = h * 72

        def to_pt(y, lo=lo, hi=hi, ph=ph):
            return (y - lo) / (hi - lo) * ph

        def to_data(p, lo=lo, hi=hi, ph=ph):
            return lo + p / ph * (hi - lo)

        # free column
        x0 = lefts[0] + 0.1
        if species0 == "lattice":
            ax.text(
                x0,
                (lo + hi) / 2,
                "lattice modes\n(whole cell)",
                ha="left",
                va="center",
                fontsize=small,
                color=COLOURS["muted"],
            )
            free_items = []
        else:
            act = free_act.get(species0)
            activity = ("IR" if act is not None and act.ir else "") + (
                "+Raman" if act is not None and act.raman else ""
            )
            dim = next((c.free_dimension for c in u0.correlation if c.free == species0), 1)
            free_items = [(species0, free_wn, dim, activity.lstrip("+") or "silent", "")]
            measured = band_est.measured_free_cm1 if band_est is not None else None
            mode_text = _mode_mathtext(name) + (f"  (gas {measured:g})" if measured else "")
            ax.text(x0, hi, mode_text, ha="left", va="top", fontsize=small * 0.9, color=COLOURS["muted"])
        for k, items in enumerate([free_items, *cols]):
            if k == 0 and not items:
                continue
            column = columns[k]
            x = lefts[k] + (0.55 if k == 0 else 0.12)
            label_pts = _spread_labels([to_pt(wn) for _, wn, *_ in items], ph)
            for (sp, wn, dim, activity, origin), lp in zip(items, label_pts, strict=True):
                length = _bar_in(dim)
                (line,) = ax.plot(
                    [x, x + length], [wn, wn], color=COLOURS["ink"], linewidth=1.6, solid_capstyle="butt", zorder=3
                )
                ir, raman = "IR" in activity, "Raman" in activity
                sticks.append(Stick(column, band_key, name, sp, dim, ir, raman, line, float(wn), True))
                ly = to_data(lp)
                tx = x + _bar_in(3) + 0.12
                if abs(lp - to_pt(wn)) > 1.0:
                    ax.plot([x + length, tx - 0.03], [wn, ly], color=COLOURS["guide"], linewidth=0.6, zorder=2)
                text = f"{mathtext(sp)} {wn:.1f}" + (f" {origin}" if origin else "")
                lab = ax.text(
                    tx, ly, text, ha="left", va="center_baseline", fontsize=small * 0.9, color=COLOURS["ink"], zorder=3
                )
                labels.append((column, band_key, sp, lab))
                mx = tx + 0.072 * 0.9 * (len(f"{sp} {wn:.1f}") + (len(origin) + 1 if origin else 0)) + 0.08
                for kind, on in (("ir", ir), ("raman", raman)):
                    if not on:
                        continue
                    m = activity_mark(ax, mx, ly, kind, size=4.0, edge_width=0.9)
                    marks.append((column, band_key, kind, m))
                    mx += 0.09
        if r == 0:
            headers = _headings(fig, ax, phases, units, columns, lefts, widths, hi, small)
    model = estimates[0].model.removeprefix("model: ")
    note = legend_and_note(
        fig,
        small=small,
        bar="one line at its estimate (length: degeneracy)",
        legend_y=0.42 / total_h,
        note="positions are model estimates, not measurements (each panel has its own wavenumber axis):\n" + model,
        note_y=0.05 / total_h,
        note_size=small * 0.75,
    )
    headers.append(note)
    return LinePatternArtists(
        figure=fig,
        ax=panels[0][1],
        unit=u0.formula,
        columns=tuple(columns),
        bands=tuple((row[0], row[1], row[2]) for row in rows),
        sticks=tuple(sticks),
        labels=tuple(labels),
        headers=tuple(headers),
        marks=tuple(marks),
        estimated=True,
        note=note,
        panels=tuple(panels),
    )

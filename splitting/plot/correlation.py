"""Correlation diagrams: free group -> site group -> factor group, drawn with matplotlib.

One diagram shows, for one unit of a :class:`~splitting.crystal.results.CrystalPrediction`
(or for one band of it), three columns of Mulliken species joined by lines:

* left, the species of the free unit (its point group and formula in the heading);
* middle, the species of the site group (with the Wyckoff position);
* right, the species of the factor group (with the space group), each followed by the
  activity marks: a filled circle for an infrared-active species and an open square for a
  Raman-active one (no mark: silent).

A small grey number under every species is its degeneracy; a number on a line is the
multiplicity of the correlation when it is above 1.  Labels are laid out from their measured
extents, and the font is reduced until no two labels overlap.

matplotlib is imported inside the drawing functions only.
"""

from __future__ import annotations

import itertools
from collections.abc import Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

from ..errors import InputError, SymmetryError
from .mulliken import formula_mathtext, hermann_mauguin_mathtext, mathtext, schoenflies_mathtext

if TYPE_CHECKING:  # pragma: no cover
    from matplotlib.axes import Axes
    from matplotlib.figure import Figure
    from matplotlib.lines import Line2D
    from matplotlib.text import Text

    from ..crystal.results import CrystalPrediction, UnitOrbit
    from ..groups import Representation

__all__ = [
    "ACTIVITY_STYLE",
    "COLOURS",
    "Connector",
    "DiagramArtists",
    "PhaseDiagramArtists",
    "activity_handles",
    "activity_mark",
    "correlation_diagram",
    "fit_width",
    "legend_handles",
    "phase_correlation_diagram",
    "select_unit",
    "site_induction",
    "text_overlaps",
]

_COLUMN_X = (0.0, 1.0, 2.0)

#: colours of the figures (dark enough to print in grey)
COLOURS = {"ink": "#1a1a1a", "muted": "#6b6b6b", "line": "#4d4d4d", "guide": "#b8b8b8"}

#: activity marks: IR a filled circle, Raman an open square (shape and fill differ, so greyscale prints tell them apart)
ACTIVITY_STYLE = {
    "ir": {"marker": "o", "face": "#b2182b", "edge": "#b2182b", "label": "IR active"},
    "raman": {"marker": "s", "face": "white", "edge": "#2166ac", "label": "Raman active"},
}


def activity_mark(ax: Axes, x: float, y: float, kind: str, *, size: float, edge_width: float = 1.0) -> Line2D:
    """Draw one activity mark (``kind`` ``"ir"`` or ``"raman"``) at ``(x, y)`` in data units."""
    st = ACTIVITY_STYLE[kind]
    (m,) = ax.plot(
        [x],
        [y],
        linestyle="none",
        marker=st["marker"],
        markersize=size,
        markerfacecolor=st["face"],
        markeredgecolor=st["edge"],
        markeredgewidth=edge_width,
        zorder=4,
    )
    return m


def activity_handles(size: float, *, edge_width: float = 1.0) -> list[Line2D]:
    """Legend handles of the two activity marks (IR, Raman)."""
    from matplotlib.lines import Line2D

    return [
        Line2D(
            [],
            [],
            linestyle="none",
            marker=st["marker"],
            markersize=size,
            markerfacecolor=st["face"],
            markeredgecolor=st["edge"],
            markeredgewidth=edge_width,
            label=st["label"],
        )
        for st in (ACTIVITY_STYLE["ir"], ACTIVITY_STYLE["raman"])
    ]


def fit_width(text: Text, max_width: float, renderer) -> None:
    """Wrap ``text`` at spaces, then shrink its font, until it is at most ``max_width`` pixels wide."""
    import textwrap

    original = text.get_text()
    if "$" not in original and " " in original:
        for width in range(len(original), 3, -1):
            if text.get_window_extent(renderer).width <= max_width:
                return
            text.set_text("\n".join(textwrap.wrap(original, width=width, break_long_words=False)))
    for _ in range(12):
        if text.get_window_extent(renderer).width <= max_width:
            return
        text.set_fontsize(text.get_fontsize() * 0.92)


def text_overlaps(texts: Sequence[Text], renderer, *, pad: float = 0.0) -> list[tuple[Text, Text]]:
    """Pairs of visible texts whose window extents (pixels, grown by ``pad``) overlap."""
    boxes = []
    for t in texts:
        if t is None or not t.get_visible() or not t.get_text():
            continue
        bb = t.get_window_extent(renderer)
        boxes.append((t, bb.padded(pad) if pad else bb))
    clashes = []
    for (ta, a), (tb, b) in itertools.combinations(boxes, 2):
        if a.overlaps(b) and min(a.x1, b.x1) - max(a.x0, b.x0) > 0.5 and min(a.y1, b.y1) - max(a.y0, b.y0) > 0.5:
            clashes.append((ta, tb))
    return clashes


_ROW_PITCH_IN = 0.40  # inches per row at the default font size
_FONT = 12.0


@dataclass(frozen=True)
class Connector:
    """One correlation line of a diagram.

    Attributes
    ----------
    stage : str
        ``"free-site"`` or ``"site-factor"``.
    source, target : str
        Species joined (left column, right column).
    multiplicity : int
        How many times ``target`` occurs in ``source`` (free -> site) or in the induced
        representation of ``source`` (site -> factor).
    line : matplotlib.lines.Line2D
    label : matplotlib.text.Text or None
        The multiplicity written on the line (only when it is above 1).
    """

    stage: str
    source: str
    target: str
    multiplicity: int
    line: Line2D
    label: Text | None

    def to_dict(self) -> dict[str, object]:
        """JSON-ready form (without the artists)."""
        return {"stage": self.stage, "source": self.source, "target": self.target, "multiplicity": self.multiplicity}


@dataclass(frozen=True)
class DiagramArtists:
    """Everything a correlation diagram drew, for reading back.

    Attributes
    ----------
    figure : matplotlib.figure.Figure
    ax : matplotlib.axes.Axes
    unit : str
        Formula of the unit drawn.
    band : str or None
        Free species drawn alone, or None for the whole unit.
    groups : tuple of str
        Free, site and factor group (Schoenflies).
    free, site, factor : tuple of (str, Text)
        Species label and its text artist, top to bottom, in each column.
    degeneracy : tuple of (str, str, Text)
        Column (``"free"``, ``"site"``, ``"factor"``), species and the small degeneracy text.
    headers : tuple of Text
        Column headings.
    connectors : tuple of Connector
    marks : tuple of (str, str, Line2D)
        Factor species, ``"ir"`` or ``"raman"``, and the marker drawn.
    free_marks : tuple of (str, str, Line2D)
        The same for the species of the free unit (marks left of the label).
    legend : object
        The matplotlib legend (or None when ``legend=False``).
    font_size : float
        Font size (points) of the species labels after fitting.
    """

    figure: Figure
    ax: Axes
    unit: str
    band: str | None
    groups: tuple[str, str, str]
    free: tuple[tuple[str, Text], ...]
    site: tuple[tuple[str, Text], ...]
    factor: tuple[tuple[str, Text], ...]
    degeneracy: tuple[tuple[str, str, Text], ...]
    headers: tuple[Text, ...]
    connectors: tuple[Connector, ...]
    marks: tuple[tuple[str, str, Line2D], ...]
    free_marks: tuple[tuple[str, str, Line2D], ...]
    legend: Any
    font_size: float

    def texts(self) -> list[Text]:
        """Every text artist of the diagram (labels, degeneracies, headings, multiplicities)."""
        out = [t for col in (self.free, self.site, self.factor) for _, t in col]
        out += [t for _, _, t in self.degeneracy]
        out += list(self.headers)
        out += [c.label for c in self.connectors if c.label is not None]
        return out

    def to_dict(self) -> dict[str, object]:
        """JSON-ready summary of what was drawn."""
        return {
            "unit": self.unit,
            "band": self.band,
            "groups": list(self.groups),
            "free": [lab for lab, _ in self.free],
            "site": [lab for lab, _ in self.site],
            "factor": [lab for lab, _ in self.factor],
            "connectors": [c.to_dict() for c in self.connectors],
            "marks": [[lab, kind] for lab, kind, _ in self.marks],
            "free_marks": [[lab, kind] for lab, kind, _ in self.free_marks],
            "font_size": self.font_size,
        }


@dataclass(frozen=True)
class PhaseDiagramArtists:
    """Correlation diagrams of one unit in several phases, side by side.

    Attributes
    ----------
    figure : matplotlib.figure.Figure
    phases : tuple of str
        Phase labels, left to right.
    panels : tuple of DiagramArtists
        One diagram per phase.
    titles : tuple of Text
        Phase label above each panel.
    """

    figure: Figure
    phases: tuple[str, ...]
    panels: tuple[DiagramArtists, ...]
    titles: tuple[Text, ...]

    def to_dict(self) -> dict[str, object]:
        """JSON-ready summary."""
        return {"phases": list(self.phases), "panels": [p.to_dict() for p in self.panels]}


# ------------------------------------------------------------------ data
def select_unit(prediction: CrystalPrediction, unit: str | UnitOrbit | None) -> UnitOrbit:
    """The orbit to draw: given by formula, given directly, or the first one with a correlation.

    Raises
    ------
    InputError
        If the formula is not a unit of the prediction, or the unit has no internal
        vibrations (a single atom).
    """
    if unit is None:
        for u in prediction.units:
            if u.correlation:
                return u
        raise InputError(f"{prediction.source}: no molecular unit with internal vibrations to draw")
    if isinstance(unit, str):
        from ..crystal.names import match_unit

        hill = match_unit(unit, [u.formula for u in prediction.units], where=prediction.source)
        found = [u for u in prediction.units if u.formula == hill]
        with_corr = [u for u in found if u.correlation]
        if not with_corr:
            raise InputError(f"{prediction.source}: unit {unit!r} is a single atom and has no internal vibrations")
        return with_corr[0]
    if not unit.correlation:
        raise InputError(f"{prediction.source}: unit {unit.formula!r} has no internal vibrations")
    return unit


def site_induction(unit: UnitOrbit) -> dict[str, Representation]:
    """Factor-group species induced by each site species of ``unit`` that occurs in its correlation.

    Read from the prediction (``UnitOrbit.site_to_factor``, computed by the correlation engine).

    Raises
    ------
    SymmetryError
        If the prediction carries no site-to-factor map for this unit.
    """
    stored = dict(unit.site_to_factor)
    used = _site_order(unit)
    missing = [s for s in used if s not in stored]
    if missing:
        raise SymmetryError(f"{unit.formula}: the prediction has no site-to-factor map for {', '.join(missing)}")
    return {s: stored[s] for s in used}


def _induced(site: Representation, ind: dict[str, tuple[int, ...]]) -> tuple[int, ...]:
    total: list[int] | None = None
    for lab, n in site.counts:
        vec = ind[lab]
        if total is None:
            total = [0] * len(vec)
        for k, v in enumerate(vec):
            total[k] += n * v
    return tuple(total or ())


def _site_order(unit: UnitOrbit) -> list[str]:
    labels = [lab for lab, _ in unit.correlation[0].site.counts]
    present = {lab for c in unit.correlation for lab, _ in c.site}
    return [lab for lab in labels if lab in present]


def _factor_order(correlations: Sequence[Any]) -> list[str]:
    labels = [lab for lab, _ in correlations[0].factor.counts]
    present = {lab for c in correlations for lab, _ in c.factor}
    return [lab for lab in labels if lab in present]


@dataclass(frozen=True)
class _Plan:
    unit: str
    band: str | None
    groups: tuple[str, str, str]
    free: tuple[tuple[str, int], ...]
    site: tuple[tuple[str, int], ...]
    factor: tuple[tuple[str, int], ...]
    free_site: tuple[tuple[str, str, int], ...]
    site_factor: tuple[tuple[str, str, int], ...]
    activity: dict[str, tuple[bool, bool]]
    free_activity: dict[str, tuple[bool, bool]]
    headings: tuple[tuple[str, str], ...]


def _plan(prediction: CrystalPrediction, unit: str | UnitOrbit | None, band: str | None) -> _Plan:
    u = select_unit(prediction, unit)
    corr = list(u.correlation)
    if band is not None:
        corr = [c for c in corr if c.free == band]
        if not corr:
            known = ", ".join(c.free for c in u.correlation)
            raise InputError(f"{prediction.source}: {u.formula} has no band of species {band!r}; species are {known}")
    induction = site_induction(u)
    dims_site = dict(zip((lab for lab, _ in corr[0].site.counts), corr[0].site.dimensions, strict=True))
    dims_factor = dict(zip((lab for lab, _ in corr[0].factor.counts), corr[0].factor.dimensions, strict=True))
    present_site = {lab for c in corr for lab, _ in c.site}
    site = [s for s in _site_order(u) if s in present_site]
    factor = _factor_order(corr)
    free_site = tuple((c.free, s, n) for c in corr for s, n in c.site)
    site_factor = tuple((s, f, n) for s in site for f, n in induction[s] if f in factor)
    activity = {s.label: (bool(s.ir), bool(s.raman)) for s in prediction.species}
    from ..activity import activity_table

    free_activity = {a.label: (bool(a.ir), bool(a.raman)) for a in activity_table(u.free_group or "C1")}
    headings = (
        (f"free {formula_mathtext(u.name)}", schoenflies_mathtext(u.free_group or "C1")),
        (f"site {u.wyckoff} ({u.site_symmetry})", schoenflies_mathtext(u.site_group)),
        (f"factor group, {hermann_mauguin_mathtext(prediction.symbol)}", schoenflies_mathtext(prediction.factor_group)),
    )
    return _Plan(
        unit=u.formula,
        band=band,
        groups=(u.free_group or "C1", u.site_group, prediction.factor_group),
        free=tuple((c.free, c.free_dimension) for c in corr),
        site=tuple((s, dims_site[s]) for s in site),
        factor=tuple((f, dims_factor[f]) for f in factor),
        free_site=free_site,
        site_factor=site_factor,
        activity=activity,
        free_activity=free_activity,
        headings=headings,
    )


# ------------------------------------------------------------------ drawing
def _renderer(fig: Figure):
    canvas = fig.canvas
    if hasattr(canvas, "get_renderer"):
        return canvas.get_renderer()
    return fig._get_renderer()  # pragma: no cover - non-Agg canvases


def _new_figure(width: float, height: float) -> Figure:
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=(width, height))
    FigureCanvasAgg(fig)
    return fig


def _rows(plan: _Plan) -> int:
    return max(len(plan.free), len(plan.site), len(plan.factor))


def _size(plan: _Plan) -> tuple[float, float]:
    rows = _rows(plan)
    return 5.6, 1.25 + _ROW_PITCH_IN * max(rows, 2) + 0.4


def correlation_diagram(
    prediction: CrystalPrediction,
    unit: str | UnitOrbit | None = None,
    *,
    band: str | None = None,
    ax: Axes | None = None,
    legend: bool = True,
) -> DiagramArtists:
    """Draw the correlation diagram free group -> site group -> factor group of one unit.

    Parameters
    ----------
    prediction : CrystalPrediction
    unit : str or UnitOrbit, optional
        Formula of the unit (default: the first unit with internal vibrations).
    band : str, optional
        Draw only this species of the free unit (e.g. ``"Hg"``); default all.
    ax : matplotlib.axes.Axes, optional
        Axes to draw into (its frame and ticks are switched off); default a new figure.
    legend : bool
        Draw the legend of the marks under the diagram.

    Returns
    -------
    DiagramArtists

    Raises
    ------
    InputError
        For an unknown unit or band.
    """
    plan = _plan(prediction, unit, band)
    if ax is None:
        fig = _new_figure(*_size(plan))
        _, height = fig.get_size_inches()
        bottom = (0.42 if legend else 0.08) / height
        ax = fig.add_axes((0.02, bottom, 0.96, 0.985 - bottom))
    return _draw(plan, ax, legend=legend)


def _draw(plan: _Plan, ax: Axes, *, legend: bool, font: float = _FONT) -> DiagramArtists:
    fig = ax.figure
    last = 11
    for attempt in range(last + 1):
        ax.clear()
        art = _draw_once(plan, ax, font=font, legend=legend, give_up=attempt == last)
        if art is not None and (attempt == last or not text_overlaps(art.texts(), _renderer(fig))):
            return art
        font *= 0.9
    raise AssertionError("unreachable")  # pragma: no cover


def _draw_once(plan: _Plan, ax: Axes, *, font: float, legend: bool, give_up: bool) -> DiagramArtists | None:
    """Draw at one font size; None as soon as the species labels overlap (unless ``give_up``)."""
    fig = ax.figure
    ax.set_axis_off()
    ax.set_xlim(-0.5, 2.55)
    rows = max(_rows(plan), 2)
    ax.set_ylim(-0.25, rows + 1.45)
    head_y = rows + 0.55
    small = font * 0.62

    headers = []
    for x, (caption, symbol) in zip(_COLUMN_X, plan.headings, strict=True):
        headers.append(
            ax.text(x, head_y + 0.62, caption, ha="center", va="bottom", fontsize=font * 0.72, color=COLOURS["muted"])
        )
        headers.append(
            ax.text(x, head_y + 0.55, symbol, ha="center", va="top", fontsize=font * 1.25, color=COLOURS["ink"])
        )

    columns: list[list[tuple[str, Any]]] = []
    free_marks: list[tuple[str, str, Any]] = []
    degeneracy = []
    positions: dict[tuple[int, str], float] = {}
    for k, (name, entries) in enumerate((("free", plan.free), ("site", plan.site), ("factor", plan.factor))):
        col = []
        n = len(entries)
        for i, (lab, dim) in enumerate(entries):
            y = rows * (n - i - 0.5) / n - 0.1
            positions[(k, lab)] = y
            t = ax.text(
                _COLUMN_X[k],
                y,
                mathtext(lab),
                ha="center",
                va="center_baseline",
                fontsize=font,
                color=COLOURS["ink"],
                zorder=3,
            )
            col.append((lab, t))
            d = ax.text(
                _COLUMN_X[k],
                y - 0.30,
                str(dim),
                ha="center",
                va="top",
                fontsize=small,
                color=COLOURS["muted"],
                zorder=3,
            )
            degeneracy.append((name, lab, d))
        columns.append(col)

    renderer = _renderer(fig)
    if not give_up and text_overlaps(
        [t for col in columns for _, t in col] + [t for *_, t in degeneracy] + headers, renderer
    ):
        return None
    to_data = ax.transData.inverted()

    def half_width(text) -> float:
        bb = text.get_window_extent(renderer)
        (x0, _), (x1, _) = to_data.transform([(bb.x0, bb.y0), (bb.x1, bb.y1)])
        return (x1 - x0) / 2

    widths = {(k, lab): half_width(t) for k, col in enumerate(columns) for lab, t in col}
    pad = 0.06

    # activity marks: right of the factor species, left of the free species
    marks = []
    mark_gap = 0.11
    for k, sign, act in ((2, 1.0, plan.activity), (0, -1.0, plan.free_activity)):
        for lab, _t in columns[k]:
            y = positions[(k, lab)]
            x = _COLUMN_X[k] + sign * (widths[(k, lab)] + 0.10)
            ir, raman = act.get(lab, (False, False))
            kinds = [kind for kind, on in (("ir", ir), ("raman", raman)) if on]
            for kind in kinds if sign > 0 else kinds[::-1]:
                m = activity_mark(ax, x, y, kind, size=font * 0.55, edge_width=1.2)
                if k == 2:
                    marks.append((lab, kind, m))
                else:
                    free_marks.append((lab, kind, m))
                x += sign * mark_gap

    connectors: list[Connector] = []
    segments = []
    for stage, (a, b), links in (("free-site", (0, 1), plan.free_site), ("site-factor", (1, 2), plan.site_factor)):
        for src, dst, n in links:
            x0 = _COLUMN_X[a] + widths[(a, src)] + pad
            x1 = _COLUMN_X[b] - widths[(b, dst)] - pad
            y0, y1 = positions[(a, src)], positions[(b, dst)]
            (line,) = ax.plot(
                [x0, x1], [y0, y1], color=COLOURS["line"], linewidth=1.0, solid_capstyle="round", zorder=1
            )
            segments.append((stage, src, dst, n, line, (x0, y0, x1, y1)))

    placed = [t.get_window_extent(renderer) for col in columns for _, t in col]
    placed += [t.get_window_extent(renderer) for _, _, t in degeneracy]
    others_px = {id(line): ax.transData.transform([(seg[0], seg[1]), (seg[2], seg[3])]) for *_, line, seg in segments}
    for stage, src, dst, n, line, seg in segments:
        label = None
        if n > 1:
            left = 0 if stage == "free-site" else 1
            dense_left = len(columns[left]) >= len(columns[left + 1])
            others = [px for key, px in others_px.items() if key != id(line)]
            label = _place_multiplicity(ax, renderer, n, seg, others, placed, font * 0.68, prefer_left=dense_left)
            placed.append(label.get_window_extent(renderer))
        connectors.append(Connector(stage, src, dst, n, line, label))

    leg = None
    if legend:
        leg = _legend(ax, font, loc="upper center", bbox_to_anchor=(0.5, -0.01))

    return DiagramArtists(
        figure=fig,
        ax=ax,
        unit=plan.unit,
        band=plan.band,
        groups=plan.groups,
        free=tuple(columns[0]),
        site=tuple(columns[1]),
        factor=tuple(columns[2]),
        degeneracy=tuple(degeneracy),
        headers=tuple(headers),
        connectors=tuple(connectors),
        marks=tuple(marks),
        free_marks=tuple(free_marks),
        legend=leg,
        font_size=font,
    )


def _legend(target, font: float, **where):
    """The activity legend, one row, on an Axes or a Figure."""
    return target.legend(
        handles=legend_handles(font),
        ncol=4,
        frameon=False,
        fontsize=font * 0.68,
        handlelength=1.4,
        columnspacing=1.2,
        handletextpad=0.4,
        **where,
    )


def legend_handles(font: float = _FONT) -> list[Line2D]:
    """Legend entries of the correlation diagrams: the two activity marks, degeneracy, lines."""
    from matplotlib.lines import Line2D

    handles = activity_handles(font * 0.55, edge_width=1.2)
    handles.append(
        Line2D(
            [], [], linestyle="none", marker="$3$", markersize=font * 0.5, color=COLOURS["muted"], label="degeneracy"
        )
    )
    handles.append(Line2D([], [], color=COLOURS["line"], linewidth=1.0, label="correlation (number: multiplicity)"))
    return handles


def _place_multiplicity(ax, renderer, n: int, seg, others, placed, size: float, *, prefer_left: bool):
    """Put the multiplicity on its line where it overlaps no text and crosses the fewest lines.

    Positions nearer the column with more species come first: lines are further apart there.
    """
    x0, y0, x1, y1 = seg
    best = None
    near = (0.3, 0.24, 0.38, 0.18, 0.46, 0.54, 0.62, 0.7, 0.78)
    for t in near if prefer_left else [1 - v for v in near]:
        x, y = x0 + t * (x1 - x0), y0 + t * (y1 - y0)
        txt = ax.text(
            x,
            y,
            str(n),
            ha="center",
            va="center",
            fontsize=size,
            color=COLOURS["ink"],
            zorder=2,
            bbox={"boxstyle": "round,pad=0.18", "facecolor": "white", "edgecolor": "none"},
        )
        bb = txt.get_window_extent(renderer).expanded(1.35, 1.3)
        clear = bb.expanded(1.6, 1.6)
        clash = sum(bb.overlaps(p) for p in placed)
        crossings = sum(_segment_hits_box(p, q, clear) for p, q in others)
        score = (clash, crossings)
        if best is None or score < best[0]:
            if best is not None:
                best[1].remove()
            best = (score, txt)
        else:
            txt.remove()
        if score == (0, 0):
            break
    return best[1]


def _segment_hits_box(p, q, bb) -> int:
    """1 when the segment p-q passes through the box (sampled), else 0."""
    for k in range(21):
        s = k / 20
        x, y = p[0] + s * (q[0] - p[0]), p[1] + s * (q[1] - p[1])
        if bb.x0 <= x <= bb.x1 and bb.y0 <= y <= bb.y1:
            return 1
    return 0


def phase_correlation_diagram(
    phases: Sequence[tuple[str, CrystalPrediction]], unit_formula: str, *, band: str | None = None
) -> PhaseDiagramArtists:
    """Correlation diagrams of one unit in several phases, one panel per phase, side by side.

    Parameters
    ----------
    phases : sequence of (str, CrystalPrediction)
        Phase label (e.g. ``"Pa-3, 100 K"``) and its prediction, in the order to show.
    unit_formula : str
        Formula of the unit followed across the phases.
    band : str, optional
        Only this free species.

    Returns
    -------
    PhaseDiagramArtists

    Raises
    ------
    InputError
        If ``phases`` is empty or the unit is missing from a phase.
    """
    if not phases:
        raise InputError("phase_correlation_diagram needs at least one phase")
    plans = [_plan(pred, unit_formula, band) for _, pred in phases]
    width = _size(plans[0])[0] * len(plans)
    height = max(_size(p)[1] for p in plans) + 0.3
    fig = _new_figure(width, height)
    panels = []
    titles = []
    n = len(plans)
    foot = 0.45 / height
    for k, ((label, _), plan) in enumerate(zip(phases, plans, strict=True)):
        ax = fig.add_axes((k / n + 0.01 / n, foot, 0.98 / n, 1 - foot - 0.4 / height))
        panels.append(_draw(plan, ax, legend=False))
        title = fig.text(
            (k + 0.5) / n,
            1 - 0.08 / height,
            label,
            ha="center",
            va="top",
            fontsize=_FONT * 1.05,
            fontweight="bold",
            color=COLOURS["ink"],
        )
        fit_width(title, 0.95 * width / n * fig.dpi, _renderer(fig))
        titles.append(title)
    _legend(fig, _FONT, loc="lower center", bbox_to_anchor=(0.5, 0.1 / height))
    return PhaseDiagramArtists(
        figure=fig, phases=tuple(lab for lab, _ in phases), panels=tuple(panels), titles=tuple(titles)
    )

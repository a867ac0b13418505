"""Line patterns across phases, and writing figures to SVG, PDF or PNG.

A line pattern shows, for every band of a free unit, the components the factor group of
each phase splits it into, as short horizontal bars in one column per phase (phases, or
temperatures, along the x axis).  The first column is the free unit itself.

Without an estimate no position is predicted: every bar of a band sits exactly at the
band's free-unit value (on a wavenumber axis when a mode table is given, else in one row
per band), the components of one species drawn as one bar with their number in front of
the species ("5Tg": five distinct frequencies), the species side by side; nothing is moved
up or down to suggest a splitting, and a note on the figure says so.  Bands closer than a
label's height are drawn side by side (in lanes), never shifted.

With a model estimate (:mod:`splitting.dynamics`) for every phase the figure has one panel
per band (and one for the lattice modes), each with its own wavenumber axis, and every
component is a bar at its estimated wavenumber (:mod:`splitting.plot.estimated_lines`).

Bar length grows with the degeneracy; the activity marks are the ones of the correlation
diagrams (filled circle: IR active, open square: Raman active).
"""

from __future__ import annotations

import io
import logging
import os
import re
import textwrap
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any

from .._io import atomic_write_bytes
from ..errors import InputError
from .correlation import COLOURS, activity_handles, activity_mark, fit_width, select_unit
from .mulliken import formula_mathtext, mathtext

if TYPE_CHECKING:  # pragma: no cover
    from matplotlib.axes import Axes
    from matplotlib.figure import Figure
    from matplotlib.lines import Line2D
    from matplotlib.text import Text

    from ..crystal.results import CrystalPrediction
    from ..dynamics.results import Estimate
    from ..spectra.catalogue import ModeTable

__all__ = ["FIGURE_FORMATS", "LinePatternArtists", "Stick", "figure_svg", "line_pattern", "write_figure"]

#: file suffixes write_figure understands, and the matplotlib format of each
FIGURE_FORMATS = {".svg": "svg", ".pdf": "pdf", ".png": "png"}

_FONT = 10.5


# ------------------------------------------------------------------ files
def _save(fig: Figure, fmt: str, *, dpi: float = 300) -> bytes:
    import matplotlib

    buf = io.BytesIO()
    metadata: dict[str, Any] = {
        "svg": {"Date": None},
        "pdf": {"CreationDate": None, "ModDate": None},
        "png": {"Software": None},
    }[fmt]
    # embedding fonts in a PDF makes the font library log warnings about font timestamps (not
    # about the figure); they are kept off the user's standard error while the figure is written
    fonts = logging.getLogger("fontTools")
    level = fonts.level
    fonts.setLevel(logging.ERROR)
    try:
        with matplotlib.rc_context({"svg.hashsalt": "splitting", "svg.fonttype": "path", "pdf.fonttype": 42}):
            fig.savefig(
                buf, format=fmt, dpi=dpi, metadata=metadata, facecolor="white", bbox_inches="tight", pad_inches=0.08
            )
    finally:
        fonts.setLevel(level)
    return buf.getvalue()


def write_figure(fig: Figure, path: str | os.PathLike[str], *, dpi: float = 300) -> Path:
    """Write a figure to SVG, PDF or PNG, the format chosen by the file suffix, atomically.

    Parameters
    ----------
    fig : matplotlib.figure.Figure
    path : str or path-like
        Output file ending in ``.svg``, ``.pdf`` or ``.png``.
    dpi : float
        Resolution of PNG output (dots per inch).

    Returns
    -------
    pathlib.Path

    Raises
    ------
    InputError
        For any other suffix, or a folder that does not exist.
    """
    target = Path(path)
    fmt = FIGURE_FORMATS.get(target.suffix.lower())
    if fmt is None:
        raise InputError(
            f"{target}: unknown figure format {target.suffix or '(no suffix)'!r}; use {', '.join(FIGURE_FORMATS)}"
        )
    return atomic_write_bytes(target, _save(fig, fmt, dpi=dpi))


_ID = re.compile(r'\bid="([^"]+)"')


def figure_svg(fig: Figure, *, prefix: str = "") -> str:
    """The figure as an SVG element ready to inline in HTML (no XML prolog).

    Parameters
    ----------
    prefix : str
        Put before every ``id`` (and every reference to it) so several figures can share one
        HTML page without clashing ids.
    """
    text = _save(fig, "svg").decode("utf-8")
    text = text[text.index("<svg") :]
    if prefix:
        ids = set(_ID.findall(text))
        text = _ID.sub(lambda m: f'id="{prefix}{m[1]}"', text)
        text = re.sub(r'(href=")#([^"]+)"', lambda m: f'{m[1]}#{prefix}{m[2]}"' if m[2] in ids else m[0], text)
        text = re.sub(r"url\(#([^)]+)\)", lambda m: f"url(#{prefix}{m[1]})" if m[1] in ids else m[0], text)
    return text


# ------------------------------------------------------------------ line pattern
_ROW_PT = 26.0  # rows of bands without a wavenumber scale (points)
_LANE_GAP_PT = 11.0  # bands closer than this on the wavenumber axis are drawn side by side
_PAD_IN = 0.1  # left margin inside a column
_MARK_IN = 0.1  # per activity mark
_CHAR_IN = 0.072  # width of one label character at the small font (approximate)


@dataclass(frozen=True)
class Stick:
    """One drawn frequency of one band in one column.

    Without an estimate the components of one species are one bar (``line``), shared by
    the sticks of that species, at the free-unit value.

    Attributes
    ----------
    column : str
        ``"free"`` or the phase label.
    band : str
        Free-unit species of the band (``"lattice"`` for the lattice-mode panel).
    mode : str or None
        Mode name (from the mode table or the estimate; None without either).
    species : str
        Species of the stick (free-unit species in the free column, factor-group species otherwise).
    dimension : int
        Degeneracy.
    ir, raman : bool
        Activity.
    line : matplotlib.lines.Line2D
    wavenumber_cm1 : float or None
        Where the bar is drawn (cm-1): the estimate, or the free-unit value; None on a figure
        without a wavenumber axis.
    estimated : bool
        True when the position comes from a model estimate.
    """

    column: str
    band: str
    mode: str | None
    species: str
    dimension: int
    ir: bool
    raman: bool
    line: Line2D
    wavenumber_cm1: float | None = None
    estimated: bool = False

    def to_dict(self) -> dict[str, object]:
        """JSON-ready form (without the artist)."""
        return {
            "column": self.column,
            "band": self.band,
            "mode": self.mode,
            "species": self.species,
            "dimension": self.dimension,
            "ir": self.ir,
            "raman": self.raman,
            "wavenumber_cm1": None if self.wavenumber_cm1 is None else round(self.wavenumber_cm1, 2),
            "estimated": self.estimated,
        }


@dataclass(frozen=True)
class LinePatternArtists:
    """What :func:`line_pattern` drew.

    Attributes
    ----------
    figure : matplotlib.figure.Figure
    ax : matplotlib.axes.Axes
        The axes (the first panel of an estimated pattern).
    unit : str
    columns : tuple of str
        ``"free"`` then the phase labels, left to right.
    bands : tuple of (str, str or None, float or None)
        Free species, mode name and free-unit wavenumber (cm-1) of every band.
    sticks : tuple of Stick
    labels : tuple of (str, str, str, Text)
        Column, band, species and the label next to its bar (``"5T$_{g}$"`` for five components).
    headers : tuple of Text
    marks : tuple of (str, str, str, Line2D)
        Column, band, ``"ir"``/``"raman"`` and the marker.
    estimated : bool
        True when the bars sit at the positions of a model estimate.
    note : Text or None
        The note under the legend (positions not predicted, or the model of the estimate).
    panels : tuple of (str, Axes)
        Band (free species, or ``"lattice"``) and its panel, for an estimated pattern.
    """

    figure: Figure
    ax: Axes
    unit: str
    columns: tuple[str, ...]
    bands: tuple[tuple[str, str | None, float | None], ...]
    sticks: tuple[Stick, ...]
    labels: tuple[tuple[str, str, str, Text], ...]
    headers: tuple[Text, ...]
    marks: tuple[tuple[str, str, str, Line2D], ...]
    estimated: bool = False
    note: Text | None = None
    panels: tuple[tuple[str, Axes], ...] = ()

    def texts(self) -> list[Text]:
        """Every label and heading."""
        return [t for *_, t in self.labels] + list(self.headers)

    def components(self, column: str, band: str, mode: str | None = None) -> dict[str, int]:
        """Species -> number of frequencies drawn for one band in one column."""
        out: dict[str, int] = {}
        for s in self.sticks:
            if s.column == column and s.band == band and s.mode == mode:
                out[s.species] = out.get(s.species, 0) + 1
        return out

    def to_dict(self) -> dict[str, object]:
        """JSON-ready summary."""
        return {
            "unit": self.unit,
            "columns": list(self.columns),
            "estimated": self.estimated,
            "bands": [{"species": b, "mode": m, "wavenumber_cm1": w} for b, m, w in self.bands],
            "sticks": [s.to_dict() for s in self.sticks],
        }


@dataclass(frozen=True)
class _Band:
    species: str
    mode: str | None
    wavenumber: float | None


def _mode_mathtext(name: str) -> str:
    m = re.fullmatch(r"nu_?(\d+)([a-z]?)", name)
    if m:
        return rf"$\nu_{{{m[1]}{m[2]}}}$"
    return name.replace("$", r"\$")


def _bands(unit, band: str | None, modes: ModeTable | None) -> list[_Band]:
    species = [c.free for c in unit.correlation]
    if modes is None:
        out = [_Band(s, None, None) for s in species]
    else:
        from ..groups.catalogue import canonical_name

        if canonical_name(modes.point_group) != canonical_name(unit.free_group):
            raise InputError(
                f"mode table {modes.name!r} is for point group {modes.point_group}, but {unit.formula} "
                f"is {unit.free_group} in the crystal"
            )
        out = [_Band(m.species, m.name, float(m.wavenumber_cm1)) for m in modes.modes if m.species in species]
        if not out:
            raise InputError(f"mode table {modes.name!r} has no mode of the species of {unit.formula}")
    if band is not None:
        out = [b for b in out if band in (b.species, b.mode)]
        if not out:
            raise InputError(f"{unit.formula} has no band {band!r}")
    return out


def _groups_of(rep) -> list[tuple[str, int, int]]:
    """(species, count, dimension) of a representation, in character-table order."""
    return [(lab, n, d) for (lab, n), d in zip(rep.counts, rep.dimensions, strict=True) if n]


def _visible_len(text: str) -> int:
    """Characters a mathtext label shows (markup removed)."""
    return len(re.sub(r"\\[a-zA-Z]+|[$_^{}\\]", "", text))


def _bar_in(dim: int) -> float:
    return 0.12 + 0.075 * dim


def _group_in(label: str, n_marks: int, dim: int) -> float:
    """Width (inches) of one bar with its label and marks."""
    return _bar_in(dim) + 0.06 + _CHAR_IN * _visible_len(label) + 0.05 + _MARK_IN * n_marks + 0.1


def _lanes(ys: Sequence[float]) -> list[int]:
    """Lane of every band: the first lane with no band closer than _LANE_GAP_PT (bands sorted by y)."""
    lanes = [0] * len(ys)
    last: list[float] = []
    for i in sorted(range(len(ys)), key=lambda i: ys[i]):
        for k, y in enumerate(last):
            if ys[i] - y >= _LANE_GAP_PT:
                lanes[i], last[k] = k, ys[i]
                break
        else:
            lanes[i] = len(last)
            last.append(ys[i])
    return lanes


def line_pattern(
    phases: Sequence[tuple[str, CrystalPrediction]],
    unit_formula: str,
    *,
    band: str | None = None,
    modes: ModeTable | None = None,
    estimates: Sequence[Estimate] | None = None,
) -> LinePatternArtists:
    """Components of every band of a unit, one column per phase, as bars.

    Parameters
    ----------
    phases : sequence of (str, CrystalPrediction)
        Phase (or temperature) label and prediction, in the order of the x axis.
    unit_formula : str
        Formula of the unit followed across the phases (it must have the same free group in each).
    band : str, optional
        Only this band: a free species (``"E'"``) or, with a mode table or an estimate, a mode
        name (``"nu3"``).
    modes : ModeTable, optional
        Free-unit fundamentals: one band per mode, at its wavenumber (cm-1) on the y axis.
        Without it (and without an estimate) there is one band per free species and the y
        axis has no scale.
    estimates : sequence of Estimate, optional
        One model estimate per phase (same order): every component is drawn at its estimated
        wavenumber, one panel per band and one for the lattice modes.

    Returns
    -------
    LinePatternArtists

    Raises
    ------
    InputError
        No phases, a unit missing from a phase, free groups that differ between phases, a mode
        table for another point group, an unknown band, or estimates that do not match the phases.
    """
    from ..activity import activity_table

    if not phases:
        raise InputError("line_pattern needs at least one phase")
    units = [select_unit(pred, unit_formula) for _, pred in phases]
    free_groups = {u.free_group for u in units}
    if len(free_groups) != 1:
        raise InputError(f"{unit_formula} has different free groups in the phases ({', '.join(sorted(free_groups))})")
    u0 = units[0]
    free_act = {a.label: a for a in activity_table(u0.free_group)}
    if estimates is not None:
        from .estimated_lines import estimated_pattern

        return estimated_pattern(phases, units, estimates, band=band, free_act=free_act)
    bands = _bands(u0, band, modes)
    free_dim = {c.free: c.free_dimension for c in u0.correlation}

    # per band, the (species, count, dimension) groups in each column
    columns = ["free", *[lab for lab, _ in phases]]
    content: list[list[list[tuple[str, int, int]]]] = []
    for b in bands:
        row = [[(b.species, 1, free_dim[b.species])]]
        for u in units:
            corr = {c.free: c for c in u.correlation}
            row.append(_groups_of(corr[b.species].factor))
        content.append(row)

    # vertical positions in points from the bottom of the axes: exactly at the free value
    if modes is None:
        top = _ROW_PT * (len(bands) + 1)
        ys = [top - _ROW_PT * (i + 1) for i in range(len(bands))]
        scale = None
    else:
        top = max(_ROW_PT * (len(bands) + 1), 6.0 * 72)
        waves = [b.wavenumber for b in bands]
        lo, hi = min(waves), max(waves)
        span = max(hi - lo, 100.0)
        lo, hi = lo - 0.06 * span, hi + 0.06 * span
        scale = (lo, hi)
        ys = [(w - lo) / (hi - lo) * top for w in waves]
    lanes = _lanes(ys)
    return _draw_pattern(phases, units, columns, bands, content, ys, lanes, top, scale, free_act)


def _column_widths(phases, bands, content, lanes, free_act) -> tuple[list[float], list[list[float]]]:
    """Width of every column and the left offset of every lane in it (inches)."""
    n_lanes = max(lanes) + 1
    widths, offsets = [], []
    for k in range(len(phases) + 1):
        lane_w = [0.0] * n_lanes
        for b, row, lane in zip(bands, content, lanes, strict=True):
            w = 0.0
            if k == 0 and b.mode is not None:
                w += _CHAR_IN * _visible_len(_mode_mathtext(b.mode)) + 0.08
            for species, count, dim in row[k]:
                if k == 0:
                    act = free_act[species]
                    marks = int(bool(act.ir)) + int(bool(act.raman))
                else:
                    fs = phases[k - 1][1].species_by_label(species)
                    marks = int(bool(fs.ir)) + int(bool(fs.raman))
                w += _group_in((f"{count}" if count > 1 else "") + mathtext(species), marks, dim)
            lane_w[lane] = max(lane_w[lane], w)
        acc, offs = _PAD_IN, []
        for w in lane_w:
            offs.append(acc)
            acc += w + 0.08
        widths.append(max(acc + _PAD_IN, 1.75 if k == 0 else 1.45))
        offsets.append(offs)
    return widths, offsets


def _draw_pattern(phases, units, columns, bands, content, ys, lanes, top, scale, free_act) -> LinePatternArtists:
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure
    from matplotlib.ticker import MaxNLocator

    widths, offsets = _column_widths(phases, bands, content, lanes, free_act)
    lefts = [sum(widths[:k]) for k in range(len(widths))]
    width_in = sum(widths)
    left_in, right_in = (0.85 if scale else 0.25), 0.2
    head_in, foot_in = 1.05, 0.85
    height_in = top / 72
    fig = Figure(figsize=(left_in + width_in + right_in, head_in + height_in + foot_in))
    FigureCanvasAgg(fig)
    W, H = fig.get_size_inches()
    ax = fig.add_axes((left_in / W, foot_in / H, width_in / W, height_in / H))
    ax.set_xlim(0, width_in)
    ax.set_ylim(0, top)
    for side in ("top", "right", "bottom"):
        ax.spines[side].set_visible(False)
    ax.set_xticks([])
    small = _FONT * 0.86

    if scale is None:
        ax.spines["left"].set_visible(False)
        ax.set_yticks([])
    else:
        lo, hi = scale
        ticks = [t for t in MaxNLocator(nbins=8, steps=[1, 2, 2.5, 5, 10]).tick_values(lo, hi) if lo <= t <= hi]
        ax.set_yticks([(t - lo) / (hi - lo) * top for t in ticks], [f"{t:g}" for t in ticks], fontsize=small)
        ax.spines["left"].set_color(COLOURS["muted"])
        ax.tick_params(axis="y", colors=COLOURS["ink"], length=3.5, width=0.8)
        ax.set_ylabel("free-unit wavenumber / cm$^{-1}$", fontsize=small, color=COLOURS["ink"])

    headers = _headings(fig, ax, phases, units, columns, lefts, widths, top, small)

    sticks: list[Stick] = []
    labels = []
    marks = []
    for b, row, y, lane in zip(bands, content, ys, lanes, strict=True):
        ends = []
        for k, groups in enumerate(row):
            name = columns[k]
            x = lefts[k] + offsets[k][lane]
            start = x
            if k == 0 and b.mode is not None:
                ax.text(
                    x,
                    y,
                    _mode_mathtext(b.mode),
                    ha="left",
                    va="center_baseline",
                    fontsize=small,
                    color=COLOURS["muted"],
                )
                x += _CHAR_IN * _visible_len(_mode_mathtext(b.mode)) + 0.08
                start = x
            for species, count, dim in groups:
                if k == 0:
                    act = free_act[species]
                    ir, raman = bool(act.ir), bool(act.raman)
                else:
                    fs = phases[k - 1][1].species_by_label(species)
                    ir, raman = bool(fs.ir), bool(fs.raman)
                length = _bar_in(dim)
                (line,) = ax.plot(
                    [x, x + length], [y, y], color=COLOURS["ink"], linewidth=1.6, solid_capstyle="butt", zorder=3
                )
                for _ in range(count):
                    sticks.append(Stick(name, b.species, b.mode, species, dim, ir, raman, line, b.wavenumber))
                text = (f"{count}" if count > 1 else "") + mathtext(species)
                tx = x + length + 0.06
                lab = ax.text(
                    tx, y, text, ha="left", va="center_baseline", fontsize=small, color=COLOURS["ink"], zorder=3
                )
                labels.append((name, b.species, species, lab))
                mx = tx + _CHAR_IN * _visible_len(text) + 0.05 + _MARK_IN / 2
                for kind, on in (("ir", ir), ("raman", raman)):
                    if not on:
                        continue
                    m = activity_mark(ax, mx, y, kind, size=4.6, edge_width=1.0)
                    marks.append((name, b.species, kind, m))
                    mx += _MARK_IN
                x = mx - _MARK_IN / 2 + 0.1 + (0 if (ir or raman) else _MARK_IN / 2)
            ends.append((start, x))
        if lane == 0:  # dotted guides between the columns, at the band's own height
            for k in range(len(row) - 1):
                ax.plot(
                    [ends[k][1], ends[k + 1][0] - 0.04],
                    [y, y],
                    color=COLOURS["guide"],
                    linewidth=0.8,
                    linestyle=(0, (1, 2)),
                    zorder=1,
                )

    where = "at the free-unit wavenumber of the mode table" if scale else "in the row of its free-unit band"
    note = legend_and_note(
        fig,
        small=small,
        bar="one species (length: degeneracy)",
        legend_y=0.34 / H,
        note=f"positions are not predicted: every bar sits {where}; the number before a species counts its "
        "components (distinct frequencies); a model estimate (estimate command) places them",
        note_y=0.04 / H,
        note_size=small * 0.85,
    )
    headers.append(note)
    return LinePatternArtists(
        figure=fig,
        ax=ax,
        unit=units[0].formula,
        columns=tuple(columns),
        bands=tuple((b.species, b.mode, b.wavenumber) for b in bands),
        sticks=tuple(sticks),
        labels=tuple(labels),
        headers=tuple(headers),
        marks=tuple(marks),
        estimated=False,
        note=note,
    )


def legend_and_note(
    fig, *, small: float, bar: str, legend_y: float, note: str, note_y: float, note_size: float
) -> Text:
    """The legend of a line pattern (activity marks and what a bar is) and its note, wrapped to the figure."""
    from matplotlib.lines import Line2D

    handles = activity_handles(5)
    handles.append(Line2D([], [], color=COLOURS["ink"], linewidth=1.6, label=bar))
    fig.legend(
        handles=handles,
        loc="lower center",
        ncol=3,
        frameon=False,
        fontsize=small * 0.95,
        bbox_to_anchor=(0.5, legend_y),
        handlelength=1.2,
        columnspacing=0.9,
    )
    # wrap to the figure's width (a character of this font is about half its size wide)
    per_line = max(30, int(0.92 * fig.get_figwidth() * 72 / (0.5 * note_size)))
    lines = [w for part in note.split("\n") for w in textwrap.wrap(part, per_line)]
    return fig.text(
        0.5,
        note_y,
        "\n".join(lines),
        ha="center",
        va="bottom",
        fontsize=note_size,
        color=COLOURS["muted"],
        linespacing=1.15,
    )


def _headings(fig, ax, phases, units, columns, lefts, widths, top, small) -> list[Text]:
    """Column separators, titles and sub-titles (space group and site, or the free group)."""
    from .mulliken import hermann_mauguin_mathtext, schoenflies_mathtext

    headers = []
    u0 = units[0]
    for k, name in enumerate(columns):
        x0 = lefts[k]
        if k:
            ax.axvline(x0, color="#e6e6e6", linewidth=0.8, zorder=0)
            u = units[k - 1]
            pred = phases[k - 1][1]
            sub = f"{hermann_mauguin_mathtext(pred.symbol)}, site {schoenflies_mathtext(u.site_group)}"
            title = name
        else:
            sub = f"{schoenflies_mathtext(u0.free_group)}"
            title = f"free {formula_mathtext(u0.name)}"
        cx = x0 + widths[k] / 2
        head = ax.annotate(
            title,
            (cx, top),
            xytext=(0, 30),
            textcoords="offset points",
            ha="center",
            va="bottom",
            fontsize=_FONT,
            fontweight="bold",
            color=COLOURS["ink"],
            annotation_clip=False,
            linespacing=1.1,
        )
        fit_width(head, (widths[k] - 0.1) * fig.dpi, fig.canvas.get_renderer())
        headers.append(head)
        headers.append(
            ax.annotate(
                sub,
                (cx, top),
                xytext=(0, 14),
                textcoords="offset points",
                ha="center",
                va="bottom",
                fontsize=small,
                color=COLOURS["muted"],
                annotation_clip=False,
            )
        )
    return headers

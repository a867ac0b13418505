"""Line patterns across phases, and writing figures to SVG, PDF or PNG.

A line pattern shows, for every band of a free unit, the components the factor group of
each phase splits it into, as short horizontal sticks in one column per phase (phases, or
temperatures, along the x axis).  The first column is the free unit itself.  No frequencies
are predicted, so the components of one band form a small cluster around the band's
position; the order of the sticks inside a cluster means nothing.  When a mode table is
given, bands sit at their free-unit wavenumbers on a wavenumber axis (cm-1).

Each stick is one distinct frequency: a factor-group species occurring n times gives n
sticks.  Stick length grows with the degeneracy; the activity marks are the ones of the
correlation diagrams (filled circle: IR active, open square: Raman active).
"""

from __future__ import annotations

import io
import os
import re
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any

from .._io import atomic_write_bytes
from ..errors import InputError
from .correlation import ACTIVITY_STYLE, COLOURS, fit_width, select_unit
from .mulliken import formula_mathtext, mathtext

if TYPE_CHECKING:  # pragma: no cover
    from matplotlib.axes import Axes
    from matplotlib.figure import Figure
    from matplotlib.lines import Line2D
    from matplotlib.text import Text

    from ..crystal.results import CrystalPrediction
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
    with matplotlib.rc_context({"svg.hashsalt": "splitting", "svg.fonttype": "path", "pdf.fonttype": 42}):
        fig.savefig(
            buf, format=fmt, dpi=dpi, metadata=metadata, facecolor="white", bbox_inches="tight", pad_inches=0.08
        )
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
_STICK_GAP_PT = 3.2  # between sticks of one species (points)
_GROUP_GAP_PT = 12.5  # between species groups of one cluster (points)
_BAND_GAP_PT = 15.0  # between clusters of neighbouring bands (points)


@dataclass(frozen=True)
class Stick:
    """One drawn stick: one distinct frequency of one band in one column.

    Attributes
    ----------
    column : str
        ``"free"`` or the phase label.
    band : str
        Free-unit species of the band.
    mode : str or None
        Mode name from the mode table (None without one).
    species : str
        Species of the stick (free-unit species in the free column, factor-group species otherwise).
    dimension : int
        Degeneracy.
    ir, raman : bool
        Activity.
    line : matplotlib.lines.Line2D
    """

    column: str
    band: str
    mode: str | None
    species: str
    dimension: int
    ir: bool
    raman: bool
    line: Line2D

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
        }


@dataclass(frozen=True)
class LinePatternArtists:
    """What :func:`line_pattern` drew.

    Attributes
    ----------
    figure : matplotlib.figure.Figure
    ax : matplotlib.axes.Axes
    unit : str
    columns : tuple of str
        ``"free"`` then the phase labels, left to right.
    bands : tuple of (str, str or None, float or None)
        Free species, mode name and free-unit wavenumber (cm-1) of every band, top to bottom.
    sticks : tuple of Stick
    labels : tuple of (str, str, str, Text)
        Column, band, species and the label next to its sticks (``"5T$_{g}$"`` for five sticks).
    headers : tuple of Text
    marks : tuple of (str, str, str, Line2D)
        Column, band, ``"ir"``/``"raman"`` and the marker.
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

    def texts(self) -> list[Text]:
        """Every label and heading."""
        return [t for *_, t in self.labels] + list(self.headers)

    def components(self, column: str, band: str, mode: str | None = None) -> dict[str, int]:
        """Species -> number of sticks drawn for one band in one column."""
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


def _cluster_height(groups: Sequence[tuple[str, int, int]]) -> float:
    h = sum((n - 1) * _STICK_GAP_PT for _, n, _ in groups)
    return h + _GROUP_GAP_PT * (len(groups) - 1)


def _spread(nominal: Sequence[float], heights: Sequence[float], top: float) -> list[float]:
    """Centres (points) near ``nominal`` such that clusters of ``heights`` keep _BAND_GAP_PT apart in [0, top]."""
    order = sorted(range(len(nominal)), key=lambda i: nominal[i])
    blocks: list[list[int]] = [[i] for i in order]

    def size(block: list[int]) -> float:
        return sum(heights[i] for i in block) + _BAND_GAP_PT * (len(block) - 1)

    def place(block: list[int]) -> float:
        # bottom of the stacked block, placed so its items sit on average at their nominal centres
        offs, acc = [], 0.0
        for i in block:
            offs.append(acc + heights[i] / 2)
            acc += heights[i] + _BAND_GAP_PT
        bottom = sum(nominal[i] - o for i, o in zip(block, offs, strict=True)) / len(block)
        return min(max(bottom, _BAND_GAP_PT / 2), top - size(block) - _BAND_GAP_PT / 2)

    changed = True
    while changed:
        changed = False
        for k in range(len(blocks) - 1):
            a, b = blocks[k], blocks[k + 1]
            if place(a) + size(a) + _BAND_GAP_PT > place(b) - 1e-9:
                blocks[k : k + 2] = [a + b]
                changed = True
                break
    centres = [0.0] * len(nominal)
    for block in blocks:
        acc = place(block)
        for i in block:
            centres[i] = acc + heights[i] / 2
            acc += heights[i] + _BAND_GAP_PT
    return centres


def line_pattern(
    phases: Sequence[tuple[str, CrystalPrediction]],
    unit_formula: str,
    *,
    band: str | None = None,
    modes: ModeTable | None = None,
) -> LinePatternArtists:
    """Predicted components of every band of a unit, one column per phase, as stick clusters.

    Parameters
    ----------
    phases : sequence of (str, CrystalPrediction)
        Phase (or temperature) label and prediction, in the order of the x axis.
    unit_formula : str
        Formula of the unit followed across the phases (it must have the same free group in each).
    band : str, optional
        Only this band: a free species (``"E'"``) or, with a mode table, a mode name (``"nu3"``).
    modes : ModeTable, optional
        Free-unit fundamentals: one band per mode, placed at its wavenumber (cm-1) on the y axis.
        Without it there is one band per free species and the y axis has no scale.

    Returns
    -------
    LinePatternArtists

    Raises
    ------
    InputError
        No phases, a unit missing from a phase, free groups that differ between phases, a mode
        table for another point group, or an unknown band.
    """
    from ..activity import activity_table

    if not phases:
        raise InputError("line_pattern needs at least one phase")
    units = [select_unit(pred, unit_formula) for _, pred in phases]
    free_groups = {u.free_group for u in units}
    if len(free_groups) != 1:
        raise InputError(f"{unit_formula} has different free groups in the phases ({', '.join(sorted(free_groups))})")
    u0 = units[0]
    bands = _bands(u0, band, modes)
    free_act = {a.label: a for a in activity_table(u0.free_group)}
    free_dim = {c.free: c.free_dimension for c in u0.correlation}

    # columns: free unit, then phases; per band, the (species, count, dimension) groups in each column
    columns = ["free", *[lab for lab, _ in phases]]
    content: list[list[list[tuple[str, int, int]]]] = []
    for b in bands:
        row = [[(b.species, 1, free_dim[b.species])]]
        for u in units:
            corr = {c.free: c for c in u.correlation}
            row.append(_groups_of(corr[b.species].factor))
        content.append(row)
    heights = [max(_cluster_height(col) for col in row) for row in content]

    # vertical layout in points from the bottom of the axes
    total = sum(heights) + _BAND_GAP_PT * (len(bands) + 1)
    if modes is None:
        top = total
        centres, acc = [], top - _BAND_GAP_PT
        for h in heights:
            centres.append(acc - h / 2)
            acc -= h + _BAND_GAP_PT
        scale = None
    else:
        top = max(total * 1.15, 4.8 * 72)
        waves = [b.wavenumber for b in bands]
        lo, hi = min(waves), max(waves)
        span = max(hi - lo, 100.0)
        lo, hi = lo - 0.06 * span, hi + 0.06 * span
        scale = (lo, hi)
        nominal = [(w - lo) / (hi - lo) * top for w in waves]
        centres = _spread(nominal, heights, top)
    return _draw_pattern(phases, units, columns, bands, content, centres, top, scale, free_act)


_FREE_W = 1.75  # inches
_COL_W = 1.45


def _column_left(k: int) -> float:
    return 0.0 if k == 0 else _FREE_W + (k - 1) * _COL_W


def _draw_pattern(phases, units, columns, bands, content, centres, top, scale, free_act) -> LinePatternArtists:
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure
    from matplotlib.lines import Line2D
    from matplotlib.ticker import MaxNLocator

    from .mulliken import hermann_mauguin_mathtext, schoenflies_mathtext

    n_phases = len(phases)
    width_in = _FREE_W + n_phases * _COL_W
    left_in, right_in = (0.85 if scale else 0.25), 0.2
    head_in, foot_in = 1.05, 0.7
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

    # column separators and headings
    headers = []
    u0 = units[0]
    for k, name in enumerate(columns):
        x0 = _column_left(k)
        if k:
            ax.axvline(x0, color="#e6e6e6", linewidth=0.8, zorder=0)
            u = units[k - 1]
            pred = phases[k - 1][1]
            sub = f"{hermann_mauguin_mathtext(pred.space_group.symbol)}, site {schoenflies_mathtext(u.site_group)}"
            title = name
        else:
            sub = f"{schoenflies_mathtext(u0.free_group)}"
            title = f"free {formula_mathtext(u0.formula)}"
        width = _FREE_W if k == 0 else _COL_W
        cx = x0 + width / 2
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
        fit_width(head, (width - 0.1) * fig.dpi, fig.canvas.get_renderer())
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

    sticks: list[Stick] = []
    labels = []
    marks = []
    pt = 1.0  # y data unit is one point
    for b, row, yc in zip(bands, content, centres, strict=True):
        ends = []
        for k, groups in enumerate(row):
            name = columns[k]
            x0 = _column_left(k) + (0.62 if k == 0 else 0.14)
            h = _cluster_height(groups)
            y = yc + h / 2
            for species, count, dim in groups:
                if k == 0:
                    act = free_act[species]
                    ir, raman = bool(act.ir), bool(act.raman)
                else:
                    fs = phases[k - 1][1].species_by_label(species)
                    ir, raman = bool(fs.ir), bool(fs.raman)
                length = 0.12 + 0.075 * dim
                y_first = y
                for _ in range(count):
                    (line,) = ax.plot(
                        [x0, x0 + length], [y, y], color=COLOURS["ink"], linewidth=1.6, solid_capstyle="butt", zorder=3
                    )
                    sticks.append(Stick(name, b.species, b.mode, species, dim, ir, raman, line))
                    y -= _STICK_GAP_PT * pt
                y_mid = (y_first + y + _STICK_GAP_PT) / 2
                y = y + _STICK_GAP_PT - _GROUP_GAP_PT
                text = (f"{count}" if count > 1 else "") + mathtext(species)
                lab = ax.text(
                    x0 + 0.58,
                    y_mid,
                    text,
                    ha="left",
                    va="center_baseline",
                    fontsize=small,
                    color=COLOURS["ink"],
                    zorder=3,
                )
                labels.append((name, b.species, species, lab))
                mx = x0 + 0.58 + (0.42 if count > 1 else 0.32)
                for kind, on in (("ir", ir), ("raman", raman)):
                    if not on:
                        continue
                    st = ACTIVITY_STYLE[kind]
                    (m,) = ax.plot(
                        [mx],
                        [y_mid],
                        linestyle="none",
                        marker=st["marker"],
                        markersize=4.6,
                        markerfacecolor=st["face"],
                        markeredgecolor=st["edge"],
                        markeredgewidth=1.0,
                        zorder=4,
                    )
                    marks.append((name, b.species, kind, m))
                    mx += 0.1
            ends.append((x0, x0 + 0.58 + 0.62))
        # dotted guides between the columns at the cluster centre
        for k in range(len(row) - 1):
            ax.plot(
                [ends[k][1] - 0.02, ends[k + 1][0] - 0.05],
                [yc, yc],
                color=COLOURS["guide"],
                linewidth=0.8,
                linestyle=(0, (1, 2)),
                zorder=1,
            )
        if b.mode is not None:
            ax.text(
                0.08,
                yc,
                _mode_mathtext(b.mode),
                ha="left",
                va="center_baseline",
                fontsize=small,
                color=COLOURS["muted"],
            )
            if scale is not None:
                lo, hi = scale
                yt = (b.wavenumber - lo) / (hi - lo) * top
                if abs(yt - yc) > 2.0:  # the cluster was moved away from its wavenumber: lead back to it
                    ax.plot(
                        [0.0, 0.04, 0.06], [yt, yt, yc], color=COLOURS["guide"], linewidth=0.8, zorder=1, clip_on=False
                    )

    handles = [
        Line2D(
            [],
            [],
            linestyle="none",
            marker=ACTIVITY_STYLE[k]["marker"],
            markersize=5,
            markerfacecolor=ACTIVITY_STYLE[k]["face"],
            markeredgecolor=ACTIVITY_STYLE[k]["edge"],
            markeredgewidth=1.0,
            label=ACTIVITY_STYLE[k]["label"],
        )
        for k in ("ir", "raman")
    ]
    handles.append(Line2D([], [], color=COLOURS["ink"], linewidth=1.6, label="one frequency (length: degeneracy)"))
    fig.legend(
        handles=handles,
        loc="lower center",
        ncol=3,
        frameon=False,
        fontsize=small * 0.95,
        bbox_to_anchor=(0.5, 0.2 / H),
        handlelength=1.6,
        columnspacing=1.4,
    )
    headers.append(
        fig.text(
            0.5,
            0.06 / H,
            "order within a cluster is arbitrary (no frequencies are predicted)",
            ha="center",
            va="bottom",
            fontsize=small * 0.85,
            color=COLOURS["muted"],
        )
    )

    return LinePatternArtists(
        figure=fig,
        ax=ax,
        unit=u0.formula,
        columns=tuple(columns),
        bands=tuple((b.species, b.mode, b.wavenumber) for b in bands),
        sticks=tuple(sticks),
        labels=tuple(labels),
        headers=tuple(headers),
        marks=tuple(marks),
    )

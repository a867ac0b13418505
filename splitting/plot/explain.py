"""Figure of a measured spectrum with the predicted components and the assignments marked.

:func:`explain_files` reads the files, explains the lines
(:func:`splitting.spectra.assign.explain`) and saves this figure when asked.

matplotlib is imported inside the functions only, so the rest of the package works
without it.

What is drawn (:func:`explanation_figure`):

* the measured spectrum, or sticks at the measured lines when no spectrum is given;
* below the baseline, for every band that can show lines, one group of short ticks: as
  many ticks as the band has active factor-group components, spread schematically about
  the free wavenumber (the prediction gives their number and symmetry, not their order
  or positions), with the band name; bands with no active component are left out;
* above the lines, their best assignments (``?`` for an unexplained line): neighbouring
  lines with the same assignment share one label (``Hg(1) ×8``) with a thin leader to
  each line; labels sit in rows above the spectrum, and a label moves up a row where it
  would run into its neighbour's.
"""

from __future__ import annotations

import io
import os
from pathlib import Path
from typing import Any

import numpy as np

from ..errors import InputError
from ..spectra.explanation import Explanation
from ..spectra.measured import Spectrum
from ..spectra.scoring import DEFAULT_TOLERANCE_CM1

__all__ = ["FIGURE_FORMATS", "explain_files", "explanation_figure", "save_explanation_figure"]

#: File suffixes the figure can be saved with, and the matplotlib format of each.
FIGURE_FORMATS = {".png": "png", ".pdf": "pdf", ".svg": "svg", ".jpg": "jpg", ".jpeg": "jpg", ".eps": "eps"}
#: Number of label heights used for staggering.
_LEVELS = 6


def _short(line: Any) -> str:
    if not line.candidates:
        return "?"
    best = line.candidates[0]
    if best.kind == "lattice":
        return "lattice"
    tag = {
        "fundamental": "",
        "site_activated": " (site)",
        "disorder_activated": " (disorder)",
        "overtone": "",
        "combination": "",
        "isotopologue": " (isotope)",
        "second_phase": " (2nd phase)",
        "lo_to": " (LO)",
    }
    return f"{best.band}{tag.get(best.kind, '')}"


#: Figure size (inches) and the axes' place in it (fractions), fixed so labels can be measured.
FIGURE_SIZE = (10.0, 4.8)
_AXES_RECT = (0.075, 0.24, 0.905, 0.66)
#: Colours of the figure, named in its legend.
COLOURS = {
    "line": "0.2",
    "assigned": "tab:green",
    "unexplained": "tab:red",
    "component": "tab:blue",
    "inactive": "0.5",
    "outside": "0.6",
}
_FONT = 7.5


def explanation_axes() -> Any:
    """A new axes of the size and place :func:`explanation_figure` lays its labels out for."""
    from matplotlib.figure import Figure

    fig = Figure(figsize=FIGURE_SIZE)
    return fig.add_axes(_AXES_RECT)


def _band_mathtext(name: str) -> str:
    """``nu3`` -> ν₃ and ``T1u(2)`` -> T₁ᵤ(2) as mathtext, also inside ``nu1 + nu4``, ``2nu3``."""
    import re

    def one(m: re.Match[str]) -> str:
        return rf"$\nu_{{{m[1]}{m[2]}}}$"

    from .mulliken import mathtext

    def species(m: re.Match[str]) -> str:
        try:
            return mathtext(m[1]) + m[2]
        except InputError:
            return m[0]

    text = re.sub(r"(?<![A-Za-z])nu_?(\d+)([a-z]?)", one, name.replace("$", r"\$"))
    return re.sub(r"(?<![\w$])([ABETGH]\d*[gu]?'{0,2})(\(\d+\))", species, text)


def _label_text(line: Any) -> str:
    return "?" if not line.candidates else _band_mathtext(_short(line))


def _nonnegative_ticks(ax: Any, bottom: float, top: float) -> None:
    from matplotlib.ticker import FixedLocator, MaxNLocator

    ticks = MaxNLocator(nbins=5).tick_values(max(bottom, 0.0), top)
    ax.yaxis.set_major_locator(FixedLocator([t for t in ticks if t >= 0 and t <= top * 1.0001]))


def _place(ax: Any, text: Any, lo: float, hi: float) -> tuple[float, float]:
    """Keep a label inside [lo, hi] (data x); return its measured x extent in data units."""
    renderer = ax.figure._get_renderer()
    inv = ax.transData.inverted()
    bb = text.get_window_extent(renderer)
    x0, x1 = (inv.transform((bb.x0, bb.y0))[0], inv.transform((bb.x1, bb.y0))[0])
    shift = max(0.0, lo - x0) - max(0.0, x1 - hi)
    if shift:
        x = text.get_position()[0]
        text.set_x(x + shift)
        x0, x1 = x0 + shift, x1 + shift
    return x0, x1


def explanation_figure(
    explanation: Explanation, spectrum: Spectrum | None = None, *, ax: Any = None
) -> dict[str, list[Any]]:
    """Draw the spectrum (or line sticks), predicted component ticks and line labels.

    Parameters
    ----------
    explanation : Explanation
        From :func:`splitting.spectra.assign.explain`.
    spectrum : Spectrum or None
        The measured spectrum; ``None``: sticks at the measured lines.
    ax : matplotlib.axes.Axes or None
        Where to draw; ``None``: a new figure (:func:`explanation_axes`, no pyplot). Labels
        are measured in the axes as they are when drawn: resize the axes before, not after.

    Returns
    -------
    dict of str to list
        The artists: ``"spectrum"`` (line or sticks), ``"bands"`` (component ticks and
        band names), ``"labels"`` (assignment texts and leaders) and ``"legend"``.
    """
    from matplotlib.lines import Line2D

    from .._display import file_name

    if ax is None:
        ax = explanation_axes()
    lines = explanation.lines
    positions = np.array([line.peak.position_cm1 for line in lines], dtype=float)
    artists: dict[str, list[Any]] = {"spectrum": [], "bands": [], "labels": [], "legend": []}

    if spectrum is not None:
        x, y = spectrum.wavenumber_cm1, spectrum.signal
        y, scaled = _drawable(y)
        artists["spectrum"] += ax.plot(x, y, color=COLOURS["line"], lw=0.8)
        heights = np.interp(positions, x, y) if positions.size else positions
        top = float(np.max(y)) if y.size else 1.0
        bottom = float(np.min(y)) if y.size else 0.0
        lo, hi = float(x[0]), float(x[-1])
    else:
        heights, scaled = _drawable(np.array([line.peak.intensity for line in lines], dtype=float))
        if positions.size:
            artists["spectrum"].append(ax.vlines(positions, 0.0, heights, color=COLOURS["line"], lw=1.0))
        top = float(heights.max()) if heights.size else 1.0
        bottom = 0.0
        lo = float(positions.min()) if positions.size else 0.0
        hi = float(positions.max()) if positions.size else 1.0
    span = max(top - bottom, 1e-12)
    measured = (lo, hi)
    bands = [b for c in explanation.comparisons if c.phase == explanation.phase for b in c.bands]
    # bands far outside the measured range are left out (they say nothing about this spectrum)
    reach = explanation.tolerance_cm1
    shown = [b for b in bands if measured[0] - reach <= b.free_cm1 <= measured[1] + reach]
    if shown:
        lo = min(lo, min(b.free_cm1 for b in shown) - reach)
        hi = max(hi, max(b.free_cm1 for b in shown) + reach)
    width = max(hi - lo, 1.0)
    xlim = (lo - 0.03 * width, hi + 0.03 * width)
    tick_lo, tick_hi = bottom - 0.12 * span, bottom - 0.04 * span
    ax.set_xlim(*xlim)
    ax.set_ylim(tick_lo - 0.42 * span, top + (0.2 + 0.1 * _LEVELS) * span)

    # predicted components, grouped by band
    half = min(explanation.tolerance_cm1 / 4.0, 0.01 * width)
    for b in shown:
        if not (b.predicted or b.predicted_site):
            continue
        n = b.predicted
        xs = [b.free_cm1] if n <= 1 else list(np.linspace(b.free_cm1 - half, b.free_cm1 + half, n))
        if n:
            artists["bands"].append(ax.vlines(xs, tick_lo, tick_hi, color=COLOURS["component"], lw=1.0))
        text = f"{_band_mathtext(b.band)} ×{n}" if n else f"{_band_mathtext(b.band)} (inactive)"
        artists["bands"].append(
            ax.text(
                b.free_cm1,
                tick_lo - 0.02 * span,
                text,
                ha="center",
                va="top",
                fontsize=_FONT - 0.5,
                color=COLOURS["component"] if n else COLOURS["inactive"],
                rotation=90,
            )
        )

    # assignment labels: neighbouring lines with the same best assignment share one label
    # ("Hg(1) ×8") with a thin leader to each line; a label goes on the lowest row where its
    # measured extent does not run into the label before it on that row, and stays inside
    # the axes
    order = [int(i) for i in np.argsort(positions, kind="stable")]
    groups: list[list[int]] = []
    for i in order:
        if groups and _short(lines[groups[-1][-1]]) == _short(lines[i]):
            groups[-1].append(i)
        else:
            groups.append([i])
    gap = 0.004 * (xlim[1] - xlim[0])
    ends = [-np.inf] * _LEVELS
    for members in groups:
        xs = positions[members]
        xc = float(xs.mean())
        text = _label_text(lines[members[0]]) + (f" ×{len(members)}" if len(members) > 1 else "")
        color = COLOURS["unexplained"] if not lines[members[0]].candidates else COLOURS["assigned"]
        label = ax.text(xc, top, text, ha="center", va="bottom", fontsize=_FONT, color=color)
        x0, x1 = _place(ax, label, xlim[0], xlim[1])
        free = [k for k in range(_LEVELS) if x0 > ends[k] + gap]
        level = free[0] if free else int(np.argmin(ends))
        ends[level] = x1
        base = top + (0.06 + 0.1 * level) * span  # one row per level above the whole spectrum
        label.set_y(base)
        artists["labels"].append(ax.vlines(xs, heights[members] + 0.02 * span, base, color=color, lw=0.4))
        artists["labels"].append(label)

    ax.set_xlabel("wavenumber / cm$^{-1}$")
    ax.set_ylabel(("signal" if spectrum is not None else "intensity (as given)") + scaled)
    _nonnegative_ticks(ax, bottom, top)
    ax.spines[["top", "right"]].set_visible(False)
    tech = {"ir": "IR", "raman": "Raman"}.get(explanation.technique or "", "measured")
    ax.set_title(
        f"{file_name(explanation.phase)}: {tech} lines and predicted components", fontsize=_FONT + 1.5, loc="left"
    )
    handles = [
        Line2D([], [], color=COLOURS["line"], lw=1.0, label="measured"),
        Line2D([], [], color=COLOURS["assigned"], lw=1.0, label="assigned (best candidate)"),
        Line2D([], [], color=COLOURS["unexplained"], lw=1.0, label="unexplained (?)"),
        Line2D([], [], color=COLOURS["component"], lw=1.0, label="active components of a band (number, not positions)"),
    ]
    if any(not b.predicted for b in shown if b.predicted_site):
        handles.append(Line2D([], [], color=COLOURS["inactive"], lw=1.0, label="band inactive in the crystal"))
    left_out = len(bands) - len(shown)
    if left_out:
        # said in the legend, so the reader knows the figure does not show every band
        word = "band lies" if left_out == 1 else "bands lie"
        handles.append(
            Line2D([], [], linestyle="none", label=f"{left_out} {word} outside the measured range (not drawn)")
        )
    artists["legend"].append(
        ax.legend(
            handles=handles,
            loc="upper center",
            bbox_to_anchor=(0.5, -0.16),
            ncol=3,
            fontsize=_FONT,
            frameon=False,
            handlelength=1.5,
        )
    )
    return artists


def save_explanation_figure(
    explanation: Explanation, path: str | os.PathLike[str], *, spectrum: Spectrum | None = None, dpi: int = 150
) -> Path:
    """Draw :func:`explanation_figure` and write it atomically to ``path``.

    The format follows the suffix (``.png``, ``.pdf``, ``.svg``, ``.jpg``, ``.eps``).

    Raises
    ------
    InputError
        Unknown suffix or a folder that does not exist.
    """
    from .._io import atomic_write_bytes

    target = Path(path)
    fmt = FIGURE_FORMATS.get(target.suffix.lower())
    if fmt is None:
        raise InputError(f"{target}: unknown figure format {target.suffix!r}; use one of {', '.join(FIGURE_FORMATS)}")
    ax = explanation_axes()
    explanation_figure(explanation, spectrum, ax=ax)
    buffer = io.BytesIO()
    ax.figure.savefig(buffer, format=fmt, dpi=dpi, bbox_inches="tight", pad_inches=0.1)
    return atomic_write_bytes(target, buffer.getvalue())


def explain_files(
    structure: str | os.PathLike[str],
    peaks: str | os.PathLike[str] | None = None,
    *,
    spectrum: str | os.PathLike[str] | None = None,
    modes: str | os.PathLike[str] | None = None,
    technique: str | None = None,
    figure: str | os.PathLike[str] | None = None,
    tolerance_cm1: float = DEFAULT_TOLERANCE_CM1,
    options: Any = None,
    states: dict[str, str] | None = None,
    estimate: Any = None,
) -> Explanation:
    """Read the files, explain the lines, and optionally save the figure.

    Everything is read and checked before anything is written; the figure (if asked
    for) is written atomically, so on any error no file appears.

    Parameters
    ----------
    structure : path
        Crystal structure file (anything :func:`splitting.crystal.predict.predict` reads).
    peaks : path or None
        Peak list (:func:`~splitting.spectra.measured.read_peaks`); ``None``: found in
        ``spectrum`` with :func:`~splitting.spectra.peaks.find_peaks`.
    spectrum : path or None
        Measured spectrum (:func:`~splitting.spectra.measured.read_spectrum`), drawn in
        the figure.
    modes : path or None
        Mode-table TOML file; ``None``: bundled tables.
    technique : {"ir", "raman"} or None
        Technique; must agree with what the files say.
    figure : path or None
        Where to save the figure (format from the suffix, e.g. ``.png``, ``.pdf``, ``.svg``).
    tolerance_cm1 : float
        Window half width, cm-1.
    options : splitting.crystal.predict.Options or None
        Crystal-pipeline options.
    states : dict, optional
        State of the phase (``{"*": "rotor"}``) or of its units (written name or Hill
        formula). A file with partial occupancies is read as a disordered phase: its
        one-orientation model is used with the state given, or static disorder by
        default (with a note saying what each state predicts).
    estimate : splitting.dynamics.Estimate, optional
        Model estimate of the structure: closer matches rank higher.

    Raises
    ------
    InputError
        Missing, empty or malformed files; text in numeric columns; unsorted or
        repeated x values; wavelength units; conflicting techniques; an output folder
        that does not exist.
    """
    from ..crystal.predict import predict
    from ..spectra.assign import explain
    from ..spectra.catalogue import load_mode_table
    from ..spectra.measured import read_peaks, read_spectrum
    from ..spectra.peaks import find_peaks

    if peaks is None and spectrum is None:
        raise InputError("give a peak list or a spectrum to explain")
    if figure is not None:
        target = Path(figure)
        if target.suffix.lower() not in FIGURE_FORMATS:
            raise InputError(
                f"{target}: unknown figure format {target.suffix!r}; use one of {', '.join(FIGURE_FORMATS)}"
            )
        folder = target.parent if str(target.parent) else Path(".")
        if not folder.is_dir():
            raise InputError(f"cannot write {figure}: folder {folder} does not exist")
    spec = read_spectrum(spectrum, technique=technique) if spectrum is not None else None
    if peaks is not None:
        peak_list = read_peaks(peaks, technique=technique or (spec.technique if spec else None))
    elif spec is not None:
        peak_list = find_peaks(spec)
    table = load_mode_table(modes) if modes is not None else None
    from ..crystal.read import load_structure
    from ..phases.disorder import occupancies, predict_disordered

    partial = bool((occupancies(load_structure(structure, allow_partial=True)) < 0.999).any())
    extra: tuple[str, ...] = ()
    if partial or states:
        dis = predict_disordered(structure, options, states=states)
        prediction = dis.ordered_model
        chosen = {u.formula: u.state for u in dis.units}
        extra = dis.warnings
    else:
        prediction = predict(structure, options)
        chosen = {}
    result = explain(
        prediction,
        peak_list,
        modes=table,
        technique=technique,
        tolerance_cm1=tolerance_cm1,
        states=chosen,
        estimate=estimate,
    )
    if extra:
        import dataclasses

        result = dataclasses.replace(result, notes=(*result.notes, *extra))
    if figure is not None:
        save_explanation_figure(result, figure, spectrum=spec)
    return result


def _drawable(values: np.ndarray) -> tuple[np.ndarray, str]:
    """Values whose span a figure can hold: divided by a power of ten when near the float limits.

    Intensities of 1e308 are valid numbers, but the axis span of such lines overflows to inf.
    Returns the values to draw and a note for the axis label ("" when unscaled).
    """
    peak = float(np.max(np.abs(values))) if values.size else 0.0
    if peak == 0.0 or 1e-100 < peak < 1e100:
        return values, ""
    power = int(np.floor(np.log10(peak)))
    return values / 10.0**power, f" (x 1e{power})"

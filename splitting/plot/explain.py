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
        Where to draw; ``None``: a new figure (``matplotlib.figure.Figure``, no pyplot).

    Returns
    -------
    dict of str to list
        The artists: ``"spectrum"`` (line or sticks), ``"bands"`` (component ticks and
        band names) and ``"labels"`` (assignment texts).
    """
    if ax is None:
        from matplotlib.figure import Figure

        ax = Figure(figsize=(10, 4.5)).add_subplot()
    lines = explanation.lines
    positions = np.array([line.peak.position_cm1 for line in lines], dtype=float)
    artists: dict[str, list[Any]] = {"spectrum": [], "bands": [], "labels": []}

    if spectrum is not None:
        x, y = spectrum.wavenumber_cm1, spectrum.signal
        artists["spectrum"] += ax.plot(x, y, color="0.2", lw=0.8)
        heights = np.interp(positions, x, y) if positions.size else positions
        top = float(np.max(y)) if y.size else 1.0
        bottom = float(np.min(y)) if y.size else 0.0
        lo, hi = float(x[0]), float(x[-1])
    else:
        heights = np.array([line.peak.intensity for line in lines], dtype=float)
        if positions.size:
            artists["spectrum"].append(ax.vlines(positions, 0.0, heights, color="0.2", lw=1.0))
        top = float(heights.max()) if heights.size else 1.0
        bottom = 0.0
        lo = float(positions.min()) if positions.size else 0.0
        hi = float(positions.max()) if positions.size else 1.0
    span = max(top - bottom, 1e-12)
    bands = [b for c in explanation.comparisons if c.phase == explanation.phase for b in c.bands]
    if bands:
        lo = min(lo, min(b.free_cm1 for b in bands) - explanation.tolerance_cm1)
        hi = max(hi, max(b.free_cm1 for b in bands) + explanation.tolerance_cm1)
    width = max(hi - lo, 1.0)

    # predicted components, grouped by band
    tick_lo, tick_hi = bottom - 0.12 * span, bottom - 0.04 * span
    half = min(explanation.tolerance_cm1 / 4.0, 0.01 * width)
    for b in bands:
        if not (b.predicted or b.predicted_site):
            continue
        n = b.predicted
        xs = [b.free_cm1] if n <= 1 else list(np.linspace(b.free_cm1 - half, b.free_cm1 + half, n))
        if n:
            artists["bands"].append(ax.vlines(xs, tick_lo, tick_hi, color="tab:blue", lw=1.0))
        text = f"{b.band} ×{n}" if n else f"{b.band} (inactive)"
        artists["bands"].append(
            ax.text(
                b.free_cm1,
                tick_lo - 0.02 * span,
                text,
                ha="center",
                va="top",
                fontsize=7,
                color="tab:blue" if n else "0.5",
                rotation=90,
            )
        )

    # assignment labels: neighbouring lines with the same best assignment share one label
    # ("Hg(1) ×8") with a thin leader to each line; a label goes on the lowest level where
    # it does not run into the previous label of that level (text width estimated per
    # character: a little over one 7-point character on a 10-inch axis)
    char = 0.009 * width
    order = [int(i) for i in np.argsort(positions, kind="stable")]
    groups: list[list[int]] = []
    for i in order:
        if groups and _short(lines[groups[-1][-1]]) == _short(lines[i]):
            groups[-1].append(i)
        else:
            groups.append([i])
    ends = [-np.inf] * _LEVELS
    for members in groups:
        xs = positions[members]
        xc = float(xs.mean())
        text = _short(lines[members[0]]) + (f" ×{len(members)}" if len(members) > 1 else "")
        half_text = 0.5 * len(text) * char
        free = [k for k in range(_LEVELS) if xc - half_text > ends[k]]
        level = free[0] if free else int(np.argmin(ends))
        ends[level] = xc + half_text + char
        base = top + (0.06 + 0.09 * level) * span  # one row per level above the whole spectrum
        color = "tab:red" if not lines[members[0]].candidates else "tab:green"
        artists["labels"].append(ax.vlines(xs, heights[members] + 0.02 * span, base, color=color, lw=0.4))
        artists["labels"].append(ax.text(xc, base, text, ha="center", va="bottom", fontsize=7, color=color))

    ax.set_xlim(lo - 0.02 * width, hi + 0.02 * width)
    ax.set_ylim(tick_lo - 0.3 * span, top + (0.2 + 0.1 * _LEVELS) * span)
    ax.set_xlabel("wavenumber / cm-1")
    ax.set_ylabel("signal" if spectrum is not None else "intensity")
    ax.set_title(f"{explanation.phase}: measured lines and predicted components", fontsize=9)
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
    from matplotlib.figure import Figure

    from .._io import atomic_write_bytes

    target = Path(path)
    fmt = FIGURE_FORMATS.get(target.suffix.lower())
    if fmt is None:
        raise InputError(f"{target}: unknown figure format {target.suffix!r}; use one of {', '.join(FIGURE_FORMATS)}")
    fig = Figure(figsize=(10, 4.5))
    ax = fig.add_subplot()
    explanation_figure(explanation, spectrum, ax=ax)
    fig.tight_layout()
    buffer = io.BytesIO()
    fig.savefig(buffer, format=fmt, dpi=dpi)
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
        prediction, peak_list, modes=table, technique=technique, tolerance_cm1=tolerance_cm1, states=chosen
    )
    if extra:
        import dataclasses

        result = dataclasses.replace(result, notes=(*result.notes, *extra))
    if figure is not None:
        save_explanation_figure(result, figure, spectrum=spec)
    return result

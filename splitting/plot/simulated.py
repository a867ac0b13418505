"""Figure of the simulated IR, Raman and neutron spectra of an estimate (one panel each).

The spectra are computed in :mod:`splitting.dynamics.spectra`; this module only draws them:
the broadened curve, the sticks beneath it, the width and the rule for the heights, and a
note that every position is a model estimate.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from .correlation import ACTIVITY_STYLE, COLOURS

if TYPE_CHECKING:  # pragma: no cover
    from matplotlib.axes import Axes
    from matplotlib.figure import Figure
    from matplotlib.lines import Line2D
    from matplotlib.text import Text

    from ..dynamics.spectra import SimulatedSpectrum

__all__ = ["SpectraArtists", "spectra_figure"]

_COLOUR = {"IR": ACTIVITY_STYLE["ir"]["edge"], "Raman": ACTIVITY_STYLE["raman"]["edge"], "INS": "#1b7837"}
_NAME = {"IR": "IR (model)", "Raman": "Raman (model)", "INS": "inelastic neutron (model, incoherent)"}


@dataclass(frozen=True)
class SpectraArtists:
    """What :func:`spectra_figure` drew.

    Attributes
    ----------
    figure : matplotlib.figure.Figure
    axes : tuple of Axes
        One panel per technique, top to bottom.
    techniques : tuple of str
    curves : tuple of Line2D
        The broadened spectrum of every panel.
    sticks : tuple of (str, float, float, Line2D)
        Technique, wavenumber (cm-1), relative height and the drawn stick.
    notes : tuple of Text
        The titles and the notes on the model, the width and the heights.
    """

    figure: Figure
    axes: tuple[Axes, ...]
    techniques: tuple[str, ...]
    curves: tuple[Line2D, ...]
    sticks: tuple[tuple[str, float, float, Line2D], ...]
    notes: tuple[Text, ...]


def _clear_of_notes(fig, axes, notes) -> None:
    """Raise each panel's upper limit so that its tallest line ends below the panel's notes
    (the notes wrap at drawing time, so their height is measured with the figure's renderer)."""
    renderer = fig.canvas.get_renderer()
    for ax in axes:
        own = [t for t in notes if t.axes is ax]
        if not own:
            continue
        inverse = ax.transAxes.inverted()
        bottom = min(inverse.transform(t.get_window_extent(renderer))[0, 1] for t in own)
        tallest = max((float(np.max(y)) for line in ax.get_lines() if len(y := line.get_ydata())), default=1.0)
        ax.set_ylim(0, max(tallest, 1e-12) / max(bottom - 0.04, 0.2))


def spectra_figure(
    spectra: Sequence[SimulatedSpectrum], *, title: str | None = None, lower_cm1: float = 0.0
) -> SpectraArtists:
    """Draw simulated spectra, one panel per technique, on a common wavenumber axis.

    Parameters
    ----------
    spectra : sequence of SimulatedSpectrum
    title : str, optional
        Figure title (e.g. the structure file).
    lower_cm1 : float
        Left end of the wavenumber axis.
    """
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    from ..errors import InputError

    if not spectra:
        raise InputError("no spectrum to draw")
    n = len(spectra)
    fig = Figure(figsize=(7.5, 1.9 * n + 1.3))
    FigureCanvasAgg(fig)
    axes = fig.subplots(n, 1, sharex=True, squeeze=False)[:, 0]
    fig.subplots_adjust(left=0.09, right=0.98, top=1 - 0.75 / fig.get_size_inches()[1], bottom=0.95 / (1.9 * n + 1.3))
    curves, sticks, notes = [], [], []
    upper = max(float(s.wavenumber_cm1[-1]) for s in spectra if len(s.wavenumber_cm1))
    for ax, sp in zip(axes, spectra, strict=True):
        colour = _COLOUR.get(sp.technique, COLOURS["ink"])
        (curve,) = ax.plot(sp.wavenumber_cm1, sp.intensity, color=colour, linewidth=1.1, zorder=3)
        curves.append(curve)
        for s in sp.sticks:
            (st,) = ax.plot(
                [s.wavenumber_cm1, s.wavenumber_cm1], [0, s.height], color=COLOURS["line"], linewidth=0.8, zorder=2
            )
            sticks.append((sp.technique, s.wavenumber_cm1, s.height, st))
        ax.set_ylim(0, 1.5)
        ax.set_xlim(lower_cm1, upper)
        ax.set_yticks([])
        for side in ("top", "right"):
            ax.spines[side].set_visible(False)
        notes.append(
            ax.text(
                0.005,
                0.97,
                f"{_NAME.get(sp.technique, sp.technique)}: {len(sp.sticks)} lines, "
                f"Lorentzian FWHM {sp.width_cm1:g} cm$^{{-1}}$",
                transform=ax.transAxes,
                ha="left",
                va="top",
                fontsize=8.5,
                color=COLOURS["ink"],
            )
        )
        notes.append(
            ax.text(
                0.005,
                0.80,
                sp.height_rule.replace("sigma_inc |e|^2 / m", r"$\sigma_{inc} |e|^2 / m$"),
                transform=ax.transAxes,
                ha="left",
                va="top",
                fontsize=6.5,
                color=COLOURS["muted"],
                wrap=True,
            )
        )
    _clear_of_notes(fig, axes, notes)
    axes[-1].set_xlabel("wavenumber / cm$^{-1}$ (model estimate)", fontsize=9)
    if title:
        notes.append(fig.suptitle(title, fontsize=10, color=COLOURS["ink"]))
    model = spectra[0].model
    notes.append(
        fig.text(
            0.5,
            0.01,
            f"simulated from a model, not measured; {model.removeprefix('model: ')}",
            ha="center",
            va="bottom",
            fontsize=6.5,
            color=COLOURS["muted"],
            wrap=True,
        )
    )
    return SpectraArtists(
        figure=fig,
        axes=tuple(axes),
        techniques=tuple(s.technique for s in spectra),
        curves=tuple(curves),
        sticks=tuple(sticks),
        notes=tuple(notes),
    )

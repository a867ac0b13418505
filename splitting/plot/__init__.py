"""Figures of predictions: correlation diagrams, line patterns across phases, figure files.

matplotlib is imported inside the drawing functions only, so importing this package (or
the computation that never draws) does not load it.  Figures are built on the Agg canvas
and never open a window.
"""

from .correlation import (
    Connector,
    DiagramArtists,
    PhaseDiagramArtists,
    correlation_diagram,
    phase_correlation_diagram,
    select_unit,
    site_induction,
)
from .lines import LinePatternArtists, Stick, figure_svg, line_pattern, write_figure

__all__ = [
    "Connector",
    "DiagramArtists",
    "LinePatternArtists",
    "PhaseDiagramArtists",
    "Stick",
    "correlation_diagram",
    "figure_svg",
    "line_pattern",
    "phase_correlation_diagram",
    "select_unit",
    "site_induction",
    "write_figure",
]

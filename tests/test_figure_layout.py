"""Every figure type, drawn: no two labels overlap and no label runs outside the figure.

The drawn text is read back from matplotlib (``Text.get_window_extent`` with the figure's
renderer), so what is checked is what a reader sees, for the correlation diagram, the phase
correlation diagram, the line pattern and the explanation figure.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from splitting.plot.correlation import text_overlaps

pytestmark = pytest.mark.filterwarnings("ignore::DeprecationWarning:pyparsing")

DEMO = Path(__file__).resolve().parents[1] / "splitting" / "data" / "demo"


def _texts(fig):
    """Every text that is drawn (tick labels of ticks outside the view limits are not)."""
    from matplotlib.text import Text

    hidden = set()
    for ax in fig.axes:
        for axis in (ax.xaxis, ax.yaxis):
            lo, hi = sorted(axis.get_view_interval())
            eps = 1e-9 * max(1.0, abs(hi - lo))
            for tick in axis.get_major_ticks() + axis.get_minor_ticks():
                if tick.get_loc() is None or not lo - eps <= tick.get_loc() <= hi + eps:
                    hidden.update({id(tick.label1), id(tick.label2)})
    return [
        t
        for t in fig.findobj(Text)
        if t.get_visible() and t.get_text().strip() and id(t) not in hidden and t.get_figure(root=True) is fig
    ]


def _check_layout(fig) -> None:
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    canvas = FigureCanvasAgg(fig) if not isinstance(fig.canvas, FigureCanvasAgg) else fig.canvas
    canvas.draw()
    renderer = canvas.get_renderer()
    texts = _texts(fig)
    assert texts, "no text drawn"
    clashes = text_overlaps(texts, renderer)
    assert not clashes, [(a.get_text(), b.get_text()) for a, b in clashes[:5]]
    box = fig.bbox
    outside = []
    for t in texts:
        bb = t.get_window_extent(renderer)
        if bb.x0 < box.x0 - 0.5 or bb.x1 > box.x1 + 0.5 or bb.y0 < box.y0 - 0.5 or bb.y1 > box.y1 + 0.5:
            outside.append((t.get_text(), tuple(round(v) for v in bb.extents)))
    assert not outside, (outside[:5], tuple(round(v) for v in box.extents))


def _correlation(preds):
    from splitting.plot.correlation import correlation_diagram

    return [correlation_diagram(preds["c60"], "C60").figure, correlation_diagram(preds["calcite"], "CO3").figure]


def _band(preds):
    from splitting.plot.correlation import correlation_diagram

    return [correlation_diagram(preds["c60"], "C60", band="T1u").figure]


def _phases(preds):
    from splitting.plot.correlation import phase_correlation_diagram

    pairs = [("fcc", preds["c60_fcc"]), ("Pa-3", preds["c60"])]
    return [phase_correlation_diagram(pairs, "C60").figure, phase_correlation_diagram(pairs, "C60", band="T1u").figure]


def _lines(preds):
    from splitting.plot.lines import line_pattern
    from splitting.spectra.catalogue import find_table

    pairs = [("300 K", preds["c60_fcc"]), ("90 K", preds["c60"])]
    return [
        line_pattern(pairs, "C60").figure,
        line_pattern(pairs, "C60", modes=find_table("C60")).figure,
        line_pattern([("calcite", preds["calcite"])], "CO3", modes=find_table("CO3")).figure,
    ]


def _explain(preds):
    from splitting.plot.explain import explanation_axes, explanation_figure
    from splitting.spectra.assign import explain
    from splitting.spectra.measured import Peak, PeakList, read_peaks

    figs = []
    for tech in ("ir", "raman"):
        ax = explanation_axes()
        explanation_figure(explain(preds["c60"], read_peaks(DEMO / f"c60_90K_{tech}_peaks.csv"), technique=tech), ax=ax)
        figs.append(ax.figure)
    # a lattice line at the very left edge, a crowded band and an unexplained line at the right edge
    lines = [(40.0, 0.5), (41.0, 0.4), (712.0, 0.4), (713.5, 0.3), (1086.0, 1.0), (1087.0, 0.8), (1799.0, 0.1)]
    e = explain(preds["calcite"], PeakList(tuple(Peak(x, h) for x, h in lines), technique="raman"))
    ax = explanation_axes()
    explanation_figure(e, ax=ax)
    figs.append(ax.figure)
    return figs


@pytest.fixture(scope="module")
def preds(c60, c60_fcc, calcite):
    return {"c60": c60, "c60_fcc": c60_fcc, "calcite": calcite}


@pytest.mark.parametrize(
    "kind",
    [
        "correlation",
        "band",
        "phases",
        "lines",
        "explain",
    ],
)
def test_labels_apart_and_inside(kind, preds):
    import matplotlib

    matplotlib.use("Agg")
    build = {"correlation": _correlation, "band": _band, "phases": _phases, "lines": _lines, "explain": _explain}[kind]
    for fig in build(preds):
        _check_layout(fig)


def test_explain_figure_words(preds):
    """Title is the file name, wavenumber typeset, intensity ticks never negative, a legend."""
    import matplotlib

    matplotlib.use("Agg")
    import dataclasses

    from splitting.plot.explain import explanation_axes, explanation_figure
    from splitting.spectra.assign import explain
    from splitting.spectra.measured import read_peaks

    e = explain(preds["c60"], read_peaks(DEMO / "c60_90K_raman_peaks.csv"), technique="raman")
    e = dataclasses.replace(e, phase="/some/where/private/c60_ordered_Pa-3.cif")
    ax = explanation_axes()
    art = explanation_figure(e, ax=ax)
    assert ax.get_title(loc="left").startswith("c60_ordered_Pa-3.cif:") and "private" not in ax.get_title(loc="left")
    assert ax.get_xlabel() == "wavenumber / cm$^{-1}$"
    assert min(ax.get_yticks()) >= 0
    legend = art["legend"][0]
    words = [t.get_text() for t in legend.get_texts()]
    assert any("assigned" in w for w in words) and any("unexplained" in w for w in words)
    assert any("components" in w for w in words)
    labels = [a.get_text() for a in art["labels"] if hasattr(a, "get_text")]
    assert any(t.startswith("H$_{g}$(1)") for t in labels)


def test_explain_figure_says_bands_left_out(preds):
    """Lines only near 1086 cm-1: the other carbonate bands are outside the range and the legend says so."""
    import matplotlib

    matplotlib.use("Agg")
    from splitting.plot.explain import explanation_axes, explanation_figure
    from splitting.spectra.assign import explain
    from splitting.spectra.measured import Peak, PeakList

    # invented lines: one band region only
    e = explain(preds["calcite"], PeakList((Peak(1086.0, 1.0), Peak(1088.0, 0.2)), technique="raman"))
    ax = explanation_axes()
    art = explanation_figure(e, ax=ax)
    words = [t.get_text() for t in art["legend"][0].get_texts()]
    assert any("outside the measured range" in w for w in words), words

"""Figures: labels and connectors read back from the artists match the prediction; no overlaps."""

from __future__ import annotations

import itertools
import re
import sys
import xml.etree.ElementTree as ET
from collections import Counter

import pytest

from splitting.errors import InputError, OutputError
from splitting.plot import (
    correlation_diagram,
    figure_svg,
    line_pattern,
    phase_correlation_diagram,
    site_induction,
    write_figure,
)
from splitting.plot.correlation import text_overlaps
from splitting.plot.mulliken import (
    formula_mathtext,
    hermann_mauguin_html,
    hermann_mauguin_mathtext,
    html,
    latex,
    mathtext,
    parse_label,
    schoenflies_mathtext,
)
from splitting.spectra.catalogue import find_table


# ------------------------------------------------------------------ typesetting
@pytest.mark.parametrize(
    ("label", "expected"),
    [
        ("A1g", "A$_{1g}$"),
        ("E'", "E$'$"),
        ("E1''", "E$_{1}''$"),
        ("T1u", "T$_{1u}$"),
        ("Σg+", "Σ$_{g}^{+}$"),
        ("Πu", "Π$_{u}$"),
        ("A", "A"),
        ("B3u", "B$_{3u}$"),
        ("Σ-", "Σ$^{-}$"),
        ("A2''", "A$_{2}''$"),
    ],
)
def test_mathtext(label, expected):
    assert mathtext(label) == expected


def test_mathtext_parses_in_matplotlib():
    from matplotlib.mathtext import MathTextParser

    parser = MathTextParser("path")
    for label in ("A1g", "E'", "E1''", "T1u", "Σg+", "Πu", "A2''", "Σu-"):
        text = mathtext(label)
        math = text[text.index("$") :] if "$" in text else None
        if math:
            parser.parse(math)  # raises ValueError on bad mathtext


def test_other_markups():
    assert latex("A1g") == "$A_{1g}$"
    assert latex("E''") == "$E''$"
    assert latex("Σu+") == r"$\Sigma_{u}^{+}$"
    assert html("T2g") == "T<sub>2g</sub>"
    assert html("A2''") == "A<sub>2</sub>&Prime;"
    assert parse_label("E1'").subscript == "1"
    assert schoenflies_mathtext("D∞h") == r"D$_{\infty h}$"
    assert hermann_mauguin_mathtext("Pa-3") == r"$Pa\bar{3}$"
    assert hermann_mauguin_mathtext("P2_1/c") == "$P2_1/c$"
    assert hermann_mauguin_html("R-3c") == '<i>R</i><span class="bar">3</span><i>c</i>'
    assert formula_mathtext("C10H8") == "C$_{10}$H$_{8}$"
    with pytest.raises(InputError):
        mathtext("F2u")
    with pytest.raises(InputError):
        schoenflies_mathtext("Q7")


def test_plot_package_does_not_import_matplotlib():
    import subprocess

    code = (
        "import sys, splitting.plot, splitting.report.tables, splitting.report.html; print('matplotlib' in sys.modules)"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"


# ------------------------------------------------------------------ correlation diagram
def _expected_links(unit, induction):
    free_site = Counter()
    for c in unit.correlation:
        for s, n in c.site:
            free_site[(c.free, s)] += n
    site_factor = Counter()
    for s, rep in induction.items():
        for f, n in rep:
            site_factor[(s, f)] += n
    return free_site, site_factor


def _check_diagram(art, pred, unit):
    # every free, site and factor species appears once, in its column
    assert [lab for lab, _ in art.free] == [c.free for c in unit.correlation]
    site = {s for c in unit.correlation for s, _ in c.site}
    factor = {f for c in unit.correlation for f, _ in c.factor}
    assert {lab for lab, _ in art.site} == site
    assert {lab for lab, _ in art.factor} == factor
    # the text drawn is the Mulliken mathtext of the label
    for col in (art.free, art.site, art.factor):
        for lab, text in col:
            assert text.get_text() == mathtext(lab)
    # lines: free -> site with the multiplicities of the prediction; site -> factor by induction
    induction = site_induction(unit)
    free_site, site_factor = _expected_links(unit, induction)
    drawn_fs = {(c.source, c.target): c.multiplicity for c in art.connectors if c.stage == "free-site"}
    drawn_sf = {(c.source, c.target): c.multiplicity for c in art.connectors if c.stage == "site-factor"}
    assert drawn_fs == dict(free_site)
    assert drawn_sf == dict(site_factor)
    for c in art.connectors:
        if c.multiplicity > 1:
            assert c.label is not None and c.label.get_text() == str(c.multiplicity)
        else:
            assert c.label is None
        assert len(c.line.get_xdata()) == 2
    # induction reproduces every stored factor-group representation
    for c in unit.correlation:
        total = Counter()
        for s, n in c.site:
            for f, m in induction[s]:
                total[f] += n * m
        assert dict(total) == c.factor.as_dict()
    # activity marks follow the factor-group species
    marks = Counter((lab, kind) for lab, kind, _ in art.marks)
    for s in pred.species:
        if s.label in factor:
            assert marks[(s.label, "ir")] == int(bool(s.ir))
            assert marks[(s.label, "raman")] == int(bool(s.raman))
    # degeneracy numbers
    dims = {(col, lab): int(t.get_text()) for col, lab, t in art.degeneracy}
    for c in unit.correlation:
        assert dims[("free", c.free)] == c.free_dimension


def _renderer(fig):
    return fig.canvas.get_renderer()


def _no_overlaps(art):
    r = _renderer(art.figure)
    clashes = text_overlaps(art.texts(), r)
    assert not clashes, [(a.get_text(), b.get_text()) for a, b in clashes]
    # labels stay inside the figure, and the legend overlaps no label
    fig_box = art.figure.bbox
    for t in art.texts():
        bb = t.get_window_extent(r)
        assert bb.x0 >= fig_box.x0 - 1 and bb.x1 <= fig_box.x1 + 1 and bb.y0 >= fig_box.y0 - 1
        assert bb.y1 <= fig_box.y1 + 1
    if art.legend is not None:
        lb = art.legend.get_window_extent(r)
        for t in art.texts():
            assert not lb.overlaps(t.get_window_extent(r)), t.get_text()


def test_c60_diagram_all_ten_species(c60):
    # C60 in Pa-3: Ih -> S6 (4a) -> Th; ten free species (Ih has ten irreps)
    art = correlation_diagram(c60)
    unit = c60.unit("C60")
    assert art.groups == ("Ih", "S6", "Th")
    assert len(art.free) == 10
    assert [lab for lab, _ in art.site] == ["Ag", "Eg", "Au", "Eu"]
    assert [lab for lab, _ in art.factor] == ["Ag", "Eg", "Tg", "Au", "Eu", "Tu"]
    _check_diagram(art, c60, unit)
    _no_overlaps(art)
    # Gg -> 2Ag + Eg in S6: the line Gg-Ag carries a "2"
    gg_ag = [c for c in art.connectors if (c.source, c.target) == ("Gg", "Ag") and c.stage == "free-site"]
    assert gg_ag[0].multiplicity == 2 and gg_ag[0].label.get_text() == "2"
    # Eg of S6 induces Eg + 2Tg in Th
    eg_tg = [c for c in art.connectors if (c.source, c.target) == ("Eg", "Tg") and c.stage == "site-factor"]
    assert eg_tg[0].multiplicity == 2


def test_calcite_diagram(calcite):
    art = correlation_diagram(calcite, "CO3")
    unit = calcite.unit("CO3")
    assert art.groups == ("D3h", "D3", "D3d")
    _check_diagram(art, calcite, unit)
    _no_overlaps(art)
    # free-unit marks: E' is IR and Raman active, A1' Raman only, A2'' IR only (D3h selection rules)
    free_marks = Counter((lab, kind) for lab, kind, _ in art.free_marks)
    assert free_marks == Counter({("E'", "ir"): 1, ("E'", "raman"): 1, ("A1'", "raman"): 1, ("A2''", "ir"): 1})


def test_band_diagram(c60):
    art = correlation_diagram(c60, "C60", band="Hg")
    assert [lab for lab, _ in art.free] == ["Hg"]
    assert {lab for lab, _ in art.site} == {"Ag", "Eg"}
    assert {lab for lab, _ in art.factor} == {"Ag", "Eg", "Tg"}
    fs = {(c.source, c.target): c.multiplicity for c in art.connectors if c.stage == "free-site"}
    assert fs == {("Hg", "Ag"): 1, ("Hg", "Eg"): 2}
    _no_overlaps(art)


def test_diagram_into_given_axes(calcite):
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=(5, 4))
    FigureCanvasAgg(fig)
    ax = fig.add_subplot()
    art = correlation_diagram(calcite, ax=ax, legend=False)
    assert art.ax is ax and art.figure is fig and art.legend is None
    _no_overlaps(art)


def test_small_axes_shrink_font(c60):
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=(4, 3.2))
    FigureCanvasAgg(fig)
    art = correlation_diagram(c60, ax=fig.add_axes((0, 0.1, 1, 0.9)), legend=False)
    assert art.font_size < 12
    assert not text_overlaps(art.texts(), fig.canvas.get_renderer())


def test_diagram_errors(c60, calcite):
    with pytest.raises(InputError, match="no unit"):
        correlation_diagram(c60, "H2O")
    with pytest.raises(InputError, match="single atom"):
        correlation_diagram(calcite, "Ca")
    with pytest.raises(InputError, match="no band"):
        correlation_diagram(c60, band="A1g")


def test_phase_diagram(c60, c60_fcc):
    art = phase_correlation_diagram([("Fm-3, 300 K", c60_fcc), ("Pa-3, 100 K", c60)], "C60")
    assert art.phases == ("Fm-3, 300 K", "Pa-3, 100 K")
    assert [p.groups[1] for p in art.panels] == ["Th", "S6"]
    for panel, pred in zip(art.panels, (c60_fcc, c60), strict=True):
        _check_diagram(panel, pred, pred.unit("C60"))
        assert not text_overlaps(panel.texts(), panel.figure.canvas.get_renderer())
    assert [t.get_text() for t in art.titles] == ["Fm-3, 300 K", "Pa-3, 100 K"]
    with pytest.raises(InputError):
        phase_correlation_diagram([], "C60")


# ------------------------------------------------------------------ line pattern
def test_line_pattern_counts(c60, c60_fcc):
    art = line_pattern([("Fm-3", c60_fcc), ("Pa-3", c60)], "C60")
    assert art.columns == ("free", "Fm-3", "Pa-3")
    unit = {"Fm-3": c60_fcc.unit("C60"), "Pa-3": c60.unit("C60")}
    assert [b for b, _, _ in art.bands] == [c.free for c in unit["Pa-3"].correlation]
    for phase, u in unit.items():
        for c in u.correlation:
            # one stick per distinct frequency: the factor multiplicities of one fundamental
            assert art.components(phase, c.free) == c.factor.as_dict()
    for c in unit["Pa-3"].correlation:
        assert art.components("free", c.free) == {c.free: 1}
    # Hg in Pa-3: Ag + 2Eg + 5Tg -> 8 sticks, all Raman active (g species of Th)
    hg = [s for s in art.sticks if s.column == "Pa-3" and s.band == "Hg"]
    assert len(hg) == 8 and all(s.raman and not s.ir for s in hg)
    assert not text_overlaps(art.texts(), art.figure.canvas.get_renderer())


def test_line_pattern_with_mode_table(calcite):
    table = find_table("carbonate")
    art = line_pattern([("calcite", calcite)], "CO3", modes=table)
    assert [(b, m) for b, m, _ in art.bands] == [(m.species, m.name) for m in table.modes]
    assert art.components("calcite", "E'", "nu3") == {"Eg": 1, "Eu": 1}
    assert art.components("calcite", "A2''", "nu2") == {"A2g": 1, "A2u": 1}
    assert not text_overlaps(art.texts(), art.figure.canvas.get_renderer())
    # the y axis is a wavenumber axis: tick labels are numbers within the modes' range
    ticks = [float(t.get_text()) for t in art.ax.get_yticklabels()]
    assert ticks and min(ticks) >= 600 and max(ticks) <= 1500
    one = line_pattern([("calcite", calcite)], "CO3", modes=table, band="nu4")
    assert [m for _, m, _ in one.bands] == ["nu4"]


def test_line_pattern_close_modes_do_not_overlap(c60, c60_fcc):
    # the C60 table has T1u(4) 1429 and Hg(7) 1428 cm-1 (from memory, see the table): both stay at their
    # wavenumber and are drawn side by side
    art = line_pattern([("Fm-3", c60_fcc), ("Pa-3", c60)], "C60", modes=find_table("C60"))
    r = art.figure.canvas.get_renderer()
    assert not text_overlaps(art.texts(), r)
    by_column: dict[str, list] = {}
    for s in {id(s.line): s for s in art.sticks}.values():
        by_column.setdefault(s.column, []).append(s)
    for bars in by_column.values():
        for a, b in itertools.combinations(bars, 2):
            xa, xb = a.line.get_xdata(), b.line.get_xdata()
            if abs(a.line.get_ydata()[0] - b.line.get_ydata()[0]) < 1.0:
                assert max(xa) <= min(xb) or max(xb) <= min(xa)


def test_line_pattern_errors(c60, calcite):
    with pytest.raises(InputError, match="point group"):
        line_pattern([("x", calcite)], "CO3", modes=find_table("C60"))
    with pytest.raises(InputError, match="no band"):
        line_pattern([("x", c60)], "C60", band="nope")
    with pytest.raises(InputError):
        line_pattern([], "C60")


# ------------------------------------------------------------------ files
@pytest.mark.parametrize("suffix, magic", [(".svg", b"<?xml"), (".pdf", b"%PDF"), (".png", b"\x89PNG")])
def test_write_figure(tmp_path, calcite, suffix, magic):
    art = correlation_diagram(calcite)
    out = write_figure(art.figure, tmp_path / f"d{suffix}")
    assert out.read_bytes().startswith(magic)
    assert not list(tmp_path.glob(".*part"))


def test_write_figure_rejects_unknown_suffix(tmp_path, calcite):
    art = correlation_diagram(calcite)
    with pytest.raises(InputError, match="unknown figure format"):
        write_figure(art.figure, tmp_path / "d.jpg")
    with pytest.raises(OutputError, match="does not exist"):
        write_figure(art.figure, tmp_path / "missing" / "d.svg")


def test_svg_is_valid_and_prefixed(calcite):
    art = correlation_diagram(calcite)
    svg = figure_svg(art.figure, prefix="f1-")
    root = ET.fromstring(svg)
    assert root.tag.endswith("svg")
    ids = re.findall(r'\bid="([^"]+)"', svg)
    assert ids and all(i.startswith("f1-") for i in ids)
    for ref in re.findall(r'href="#([^"]+)"', svg):
        assert ref.startswith("f1-") and ref in ids
    # deterministic output
    assert figure_svg(art.figure, prefix="f1-") == svg

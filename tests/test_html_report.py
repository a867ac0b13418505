"""The HTML report: self-contained, complete for every phase, well-formed, escaped."""

from __future__ import annotations

import re
from html.parser import HTMLParser

import pytest

from splitting.errors import InputError
from splitting.report.html import html_report, write_report
from splitting.spectra.catalogue import find_table

_VOID = {"meta", "br", "img", "input", "link", "hr", "wbr", "col", "area", "base", "source", "track"}
_SVG_SELF = True  # SVG children may be self-closing (<path .../>)


class _Checker(HTMLParser):
    """Tag balance, ids, and what the page would load."""

    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.stack: list[str] = []
        self.errors: list[str] = []
        self.ids: list[str] = []
        self.tags: dict[str, int] = {}
        self.external: list[str] = []
        self.text: list[str] = []

    def handle_starttag(self, tag, attrs):
        self.tags[tag] = self.tags.get(tag, 0) + 1
        d = dict(attrs)
        if "id" in d:
            self.ids.append(d["id"])
        for key in ("src", "href", "xlink:href"):
            v = d.get(key)
            if v and not v.startswith("#"):
                self.external.append(v)
        if tag not in _VOID:
            self.stack.append(tag)

    def handle_startendtag(self, tag, attrs):
        self.tags[tag] = self.tags.get(tag, 0) + 1
        d = dict(attrs)
        if "id" in d:
            self.ids.append(d["id"])
        for key in ("src", "href", "xlink:href"):
            v = d.get(key)
            if v and not v.startswith("#"):
                self.external.append(v)

    def handle_endtag(self, tag):
        if not self.stack or self.stack[-1] != tag:
            self.errors.append(f"unexpected </{tag}> (open: {self.stack[-3:]})")
            return
        self.stack.pop()

    def handle_data(self, data):
        self.text.append(data)


def _check(page: str) -> _Checker:
    c = _Checker()
    c.feed(page)
    c.close()
    assert not c.errors, c.errors[:5]
    assert not c.stack, c.stack
    assert len(c.ids) == len(set(c.ids)), "duplicate ids"
    return c


@pytest.fixture(scope="module")
def two_phase(c60, c60_fcc):
    return html_report(
        [("Fm-3 <fcc>", c60_fcc), ("Pa-3 & ordered", c60)],
        title="C60 phases",
        notes=["a <note> & more"],
        modes={"C60": find_table("C60")},
    )


def test_single_phase_report(calcite):
    page = html_report([("calcite", calcite)])
    c = _check(page)
    text = "".join(c.text)
    assert page.startswith("<!DOCTYPE html>")
    head = page[: page.index("</head>")]
    assert head.count("<style") == 1 and "script" not in c.tags and "link" not in c.tags
    assert not c.external
    # one correlation diagram (CO3; Ca is an atom) inline as SVG
    assert c.tags["svg"] == 1
    # the whole prediction: space group, factor group, axes, units, species, totals
    assert "No. 167" in text and "D" in text
    assert "x ∥ a" in text and "y ∥ b*" in text and "z ∥ c" in text
    for u in calcite.units:
        assert u.wyckoff in text
    t = calcite.totals()
    assert f"{t['optical']} optical frequencies" in text
    assert f"{t['ir']} IR-active" in text and f"{t['raman']} Raman-active" in text
    assert "mutual exclusion" in text
    # species table: one row per factor species, with the label typeset
    for s in calcite.species:
        assert re.search(re.escape(s.label[0]) + r"<sub>" + re.escape(s.label[1:]) + "</sub>", page)
    assert "@media print" in page and "break-before: page" in page


def test_two_phase_report(two_phase, c60, c60_fcc):
    c = _check(two_phase)
    text = "".join(c.text)
    # two correlation diagrams and one line pattern across phases
    assert c.tags["svg"] == 3
    # two phases, across the phases, methods
    assert c.tags["section"] == 4
    assert "Across the phases" in text
    # labels, title and notes are escaped
    assert "Fm-3 &lt;fcc&gt;" in two_phase and "Pa-3 &amp; ordered" in two_phase
    assert "a &lt;note&gt; &amp; more" in two_phase
    assert "<fcc>" not in two_phase and "<note>" not in two_phase
    # the site axes of the ordered phase are stated
    assert "[1,1,1]" in text
    assert f"{c60.totals()['ir']} IR-active" in text and f"{c60_fcc.totals()['ir']} IR-active" in text


def test_svg_ids_unique_and_resolved(two_phase):
    ids = set(re.findall(r'\bid="([^"]+)"', two_phase))
    for ref in re.findall(r'href="#([^"]+)"', two_phase):
        assert ref in ids
    for ref in re.findall(r"url\(#([^)]+)\)", two_phase):
        assert ref in ids


def test_warnings_shown(calcite):
    import dataclasses

    warned = dataclasses.replace(calcite, warnings=("units <overlap> here",))
    page = html_report([("calcite", warned)])
    assert 'class="warning"' in page and "units &lt;overlap&gt; here" in page


def test_write_report(tmp_path, calcite):
    out = write_report(tmp_path / "r.html", [("calcite", calcite)], title="Calcite")
    page = out.read_text(encoding="utf-8")
    assert "<title>Calcite</title>" in page
    with pytest.raises(InputError, match="html"):
        write_report(tmp_path / "r.pdf", [("calcite", calcite)])
    with pytest.raises(InputError):
        html_report([])


def test_report_contents(calcite):
    """Source file name, cell, bands with wavenumbers and sources, tensors, geometries, methods, versions."""
    import dataclasses

    import ase
    import spglib

    import splitting

    far = dataclasses.replace(calcite, source="/home/someone/secret/folder/calcite.cif")
    page = html_report([("calcite", far)])
    text = "".join(_check(page).text)
    assert "calcite.cif" in text and "/home" not in page and "secret" not in page
    # the setting of the file and the standard one (R-3c on hexagonal axes is the standard setting)
    assert "setting of the file R -3 c; standard R -3 c" in text
    # cell parameters of the file (calcite, hexagonal axes: a = b, gamma = 120 degrees)
    a, _b, _c, _al, _be, ga = calcite.cell_parameters
    assert f"a = {a:.4f} Å" in text and f"γ = {ga:.3f}°" in text and abs(ga - 120) < 1e-6
    # the carbonate bands with their free wavenumbers and the table's source
    table = find_table("CO3")
    for m in table.modes:
        assert f"{m.wavenumber_cm1:.0f}" in text
    assert table.source in text
    assert "ν1" in text or "ν<sub>1</sub>" in page
    # Raman tensors and what backscattering geometries see: z(xx)z-bar sees A1g and Eg (Loudon 1964, D3d)
    assert "Raman tensors and scattering geometries" in text
    assert 'z(xx)<span class="bar">z</span>' in page
    # methods cite the published method, and versions are given
    assert "Bhagavantam" in text and "Halford" in text and "Damen" in text
    assert f"splitting {splitting.__version__}" in text
    assert f"spglib {spglib.__version__}" in text and f"ase {ase.__version__}" in text


def test_setting_and_state_hooks(calcite):
    """Whatever setting, transformation and state fields a prediction carries are shown."""

    class WithSetting:
        def __init__(self, pred):
            self._p = pred
            self.setting = "hexagonal axes"
            self.transformation = ((1, 0, 0), (0, 1, 0), (0, 0, 1))
            self.state = "ordered"

        def __getattr__(self, name):
            return getattr(self._p, name)

    page = html_report([("calcite", WithSetting(calcite))])
    text = "".join(_check(page).text)
    assert "hexagonal axes" in text and "(1 0 0; 0 1 0; 0 0 1)" in text and "ordered" in text


def test_report_with_assignment_and_candidates(c60_fcc, structures_dir):
    from splitting.phases.lower import lower
    from splitting.spectra.assign import explain
    from splitting.spectra.measured import Peak, PeakList

    table = find_table("C60")
    lines = tuple(Peak(m.wavenumber_cm1 + 1.0, 1.0) for m in table.modes if m.species == "T1u")
    peaks = PeakList(lines, technique="ir", source="/data/run/peaks_ir.csv")
    e = explain(c60_fcc, peaks, technique="ir")
    low = lower(structures_dir / "c60_fcc_Fm-3.cif", max_index=2)
    page = html_report([("fcc", c60_fcc)], explanations=[e], lowering=low)
    c = _check(page)
    text = "".join(c.text)
    assert 'id="assignment"' in page and 'id="candidates"' in page and 'href="#assignment"' in page
    assert "4 lines; 4 explained" in text and "peaks_ir.csv" in text and "/data/run" not in page
    assert "Candidate lower-symmetry phases" in text
    # the assignment figure is inline too: correlation diagram + explanation figure
    assert c.tags["svg"] == 2


def test_state_of_each_phase(c60, c60_fcc):
    page = html_report([("fcc", c60_fcc), ("Pa-3", c60)], states=["dynamic", "ordered"])
    text = "".join(_check(page).text)
    assert "rotor / plastic phase" in text and "factor-group (Davydov) components" in text
    with pytest.raises(InputError, match="one per phase"):
        html_report([("fcc", c60_fcc)], states=["dynamic", "ordered"])


def test_one_orientation_model_shows_the_files_cell():
    """A disordered file's model is predicted in its primitive cell; the page gives the file's cell."""
    from pathlib import Path

    from splitting.phases.disorder import predict_disordered

    cif = Path(__file__).resolve().parents[1] / "structures" / "c60_fcc_Fm-3m_disordered.cif"
    model = predict_disordered(cif, states={"*": "dynamic"}).ordered_model
    a, b, c, al, be, ga = model.cell_parameters
    assert a == b == c and al == be == ga == 90.0  # cubic Fm-3m, as the CIF states
    page = html_report([("300 K", model)], states=["dynamic"])
    assert "&alpha; = 90.000&deg;" in page and "T<sub>1u</sub>(1)" in page

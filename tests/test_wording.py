"""Wording and layout of the text outputs: units, column names, plurals, widths, explanations."""

from __future__ import annotations

import re

import pytest


def test_prediction_text_units_and_headers(calcite):
    from splitting.report.text import prediction_text

    text = prediction_text(calcite)
    assert "Å" in text and not re.search(r"\d A\b", text) and "dev. A" not in text
    assert "site symmetry" in text and "site symbol" not in text
    # every column of the species table is headed (the LO/TO column too)
    header = next(line for line in text.splitlines() if line.strip().startswith("species"))
    assert header.split()[-1] == "LO/TO"


def test_lower_table_within_100_columns(run_cli, structures_dir):
    code, out, _ = run_cli(["lower", str(structures_dir / "c60_fcc_Fm-3.cif"), "--max-index", "8"])
    assert code == 0
    assert max(len(line) for line in out.splitlines()) <= 100


def test_compare_explains_columns_and_says_nothing_changes(c60):
    import dataclasses

    from splitting.phases.compare import compare_phases
    from splitting.report.text import sequence_text

    seq = compare_phases([c60.source, c60.source], ["a", "b"])
    text = sequence_text(seq)
    assert "cell x: units per primitive cell" in text and "volume/unit: primitive-cell volume per unit" in text
    assert "What changes" in text and "nothing changes" in text
    assert dataclasses.is_dataclass(seq)


@pytest.mark.parametrize(
    ("values", "decimals"), [([1.0, 0.06, 0.615], 2), ([1520.0, 3.0], 0), ([0.004, 0.0001], 5), ([], 2)]
)
def test_intensity_decimals(values, decimals):
    from splitting.report.text import intensity_decimals

    assert intensity_decimals(values) == decimals


def test_explanation_text_one_lattice_sentence_and_plural(c60):
    from splitting.report.text import explanation_text
    from splitting.spectra.assign import explain
    from splitting.spectra.measured import Peak, PeakList

    lines = PeakList(tuple(Peak(x, h) for x, h in [(20.0, 0.2), (25.0, 0.26), (31.0, 0.09)]), technique="raman")
    text = explanation_text(explain(c60, lines, technique="raman"))
    reasons = [line for line in text.splitlines() if line.startswith(" " * 30) and "or " not in line[30:33]]
    assert len([r for r in reasons if "lattice" in r]) == 1, reasons
    one = explanation_text(explain(c60, PeakList((Peak(20.0, 0.2),), technique="raman"), technique="raman"))
    assert "1 of 1 line explained" in one
    # intensities with one number of decimals
    rows = [line for line in text.splitlines() if re.match(r"\s+\d+\.\d\s", line)]
    assert {len(r.split()[1].split(".")[1]) for r in rows} == {3}  # 0.260: three figures for the largest


# 2nu4 of carbonate at the harmonic sum 2 x 680 = 1360 cm-1 (nu4 = 680 cm-1 from the bundled
# carbonate table); anharmonicity puts real overtones below the sum (combinations.py docstring)
@pytest.mark.parametrize(("line", "matched"), [(1330.0, True), (1355.0, True), (1368.0, True), (1380.0, False)])
def test_overtone_never_far_above_its_harmonic_sum(calcite, line, matched):
    from splitting.spectra.assign import explain
    from splitting.spectra.measured import Peak, PeakList
    from splitting.spectra.scoring import ABOVE_HARMONIC_FRACTION, DEFAULT_TOLERANCE_CM1

    assert (line - 1360.0 <= ABOVE_HARMONIC_FRACTION * DEFAULT_TOLERANCE_CM1) == matched
    e = explain(calcite, PeakList((Peak(1086.0, 1.0), Peak(line, 0.2)), technique="raman"), technique="raman")
    found = next(x for x in e.lines if x.peak.position_cm1 == line)
    assert any(c.band == "2nu4" for c in found.candidates) == matched


def test_bands_outside_the_measured_range_leave_the_misfit(calcite):
    from splitting.report.text import explanation_text
    from splitting.spectra.assign import explain
    from splitting.spectra.measured import Peak, PeakList

    # lines from 680 to 890 cm-1 only: nu1 (1063) and nu3 (1415) lie outside, nu2 and nu4 inside
    e = explain(calcite, PeakList((Peak(712.0, 0.4), Peak(876.0, 0.3)), technique="ir"), technique="ir")
    comp = e.comparisons[0]
    assert set(comp.outside) == {"nu1", "nu3"}
    inside = [b for b in comp.bands if b.measured]
    assert comp.mismatch == sum(abs(b.observed - b.predicted) for b in inside)
    text = explanation_text(e)
    assert "2 bands outside the measured range, left out of the mismatch: nu1, nu3" in text
    assert e.to_dict()["comparisons"][0]["bands"][0]["in_measured_range"] is False

"""Explaining measured lines: candidates, scoring rules, band counts, figure.

The peak lists here are invented for the tests (positions placed near the bundled
free-unit values); they are not measurements.
"""

from __future__ import annotations

import dataclasses
import json

import pytest

from splitting.errors import DataError, InputError
from splitting.report.text import explanation_text
from splitting.spectra.assign import (
    PRIORS,
    SURPLUS_FACTOR,
    compare_counts,
    count_components,
    explain,
    find_unit_table,
)
from splitting.spectra.catalogue import find_table
from splitting.spectra.measured import Peak, PeakList


def _peaks(rows, technique="raman"):
    return PeakList(tuple(Peak(x, h) for x, h in rows), technique=technique, source="invented")


def _line(explanation, x):
    return next(line for line in explanation.lines if line.peak.position_cm1 == x)


def test_find_unit_table_by_element_counts():
    assert find_unit_table("H4N").name == "ammonium"
    assert find_unit_table("CO3").name == "carbonate"
    assert find_unit_table("O3C").name == "carbonate"
    with pytest.raises(DataError, match="no bundled mode table"):
        find_unit_table("Xe2")


def test_count_components_nearest_band():
    table = find_table("CO3")  # nu1 1063, nu2 879, nu3 1415, nu4 680 (bundled)
    counts = count_components([1085.0, 1090.0, 712.0, 300.0, 1440.0], table, 40.0)
    assert counts == {"nu1": 2, "nu2": 0, "nu3": 1, "nu4": 1}
    with pytest.raises(InputError, match="window_cm1"):
        count_components([1.0], table, 0.0)


def test_calcite_raman_kinds(calcite):
    # invented Raman list: nu1, an 18O satellite below it, nu4, nu3, a lattice line,
    # a combination near nu1 + nu4 and a line nothing explains
    rows = [(1086.0, 100.0), (1064.2, 1.0), (712.0, 10.0), (1436.0, 8.0), (156.0, 20.0), (1749.0, 2.0), (2000.0, 1.0)]
    e = explain(calcite, _peaks(rows))
    assert e.technique == "raman"
    assert _line(e, 1086.0).candidates[0].kind == "fundamental"
    assert _line(e, 1086.0).candidates[0].band == "nu1"
    assert _line(e, 1086.0).candidates[0].species == ("A1g",)
    assert _line(e, 712.0).candidates[0].band == "nu4"
    assert _line(e, 156.0).candidates[0].kind == "lattice"
    sat = _line(e, 1064.2).candidates[0]
    assert sat.kind == "isotopologue" and "18O" in sat.reason
    assert _line(e, 1749.0).candidates[0].kind in ("combination", "overtone")
    assert [p.position_cm1 for p in e.unexplained] == [2000.0]
    # nu2 (A2'') has no Raman-active component in D3d (A2g silent, A2u IR): no candidate
    assert all(c.band != "nu2" for line in e.lines for c in line.candidates)


def test_scores_follow_the_documented_rule(calcite):
    e = explain(calcite, _peaks([(1086.0, 1.0)]), tolerance_cm1=40.0)
    best = e.lines[0].candidates[0]
    assert best.score == pytest.approx(PRIORS["fundamental"] * (1 - 0.5 * 23.0 / 40.0), abs=1e-4)


def test_surplus_rule(calcite):
    # nu1 has one Raman-active component in calcite: of two lines near it the weaker is surplus
    e = explain(calcite, _peaks([(1086.0, 10.0), (1080.0, 5.0)]))
    strong, weak = _line(e, 1086.0).candidates[0], _line(e, 1080.0)
    weak_fund = next(c for c in weak.candidates if c.kind == "fundamental")
    assert "surplus" in weak_fund.reason and "surplus" not in strong.reason
    assert weak_fund.score == pytest.approx(round(PRIORS["fundamental"] * (1 - 0.5 * 17 / 40) * SURPLUS_FACTOR, 4))


def test_ir_site_and_technique(calcite):
    e = explain(calcite, _peaks([(877.0, 1.0), (1087.0, 0.1)], technique="ir"))
    assert _line(e, 877.0).candidates[0].kind == "fundamental"  # nu2 A2'' -> A2u, IR
    # nu1 (A1') in IR: A1g + A1u in D3d, both inactive; the D3 site's A1 is IR inactive too
    assert all(c.band != "nu1" or c.kind not in ("fundamental", "site_activated") for c in _line(e, 1087.0).candidates)
    with pytest.raises(InputError, match="technique"):
        explain(calcite, _peaks([(877.0, 1.0)], technique="ir"), technique="raman")


def test_site_activated_and_disorder(c60, c60_fcc):
    from splitting.spectra.catalogue import ModeTable

    base = find_table("C60")
    # a hypothetical Gg mode (silent in Ih) at an invented position: made Raman-active by the
    # S6 site of Pa-3 (Gg -> 2Ag + Eg at the site)
    gg = dataclasses.replace(base.modes[0], name="Gg(x)", species="Gg", wavenumber_cm1=1000.0, ir=False, raman=False)
    table = ModeTable(base.name, base.formula, 0, "Ih", "invented", "invented", (gg,), complete=False)
    e = explain(c60, _peaks([(1001.0, 1.0)]), modes=table)
    assert e.lines[0].candidates[0].kind == "site_activated"
    # T1u in Raman, Fm-3 (Th site, factor Th): T1u stays T1u (Tu), inactive at site and factor
    e2 = explain(c60_fcc, _peaks([(1183.0, 1.0)]))
    assert all(c.band != "T1u(3)" for c in e2.lines[0].candidates)


def test_second_phase_and_counts(c60, c60_fcc):
    # eight lines around Hg(1) at 273 cm-1: Fm-3 allows 2 components (Ag/Eg/Tg count 2 with
    # Th site and Th factor: Eg + Tg), Pa-3 allows 8
    rows = [(273.0 + 4.0 * (k - 3.5), 1.0 + 0.01 * k) for k in range(8)]
    peaks = _peaks(rows)
    e = explain(c60_fcc, peaks, alternatives=[c60])
    kinds = {c.kind for line in e.lines for c in line.candidates}
    assert "second_phase" in kinds
    fm3, pa3 = e.comparisons
    assert fm3.phase.endswith("c60_fcc_Fm-3.cif") and pa3.phase.endswith("c60_ordered_Pa-3.cif")
    hg1 = {c.phase: next(b for b in c.bands if b.band == "Hg(1)") for c in e.comparisons}
    assert hg1[fm3.phase].observed == 8 and hg1[fm3.phase].predicted == 2
    assert hg1[pa3.phase].predicted == 8
    # compare_counts gives the same numbers on its own
    observed = count_components(peaks, find_table("C60"), 40.0)
    (alone,) = compare_counts(observed, c60, technique="raman")
    assert next(b for b in alone.bands if b.band == "Hg(1)").predicted == 8


def test_mode_table_checks(calcite, c60):
    with pytest.raises(InputError, match="matches no molecular unit"):
        explain(calcite, _peaks([(1000.0, 1.0)]), modes=find_table("SF6"))
    with pytest.raises(InputError, match="not a molecular unit"):
        explain(calcite, _peaks([(1000.0, 1.0)]), unit="SO4")
    with pytest.raises(InputError, match="tolerance_cm1"):
        explain(calcite, _peaks([(1000.0, 1.0)]), tolerance_cm1=-1)
    with pytest.raises(InputError, match="PeakList"):
        explain(calcite, [1000.0])


def test_result_is_frozen_deterministic_and_json(calcite):
    peaks = _peaks([(1086.0, 100.0), (1064.2, 1.0), (712.0, 10.0), (156.0, 20.0)])
    a, b = explain(calcite, peaks), explain(calcite, peaks)
    assert a.to_dict() == b.to_dict()
    json.dumps(a.to_dict())
    with pytest.raises(dataclasses.FrozenInstanceError):
        a.tolerance_cm1 = 1.0  # type: ignore[misc]
    text = explanation_text(a)
    assert "nu1" in text and "band counts" in text


def test_unknown_technique_note(calcite):
    e = explain(calcite, PeakList((Peak(1086.0, 1.0),)))
    assert e.technique is None and any("technique unknown" in n for n in e.notes)


def test_figure_artists(calcite, tmp_path):
    import matplotlib

    matplotlib.use("Agg")
    from matplotlib.figure import Figure

    from splitting.plot.explain import explanation_figure, save_explanation_figure
    from splitting.spectra.peaks import synthesize

    peaks = _peaks([(1086.0, 1.0), (1090.0, 0.5), (712.0, 0.4), (2000.0, 0.1)])
    e = explain(calcite, peaks)
    ax = Figure().add_subplot()
    artists = explanation_figure(e, ax=ax)
    assert artists["spectrum"] and artists["bands"] and artists["labels"]
    texts = [a.get_text() for a in artists["labels"] if hasattr(a, "get_text")]
    assert "?" in texts and any(t.startswith(r"$\nu_{1}$") for t in texts)
    spectrum = synthesize([1086.0, 712.0], [1.0, 0.4], 4.0, technique="raman")
    out = save_explanation_figure(e, tmp_path / "fig.png", spectrum=spectrum)
    assert out.read_bytes()[:4] == b"\x89PNG"
    with pytest.raises(InputError, match="figure format"):
        save_explanation_figure(e, tmp_path / "fig.xyz")


def test_lo_to_partner_of_a_polar_band(calcite):
    # Every IR-active species is polar and splits into TO and LO, the LO above (M. Born and
    # K. Huang, Dynamical Theory of Crystal Lattices, Oxford 1954); calcite is centrosymmetric
    # and nu3 (E') gives one IR-active Eu component. Invented IR list: a strong TO line and a
    # weaker line 33 cm-1 above it, which is then an LO partner rather than a surplus line.
    from splitting.spectra.assign import LO_TO_WINDOW_CM1

    e = explain(calcite, _peaks([(1407.0, 10.0), (1440.0, 3.0)], technique="ir"))
    assert _line(e, 1407.0).candidates[0].kind == "fundamental"
    best = _line(e, 1440.0).candidates[0]
    assert best.kind == "lo_to" and best.band == "nu3" and best.species == ("Eu",)
    assert best.score == pytest.approx(round(PRIORS["lo_to"] * (1 - 0.5 * 33.0 / LO_TO_WINDOW_CM1), 4))
    assert "LO" in best.reason and "1407.0" in best.reason
    # a line below the strong one is never its LO partner; neither is one beyond the window
    e = explain(calcite, _peaks([(1407.0, 10.0), (1380.0, 3.0), (1407.0 + LO_TO_WINDOW_CM1 + 5, 3.0)], "ir"))
    assert all(c.kind != "lo_to" for x in (1380.0, 1562.0) for c in _line(e, x).candidates)
    # Raman of a centrosymmetric crystal: Raman-active species are not polar, no LO/TO offer
    e = explain(calcite, _peaks([(1436.0, 10.0), (1460.0, 3.0)], technique="raman"))
    assert all(c.kind != "lo_to" for line in e.lines for c in line.candidates)


def test_lo_to_in_raman_of_a_non_centrosymmetric_crystal():
    # zincblende-type cell (F-43m, Td): the T2 species is IR and Raman active, so it is polar
    # and its TO and LO show in Raman as well (Born and Huang 1954; Loudon, Adv. Phys. 13, 423
    # (1964)); in a centrosymmetric crystal (rock salt, Oh) the IR-active T1u is polar but its
    # pair shows in IR reflectance only.
    import numpy as np
    from ase import Atoms

    from splitting.crystal.predict import predict_atoms as predict

    a = 5.43
    zb = Atoms(
        "ZnS",
        scaled_positions=[[0, 0, 0], [0.25, 0.25, 0.25]],
        cell=a / 2 * np.array([[0, 1, 1], [1, 0, 1], [1, 1, 0]]),
        pbc=True,
    )
    t2 = predict(zb).species_by_label("T2")
    assert t2.polar and t2.lo_to_seen_in == ("IR reflectance", "Raman")
    rs = Atoms(
        "NaCl",
        scaled_positions=[[0, 0, 0], [0.5, 0.5, 0.5]],
        cell=5.64 / 2 * np.array([[0, 1, 1], [1, 0, 1], [1, 1, 0]]),
        pbc=True,
    )
    t1u = predict(rs).species_by_label("T1u")
    assert t1u.polar and t1u.lo_to_seen_in == ("IR reflectance",)
    assert predict(rs).to_dict()["species"][0]["lo_to_seen_in"] in ([], ["IR reflectance"])

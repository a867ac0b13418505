"""Unit names as the trade writes them, and options naming units never silently ignored.

Formulas and charges of the ions: IUPAC, Nomenclature of Inorganic Chemistry, IUPAC
Recommendations 2005 (the Red Book), ch. IR-5 and Table IX; the order in which the atoms are
written (NH4+, SF6, CH3NH3+) is common practice. Hill order of formulas: E. A. Hill, J. Am.
Chem. Soc. 22, 478 (1900) (carbon, hydrogen, then alphabetical; without carbon, alphabetical).
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from hypothesis import given
from hypothesis import strategies as st

from splitting.crystal.names import COMMON_UNITS, hill_of, match_unit, name_counts, unit_name
from splitting.crystal.predict import Options, predict
from splitting.errors import InputError
from splitting.phases.lower import lower, parse_observed

S = Path(__file__).resolve().parent.parent / "structures"


@pytest.mark.parametrize(
    ("hill", "name"),
    [
        ("O4S", "SO4^2-"),
        ("H4N", "NH4+"),
        ("ClO4", "ClO4-"),
        ("NO3", "NO3-"),
        ("CO3", "CO3^2-"),
        ("CH6N", "CH3NH3+"),
        ("O4P", "PO4^3-"),
        ("F6S", "SF6"),
        ("C60", "C60"),
        ("CO2", "CO2"),
        ("H2O", "H2O"),
        ("C10H8", "C10H8"),
        ("H3N", "NH3"),
    ],
)
def test_written_names_and_back(hill, name):
    assert unit_name(hill) == name
    assert hill_of(name) == hill


def test_unlisted_unit_keeps_its_hill_formula():
    assert unit_name("C2Ca2O6") == "C2Ca2O6"


def test_table_keys_are_hill_formulas_of_their_names():
    for hill, (written, _) in COMMON_UNITS.items():
        assert hill_of(written) == hill, (hill, written)


@given(st.permutations(["C", "H3", "N", "H3"]))
def test_any_order_of_the_elements_is_the_same_unit(parts):
    assert hill_of("".join(parts) + "+") == "CH6N"


@pytest.mark.parametrize("text", ["Nope", "", "SO4^", "(CO3", "CO0", "Xx2"])
def test_not_a_name(text):
    with pytest.raises(InputError):
        name_counts(text)


def test_match_lists_what_is_there():
    with pytest.raises(InputError, match=r"units there: CO3\^2- \(CO3\)"):
        match_unit("SO4^2-", ["CO3"])
    with pytest.raises(InputError, match="charge -2"):
        match_unit("CO3+", ["CO3"])


def test_prediction_names_units_and_keeps_hill():
    p = predict(S / "calcite.cif")
    d = p.to_dict()
    co3 = next(u for u in d["units"] if u["formula"] == "CO3")
    assert (co3["name"], co3["charge"]) == ("CO3^2-", -2)
    assert p.unit("CO3^2-").formula == "CO3"
    p = predict(S / "nh4cl_ordered_P-43m.cif", Options(free_groups=(("NH4+", "Td"),)))
    assert p.unit("NH4+").free_group_source == "given"


def test_R32_silently_ignored_options(run_cli, tmp_path):
    # R32 (bad-inputs): unknown units in --free-group/--rotor/--disorder, a negative observed
    # count and an unreadable mode table must each be a one-line error
    cases = [
        ["predict", S / "calcite.cif", "--free-group", "Nope=C1"],
        ["predict", S / "calcite.cif", "--free-group", "SO4^2-=C1"],
        ["predict", S / "calcite.cif", "--rotor", "Nope"],
        ["predict", S / "calcite.cif", "--rotor", "NH4+"],
        ["predict", S / "calcite.cif", "--disorder", "Nope=static"],
        ["predict", S / "calcite.cif", "--units", "SO4"],
        ["lower", S / "co2_Pa-3.cif", "--observed", "T1u:ir=-1"],
        ["lower", S / "calcite.cif", "--observed", "Xg:ir=2"],
        ["lower", S / "calcite.cif", "--observed", "nu7:ir=2"],
        ["draw", S / "calcite.cif", "--unit", "SO4", "-o", tmp_path / "never.svg"],
        ["draw", S / "calcite.cif", "--band", "Xg", "-o", tmp_path / "never.svg"],
        ["explain", S / "calcite.cif", "--peaks", S / "calcite.cif", "--rotor", "Nope"],
    ]
    broken = tmp_path / "syntax_error.toml"
    broken.write_text("name = \n[[mode\n")  # the reproducer's broken mode table
    cases.append(["lower", S / "calcite.cif", "--observed", "Eu:ir=2", "--modes", broken])
    for argv in cases:
        code, out, err = run_cli(argv)
        assert code != 0 and out == "" and err.startswith("error: ") and err.count("\n") == 1, (argv, err)
    assert not (tmp_path / "never.svg").exists()
    code, out, err = run_cli(["predict", S / "calcite.cif", "--free-group", "CO3^2-=D3h", "--json"])
    assert code == 0
    (co3,) = [u for u in json.loads(out)["units"] if u["formula"] == "CO3"]
    assert co3["free_group_source"] == "given"


def test_observed_takes_vibration_names():
    # calcite: nu3 of CO3^2- is E' (bundled table; Nakamoto, Infrared and Raman Spectra of
    # Inorganic and Coordination Compounds, 5th ed. 1997, from memory) -> Eg + Eu in D3d
    by_name = lower(S / "calcite.cif", max_index=2, observed=parse_observed(["CO3^2-/nu3:ir=1"]))
    by_species = lower(S / "calcite.cif", max_index=2, observed=parse_observed(["CO3/E':ir=1"]))
    assert by_name.observed == by_species.observed == (("CO3/E'", "ir", 1),)
    assert [c.score for c in by_name.candidates] == [c.score for c in by_species.candidates]
    assert any("nu3" in n for n in by_name.notes)
    with pytest.raises(InputError, match="no band or vibration"):
        lower(S / "calcite.cif", max_index=2, observed=(("nu9", "ir", 1),))


def test_lower_peaks_counted_only_against_bands_active_in_the_technique():
    from types import SimpleNamespace

    from splitting.phases.lower import _count_peaks
    from splitting.spectra.measured import Peak, PeakList

    # invented IR list of calcite: two lines at nu1 (1063 cm-1 in the bundled table) and one
    # at nu3 (1415 cm-1); a candidate set in which only E' (nu3, nu4) can be IR active
    parent = predict(S / "calcite.cif")
    band = SimpleNamespace
    cands = [
        SimpleNamespace(
            bands=lambda: [band(unit="CO3", band="E'", ir=1, raman=1), band(unit="CO3", band="A1'", ir=0, raman=1)]
        )
    ]
    peaks = PeakList(tuple(Peak(x, 1.0) for x in (1060.0, 1066.0, 1410.0)), technique="ir", source="invented")
    counted, notes = _count_peaks(peaks, parent, cands, None, 15.0)
    assert counted == (("E'", "ir", 1),)
    assert any("nu1" in n and "not counted" in n for n in notes)
    # the same lines as Raman lines are counted against nu1 too
    peaks = PeakList(peaks.peaks, technique="raman", source="invented")
    counted, _ = _count_peaks(peaks, parent, cands, None, 15.0)
    assert dict((b, n) for b, _, n in counted) == {"A1'": 2, "E'": 1}

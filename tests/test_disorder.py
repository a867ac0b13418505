"""Orientational disorder: one orientation, the averaged site, rotors, and input that cannot be completed.

Reference values: site symmetries from International Tables for Crystallography Vol. A ("ITA");
NH4Cl structure: H. A. Levy and S. W. Peterson, Phys. Rev. 86, 766 (1952); C60 merohedral
disorder: P. A. Heiney et al., Phys. Rev. Lett. 66, 2911 (1991) and W. I. F. David et al., Nature
353, 147 (1991).  What static and dynamic disorder remove is the common practice stated in the
method notes (site pattern of one orientation; free-unit rules for rotors).
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest

from splitting.crystal.read import load_structure
from splitting.errors import InputError
from splitting.phases.disorder import STATES, occupancies, predict_disordered

S = Path(__file__).resolve().parent.parent / "structures"
NH4CL = S / "nh4cl_disordered_Pm-3m.cif"


@pytest.fixture(scope="module")
def nh4cl():
    return predict_disordered(NH4CL)


def test_occupancies_of_the_nh4cl_file():
    occ = occupancies(load_structure(NH4CL, allow_partial=True))
    # the file: N 1a and Cl 1b full, H on 8g at occupancy 0.5 (structures/README.md)
    assert sorted(occ.tolist()) == [0.5] * 8 + [1.0] * 2


def test_nh4cl_two_orientations_averaged_oh_one_orientation_td(nh4cl):
    (u,) = nh4cl.units
    # two NH4+ orientations; averaged site m-3m (ITA Pm-3m 1a); one orientation: -43m = Td
    # (Levy & Peterson 1952)
    assert (u.formula, u.state, u.orientations) == ("H4N", "static", 2)
    assert (u.averaged_site_group, u.averaged_wyckoff, u.orientation_site_group, u.free_group) == (
        "Oh",
        "1a",
        "Td",
        "Td",
    )
    # Td free ion at a Td site: A1 -> A1, E -> E, T2 -> T2 (nu3 and nu4: 2 modes)
    assert [(p.free, p.modes, str(p.site)) for p in u.pattern] == [("A1", 1, "A1"), ("E", 1, "E"), ("T2", 2, "T2")]
    assert "static disorder" in u.statement and "Davydov" in u.statement
    # the averaged structure is Pm-3m (ITA No. 221) with one optical T1u translation
    assert nh4cl.space_group.number == 221 and nh4cl.factor_group == "Oh"
    assert str(nh4cl.translations) == "T1u"
    # the one-orientation model is the ordered structure, P-43m (ITA No. 215)
    assert nh4cl.ordered_model.space_group.number == 215
    assert nh4cl.volume == pytest.approx(3.87**3, rel=1e-6)  # a = 3.87 A of the file (from memory)


def test_to_dict_is_json(nh4cl):
    d = json.loads(json.dumps(nh4cl.to_dict()))
    assert d["units"][0]["orientation_site_group"] == "Td" and d["units"][0]["orientations"] == 2
    assert d["space_group"]["number"] == 221 and d["optical_translations"] == "T1u"


def test_declared_rotor_gives_free_unit_patterns():
    d = predict_disordered(NH4CL, states={"H4N": "dynamic"})
    (u,) = d.units
    # a rotor: internal modes follow the free-ion (Td) rules; no one-orientation site group
    assert (u.state, u.orientation_site_group, u.free_group) == ("dynamic", None, "Td")
    assert [(p.free, p.modes, str(p.site)) for p in u.pattern] == [("A1", 1, "A1"), ("E", 1, "E"), ("T2", 2, "T2")]
    assert "free-unit selection rules" in u.statement


def test_rotor_declared_on_an_ordered_file():
    d = predict_disordered(S / "nh4cl_ordered_P-43m.cif", states={"H4N": "dynamic"})
    (u,) = d.units
    assert (u.state, u.orientations, u.averaged_site_group) == ("dynamic", 1, "Td")
    assert all(str(p.site) == p.free for p in u.pattern)


def test_forcing_ordered_drops_the_unit_from_the_disordered_list():
    d = predict_disordered(NH4CL, states={"H4N": "ordered"})
    assert d.units == ()
    assert d.ordered_model.space_group.number == 215


def test_c60_merohedral_disorder():
    d = predict_disordered(S / "c60_fcc_Fm-3m_disordered.cif")
    (u,) = d.units
    # two standard orientations (David et al. 1991); averaged m-3m (ITA Fm-3m 4a); one orientation m-3 (Th)
    assert (u.formula, u.orientations, u.averaged_site_group, u.averaged_wyckoff, u.orientation_site_group) == (
        "C60",
        2,
        "Oh",
        "4a",
        "Th",
    )
    # Ih -> Th (standard orientation): T1u -> Tu, Hg -> Eg + Tg (Wilson, Decius & Cross correlation tables)
    pat = {p.free: str(p.site) for p in u.pattern}
    assert pat["T1u"] == "Tu" and pat["Hg"] == "Eg + Tg"
    assert d.ordered_model.space_group.number == 202  # one-orientation model is Fm-3 (ITA No. 202)


def test_partial_occupancy_without_a_model_is_one_clear_error():
    bad = S / "bad" / "partial_occupancy_no_model.cif"
    with pytest.raises(InputError) as exc:
        predict_disordered(bad)
    msg = str(exc.value)
    assert "\n" not in msg and str(bad) in msg and "partial occupancy" in msg and "Cl" in msg


def test_unknown_state_is_rejected():
    with pytest.raises(InputError, match="is not a state; use one of"):
        predict_disordered(NH4CL, states={"H4N": "spinning"})
    assert STATES == ("ordered", "static", "dynamic")


def test_no_input_is_an_input_error():
    with pytest.raises(InputError):
        predict_disordered()


def test_occupancy_defaults_to_one_without_a_table():
    atoms = load_structure(S / "nh4cl_ordered_P-43m.cif")
    assert np.all(occupancies(atoms) == 1.0)

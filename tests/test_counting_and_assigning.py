"""Assigning lines against what a measurement can see: polarisation column, factor-group species,
and ``molecule`` on a periodic file.

Raman tensors of the Th class (Pa-3 C60): Ag and Eg diagonal, Tg off-diagonal (R. Loudon, Adv.
Phys. 13, 423 (1964)); so an xy-polarised line of a split Hg band is its Tg component, an xx
line its Ag or Eg one. Calcite (D3d): A2u is IR active along z (the threefold axis), Eu in the
basal plane (x, y) (E. B. Wilson, J. C. Decius and P. C. Cross, Molecular Vibrations, 1955,
character table of D3d). The peak lists are invented for the tests, not measurements.
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from splitting.crystal.predict import predict
from splitting.errors import InputError
from splitting.spectra.assign import explain
from splitting.spectra.measured import Peak, PeakList

S = Path(__file__).resolve().parent.parent / "structures"


def _line(e, x):
    return next(line for line in e.lines if line.peak.position_cm1 == x)


@pytest.fixture(scope="module")
def pa3():
    return predict(S / "c60_ordered_Pa-3.cif")


@pytest.fixture(scope="module")
def calcite():
    return predict(S / "calcite.cif")


def test_raman_geometry_decides_the_factor_group_species(pa3):
    peaks = PeakList(
        (Peak(272.0, 5.0, None, "xy"), Peak(1469.0, 10.0, None, "xx"), Peak(1575.0, 3.0, None, "z(xy)-z")),
        technique="raman",
        source="invented",
    )
    e = explain(pa3, peaks)
    assert _line(e, 272.0).species == ("Tg",) and _line(e, 272.0).species_decided
    assert _line(e, 1575.0).species == ("Tg",)
    assert _line(e, 1469.0).species == ("Ag",)  # Ag band -> Ag + Tg in Pa-3; xx sees only Ag
    # without the column the Hg line keeps every Raman-active component
    e = explain(pa3, PeakList((Peak(272.0, 5.0),), technique="raman", source="invented"))
    assert set(e.lines[0].species) == {"Ag", "Eg", "Tg"} and not e.lines[0].species_decided
    d = e.to_dict()["lines"][0]
    assert d["species_decided"] is False and set(d["assigned_species"]) == {"Ag", "Eg", "Tg"}


def test_ir_field_direction_restricts_the_line(calcite):
    # nu2 of CO3^2- (A2'') gives A2u only: seen with E || z, not with E || x
    along_z = explain(calcite, PeakList((Peak(877.0, 1.0, None, "E||z"),), technique="ir", source="invented"))
    assert along_z.lines[0].candidates[0].band == "nu2" and along_z.lines[0].species == ("A2u",)
    along_x = explain(calcite, PeakList((Peak(877.0, 1.0, None, "x"),), technique="ir", source="invented"))
    assert all(c.band != "nu2" or c.kind not in ("fundamental",) for c in along_x.lines[0].candidates)
    # nu3 (E') -> Eu, in-plane
    e = explain(calcite, PeakList((Peak(1410.0, 1.0, None, "y"),), technique="ir", source="invented"))
    assert e.lines[0].species == ("Eu",)


def test_labels_that_say_nothing_and_mismatched_labels(calcite):
    e = explain(calcite, PeakList((Peak(1086.0, 1.0, None, "p"),), technique="raman", source="invented"))
    assert e.lines[0].species == ("A1g",)  # nu1 has one Raman-active component anyway
    with pytest.raises(InputError, match="IR field direction"):
        explain(calcite, PeakList((Peak(1086.0, 1.0, None, "z"),), technique="raman", source="invented"))
    with pytest.raises(InputError, match="Raman geometry"):
        explain(calcite, PeakList((Peak(877.0, 1.0, None, "z(xx)-z"),), technique="ir", source="invented"))


def test_cli_reads_the_polarisation_column(run_cli, tmp_path):
    peaks = tmp_path / "p.csv"
    peaks.write_text("# technique: raman\nposition,intensity,polarisation\n272,5,xy\n1469,10,xx\n")
    code, out, err = run_cli(["explain", S / "c60_ordered_Pa-3.cif", "--peaks", peaks, "--json"])
    assert code == 0 and err == ""
    lines = json.loads(out)["lines"]
    assert [(row["assigned_species"], row["species_decided"]) for row in lines] == [(["Tg"], True), (["Ag"], True)]
    code, out, _ = run_cli(["explain", S / "c60_ordered_Pa-3.cif", "--peaks", peaks])
    assert "-> Tg" in out


def test_molecule_refuses_a_crystal_and_takes_a_molecule_in_a_box(run_cli, tmp_path):
    code, out, err = run_cli(["molecule", S / "calcite.cif"])
    assert code != 0 and out == "" and err.count("\n") == 1
    assert "periodic structure" in err and "splitting predict" in err and "CO3^2-" in err
    from ase.io import read, write

    water = read(S / "molecules" / "h2o.xyz")
    water.set_cell([20.0, 20.0, 20.0])
    water.set_pbc(True)
    water.center()
    boxed = tmp_path / "water_box.extxyz"
    write(boxed, water, format="extxyz")
    code, out, err = run_cli(["molecule", boxed, "--json"])
    assert code == 0, err
    assert json.loads(out)["point_group"] == "C2v"  # H2O (Wilson, Decius and Cross 1955)

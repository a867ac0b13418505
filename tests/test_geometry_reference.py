"""Polarised Raman: which species a scattering geometry sees.

Geometries in the notation of T. C. Damen, S. P. S. Porto and B. Tell, Phys. Rev. 142, 570 (1966);
Raman tensors of the trigonal class -3m (D3d) from R. Loudon, Adv. Phys. 13, 423 (1964):
A1g = [[a,0,0],[0,a,0],[0,0,b]], Eg = [[c,0,0],[0,-c,d],[0,d,0]] and its partner (from memory).
Calcite's observed selection rules: S. P. S. Porto, J. A. Giordmaine and T. C. Damen,
Phys. Rev. 147, 608 (1966) (from memory).
"""

from __future__ import annotations

from pathlib import Path

import pytest

from splitting.cli import main
from splitting.crystal.predict import predict

STRUCT = Path(__file__).resolve().parents[1] / "structures"


@pytest.fixture(scope="module")
def calcite():
    return predict(STRUCT / "calcite.cif")


@pytest.mark.parametrize(
    "geometry, labels",
    [
        ("z(xx)-z", {"A1g", "Eg"}),  # a and c elements: both species (Loudon 1964)
        ("z(xy)-z", {"Eg"}),  # only Eg has xy (Loudon 1964)
        ("x(zz)y", {"A1g"}),  # zz = b for A1g, 0 for Eg (Loudon 1964)
        ("x(yz)y", {"Eg"}),  # yz = d for Eg (Loudon 1964)
    ],
)
def test_calcite_geometries(calcite, geometry, labels):
    assert {lab for lab, _ in calcite.seen_in(geometry)} == labels


def test_counts_are_optical_frequencies(calcite):
    # one A1g and four Eg Raman lines in calcite (Porto, Giordmaine and Damen 1966, from memory)
    assert dict(calcite.seen_in("z(xx)-z")) == {"A1g": 1, "Eg": 4}


def test_geometry_option_and_bad_geometry(capsys):
    assert main(["predict", str(STRUCT / "calcite.cif"), "--geometry", "z(xy)z̄"]) == 0
    out = capsys.readouterr().out
    assert "Raman in z(xy)z̄" in out and "Eg (4)" in out
    assert main(["predict", str(STRUCT / "calcite.cif"), "--geometry", "z(xq)z"]) != 0
    captured = capsys.readouterr()
    assert captured.out == "" and captured.err.startswith("error:")

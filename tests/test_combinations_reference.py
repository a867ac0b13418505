"""Symmetry of overtones and binary combinations against published direct-product tables.

Direct products and symmetric squares are tabulated in E. B. Wilson, J. C. Decius and
P. C. Cross, *Molecular Vibrations*, McGraw-Hill (1955), Appendix X, and in G. Herzberg,
*Infrared and Raman Spectra of Polyatomic Molecules*, Van Nostrand (1945), Tables 32-36.
The entries below were recalled without the books open ("from memory"); each one can
also be checked by hand from the character tables.
"""

from __future__ import annotations

import pytest

from splitting.errors import InputError
from splitting.groups import linear_group, point_group
from splitting.spectra.combinations import overtones_and_combinations, representation_activity


@pytest.mark.parametrize(
    ("group", "a", "b", "expected"),
    [
        ("Td", "E", "T2", "T1 + T2"),  # Wilson, Decius & Cross (1955) App. X; from memory
        ("Td", "T2", "T2", "A1 + E + T1 + T2"),  # idem (full product; from memory)
        ("D3h", "E'", "E''", "A1'' + A2'' + E''"),  # Herzberg (1945) Table 33; from memory
        ("Oh", "T1u", "T1u", "A1g + Eg + T1g + T2g"),  # Wilson, Decius & Cross App. X; from memory
        ("C3v", "E", "E", "A1 + A2 + E"),  # idem; from memory
        ("D4h", "Eu", "Eu", "A1g + A2g + B1g + B2g"),  # idem; from memory
    ],
)
def test_direct_products(group, a, b, expected):
    assert str(point_group(group).product(a, b)) == expected


@pytest.mark.parametrize(
    ("group", "label", "expected"),
    [
        ("Td", "T2", "A1 + E + T2"),  # [T2]^2, Wilson, Decius & Cross App. X; from memory
        ("Td", "E", "A1 + E"),  # [E]^2; from memory
        ("Oh", "T1u", "A1g + Eg + T2g"),  # [T1u]^2; from memory
        ("C3v", "E", "A1 + E"),  # [E]^2 (A2 is the antisymmetric part); from memory
        ("D3h", "E'", "A1' + E'"),  # [E']^2, Herzberg (1945) Table 36; from memory
    ],
)
def test_symmetric_squares(group, label, expected):
    assert str(point_group(group).symmetric_square(label)) == expected


def test_linear_overtone_of_bend():
    # [Πu]^2 = Σg+ + Δg: the first overtone of the CO2 bend has l = 0 and l = 2 components
    # (Herzberg (1945), Table 36 and the discussion of the CO2 Fermi resonance; from memory)
    assert str(linear_group("D∞h").symmetric_square("Πu")) == "Σg+ + Δg"


def test_methane_two_quantum_levels():
    # CH4 (Td): nu2 (E) and nu4 (T2); nu2 + nu4 = T1 + T2 is infrared active (T2), 2nu2 = A1 + E
    # is Raman active only (Herzberg (1945) on CH4 combination bands; from memory)
    bands = {b.name: b for b in overtones_and_combinations("Td", [("nu2", "E", 1533.0), ("nu4", "T2", 1306.0)])}
    assert bands["nu2 + nu4"].wavenumber_cm1 == 1533.0 + 1306.0
    assert str(bands["nu2 + nu4"].species) == "T1 + T2" and bands["nu2 + nu4"].ir
    assert str(bands["2nu2"].species) == "A1 + E" and not bands["2nu2"].ir and bands["2nu2"].raman
    assert bands["2nu4"].kind == "overtone" and bands["nu2 + nu4"].kind == "combination"
    assert list(bands) == ["2nu4", "nu2 + nu4", "2nu2"]  # sorted by harmonic sum


def test_crystal_species_calcite():
    # In calcite (factor group D3d) nu2 of CO3 (A2'') gives A2g + A2u (one A2u IR line, the
    # A2g silent; Fateley et al. (1972), calcite example; from memory). The overtone states
    # span the symmetric square of A2g + A2u = 2A1g + A1u (hand check: A2g^2 = A2u^2 = A1g,
    # A2g x A2u = A1u), so 2nu2 is Raman active and IR inactive in the crystal.
    g = point_group("D3d")
    crystal = {"A2''": g.representation({"A2g": 1, "A2u": 1})}
    (band,) = overtones_and_combinations("D3h", [("nu2", "A2''", 879.0)], crystal=crystal)
    assert str(band.crystal_species) == "2A1g + A1u"
    assert band.crystal_raman and not band.crystal_ir
    assert band.active("raman") and not band.active("ir")


def test_activity_of_representation():
    # Oh: T1u x T1u holds no T1u (no IR) but A1g, Eg, T2g (Raman): the overtone rule of
    # mutual exclusion for even overtones of u modes (common practice)
    assert representation_activity(point_group("Oh").product("T1u", "T1u")) == (False, True)


def test_bad_input():
    with pytest.raises(InputError, match="max_order"):
        overtones_and_combinations("Td", [("nu2", "E", 1533.0)], max_order=3)
    with pytest.raises(InputError, match="not a species"):
        overtones_and_combinations("Td", [("nu2", "E2", 1533.0)])
    with pytest.raises(InputError, match="twice"):
        overtones_and_combinations("Td", [("a", "E", 1.0), ("a", "T2", 2.0)])
    with pytest.raises(InputError, match="no crystal representation"):
        overtones_and_combinations("Td", [("a", "E", 1.0)], crystal={})
    with pytest.raises(InputError, match="positive"):
        overtones_and_combinations("Td", [("a", "E", -1.0)])

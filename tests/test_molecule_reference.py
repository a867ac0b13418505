"""Point groups and vibrational species of the bundled free molecules against published counts.

Sources (abbreviations used beside the checks):

* Herzberg: G. Herzberg, *Molecular Spectra and Molecular Structure II. Infrared and Raman
  Spectra of Polyatomic Molecules*, Van Nostrand (1945): species of H2O, NH3, CH4, SF6, CO2,
  benzene (with the C2' axes through the atoms, as in Wilson's numbering).
* WDC: E. B. Wilson, J. C. Decius and P. C. Cross, *Molecular Vibrations* (1955), ch. 6
  and Appendix X (correlation tables used for the lowered-symmetry cases).
* Mulliken: R. S. Mulliken, J. Chem. Phys. 23, 1997 (1955): axis conventions (planar C2v:
  x perpendicular to the plane, so the antisymmetric stretch of H2O is B2).
* Nakamoto: K. Nakamoto, *Infrared and Raman Spectra of Inorganic and Coordination Compounds*
  (any edition, Part A/B): SF6, ferrocene.
* Lippincott & Nelson: E. R. Lippincott and R. D. Nelson, Spectrochim. Acta 10, 307 (1958): ferrocene.
* Leites: L. A. Leites, Chem. Rev. 92, 279 (1992): closo-B12H12(2-).
* Dresselhaus: M. S. Dresselhaus, G. Dresselhaus and P. C. Eklund, *Science of Fullerenes and
  Carbon Nanotubes*, Academic Press (1996): the 46 distinct modes of C60.
* Naphthalene: the D2h count in the Mulliken axes (x perpendicular to the plane, z along the
  short axis through C9 and C10) is quoted throughout the vibrational literature; no single
  source was at hand, so it is "from memory" and re-derived by hand (in-plane / out-of-plane split).

No source was open while these values were typed: every count is "from memory".  Each count
is also re-derived by hand in a comment where that is short.
"""

from __future__ import annotations

import json

import ase.io
import numpy as np
import pytest

from splitting.errors import InputError
from splitting.molecule.analysis import analyse_unit


def analyse(structures_dir, name: str, **kwargs):
    atoms = ase.io.read(structures_dir / "molecules" / f"{name}.xyz")
    return analyse_unit(atoms.numbers, atoms.positions, symbols=atoms.get_chemical_symbols(), **kwargs)


# (file, point group, Γvib, 3N-6 or 3N-5, IR-active fundamentals, Raman-active fundamentals)
CASES = [
    # Herzberg (1945) / Mulliken (1955) convention, molecule in yz (from memory): 2A1 + B2, 3 modes,
    # all IR and Raman active
    ("h2o", "C2v", "2A1 + B2", 3, 3, 3),
    # Herzberg (1945) (from memory): 2A1 + 2E, all active
    ("nh3", "C3v", "2A1 + 2E", 6, 4, 4),
    # Herzberg (1945) (from memory): A1 + E + 2T2; IR 2T2, Raman all four
    ("ch4", "Td", "A1 + E + 2T2", 9, 2, 4),
    # Herzberg (1945) / Nakamoto (from memory): A1g + Eg + T2g (Raman) + 2T1u (IR) + T2u (silent)
    ("sf6", "Oh", "A1g + Eg + T2g + 2T1u + T2u", 15, 2, 3),
    # Herzberg (1945) (from memory): Σg+ (Raman) + Σu+ + Πu (IR); 3N-5 = 4
    ("co2", "D∞h", "Σg+ + Σu+ + Πu", 4, 2, 1),
    # Herzberg (1945), Wilson numbering (from memory); IR A2u + 3E1u = 4, Raman 2A1g + E1g + 4E2g = 7
    ("benzene", "D6h", "2A1g + A2g + 2B2g + E1g + 4E2g + A2u + 2B1u + 2B2u + 3E1u + 2E2u", 30, 4, 7),
    # Lippincott & Nelson (1958) / Nakamoto (from memory); 3N-6 = 57; IR E1' + A2'' = 10,
    # Raman A1' + E2' + E1'' = 15
    ("ferrocene_eclipsed", "D5h", "4A1' + A2' + 6E1' + 6E2' + 2A1'' + 4A2'' + 5E1'' + 6E2''", 57, 10, 15),
    # Lippincott & Nelson (1958) / Nakamoto (from memory); 3N-6 = 57; IR A2u + E1u = 10,
    # Raman A1g + E1g + E2g = 15
    ("ferrocene_staggered", "D5d", "4A1g + A2g + 5E1g + 6E2g + 2A1u + 4A2u + 6E1u + 6E2u", 57, 10, 15),
    # Leites (1992) (from memory); 3N-6 = 66; IR 3T1u, Raman 2Ag + 4Hg
    ("b12h12", "Ih", "2Ag + T1g + 2Gg + 4Hg + 3T1u + 2T2u + 2Gu + 2Hu", 66, 3, 6),
    # Dresselhaus (1996) (from memory): 174 modes, 46 distinct;
    # IR 4T1u, Raman 2Ag + 8Hg
    ("c60", "Ih", "2Ag + 3T1g + 4T2g + 6Gg + 8Hg + Au + 4T1u + 5T2u + 6Gu + 7Hu", 174, 4, 10),
    # naphthalene in the Mulliken axes (from memory): 3N-6 = 48, in plane 9Ag + 8B3g + 8B1u + 8B2u = 33
    # = 2N-3, out of plane 3B1g + 4B2g + 4Au + 4B3u = 15 = N-3; IR 8B1u + 8B2u + 4B3u = 20, Raman 24
    ("naphthalene", "D2h", "9Ag + 3B1g + 4B2g + 8B3g + 4Au + 8B1u + 8B2u + 4B3u", 48, 20, 24),
]


@pytest.mark.parametrize(("name", "group", "gamma", "count", "ir", "raman"), CASES, ids=[c[0] for c in CASES])
def test_vibrational_species(structures_dir, name, group, gamma, count, ir, raman):
    a = analyse(structures_dir, name)
    assert a.point_group == group
    assert str(a.vibrations) == gamma
    assert a.vibrations.dimension == count
    assert a.ir_active == ir
    assert a.raman_active == raman


@pytest.mark.parametrize("name", [c[0] for c in CASES])
def test_mode_count_is_3n_minus_6_and_bookkeeping_closes(structures_dir, name):
    a = analyse(structures_dir, name)
    n = len(a.symmetry.numbers)
    linear = "∞" in a.point_group
    assert a.vibrations.dimension == 3 * n - (5 if linear else 6)
    assert a.gamma_3n.dimension == 3 * n
    assert a.translations.dimension == 3
    assert a.rotations.dimension == (2 if linear else 3)
    assert a.gamma_3n == a.vibrations + a.translations + a.rotations
    assert sum(m.count * m.dimension for m in a.modes) == a.vibrations.dimension


def test_ferrocene_eclipsed_by_hand(structures_dir):
    # Hand reduction in D5h (common practice): Fe sits on every element (it carries the vector
    # representation); each of the two sets of ten atoms (C, H) lies in the σv planes, so one set has
    # chi_3N = 30 at E, 2 (= 2 atoms x trace 1) at σv, 0 elsewhere.
    from splitting.groups import point_group

    g = point_group("D5h")
    one_set = np.array([30.0 if c.name == "E" else (2.0 if c.name.endswith("σv") else 0.0) for c in g.classes])
    assert str(g.reduce(one_set)) == "2A1' + A2' + 3E1' + 3E2' + A1'' + 2A2'' + 3E1'' + 3E2''"
    gamma_3n = g.reduce(2 * one_set + g.characters_of(g.vector))
    vib = gamma_3n - g.vector - g.axial
    assert vib == analyse(structures_dir, "ferrocene_eclipsed").vibrations


def test_water_axes_follow_mulliken(structures_dir):
    # Mulliken (1955): a planar C2v molecule has x perpendicular to its plane; the file has the
    # molecule in the yz plane, so x must come out along the input x axis
    a = analyse(structures_dir, "h2o")
    x = np.array(a.to_dict()["axes"]["x"])
    assert np.isclose(abs(x[0]), 1.0, atol=1e-6)
    assert {m.label: m.ir for m in a.modes} == {"A1": ("z",), "B2": ("y",)}


def test_lower_group_on_request_follows_the_correlation_tables(structures_dir):
    # Td -> C3v (WDC App. X, from memory): A1 -> A1, E -> E, T2 -> A1 + E, so A1 + E + 2T2 -> 3A1 + 3E
    ch4 = analyse(structures_dir, "ch4", point_group="C3v")
    assert ch4.point_group == "C3v"
    assert str(ch4.vibrations) == "3A1 + 3E"
    # Oh -> D4h (WDC App. X, from memory): A1g + Eg + T2g + 2T1u + T2u
    # -> A1g + (A1g + B1g) + (B2g + Eg) + 2(A2u + Eu) + (B2u + Eu)
    sf6 = analyse(structures_dir, "sf6", point_group="D4h")
    assert str(sf6.vibrations) == "2A1g + B1g + B2g + Eg + 2A2u + B2u + 3Eu"
    assert sf6.vibrations.dimension == 15
    # D6h -> D3h keeping the C2' axes through the atoms (Mulliken's choice for benzene; WDC App. X, from
    # memory): A1g, B1u -> A1'; A2g, B2u -> A2'; B2g, A2u -> A2''; E1g, E2u -> E''; E2g, E1u -> E'
    benzene = analyse(structures_dir, "benzene", point_group="D3h")
    assert str(benzene.vibrations) == "4A1' + 3A2' + 7E' + 3A2'' + 3E''"
    # the same group by another name is accepted
    assert analyse(structures_dir, "ch4", point_group="-43m").point_group == "Td"


def test_lower_group_must_be_a_subgroup(structures_dir):
    with pytest.raises(InputError):
        analyse(structures_dir, "h2o", point_group="D2h")
    with pytest.raises(InputError):
        analyse(structures_dir, "co2", point_group="C2v")


def test_to_dict_is_json_ready(structures_dir):
    a = analyse(structures_dir, "c60")
    d = json.loads(json.dumps(a.to_dict()))
    assert d["point_group"] == "Ih"
    assert d["formula"] == "C60"
    assert d["atoms"] == 60
    assert d["vibration_count"] == 174
    assert d["ir_active_fundamentals"] == 4 and d["raman_active_fundamentals"] == 10
    assert [s["label"] for s in d["species"]] == ["Ag", "T1g", "T2g", "Gg", "Hg", "Au", "T1u", "T2u", "Gu", "Hu"]
    assert d["equivalent_atom_sets"] == [list(range(60))]
    for s in d["species"]:
        assert set(s) >= {"label", "dimension", "count", "ir", "raman"}


def test_equivalent_atom_sets(structures_dir):
    # common practice: benzene has one set of 6 C and one of 6 H; ferrocene Fe, 10 C, 10 H
    assert sorted(len(s) for s in analyse(structures_dir, "benzene").symmetry.equivalent_sets()) == [6, 6]
    ferro = analyse(structures_dir, "ferrocene_staggered").symmetry.equivalent_sets()
    assert sorted(len(s) for s in ferro) == [1, 10, 10]
    naph = analyse(structures_dir, "naphthalene").symmetry.equivalent_sets()
    assert sorted(len(s) for s in naph) == [2, 4, 4, 4, 4]  # C9/C10, C1-type, C2-type, H1-type, H2-type


S3 = np.sqrt(3) / 2
# Idealised geometries typed here (bond lengths rounded, from memory; the species counts do not
# depend on them).  Γvib: Herzberg (1945) for HCN, C2H2, BF3, C2H4, NH4+; Nakamoto for PtCl4(2-),
# PCl5 (all from memory).  C2H4 in Mulliken's axes (x perpendicular to the plane, z along C=C).
SYNTHETIC = [
    ("HCN", [1, 6, 7], [[0, 0, -1.066], [0, 0, 0], [0, 0, 1.156]], "C∞v", "2Σ+ + Π"),
    ("C2H2", [1, 6, 6, 1], [[0, 0, -1.66], [0, 0, -0.6], [0, 0, 0.6], [0, 0, 1.66]], "D∞h",
     "2Σg+ + Πg + Σu+ + Πu"),
    ("BF3", [5, 9, 9, 9], [[0, 0, 0], [1.31, 0, 0], [-0.655, 1.31 * S3, 0], [-0.655, -1.31 * S3, 0]], "D3h",
     "A1' + 2E' + A2''"),
    ("PtCl4(2-)", [78, 17, 17, 17, 17], [[0, 0, 0], [2.3, 0, 0], [-2.3, 0, 0], [0, 2.3, 0], [0, -2.3, 0]], "D4h",
     "A1g + B1g + B2g + A2u + B2u + 2Eu"),
    ("PCl5", [15, 17, 17, 17, 17, 17],
     [[0, 0, 0], [2.02, 0, 0], [-1.01, 2.02 * S3, 0], [-1.01, -2.02 * S3, 0], [0, 0, 2.12], [0, 0, -2.12]], "D3h",
     "2A1' + 3E' + 2A2'' + E''"),
    ("NH4+", [7, 1, 1, 1, 1], [[0, 0, 0], [0.6, 0.6, 0.6], [0.6, -0.6, -0.6], [-0.6, 0.6, -0.6], [-0.6, -0.6, 0.6]],
     "Td", "A1 + E + 2T2"),
    ("C2H4", [6, 6, 1, 1, 1, 1],
     [[0, 0, 0.667], [0, 0, -0.667], [0, 0.923, 1.232], [0, -0.923, 1.232], [0, 0.923, -1.232], [0, -0.923, -1.232]],
     "D2h", "3Ag + B2g + 2B3g + Au + 2B1u + 2B2u + B3u"),
]  # fmt: skip


@pytest.mark.parametrize(("name", "numbers", "positions", "group", "gamma"), SYNTHETIC, ids=[c[0] for c in SYNTHETIC])
def test_more_molecules_from_typed_geometries(name, numbers, positions, group, gamma):
    a = analyse_unit(numbers, np.array(positions, dtype=float))
    assert a.point_group == group
    assert str(a.vibrations) == gamma

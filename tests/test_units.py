"""Finding the units of a crystal: molecules, polyatomic ions, single ions, framework atoms.

Bonds: distance < 1.2 x (sum of covalent radii) of B. Cordero et al., Dalton Trans. 2832
(2008) (the default margin is common practice); no bonds to alkali/alkaline-earth metals.
Chemical expectations (CO3 2- and Ca 2+ in calcite, NH4+ and Cl- in NH4Cl, C60 molecules,
a covalent framework in diamond) are common practice.  Bond lengths quoted are those written
into the bundled files (structures/README.md; from memory).
"""

from __future__ import annotations

import functools
from collections import Counter
from pathlib import Path

import ase.io
import numpy as np
import pytest
from ase import Atoms

from splitting.crystal.predict import Options, predict, predict_atoms
from splitting.crystal.spacegroup import analyse_cell
from splitting.crystal.units import find_units, parse_cutoffs
from splitting.errors import InputError

ROOT = Path(__file__).resolve().parent.parent
STRUCTURES = ROOT / "structures"


@functools.cache
def _atoms(name: str) -> Atoms:
    return ase.io.read(STRUCTURES / name)


def _units(name: str, **kwargs):
    atoms = _atoms(name)
    cell = analyse_cell(atoms.cell[:], atoms.get_scaled_positions(), atoms.numbers, scan=False)
    return cell, find_units(cell.lattice, cell.frac, cell.numbers, **kwargs)


def _census(units) -> Counter:
    return Counter((u.formula, u.kind) for u in units)


# ------------------------------------------------------------------ default unit finding
def test_calcite_ca_ions_and_carbonate() -> None:
    cell, units = _units("calcite.cif")
    # rhombohedral primitive cell of calcite: 2 CaCO3
    assert _census(units) == Counter({("Ca", "atom"): 2, ("CO3", "molecule"): 2})
    for u in units:
        if u.formula == "CO3":
            # C-O = 1.282 A (a = 4.9896 A, x(O) = 0.2570, file header; from memory): all three bonds
            # inside one unit, unwrapped across the cell boundary
            c = u.positions[u.symbols.index("C")]
            d = sorted(np.linalg.norm(p - c) for p, s in zip(u.positions, u.symbols, strict=True) if s == "O")
            assert np.allclose(d, d[0], atol=1e-3) and 1.2 < d[0] < 1.35
            # centre (mass-weighted, = the C atom by symmetry) inside the primitive cell
            f = u.centre @ np.linalg.inv(cell.lattice)
            assert np.all(f > -1e-6) and np.all(f < 1 + 1e-6)


def test_diamond_is_a_framework() -> None:
    _, units = _units("diamond.cif")
    assert _census(units) == Counter({("C", "framework"): 2})


def test_c60_molecules() -> None:
    _, units = _units("c60_ordered_Pa-3.cif")
    # Pa-3, Z = 4: four whole C60 molecules in the (simple cubic) primitive cell
    assert _census(units) == Counter({("C60", "molecule"): 4})
    for u in units:
        radius = np.linalg.norm(u.positions - u.centre, axis=1)
        # radius 3.548 A of the idealised cage (structures/README.md; from memory)
        assert np.allclose(radius, 3.548, atol=0.01)


def test_nh4cl_ammonium_and_chloride() -> None:
    _, units = _units("nh4cl_ordered_P-43m.cif")
    assert _census(units) == Counter({("H4N", "molecule"): 1, ("Cl", "atom"): 1})


@pytest.mark.parametrize(
    "name, formula, count",
    [("alpha_N2_Pa-3.cif", "N2", 4), ("co2_Pa-3.cif", "CO2", 4), ("naphthalene_P21a.cif", "C10H8", 2)],
)
def test_molecular_crystals(name: str, formula: str, count: int) -> None:
    _, units = _units(name)
    assert _census(units) == Counter({(formula, "molecule"): count})


# ------------------------------------------------------------------------- options
def test_bond_cutoff_zero_breaks_carbonate() -> None:
    _, units = _units("calcite.cif", cutoffs={("C", "O"): 0.0})
    assert _census(units) == Counter({("Ca", "atom"): 2, ("C", "atom"): 2, ("O", "atom"): 6})
    # and through the pipeline: C on 6a (32), O on 18e (.2), Ca on 6b (ITA No. 167)
    p = predict(STRUCTURES / "calcite.cif", Options(cutoffs=((("C", "O"), 0.0),)))
    sites = {u.formula: (u.wyckoff, u.site_group, u.count) for u in p.units}
    assert sites == {"Ca": ("6b", "S6", 2), "C": ("6a", "D3", 2), "O": ("18e", "C2", 6)}
    # Gamma_3N is a property of the atoms, not of how they are grouped
    assert p.gamma_3n == predict(STRUCTURES / "calcite.cif").gamma_3n


def test_bond_cutoff_longer_than_default() -> None:
    # an explicit C-O cut-off above the default keeps the carbonate whole
    _, units = _units("calcite.cif", cutoffs={("C", "O"): 1.6})
    assert _census(units) == Counter({("Ca", "atom"): 2, ("CO3", "molecule"): 2})


def test_formulas_filter() -> None:
    _, units = _units("calcite.cif", formulas=["CO3"])
    assert _census(units) == Counter({("Ca", "atom"): 2, ("CO3", "molecule"): 2})
    _, units = _units("nh4cl_ordered_P-43m.cif", formulas=["Cl"])
    assert _census(units) == Counter({("N", "atom"): 1, ("H", "atom"): 4, ("Cl", "atom"): 1})
    with pytest.raises(InputError, match="SO4"):
        _units("calcite.cif", formulas=["SO4"])


def test_bond_metals_make_calcite_a_framework() -> None:
    _, units = _units("calcite.cif", ionic_metals=False)
    assert {u.kind for u in units} == {"framework"}
    assert sum(len(u.atoms) for u in units) == 10


def test_small_bond_scale_gives_single_atoms() -> None:
    _, units = _units("naphthalene_P21a.cif", scale=0.3)
    assert {u.kind for u in units} == {"atom"}
    assert len(units) == 36


def test_every_atom_in_exactly_one_unit() -> None:
    for name in ("calcite.cif", "c60_ordered_Pa-3.cif", "nh4cl_ordered_P-43m.cif", "naphthalene_P21n.cif"):
        cell, units = _units(name)
        atoms = sorted(a for u in units for a in u.atoms)
        assert atoms == list(range(len(cell.numbers))), name


def test_parse_cutoffs() -> None:
    assert parse_cutoffs(["C-H=1.2", "Pb-I=0"]) == {("C", "H"): 1.2, ("I", "Pb"): 0.0}
    assert parse_cutoffs(None) == {}
    for bad in ("C-H", "CH=1.2", "C-H=x", "C-H-O=1"):
        with pytest.raises(InputError):
            parse_cutoffs([bad])


# ----------------------------------------------------------------- hydrogen warnings
def _without_hydrogen(atoms: Atoms) -> Atoms:
    return atoms[[a.index for a in atoms if a.symbol != "H"]]


def test_no_warning_for_complete_or_hydrogen_free_by_nature() -> None:
    # naphthalene with its H, calcite, C60 (a pure-carbon molecule needs no H)
    for name in ("naphthalene_P21a.cif", "calcite.cif", "c60_ordered_Pa-3.cif", "diamond.cif"):
        assert predict(STRUCTURES / name).warnings == (), name


def test_warning_for_heteroatom_organic_without_hydrogen() -> None:
    # naphthalene with the C2 site (4 atoms, kind 1 of the CIF) turned into N, then all H removed:
    # a C8N2 skeleton that plainly lacks its H (invented structure for this test)
    atoms = _atoms("naphthalene_P21a.cif").copy()
    kinds = atoms.arrays["spacegroup_kinds"]
    symbols = atoms.get_chemical_symbols()
    atoms.set_chemical_symbols(["N" if k == 1 else s for k, s in zip(kinds, symbols, strict=True)])
    p = predict_atoms(_without_hydrogen(atoms))
    assert [u.formula for u in p.units] == ["C8N2"]
    assert len(p.warnings) == 1
    assert "hydrogen" in p.warnings[0] and "C8N2" in p.warnings[0]


def test_warning_for_ammonium_without_hydrogen() -> None:
    p = predict_atoms(_without_hydrogen(_atoms("nh4cl_ordered_P-43m.cif")))
    assert any("hydrogen" in w and "N" in w for w in p.warnings)


def test_warning_for_naphthalene_without_hydrogen() -> None:
    # unit C10: eight carbons with only two C neighbours, unlike C60 where every C has three
    p = predict_atoms(_without_hydrogen(_atoms("naphthalene_P21a.cif")))
    assert [u.formula for u in p.units] == ["C10"]
    assert any("hydrogen" in w for w in p.warnings)

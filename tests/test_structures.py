"""Checks of the bundled structure files in ``structures/`` (read with ase, checked with spglib).

Every expected value names its source beside it.  "ITA" is International Tables for
Crystallography, Vol. A (space-group tables: Wyckoff letters, multiplicities, site
symmetries).  Lattice parameters and bond lengths are those stated (with their
sources, mostly "from memory") in the file headers and in structures/README.md.
"""

from __future__ import annotations

import importlib.util
import math
import re
import sys
from pathlib import Path

import ase.io
import numpy as np
import pytest
from ase.io.cif import parse_cif

ROOT = Path(__file__).resolve().parent.parent
STRUCTURES = ROOT / "structures"
SYMPREC = 1e-3


def _load_builder():
    spec = importlib.util.spec_from_file_location("build_structures", STRUCTURES / "build_structures.py")
    module = importlib.util.module_from_spec(spec)
    sys.modules["build_structures"] = module  # dataclasses need the module registered
    spec.loader.exec_module(module)
    return module


builder = _load_builder()

# file -> (space-group number, atoms per conventional cell, centre (fractional),
#          Wyckoff of the centres "mult+letter", spglib site-symmetry symbol of the centre)
CRYSTALS = {
    # calcite R-3c, CO3 on 6a (32): ITA No. 167; Graf, Am. Mineral. 46, 1283 (1961) (from memory)
    "calcite.cif": (167, 30, (0, 0, 0.25), "6a", "32"),
    # naphthalene P2_1/c, Z = 2, molecules on -1 (2a): ITA No. 14; Cruickshank,
    # Acta Cryst. 10, 504 (1957) (from memory)
    "naphthalene_P21a.cif": (14, 36, (0, 0, 0), "2a", "-1"),
    "naphthalene_P21c.cif": (14, 36, (0, 0, 0), "2a", "-1"),
    "naphthalene_P21n.cif": (14, 36, (0, 0, 0), "2a", "-1"),
    # ordered C60, Pa-3, molecules on 4a (-3), 240 C: David et al., Nature 353, 147 (1991)
    # (from memory); ITA No. 205
    "c60_ordered_Pa-3.cif": (205, 240, (0, 0, 0), "4a", ".-3."),
    # fcc C60 one-orientation model, Fm-3, site m-3 (Th): ITA No. 202; a from Heiney et al.,
    # Phys. Rev. Lett. 66, 2911 (1991) (from memory)
    "c60_fcc_Fm-3.cif": (202, 240, (0, 0, 0), "4a", "m-3."),
    # fcc C60 merohedral-disorder model, Fm-3m, site m-3m: ITA No. 225; Heiney et al. (1991)
    "c60_fcc_Fm-3m_disordered.cif": (225, 480, (0, 0, 0), "4a", "m-3m"),
    # diamond Fd-3m, C on 8a (-43m): ITA No. 227 (origin choice 1)
    "diamond.cif": (227, 8, (0, 0, 0), "8a", "-43m"),
    # NH4Cl ordered P-43m / disordered Pm-3m, N on 1a: Levy & Peterson, Phys. Rev. 86, 766
    # (1952) (from memory); ITA No. 215 and No. 221
    "nh4cl_ordered_P-43m.cif": (215, 6, (0, 0, 0), "1a", "-43m"),
    "nh4cl_disordered_Pm-3m.cif": (221, 10, (0, 0, 0), "1a", "m-3m"),
    # alpha-N2 and CO2, Pa-3, molecules on 4a (-3): Jordan et al., J. Chem. Phys. 41, 756
    # (1964); Simon & Peters, Acta Cryst. B36, 2750 (1980) (both from memory); ITA No. 205
    "alpha_N2_Pa-3.cif": (205, 8, (0, 0, 0), "4a", ".-3."),
    "co2_Pa-3.cif": (205, 12, (0, 0, 0), "4a", ".-3."),
}


def _read(name: str):
    return ase.io.read(STRUCTURES / name)


def _dataset(atoms, extra=None):
    frac = atoms.get_scaled_positions(wrap=True)
    numbers = list(atoms.numbers)
    if extra is not None:
        frac = np.vstack([frac, extra])
        numbers += [0] * len(extra)  # dummy species at the molecule centres
    return builder.symmetry_dataset((np.array(atoms.cell), frac, numbers), symprec=SYMPREC)


def _cif_sites(name: str) -> list[dict[str, str]]:
    block = next(iter(parse_cif(str(STRUCTURES / name))))
    labels = block["_atom_site_label"]
    return [
        {
            "label": labels[i],
            "mult": str(block["_atom_site_symmetry_multiplicity"][i]),
            "letter": block["_atom_site_wyckoff_symbol"][i],
        }
        for i in range(len(labels))
    ]


@pytest.mark.parametrize("name", sorted(CRYSTALS))
def test_space_group_and_atom_count(name):
    number, natoms, *_ = CRYSTALS[name]  # sources: see CRYSTALS
    atoms = _read(name)
    assert len(atoms) == natoms
    assert _dataset(atoms).number == number


@pytest.mark.parametrize("name", sorted(CRYSTALS))
def test_molecule_centre_wyckoff(name):
    number, _, centre, wyckoff, site_symmetry = CRYSTALS[name]  # sources: see CRYSTALS
    atoms = _read(name)
    block = next(iter(parse_cif(str(STRUCTURES / name))))
    ops = tuple(block["_space_group_symop_operation_xyz"])
    centres = builder.orbit(np.array(centre, dtype=float), ops)
    ds = _dataset(atoms, centres)
    assert ds.number == number  # the centres are an orbit: adding them keeps the group
    assert f"{len(centres)}{ds.wyckoffs[len(atoms)]}" == wyckoff
    assert ds.site_symmetry_symbols[len(atoms)] == site_symmetry


@pytest.mark.parametrize("name", sorted(CRYSTALS))
def test_every_site_has_the_wyckoff_letter_the_file_claims(name):
    # claims in the file follow ITA; spglib standardises to the same settings here
    atoms = _read(name)
    ds = _dataset(atoms)
    kinds = atoms.arrays["spacegroup_kinds"]
    for k, site in enumerate(_cif_sites(name)):
        idx = np.nonzero(kinds == k)[0]
        assert str(len(idx)) == site["mult"], site["label"]
        assert {ds.wyckoffs[i] for i in idx} == {site["letter"]}, site["label"]


@pytest.mark.parametrize("name", sorted(CRYSTALS))
def test_cif_carries_symmetry_operations_and_asymmetric_unit(name):
    block = next(iter(parse_cif(str(STRUCTURES / name))))
    ops = block["_space_group_symop_operation_xyz"]
    atoms = _read(name)
    # the full list of operations (centring included) equals the group order per cell
    assert len(ops) == len(_dataset(atoms).rotations)
    assert len(block["_atom_site_label"]) < len(atoms) or len(atoms) == 1


@pytest.mark.parametrize("name", sorted(CRYSTALS))
def test_header_names_generator_and_source(name):
    head = (STRUCTURES / name).read_text().split("data_")[0]
    assert "Generated by structures/build_structures.py" in head
    assert "Source:" in head
    assert all(line.startswith("#") for line in head.strip().splitlines())


def test_ase_keeps_atom_order():
    # the file read back equals the generator's crystal() expansion atom by atom
    for spec in builder.all_crystal_specs():
        assert builder._same_structure(builder.build_atoms(spec), _read(spec.filename)), spec.filename


_NUMBER = re.compile(r"[-+]?(?:\d+\.\d*|\.\d+|\d+)(?:[eE][-+]?\d+)?")


def _tokens(text: str) -> tuple[list[str], list[float]]:
    """Split text into its words (numbers replaced by a marker) and its numbers, parsed."""
    numbers = [float(m) for m in _NUMBER.findall(text)]
    return _NUMBER.sub("#", text).split(), numbers


def test_bundled_files_are_up_to_date():
    # Compare parsed numbers with a tolerance, not float printing: numpy and ase versions print
    # the last digit of a float differently (common practice).
    for rel, text in builder.build_all(write=False).items():
        words_disk, numbers_disk = _tokens((STRUCTURES / rel).read_text())
        words_new, numbers_new = _tokens(text)
        assert words_disk == words_new, rel
        assert numbers_disk == pytest.approx(numbers_new, rel=1e-9, abs=1e-9), rel


def test_calcite_geometry():
    # Graf, Am. Mineral. 46, 1283 (1961): a = 4.9896, c = 17.061 A; C-O = x a = 1.282 A
    # with x = 0.2570 (from memory)
    atoms = _read("calcite.cif")
    a, _, c, *_ = atoms.cell.cellpar()
    assert a == pytest.approx(4.9896) and c == pytest.approx(17.061)
    d = atoms.get_all_distances(mic=True)
    c_idx = [i for i, s in enumerate(atoms.symbols) if s == "C"]
    o_idx = [i for i, s in enumerate(atoms.symbols) if s == "O"]
    assert d[np.ix_(c_idx, o_idx)].min() == pytest.approx(1.2823, abs=1e-3)


@pytest.mark.parametrize(("name", "fmt"), [("calcite.vasp", "vasp"), ("calcite.extxyz", "extxyz")])
def test_calcite_copies_match_cif(name, fmt):
    cif = _read("calcite.cif")
    other = ase.io.read(STRUCTURES / name, format=fmt)
    assert builder._same_structure(cif, other)
    assert _dataset(other).number == 167  # ITA No. 167, R-3c
    assert "build_structures.py" in (STRUCTURES / name).read_text().splitlines()[0 if fmt == "vasp" else 1]


def test_naphthalene_three_settings_are_one_crystal():
    # Cell of Cruickshank (1957), beta = 122.92 deg, V = a b c sin(beta) (from memory)
    volumes, counts = [], []
    for name in ("naphthalene_P21a.cif", "naphthalene_P21c.cif", "naphthalene_P21n.cif"):
        ds = _dataset(_read(name))
        volumes.append(abs(np.linalg.det(ds.std_lattice)))
        counts.append(len(ds.std_types))
    v = 8.235 * 6.003 * 8.658 * math.sin(math.radians(122.92))
    assert volumes == pytest.approx([v] * 3, rel=1e-6)
    assert counts == [36, 36, 36]
    ref = _read("naphthalene_P21a.cif")
    for name, m in (
        ("naphthalene_P21c.cif", builder.P21A_TO_P21C),
        ("naphthalene_P21n.cif", builder.P21C_TO_P21N @ builder.P21A_TO_P21C),
    ):
        other = _read(name)
        frac = other.get_scaled_positions() @ m
        assert builder.same_point_set(
            list(ref.symbols), ref.get_scaled_positions(), list(other.symbols), frac, tol=2e-5
        )
        # a wrong transformation must not pass
        assert not builder.same_point_set(
            list(ref.symbols), ref.get_scaled_positions(), list(other.symbols), other.get_scaled_positions()
        )


def test_naphthalene_glide_translations():
    # ITA No. 14, cell choices: P2_1/a glide (1/2,0,0), P2_1/c (0,0,1/2), P2_1/n (1/2,0,1/2)
    expected = {
        "naphthalene_P21a.cif": (0.5, 0.0, 0.0),
        "naphthalene_P21c.cif": (0.0, 0.0, 0.5),
        "naphthalene_P21n.cif": (0.5, 0.0, 0.5),
    }
    for name, glide in expected.items():
        ds = _dataset(_read(name))
        mirror = np.diag([1, -1, 1])
        trans = [t for r, t in zip(ds.rotations, ds.translations, strict=True) if np.array_equal(r, mirror)]
        assert len(trans) == 1
        # intrinsic (x, z) glide components, compared modulo lattice translations
        d = (np.array(trans[0]) - np.array(glide) + 0.5) % 1.0 - 0.5
        assert np.allclose(d[[0, 2]], 0, atol=1e-6), name


def test_c60_ordered_has_ten_inequivalent_carbons():
    # David et al., Nature 353, 147 (1991): Pa-3, 10 inequivalent C on 24d (from memory)
    atoms = _read("c60_ordered_Pa-3.cif")
    ds = _dataset(atoms)
    assert len(set(ds.equivalent_atoms)) == 10
    assert set(ds.wyckoffs) == {"d"}
    assert atoms.cell.cellpar()[0] == pytest.approx(14.04)
    # 6:6 = 1.391, 6:5 = 1.455 A (David et al. 1991, from memory): 30 + 60 bonds per molecule
    d = atoms.get_all_distances(mic=True)
    assert np.sum(np.isclose(d, 1.391, atol=1e-4)) == 2 * 30 * 4
    assert np.sum(np.isclose(d, 1.455, atol=1e-4)) == 2 * 60 * 4


def test_c60_disordered_occupancies_as_ase_reads_them():
    # ase 3.29 keeps every half-occupied position, and stores occupancies per site kind
    atoms = _read("c60_fcc_Fm-3m_disordered.cif")
    assert len(atoms) == 480
    occ = atoms.info["occupancy"]
    assert occ == {"0": {"C": 0.5}, "1": {"C": 0.5}, "2": {"C": 0.5}}
    assert set(atoms.arrays["spacegroup_kinds"]) == {0, 1, 2}
    # ITA No. 225: one 96j site (0,y,z) and two 192l general sites
    assert [s["mult"] + s["letter"] for s in _cif_sites("c60_fcc_Fm-3m_disordered.cif")] == [
        "192l",
        "192l",
        "96j",
    ]


def test_nh4cl_geometry_and_occupancy():
    # N-H = 1.03 A, a = 3.87 A: Levy & Peterson, Phys. Rev. 86, 766 (1952) (from memory)
    for name, nh in (("nh4cl_ordered_P-43m.cif", 4), ("nh4cl_disordered_Pm-3m.cif", 8)):
        atoms = _read(name)
        d = atoms.get_all_distances(mic=True)[0]  # atom 0 is N
        h = [i for i, s in enumerate(atoms.symbols) if s == "H"]
        assert len(h) == nh
        assert np.allclose(d[h], 1.03, atol=1e-5)
    occ = _read("nh4cl_disordered_Pm-3m.cif").info["occupancy"]
    assert occ == {"0": {"N": 1.0}, "1": {"H": 0.5}, "2": {"Cl": 1.0}}


@pytest.mark.parametrize(("name", "bond"), [("alpha_N2_Pa-3.cif", 1.10), ("co2_Pa-3.cif", 1.16)])
def test_linear_molecules_in_pa3(name, bond):
    # N-N 1.10 A (Jordan et al. 1964), C=O 1.16 A (Simon & Peters 1980); both from memory
    d = _read(name).get_all_distances(mic=True)
    shortest = d[d > 0.01].min()
    assert shortest == pytest.approx(bond, abs=2e-5)


# --- free molecules -------------------------------------------------------------------

MOLECULES = {  # name: (atom count, source of the geometry: see the file's comment line)
    "h2o": 3,
    "nh3": 4,
    "ch4": 5,
    "sf6": 7,
    "co2": 3,
    "benzene": 12,
    "ferrocene_eclipsed": 21,
    "ferrocene_staggered": 21,
    "b12h12": 24,
    "c60": 60,
    "naphthalene": 18,
}


def _is_symmetry(atoms, rot) -> bool:
    pos = atoms.positions
    img = pos @ np.asarray(rot).T
    for s, p in zip(atoms.symbols, img, strict=True):
        d = np.linalg.norm(pos - p, axis=1)
        j = int(np.argmin(d))
        if d[j] > 1e-4 or atoms.symbols[j] != s:
            return False
    return True


def _rot(axis, deg):
    return builder.rotation_about(np.array(axis, dtype=float), deg)


SIGMA_H = np.diag([1, 1, -1])
INVERSION = -np.eye(3)

# generators (and a forbidden operation) fixing the point group; groups as in the file comments
SYMMETRY = {
    "h2o": ([_rot((0, 0, 1), 180), np.diag([-1, 1, 1])], [np.diag([1, -1, 1]) @ _rot((0, 0, 1), 90)]),
    "nh3": ([_rot((0, 0, 1), 120), np.diag([1, -1, 1])], [SIGMA_H]),
    "ch4": ([_rot((1, 1, 1), 120), _rot((0, 0, 1), 90) @ SIGMA_H, _rot((0, 0, 1), 180)], [INVERSION]),
    "sf6": ([_rot((1, 1, 1), 120), _rot((0, 0, 1), 90), INVERSION], []),
    "co2": ([_rot((0, 0, 1), 37), _rot((1, 0, 0), 180), INVERSION], []),
    "benzene": ([_rot((0, 0, 1), 60), _rot((1, 0, 0), 180), INVERSION], []),
    "ferrocene_eclipsed": ([_rot((0, 0, 1), 72), _rot((1, 0, 0), 180), SIGMA_H], [INVERSION]),
    "ferrocene_staggered": ([_rot((0, 0, 1), 72), INVERSION, np.diag([1, -1, 1])], [SIGMA_H]),
    "b12h12": ([_rot((0, 0, 1), 180), _rot((1, 1, 1), 120), INVERSION], []),
    "c60": ([_rot((0, 0, 1), 180), _rot((1, 1, 1), 120), INVERSION], [_rot((0, 0, 1), 90)]),
    "naphthalene": ([_rot((1, 0, 0), 180), _rot((0, 1, 0), 180), INVERSION], []),
}


@pytest.mark.parametrize("name", sorted(MOLECULES))
def test_molecule_file(name):
    path = STRUCTURES / "molecules" / f"{name}.xyz"
    atoms = ase.io.read(path, format="xyz")
    assert len(atoms) == MOLECULES[name]
    assert not atoms.pbc.any()
    assert np.allclose(atoms.get_center_of_mass(), 0, atol=1e-5)
    assert "from memory" in path.read_text().splitlines()[1]
    allowed, forbidden = SYMMETRY[name]
    assert all(_is_symmetry(atoms, r) for r in allowed)
    assert not any(_is_symmetry(atoms, r) for r in forbidden)


def test_icosahedral_c5_axis_of_c60_and_b12h12():
    # Ih: a five-fold axis through the icosahedron vertex (0, 1, phi)
    phi = (1 + 5**0.5) / 2
    for name in ("c60", "b12h12"):
        atoms = ase.io.read(STRUCTURES / "molecules" / f"{name}.xyz", format="xyz")
        assert _is_symmetry(atoms, _rot((0, 1, phi), 72))


def test_molecule_bond_lengths():
    # H2O O-H 0.9572 A, H-O-H 104.52 deg: Benedict et al., J. Chem. Phys. 24, 1139 (1956)
    # (from memory); ferrocene Fe-C 2.064 A: Haaland & Nilsson, Acta Chem. Scand. 22, 2653
    # (1968) (from memory)
    w = ase.io.read(STRUCTURES / "molecules" / "h2o.xyz", format="xyz")
    assert w.get_distance(0, 1) == pytest.approx(0.9572, abs=1e-5)
    assert w.get_angle(1, 0, 2) == pytest.approx(104.52, abs=1e-3)
    fc = ase.io.read(STRUCTURES / "molecules" / "ferrocene_staggered.xyz", format="xyz")
    assert np.allclose(fc.get_all_distances()[0, 1:11], 2.064, atol=1e-5)


# --- bad inputs ------------------------------------------------------------------------


def test_bad_files_exist_as_described():
    bad = STRUCTURES / "bad"
    assert (bad / "empty.xyz").stat().st_size == 0
    one = ase.io.read(bad / "single_atom.xyz", format="xyz")
    assert len(one) == 1
    ov = ase.io.read(bad / "overlapping.xyz", format="xyz")
    assert np.linalg.norm(ov.positions[1] - ov.positions[2]) == 0.0
    nocell = ase.io.read(bad / "molecule_no_cell.cif")
    assert len(nocell) == 3 and not nocell.pbc.any()
    part = ase.io.read(bad / "partial_occupancy_no_model.cif")
    assert part.info["occupancy"]["1"] == {"Cl": 0.5}


def test_malformed_cif_is_not_an_error_in_ase():
    # documented behaviour of ase 3.29: a warning and an empty Atoms, so the project must
    # check the atom count itself
    with pytest.warns(UserWarning, match="Wrong number"):
        atoms = ase.io.read(STRUCTURES / "bad" / "malformed.cif")
    assert len(atoms) == 0


def test_ase_merges_two_species_on_one_site(tmp_path):
    # documented behaviour of ase 3.29 (no published source: a property of the reader):
    # two partially occupied species at the same place become ONE atom carrying the last
    # symbol, and info["occupancy"] lists both species for that site kind
    cif = tmp_path / "mixed.cif"
    cif.write_text(
        "data_mixed\n_cell_length_a 4.0\n_cell_length_b 4.0\n_cell_length_c 4.0\n"
        "_cell_angle_alpha 90\n_cell_angle_beta 90\n_cell_angle_gamma 90\n"
        "_space_group_IT_number 221\n_space_group_name_H-M_alt 'P m -3 m'\n"
        "loop_\n_atom_site_label\n_atom_site_type_symbol\n_atom_site_fract_x\n"
        "_atom_site_fract_y\n_atom_site_fract_z\n_atom_site_occupancy\n"
        "K1 K 0 0 0 0.5\nRb1 Rb 0 0 0 0.5\nCl1 Cl 0.5 0.5 0.5 1.0\n"
    )
    atoms = ase.io.read(cif)
    assert list(atoms.symbols) == ["Rb", "Cl"]
    assert atoms.info["occupancy"]["0"] == {"K": 0.5, "Rb": 0.5}
    assert list(atoms.arrays["spacegroup_kinds"]) == [0, 2]

"""Isotopomer classes, natural-abundance shares, point groups and shift estimates.

Abundances are the bundled values (splitting/data/isotopes.toml): 13C 0.0107 and 34S 0.0425
are the representative isotopic compositions of J. Meija et al., Pure Appl. Chem. 88, 293
(2016) ("from memory" in the data file; they lie inside the CIAAW 2021 intervals, which
tests/test_isotope_data_reference.py checks).
"""

from __future__ import annotations

import math

import ase.io
import numpy as np
import pytest

from splitting.errors import InputError
from splitting.spectra.isotopologues import isotopomers


@pytest.fixture(scope="module")
def c60(structures_dir):
    atoms = ase.io.read(structures_dir / "molecules" / "c60.xyz")
    return atoms.get_chemical_symbols(), atoms.positions


@pytest.fixture(scope="module")
def sf6(structures_dir):
    atoms = ase.io.read(structures_dir / "molecules" / "sf6.xyz")
    return atoms.get_chemical_symbols(), atoms.positions


def _carbonate() -> tuple[list[str], np.ndarray]:
    r = 1.29  # C-O, angstrom (typical carbonate value, from memory; any value gives the same symmetry)
    angles = np.radians([90.0, 210.0, 330.0])
    pos = [[0.0, 0.0, 0.0]] + [[r * math.cos(a), r * math.sin(a), 0.0] for a in angles]
    return ["C", "O", "O", "O"], np.array(pos)


def test_c60_single_13c_share_and_symmetry(c60):
    symbols, positions = c60
    classes = [c for c in isotopomers(symbols, positions, element="C") if c.substitution == "13C"]
    # one class: all 60 atoms of C60 are equivalent under Ih (vertex-transitive truncated icosahedron)
    assert len(classes) == 1
    one = classes[0]
    assert one.count == 60
    # share of C60 with exactly one 13C: 60 x 0.0107 x 0.9893**59 (binomial; 13C fraction
    # 1.07 %, IUPAC representative value, Meija et al. 2016, from memory) = 0.340
    assert one.abundance == pytest.approx(60 * 0.0107 * 0.9893**59, rel=1e-12)
    assert one.abundance == pytest.approx(0.34, abs=0.005)
    # stabiliser of one atom: order 120 / 60 = 2 (orbit-stabiliser theorem), a mirror plane
    # through the atom (each C60 atom lies on one of the 15 mirror planes of Ih; from memory)
    assert one.point_group == "Cs"
    parent = next(c for c in isotopomers(symbols, positions, element="C") if c.parent)
    assert parent.isotope == "12C" and parent.abundance == pytest.approx(0.9893**60)


def test_c60_double_13c_classes(c60):
    symbols, positions = c60
    pairs = [c for c in isotopomers(symbols, positions, element="C", max_substitutions=2) if c.substitution == "13C2"]
    # every unordered pair once: C(60, 2) = 1770 (combinatorial identity)
    assert sum(c.count for c in pairs) == math.comb(60, 2)
    # 23 distinct 13C2 isotopomers of C60 (from memory; equals the number of distinct
    # atom-atom distances of the truncated icosahedron)
    assert len(pairs) == 23
    share = sum(c.abundance for c in pairs)
    assert share == pytest.approx(math.comb(60, 2) * 0.0107**2 * 0.9893**58)


def test_sf6_sulfur_isotopologues(sf6):
    symbols, positions = sf6
    classes = {c.isotope: c for c in isotopomers(symbols, positions, element="S")}
    # 32S 94.99 %, 34S 4.25 % (Meija et al. 2016 representative composition, from memory;
    # CIAAW 2021 intervals 32S [0.9441, 0.9529], 34S [0.0396, 0.0477])
    assert classes["32S"].parent and classes["32S"].abundance == pytest.approx(0.9499)
    assert classes["34S"].abundance == pytest.approx(0.0425)
    assert 0.0396 <= classes["34S"].abundance <= 0.0477
    # S sits on the centre: substitution keeps Oh
    assert {c.point_group for c in classes.values()} == {"Oh"}
    # S does not move in A1g, Eg, T2g, T2u modes (its displacements span T1u only): exact zero
    shift = classes["34S"].mass_shift
    assert shift["A1g"] == shift["Eg"] == shift["T2g"] == shift["T2u"] == 0.0
    assert shift["T1u"] < 0


def test_fluorine_is_mononuclidic(sf6):
    symbols, positions = sf6
    classes = isotopomers(symbols, positions, element="F")
    # F is mononuclidic (19F only; CIAAW): only the parent, share 1
    assert len(classes) == 1 and classes[0].abundance == pytest.approx(1.0)


def test_carbonate_classes_and_exact_out_of_plane_shift():
    symbols, positions = _carbonate()
    classes = {c.substitution: c for c in isotopomers(symbols, positions)}
    assert classes["13C"].point_group == "D3h" and classes["13C"].count == 1
    # one 18O: three equivalent placements, the substituted unit is C2v
    assert classes["18O"].count == 3 and classes["18O"].point_group == "C2v"
    assert classes["18O"].abundance == pytest.approx(3 * 0.00205 * 0.99757**2)
    # A2'' has a single fundamental, so the estimate is the exact first-order result:
    # weight of C = 1 - m_C / M (mass-weighted eigenvector orthogonal to the z translation;
    # analytic), delta nu / nu = -(1/2) (delta m / m) w
    m_c, m_13c, m_o = 12.0, 13.00335483534, 15.9949146193  # AME2020 masses (isotopes.toml)
    w = 1 - m_c / (m_c + 3 * m_o)
    expected = -0.5 * (m_13c - m_c) / m_c * w
    assert classes["13C"].mass_shift["A2''"] == pytest.approx(expected, rel=1e-6)
    # the central C does not move in the totally symmetric stretch
    assert classes["13C"].mass_shift["A1'"] == 0.0


def test_co2_linear_classes_and_13c_shift(structures_dir):
    atoms = ase.io.read(structures_dir / "molecules" / "co2.xyz")
    classes = {c.substitution: c for c in isotopomers(atoms.get_chemical_symbols(), atoms.positions)}
    assert classes["13C"].point_group == "D∞h"
    assert classes["18O"].point_group == "C∞v" and classes["18O"].count == 2
    # nu3 of 13C16O2 lies near 2283 cm-1, 66 cm-1 below 2349 (bundled carbon_dioxide.toml,
    # from memory); the first-order estimate (single Σu+ fundamental: exact weight) is
    # within 10 % of it
    est = classes["13C"].shift_cm1("Σu+", 2349.0)
    assert est == pytest.approx(-66.0, rel=0.1)


def test_bad_input(sf6):
    symbols, positions = sf6
    with pytest.raises(InputError, match="not in the unit"):
        isotopomers(symbols, positions, element="C")
    with pytest.raises(InputError, match="max_substitutions"):
        isotopomers(symbols, positions, max_substitutions=0)
    with pytest.raises(InputError, match="symbols but"):
        isotopomers(symbols[:3], positions)


def test_given_operations_match_detected(sf6):
    from splitting.groups import point_group

    symbols, positions = sf6
    centred = positions - positions[0]
    ops = point_group("Oh").operations  # sf6.xyz has S-F bonds along x, y, z (file header)
    given = {c.isotope: c for c in isotopomers(symbols, centred, element="S", operations=ops)}
    found = {c.isotope: c for c in isotopomers(symbols, positions, element="S")}
    assert given["34S"].mass_shift["T1u"] == pytest.approx(found["34S"].mass_shift["T1u"])

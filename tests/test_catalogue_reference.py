"""Reference checks of the bundled free-unit mode tables against published values.

Every expected value carries its source beside it. All wavenumbers below were
recalled without the source open and are marked "from memory"; the species
counts are also recomputed from model geometries with the point-group engine
when it is available.
"""

from __future__ import annotations

from collections import Counter
from math import sqrt

import numpy as np
import pytest

from splitting.spectra.catalogue import ModeTable, find_table
from splitting.spectra.isotope_data import isotope


def species_counts(table: ModeTable) -> Counter[str]:
    return Counter(mode.species for mode in table.modes)


# ------------------------------------------------------------------ species inventories


@pytest.mark.parametrize(
    ("unit", "expected"),
    [
        # linear XY2: G. Herzberg, Infrared and Raman Spectra of Polyatomic Molecules (1945) (from memory)
        ("CO2", {"Σg+": 1, "Σu+": 1, "Πu": 1}),
        # homonuclear diatomic: one Σg+ stretch (common practice)
        ("N2", {"Σg+": 1}),
        # planar XY3 (D3h): Herzberg (1945); K. Nakamoto, Part A (2009) (from memory)
        ("CO3", {"A1'": 1, "A2''": 1, "E'": 2}),
        ("NO3", {"A1'": 1, "A2''": 1, "E'": 2}),
        # tetrahedral XY4 (Td): Herzberg (1945); Nakamoto (2009) (from memory)
        ("CH4", {"A1": 1, "E": 1, "T2": 2}),
        ("SO4", {"A1": 1, "E": 1, "T2": 2}),
        ("ClO4", {"A1": 1, "E": 1, "T2": 2}),
        ("NH4", {"A1": 1, "E": 1, "T2": 2}),
        # octahedral XY6 (Oh): Herzberg (1945); Nakamoto (2009) (from memory)
        ("SF6", {"A1g": 1, "Eg": 1, "T1u": 2, "T2g": 1, "T2u": 1}),
        # benzene, C2' through the C atoms: E. B. Wilson, Phys. Rev. 45, 706 (1934);
        # Herzberg (1945) (from memory)
        (
            "C6H6",
            {"A1g": 2, "A2g": 1, "B2g": 2, "E1g": 1, "E2g": 4, "A2u": 1, "B1u": 2, "B2u": 2, "E1u": 3, "E2u": 2},
        ),
        # C60 optically active modes only: 2Ag + 8Hg Raman, 4T1u IR; D. S. Bethune et al.,
        # Chem. Phys. Lett. 179, 181 (1991) (from memory)
        ("C60", {"Ag": 2, "Hg": 8, "T1u": 4}),
    ],
)
def test_species_inventory(unit: str, expected: dict[str, int]) -> None:
    assert species_counts(find_table(unit)) == Counter(expected)


# ------------------------------------------------------------------ wavenumbers


@pytest.mark.parametrize(
    ("unit", "mode", "wavenumber"),
    [
        # T. Shimanouchi, NSRDS-NBS 39 (1972), gas (from memory)
        ("CO2", "nu2", 667),
        ("CO2", "nu3", 2349),
        ("CH4", "nu1", 2917),
        ("CH4", "nu3", 3019),
        ("CH4", "nu4", 1306),
        ("benzene", "nu1", 3062),
        ("benzene", "nu2", 993),
        ("benzene", "nu11", 673),
        ("benzene", "nu19", 1482),
        # K. P. Huber and G. Herzberg, Constants of Diatomic Molecules (1979):
        # omega_e - 2 omega_e x_e = 2358.57 - 2 * 14.32 (from memory)
        ("N2", "nu1", 2329.9),
        # R. S. McDowell et al., Spectrochim. Acta 42A, 351 (1986), gas (from memory)
        ("SF6", "nu3", 948.0),
        ("SF6", "nu4", 615.0),
        # K. Nakamoto, Infrared and Raman Spectra of Inorganic and Coordination Compounds,
        # Part A, 6th ed. (2009), aqueous ions (from memory)
        ("CO3", "nu1", 1063),
        ("CO3", "nu2", 879),
        ("NO3", "nu1", 1050),
        ("SO4", "nu1", 983),
        ("SO4", "nu3", 1105),
        ("ClO4", "nu1", 928),
        ("NH4", "nu3", 3145),
        # D. S. Bethune et al., Chem. Phys. Lett. 179, 181 (1991), Raman of solid C60 (from memory)
        ("C60", "Ag(1)", 496),
        ("C60", "Ag(2)", 1469),
        ("C60", "Hg(1)", 273),
        ("C60", "Hg(8)", 1575),
        # W. Kratschmer et al., Nature 347, 354 (1990), IR of solid C60 (from memory)
        ("C60", "T1u(1)", 527),
        ("C60", "T1u(2)", 577),
        ("C60", "T1u(3)", 1183),
        ("C60", "T1u(4)", 1429),
    ],
)
def test_wavenumber(unit: str, mode: str, wavenumber: float) -> None:
    assert find_table(unit).mode(mode).wavenumber_cm1 == pytest.approx(wavenumber, abs=0.5)


def test_co2_13c_shift_matches_harmonic_estimate() -> None:
    # Antisymmetric stretch of a linear symmetric XY2 molecule:
    # lambda3 = 4 pi^2 c^2 nu3^2 = k (1 + 2 mY / mX) / mY
    # (E. B. Wilson, J. C. Decius and P. C. Cross, Molecular Vibrations (1955); from memory).
    # Masses: AME2020 via splitting/data/isotopes.toml.
    m_o = isotope("16O").mass_u
    ratio = sqrt((1 + 2 * m_o / isotope("13C").mass_u) / (1 + 2 * m_o / isotope("12C").mass_u))
    nu3 = find_table("CO2").mode("nu3")
    predicted = nu3.wavenumber_cm1 * (ratio - 1)
    assert predicted == pytest.approx(-66.9, abs=0.2)
    # 13C16O2 nu3 near 2283 cm-1 (from memory): anharmonicity keeps it within a few cm-1
    assert nu3.isotope_shifts["13C"] == pytest.approx(predicted, abs=3)


@pytest.mark.parametrize("unit", ["CH4", "SO4", "ClO4", "NH4"])
def test_tetrahedral_stretches_lie_above_bends(unit: str) -> None:
    # XY4: nu1, nu3 stretches; nu2, nu4 bends (Nakamoto 2009; common practice)
    table = find_table(unit)
    stretches = [table.mode(n).wavenumber_cm1 for n in ("nu1", "nu3")]
    bends = [table.mode(n).wavenumber_cm1 for n in ("nu2", "nu4")]
    assert min(stretches) > max(bends)


# ------------------------------------------------------------------ recomputed from geometry


def _vibrational_species(group_name: str, seeds: list[np.ndarray]) -> Counter[str]:
    """Gamma_vib of the atoms generated by the group from ``seeds`` (one orbit each)."""
    groups = pytest.importorskip("splitting.groups")
    group = groups.point_group(group_name)
    ops = np.asarray(group.operations, dtype=float)
    atoms: list[np.ndarray] = []
    for seed in seeds:
        for op in ops:
            p = op @ seed
            if not any(np.allclose(p, q, atol=1e-8) for q in atoms):
                atoms.append(p)
    chi = np.zeros(len(group.classes))
    for k, cls in enumerate(group.classes):
        op = ops[cls.members[0]]
        fixed = sum(1 for a in atoms if np.allclose(op @ a, a, atol=1e-8))
        trace = np.trace(op)
        chi[k] = fixed * trace - trace - np.linalg.det(op) * trace
    sizes = np.array([cls.size for cls in group.classes])
    result: Counter[str] = Counter()
    for species in group.species:
        n = float(np.sum(sizes * chi * np.asarray(species.characters, dtype=float))) / len(ops)
        assert abs(n - round(n)) < 1e-8
        if round(n):
            result[species.label] = round(n)
    return result


def _axis(group_name: str, class_name: str) -> np.ndarray:
    groups = pytest.importorskip("splitting.groups")
    group = groups.point_group(group_name)
    cls = next(c for c in group.classes if c.name == class_name)
    op = np.asarray(group.operations[cls.members[0]], dtype=float)
    if np.linalg.det(op) < 0:
        op = -op
    values, vectors = np.linalg.eig(op)
    return np.real(vectors[:, np.argmin(abs(values - 1))])


@pytest.mark.parametrize(
    ("unit", "group", "class_name", "orbit_sizes"),
    [
        ("CO3", "D3h", "3C2'", [3]),
        ("NO3", "D3h", "3C2'", [3]),
        ("CH4", "Td", "8C3", [4]),
        ("SO4", "Td", "8C3", [4]),
        ("SF6", "Oh", "6C4", [6]),
        # benzene: C and H atoms both on the C2' axes (the convention stated in benzene.toml)
        ("C6H6", "D6h", "3C2'", [6, 6]),
    ],
)
def test_species_match_group_theory(unit: str, group: str, class_name: str, orbit_sizes: list[int]) -> None:
    table = find_table(unit)
    axis = _axis(group, class_name)
    seeds = [axis * (1.0 + 0.7 * k) for k in range(len(orbit_sizes))]
    if table.atom_count() > sum(orbit_sizes):  # the central atom
        seeds.append(np.zeros(3))
    assert _vibrational_species(group, seeds) == species_counts(table)


def test_c60_listed_modes_within_full_representation() -> None:
    # Full internal representation of C60: 2Ag + 3T1g + 4T2g + 6Gg + 8Hg + Au + 4T1u + 5T2u
    # + 6Gu + 7Hu (e.g. D. S. Bethune et al., Chem. Phys. Lett. 179, 181 (1991); from memory).
    # 60 atoms = one orbit of a point on a mirror plane of Ih, off every rotation axis.
    groups = pytest.importorskip("splitting.groups")
    group = groups.point_group("Ih")
    ops = np.asarray(group.operations, dtype=float)
    mirror = next(op for op in ops if np.linalg.det(op) < 0 and np.isclose(np.trace(op), 1))
    values, vectors = np.linalg.eigh((mirror + mirror.T) / 2)
    in_plane = vectors[:, values > 0]
    seed = in_plane @ np.array([1.0, 0.37])
    computed = _vibrational_species("Ih", [seed])
    full = {"Ag": 2, "T1g": 3, "T2g": 4, "Gg": 6, "Hg": 8, "Au": 1, "T1u": 4, "T2u": 5, "Gu": 6, "Hu": 7}
    assert computed == Counter(full)
    for label, count in species_counts(find_table("C60")).items():
        assert count <= full[label]

"""The prediction must not depend on how the crystal is written down.

A rigid rotation of the whole crystal, a shift of the origin, a different order of the atoms,
a supercell, the primitive instead of the conventional cell, and another setting of the same
space group (P2_1/a, P2_1/c, P2_1/n) all describe one crystal, so the species table (labels and
every count), the unit orbits (formula, free group, site group, Wyckoff position, count), the
correlation of every free species and the frame of the labels (``factor_axes``, given in
axes of the file's cell, so compared only where the cells share their axes) must come out
identical.

Two parts of the output are *not* compared: ``site_axes`` and ``free_axes`` describe the first
unit of each orbit, and which unit is first depends on the atom order and the origin (the
site groups of equivalent units are differently oriented; documented in results.py).

Wyckoff letters: a shift of the origin can carry one Wyckoff set into another with the same
site symmetry (the sets are exchanged by the Euclidean normaliser of the space group,
International Tables for Crystallography Vol. A, Part 15 -- from memory: P2_1/c 2a/2b/2c/2d;
Pa-3 and Fm-3 4a/4b; Fd-3m 8a/8b; P-43m 1a/1b).  Where that can happen the letter is compared
up to these classes and the exact letter is checked by a strict xfail (see the report).
"""

from __future__ import annotations

import functools
from pathlib import Path

import ase.io
import numpy as np
import pytest
import spglib
from ase import Atoms
from ase.build import make_supercell
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from splitting.crystal.predict import predict_atoms
from splitting.crystal.results import CrystalPrediction

ROOT = Path(__file__).resolve().parent.parent
STRUCTURES = ROOT / "structures"

#: quick structures (well under 0.1 s each) used by the randomised tests
FAST = ["calcite.cif", "naphthalene_P21a.cif", "nh4cl_ordered_P-43m.cif", "diamond.cif", "co2_Pa-3.cif"]

#: Wyckoff sets exchanged by the Euclidean normaliser (ITA Vol. A, Part 15; from memory)
NORMALISER_CLASSES: dict[int, list[set[str]]] = {
    14: [{"2a", "2b", "2c", "2d"}],
    167: [],
    202: [{"4a", "4b"}],
    205: [{"4a", "4b"}],
    215: [{"1a", "1b"}, {"3c", "3d"}],
    227: [{"8a", "8b"}, {"16c", "16d"}],
}

HYPOTHESIS = settings(
    max_examples=6, deadline=None, database=None, derandomize=True, suppress_health_check=[HealthCheck.too_slow]
)


@functools.cache
def _atoms(name: str) -> Atoms:
    return ase.io.read(STRUCTURES / name)


@functools.cache
def _reference(name: str) -> CrystalPrediction:
    return predict_atoms(_atoms(name).copy(), source=name)


def _wyckoff_class(number: int, wyckoff: str) -> str:
    for cls in NORMALISER_CLASSES.get(number, []):
        if wyckoff in cls:
            return "|".join(sorted(cls))
    return wyckoff


def signature(p: CrystalPrediction, *, exact_wyckoff: bool = True) -> dict[str, object]:
    """Everything that must not depend on the description of the crystal."""
    n = p.space_group.number

    def wy(w: str) -> str:
        return w if exact_wyckoff else _wyckoff_class(n, w)

    return {
        "space_group": (n, p.space_group.symbol),
        "factor_group": (p.factor_group, p.centrosymmetric),
        "factor_axes": tuple(sorted(p.factor_axes.items())),
        "atoms_primitive": p.atoms_primitive,
        "gamma_3n": p.gamma_3n.counts,
        "acoustic": p.acoustic.counts,
        "species": frozenset(
            (
                s.label,
                s.dimension,
                s.acoustic,
                s.translational,
                s.librational,
                s.internal,
                s.optical,
                s.ir,
                s.raman,
                s.raman_tensor,
                s.polar,
            )
            for s in p.species
        ),
        "units": frozenset(
            (u.formula, u.kind, u.free_group, u.site_group, wy(u.wyckoff), u.site_symmetry, u.count, u.atoms_per_unit)
            for u in p.units
        ),
        "orbit_modes": frozenset(
            (u.formula, u.site_group, u.internal.counts, u.translations.counts, u.librations.counts) for u in p.units
        ),
        "correlation": frozenset(
            (u.formula, c.free, c.free_dimension, c.modes, c.site.counts, c.factor.counts)
            for u in p.units
            for c in u.correlation
        ),
    }


def assert_same(
    got: CrystalPrediction, ref: CrystalPrediction, *, exact_wyckoff: bool = True, same_axes: bool = True
) -> None:
    """Compare signatures; ``same_axes=False`` where the cells have different axes (``factor_axes``
    names directions of the file's own cell, so it is then written differently)."""
    a, b = signature(got, exact_wyckoff=exact_wyckoff), signature(ref, exact_wyckoff=exact_wyckoff)
    if not same_axes:
        a.pop("factor_axes")
        b.pop("factor_axes")
    diff = {k: (a[k], b[k]) for k in a if a[k] != b[k]}
    assert not diff, f"differs from the reference: {diff}"


def _rotation(q: tuple[float, float, float, float]) -> np.ndarray:
    w, x, y, z = np.array(q) / np.linalg.norm(q)
    return np.array(
        [
            [1 - 2 * (y * y + z * z), 2 * (x * y - z * w), 2 * (x * z + y * w)],
            [2 * (x * y + z * w), 1 - 2 * (x * x + z * z), 2 * (y * z - x * w)],
            [2 * (x * z - y * w), 2 * (y * z + x * w), 1 - 2 * (x * x + y * y)],
        ]
    )


def _primitive(atoms: Atoms) -> Atoms:
    """spglib's primitive cell of the crystal (idealised, so also rotated to spglib's frame)."""
    old = spglib.error.OLD_ERROR_HANDLING
    spglib.error.OLD_ERROR_HANDLING = False
    try:
        lat, frac, num = spglib.standardize_cell(
            (atoms.cell[:], atoms.get_scaled_positions(), atoms.numbers), to_primitive=True, symprec=1e-3
        )
    finally:
        spglib.error.OLD_ERROR_HANDLING = old
    return Atoms(numbers=num, scaled_positions=frac, cell=lat, pbc=True)


quaternions = st.tuples(*[st.floats(-1, 1, allow_nan=False)] * 4).filter(lambda q: np.linalg.norm(q) > 0.2)


# ---------------------------------------------------------------------- randomised
@HYPOTHESIS
@given(name=st.sampled_from(FAST), q=quaternions)
def test_rigid_rotation(name: str, q: tuple[float, float, float, float]) -> None:
    atoms = _atoms(name).copy()
    rot = _rotation(q)
    atoms.set_cell(atoms.cell[:] @ rot.T, scale_atoms=True)  # rotates cell and atoms together
    assert np.allclose(atoms.positions, _atoms(name).positions @ rot.T)
    # factor_axes are given in crystal axes, so they are part of the comparison
    assert_same(predict_atoms(atoms), _reference(name))


@HYPOTHESIS
@given(name=st.sampled_from(FAST), shift=st.tuples(*[st.floats(-1, 1, allow_nan=False)] * 3))
def test_origin_shift(name: str, shift: tuple[float, float, float]) -> None:
    atoms = _atoms(name).copy()
    atoms.translate(np.array(shift) @ atoms.cell[:])
    atoms.wrap()
    assert_same(predict_atoms(atoms), _reference(name), exact_wyckoff=False)


@HYPOTHESIS
@given(data=st.data(), name=st.sampled_from(FAST))
def test_atom_order(data: st.DataObject, name: str) -> None:
    atoms = _atoms(name)
    order = data.draw(st.permutations(range(len(atoms))))
    # letters up to the normaliser: spglib's origin can follow the atom order (xfail below)
    assert_same(predict_atoms(atoms[list(order)]), _reference(name), exact_wyckoff=False)


# ------------------------------------------------------------------- deterministic
# C60 only as 2x1x1 (480 atoms); its 3x3x3 supercell (6480 atoms) is run by benchmarks/bench_predict.py
SUPERCELLS = [(name, rep) for name in FAST for rep in ((2, 1, 1), (2, 2, 2))] + [("c60_ordered_Pa-3.cif", (2, 1, 1))]


@pytest.mark.parametrize("name, repeat", SUPERCELLS, ids=[f"{n}-{'x'.join(map(str, r))}" for n, r in SUPERCELLS])
def test_supercell_input(name: str, repeat: tuple[int, int, int]) -> None:
    atoms = make_supercell(_atoms(name), np.diag(repeat))
    p = predict_atoms(atoms)
    assert p.atoms_input == len(_atoms(name)) * int(np.prod(repeat))
    assert_same(p, _reference(name))


def test_supercell_with_shear() -> None:
    """A non-diagonal supercell (cell vectors a + b, b, c) of calcite."""
    atoms = make_supercell(_atoms("calcite.cif"), [[1, 1, 0], [0, 1, 0], [0, 0, 1]])
    assert_same(predict_atoms(atoms), _reference("calcite.cif"), same_axes=False)


@pytest.mark.parametrize("name", ["calcite.cif", "diamond.cif", "c60_fcc_Fm-3.cif", "nh4cl_ordered_P-43m.cif"])
def test_primitive_versus_conventional(name: str) -> None:
    prim = _primitive(_atoms(name))
    # calcite: 30 -> 10 atoms (R centring); diamond: 8 -> 2 (F centring); C60 Fm-3: 240 -> 60
    assert len(prim) == {"calcite.cif": 10, "diamond.cif": 2, "c60_fcc_Fm-3.cif": 60}.get(name, len(_atoms(name)))
    p = predict_atoms(prim)
    assert p.atoms_input == p.atoms_primitive
    # spglib may pick another origin for the primitive cell: letters compared up to the normaliser
    assert_same(p, _reference(name), exact_wyckoff=False, same_axes=False)


def test_calcite_primitive_keeps_exact_wyckoff() -> None:
    """6a (32) and 6b (-3) of R-3c have different site symmetries: no ambiguity is possible."""
    assert_same(predict_atoms(_primitive(_atoms("calcite.cif"))), _reference("calcite.cif"), same_axes=False)


@pytest.mark.parametrize("name", ["naphthalene_P21c.cif", "naphthalene_P21n.cif"])
def test_naphthalene_settings(name: str) -> None:
    # three settings of one crystal (structures/README.md): identical output, exact Wyckoff 2a
    assert_same(_reference(name), _reference("naphthalene_P21a.cif"), same_axes=False)
    assert _reference(name).factor_axes == _reference("naphthalene_P21a.cif").factor_axes


def test_three_file_formats_agree() -> None:
    for other in ("calcite.vasp", "calcite.extxyz"):
        assert_same(_reference(other), _reference("calcite.cif"))


def test_rotation_and_shift_and_order_together() -> None:
    """All three changes at once on the slowest bundled crystal (ordered C60)."""
    atoms = _atoms("c60_ordered_Pa-3.cif").copy()
    rot = _rotation((0.3, -0.5, 0.7, 0.2))
    atoms.set_cell(atoms.cell[:] @ rot.T, scale_atoms=True)
    atoms.translate(np.array([0.37, 0.11, 0.73]) @ atoms.cell[:])
    atoms.wrap()
    atoms = atoms[np.random.default_rng(7).permutation(len(atoms))]
    assert_same(predict_atoms(atoms), _reference("c60_ordered_Pa-3.cif"), exact_wyckoff=False)


# ------------------------------------------------------------ known non-canonical output
def test_wyckoff_letter_independent_of_origin_diamond() -> None:
    """Atom sites take their letters from the one search of the cell as given (no second search)."""
    atoms = _atoms("diamond.cif").copy()
    atoms.translate(np.array([0.1, 0.2, 0.3]) @ atoms.cell[:])
    atoms.wrap()
    # diamond: C on 8a of Fd-3m, origin choice 1 (ITA No. 227; common practice)
    assert predict_atoms(atoms).unit("C").wyckoff == "8a"


@pytest.mark.xfail(
    strict=True,
    reason="Wyckoff letter follows spglib's choice of origin: naphthalene (P2_1/a file) "
    "shifted by (0.5, 0.5, 0.5) in fractions of the cell reports the molecules on 2d instead of 2a "
    "(splitting/crystal/spacegroup.py, CellSymmetry.wyckoff_of)",
)
def test_wyckoff_letter_independent_of_origin_naphthalene() -> None:
    atoms = _atoms("naphthalene_P21a.cif").copy()
    atoms.translate(np.array([0.5, 0.5, 0.5]) @ atoms.cell[:])
    atoms.wrap()
    # molecules on 2a (-1) of P2_1/c (ITA No. 14; Cruickshank 1957, from memory)
    assert predict_atoms(atoms).unit("C10H8").wyckoff == "2a"


def test_wyckoff_letter_independent_of_atom_order_diamond() -> None:
    """Atom sites take their letters from the one search of the cell as given (no second search)."""
    atoms = _atoms("diamond.cif")[[0, 1, 3, 2, 4, 5, 6, 7]]
    # diamond: C on 8a of Fd-3m, origin choice 1 (ITA No. 227; common practice)
    assert predict_atoms(atoms).unit("C").wyckoff == "8a"

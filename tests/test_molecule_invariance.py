"""Property tests: the answer for a molecule must not depend on how its file was written.

A rigid rotation, a translation and a renumbering of the atoms, or a small displacement of
every atom (well inside the symmetry tolerance), change neither the point group, nor
Γvib species by species, nor the numbers of IR- and Raman-active fundamentals.  Mulliken
labels depend on the axes, and the axes are chosen from the molecule (Mulliken's rules), so
even the labels must come out the same.
"""

from __future__ import annotations

from functools import cache
from pathlib import Path

import ase.io
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.spatial.transform import Rotation

from splitting.molecule.analysis import analyse_unit

MOLECULES = Path(__file__).resolve().parent.parent / "structures" / "molecules"
NAMES = sorted(p.stem for p in MOLECULES.glob("*.xyz"))
NOISE = 0.02  # angstrom, largest displacement of an atom

FEW = settings(max_examples=5, deadline=None, derandomize=True, database=None)

quaternions = st.tuples(*[st.floats(-1.0, 1.0, allow_nan=False)] * 4).filter(lambda q: float(np.linalg.norm(q)) > 0.2)
translations = st.tuples(*[st.floats(-20.0, 20.0, allow_nan=False)] * 3)


@cache
def load(name: str) -> tuple[np.ndarray, np.ndarray]:
    atoms = ase.io.read(MOLECULES / f"{name}.xyz")
    return np.array(atoms.numbers), np.array(atoms.positions)


@cache
def reference(name: str) -> tuple[str, dict[str, int], int, int]:
    numbers, positions = load(name)
    return summary(analyse_unit(numbers, positions))


def summary(a) -> tuple[str, dict[str, int], int, int]:
    return a.point_group, a.vibrations.as_dict(), a.ir_active, a.raman_active


def test_every_bundled_molecule_is_covered():
    assert len(NAMES) >= 11
    assert {"h2o", "nh3", "ch4", "sf6", "co2", "benzene", "c60", "naphthalene"} <= set(NAMES)


@pytest.mark.parametrize("name", NAMES)
@FEW
@given(q=quaternions, shift=translations, data=st.data())
def test_rotation_translation_and_renumbering(name, q, shift, data):
    numbers, positions = load(name)
    perm = np.array(data.draw(st.permutations(range(len(numbers))), label="permutation"))
    r = Rotation.from_quat(np.array(q) / np.linalg.norm(q)).as_matrix()
    moved = positions @ r.T + np.array(shift)
    assert summary(analyse_unit(numbers[perm], moved[perm])) == reference(name)


@pytest.mark.parametrize("name", NAMES)
@FEW
@given(seed=st.integers(0, 2**32 - 1), q=quaternions)
def test_small_noise(name, seed, q):
    numbers, positions = load(name)
    rng = np.random.default_rng(seed)
    directions = rng.normal(size=positions.shape)
    directions /= np.linalg.norm(directions, axis=1, keepdims=True)
    noisy = positions + directions * rng.uniform(0, NOISE, size=(len(positions), 1))
    r = Rotation.from_quat(np.array(q) / np.linalg.norm(q)).as_matrix()
    a = analyse_unit(numbers, noisy @ r.T)
    assert summary(a) == reference(name)
    # symmetric position = group average of the images about the (shifted) centre, so an input atom lies
    # within |own noise| + 2 |centre shift| + |averaged noise| <= 4 x NOISE of it (triangle inequality)
    assert a.symmetry.max_deviation <= 4 * NOISE + 1e-6


@pytest.mark.parametrize("name", NAMES)
def test_an_improper_copy_gives_the_same_answer(name):
    # a mirror image of the whole molecule: every one of these molecules is achiral, so nothing changes
    numbers, positions = load(name)
    assert summary(analyse_unit(numbers, positions * np.array([1.0, 1.0, -1.0]))) == reference(name)


@pytest.mark.parametrize("name", NAMES)
@FEW
@given(seed=st.integers(0, 2**32 - 1), q=quaternions)
def test_noise_of_a_refined_structure(name, seed, q):
    """Gaussian noise of 0.03 Å per coordinate (the size of the uncertainty of light-atom positions
    in a routine X-ray structure; common practice), far inside the default tolerance of 0.25 Å:
    the group must not drop to a subgroup (the search once lost every improper partner of a
    planar unit's operations here)."""
    numbers, positions = load(name)
    rng = np.random.default_rng(seed)
    r = Rotation.from_quat(np.array(q) / np.linalg.norm(q)).as_matrix()
    noisy = (positions + rng.normal(scale=0.03, size=positions.shape)) @ r.T
    assert summary(analyse_unit(numbers, noisy)) == reference(name)


def test_every_molecule_of_a_displaced_supercell_keeps_its_group():
    """A 2x2x2 naphthalene supercell with every atom displaced (0.03 Å per coordinate) is P1, but
    each of its 16 molecules is still D2h within the unit tolerance."""
    from collections import Counter

    from splitting.crystal.predict import predict_atoms

    cell = ase.io.read(MOLECULES.parent / "naphthalene_P21a.cif").repeat((2, 2, 2))
    cell.positions += np.random.default_rng(7).normal(scale=0.03, size=cell.positions.shape)
    p = predict_atoms(cell)
    assert p.space_group.number == 1
    assert Counter(u.free_group for u in p.units) == Counter({"D2h": 16})

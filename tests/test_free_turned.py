"""Free-unit analyses carried onto turned, reflected and reordered copies of a stored shape.

A copy is matched only when every atom lies within the unit tolerance of the stored symmetric
geometry carried onto it; the group it receives is the stored one in the copy's own axes, and
equals what a fresh point-group search of the copy finds.  The molecules are ase's built-in
geometries (``ase.build.molecule``); the turns, mirror images and displacements are invented.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from ase.build import molecule

import splitting.crystal.freeunits as freeunits
from splitting.crystal.units import Unit
from splitting.groups.operations import rotation
from splitting.molecule.analysis import analyse_unit

TOL = 0.25
TURN = rotation([1.0, 2.0, -0.5], 2.1)
SHIFT = np.array([3.0, -1.0, 7.5])


def _unit(numbers, positions) -> Unit:
    return Unit(tuple(range(len(numbers))), np.asarray(positions, dtype=float), np.asarray(numbers), "molecule")


def _copy(name: str, *, mirror: bool = False, order=None, moved=None):
    """Stored molecule ``name`` and a turned copy (optionally mirrored, reordered, with atoms moved)."""
    atoms = molecule(name)
    numbers, pos = atoms.numbers, atoms.positions
    other = pos * ([-1.0, 1.0, 1.0] if mirror else 1.0)
    if moved is not None:
        other = other + moved
    other = other @ TURN.T + SHIFT
    order = np.arange(len(numbers)) if order is None else np.asarray(order)
    return _unit(numbers, pos), _unit(numbers[order], other[order])


def _same_operations(a, b) -> bool:
    """The two oriented groups hold the same set of Cartesian matrices."""
    ops_a, ops_b = a.group.operations, b.group.operations
    if len(ops_a) != len(ops_b):
        return False
    gap = np.abs(ops_a[:, None] - ops_b[None]).reshape(len(ops_a), len(ops_b), -1).max(axis=2)
    return bool(np.all(gap.min(axis=1) < 1e-6))


def _fresh(unit: Unit):
    return analyse_unit(unit.numbers, unit.positions, tolerance=TOL)


@pytest.mark.parametrize(
    ("name", "order"),
    [("C2H4", None), ("C2H4", [3, 1, 5, 0, 4, 2]), ("CH3CH2OH", None), ("CH3CH2OH", [8, 2, 0, 5, 1, 7, 3, 6, 4])],
)
def test_turned_copy_is_carried_with_the_fresh_group(name, order) -> None:
    first, turned = _copy(name, order=order)
    cache = freeunits.FreeUnitCache(TOL)
    cache.get(first)
    carried = cache.get(turned)
    fresh = _fresh(turned)
    assert cache.analyses == 1  # the turned (and reordered) copy needs no second search
    assert carried.group.name == fresh.point_group
    assert _same_operations(carried.group, fresh.symmetry.group)
    assert np.isclose(np.linalg.det(carried.group.frame), 1.0)
    assert str(carried.vibrations) == str(fresh.vibrations)
    assert carried.deviation <= TOL and abs(carried.deviation - fresh.symmetry.max_deviation) < 1e-6


def test_mirror_image_of_a_chiral_unit_gets_its_own_operations() -> None:
    # hydrogen peroxide (C2) is chiral: its mirror image is matched by an improper map, and the
    # carried frame is still a proper rotation whose operations are the mirror image's own
    first, mirrored = _copy("H2O2", mirror=True, order=[1, 0, 2, 3])
    cache = freeunits.FreeUnitCache(TOL)
    stored = cache.get(first)
    carried = cache.get(mirrored)
    fresh = _fresh(mirrored)
    assert stored.group.name == carried.group.name == fresh.point_group == "C2"
    assert cache.analyses == 1
    assert _same_operations(carried.group, fresh.symmetry.group)
    assert np.isclose(np.linalg.det(carried.group.frame), 1.0)


def test_copy_distorted_beyond_the_tolerance_is_analysed_afresh() -> None:
    # one hydrogen turned about the centre out of the plane of ethylene by 0.6 A: no turn brings
    # every atom within the 0.25 A tolerance of the stored D2h geometry (the best fit misses by
    # about 0.3 A); its distance from the centre, which the cache filters on first, is kept
    pos = molecule("C2H4").positions
    normal = np.cross(pos[1] - pos[0], pos[2] - pos[0])
    axis = np.cross(pos[2], normal)
    angle = 2 * np.arcsin(0.3 / np.linalg.norm(pos[2]))
    moved = np.zeros((6, 3))
    moved[2] = rotation(axis, angle) @ pos[2] - pos[2]
    first, distorted = _copy("C2H4", moved=moved, order=[5, 4, 3, 2, 1, 0])
    cache = freeunits.FreeUnitCache(TOL)
    cache.get(first)
    got = cache.get(distorted)
    fresh = _fresh(distorted)
    assert cache.analyses == 2
    assert got.group.name == fresh.point_group == "C2"
    assert got.deviation == fresh.symmetry.max_deviation


def test_copy_within_the_tolerance_is_carried_with_its_own_deviation() -> None:
    moved = np.random.default_rng(5).normal(0.0, 0.03, (9, 3))  # invented displacements
    order = [4, 3, 2, 1, 0, 8, 7, 6, 5]
    first, shaken = _copy("CH3CH2OH", moved=moved, order=order)
    cache = freeunits.FreeUnitCache(TOL)
    cache.get(first)
    carried = cache.get(shaken)
    assert cache.analyses == 1 and carried.group.name == "Cs"
    # the deviation is the copy's largest distance from the stored symmetric geometry turned onto it
    ideal = cache._store[freeunits._fingerprint(shaken.numbers, None, TOL)].ideal[0][order]
    new = shaken.positions - shaken.centre
    r = freeunits._align(ideal, new)
    assert np.isclose(carried.deviation, np.max(np.linalg.norm(ideal @ r.T - new, axis=1)))
    assert 0.0 < carried.deviation <= TOL


@pytest.mark.parametrize("name", ["C6H6", "CH4"])
def test_turned_top_with_degenerate_axes_gets_the_fresh_group(name) -> None:
    # symmetric and spherical tops: the principal axes do not fix the turn, the copy may be analysed again
    first, turned = _copy(name, order=np.arange(len(molecule(name)))[::-1])
    cache = freeunits.FreeUnitCache(TOL)
    cache.get(first)
    got = cache.get(turned)
    fresh = _fresh(turned)
    assert got.group.name == fresh.point_group
    assert _same_operations(got.group, fresh.symmetry.group)


def test_displaced_supercell_molecules_share_one_analysis(structures_dir: Path) -> None:
    # naphthalene, P2_1/a with two orientations, repeated 2x2x2 and every atom moved ~0.01 A
    # (invented, seed fixed): the two orientations are one shape, analysed once
    import ase.io

    from splitting.crystal.predict import predict_atoms

    atoms = ase.io.read(structures_dir / "naphthalene_P21a.cif").repeat((2, 2, 2))
    atoms.positions += np.random.default_rng(3).normal(0.0, 0.01, atoms.positions.shape)
    cache = freeunits.FreeUnitCache(TOL)
    p = predict_atoms(atoms, free_cache=cache)
    molecules = [u for u in p.units if u.formula == "C10H8"]
    assert len(molecules) == 16 and cache.analyses == 1
    # the second orientation is kept beside the first, so its molecules carry without a trial turn
    (shape,) = cache._store.values()
    assert len(shape.ideal) == 2 and shape.free[1].group.name == "D2h"
    assert {u.free_group for u in molecules} == {"D2h"} and all(u.max_deviation <= TOL for u in molecules)

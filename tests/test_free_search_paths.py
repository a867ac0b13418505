"""The shortcuts of the free-unit point-group search give the answers of the plain routes.

Each shortcut (all trial pairings kept at once when every one is final and none repeats, the
k-d tree asked only within the looser bound, the vibrations without the selection rules) is
compared with the route it stands in for, on ase's built-in molecules (``ase.build.molecule``)
turned and displaced at random (invented displacements, seeds fixed).
"""

from __future__ import annotations

import numpy as np
import pytest
from ase.build import molecule
from scipy.spatial import cKDTree
from scipy.spatial.transform import Rotation

import splitting.molecule.symmetry as symmetry
from splitting.molecule.analysis import analyse_unit, unit_vibrations

NAMES = ["C60", "C6H6", "CH4", "SiF4", "NH3", "C2H6", "CH3CH2OH", "H2O"]


def _copies(name: str, seed: int):
    """The molecule turned, shifted and displaced by a few noise levels."""
    atoms = molecule(name)
    rng = np.random.default_rng(seed)
    for noise in (0.0, 0.02, 0.08):
        turn = Rotation.random(random_state=rng).as_matrix()
        pos = atoms.positions @ turn.T + rng.normal(size=3) + rng.normal(scale=noise, size=atoms.positions.shape)
        yield atoms.numbers, pos


def _centred(numbers, pos):
    sym = symmetry.find_symmetry(numbers, pos)
    return np.asarray(numbers), sym.positions


def test_one_to_one_is_the_definition() -> None:
    rng = np.random.default_rng(7)
    numbers = rng.integers(1, 4, size=9)
    targets = np.append(numbers, -1)
    rows = np.array([rng.permutation(9) for _ in range(50)] + [rng.integers(0, 10, size=9) for _ in range(50)])
    expected = [len(set(r.tolist())) == len(r) and bool(np.all(targets[r] == numbers)) for r in rows]
    assert symmetry.one_to_one(rows, targets, numbers).tolist() == expected
    assert [bool(symmetry.one_to_one(r, targets, numbers)) for r in rows] == expected


@pytest.mark.parametrize("name", NAMES)
@pytest.mark.parametrize("tol", [0.1, 0.25, 0.6])
def test_search_at_once_is_the_pairing_loop(name: str, tol: float, monkeypatch: pytest.MonkeyPatch) -> None:
    for k, (numbers, pos) in enumerate(_copies(name, NAMES.index(name))):
        z, centred = _centred(numbers, pos)
        fast = symmetry._search(z, centred, tol)
        with monkeypatch.context() as m:
            m.setattr(symmetry, "_distinct", lambda *a: False)  # every trial through the loop
            slow = symmetry._search(z, centred, tol)
        assert np.array_equal(fast[0], slow[0]) and np.array_equal(fast[1], slow[1]), (name, k)
        assert fast[1].dtype == slow[1].dtype


def test_distinct_finds_repeats() -> None:
    perms = np.array([[0, 1, 2], [1, 2, 0], [0, 1, 2]])
    assert not symmetry._distinct(perms, np.array([True, True, True]))
    assert symmetry._distinct(perms, np.array([True, True, False]))
    assert symmetry._distinct(perms[:2], np.array([True, True]))


def test_bounded_query_is_the_plain_query_within_reach() -> None:
    atoms = molecule("C60")
    tree = cKDTree(atoms.positions)
    rng = np.random.default_rng(3)
    points = atoms.positions[rng.integers(0, 60, size=4000)] + rng.normal(scale=0.4, size=(4000, 3))
    reach = 0.75
    d, j = tree.query(points)
    d_b, j_b = tree.query(points, distance_upper_bound=reach * (1 + 1e-9))
    near = d <= reach
    assert near.any() and not near.all()
    assert np.array_equal(d[near], d_b[near]) and np.array_equal(j[near], j_b[near])
    assert np.all(np.isinf(d_b[~near])) and np.all(j_b[~near] == len(atoms))


@pytest.mark.parametrize(("name", "group"), [("C6H6", None), ("CH4", None), ("CH4", "C3v"), ("CO2", None)])
def test_vibrations_without_selection_rules_are_the_analysis(name: str, group: str | None) -> None:
    atoms = molecule(name)
    full = analyse_unit(atoms.numbers, atoms.positions, point_group=group)
    sym, vib = unit_vibrations(atoms.numbers, atoms.positions, point_group=group)
    assert sym.group.name == full.point_group
    assert np.array_equal(sym.group.frame, full.symmetry.group.frame)
    assert np.array_equal(sym.symmetric_positions, full.symmetry.symmetric_positions)
    assert str(vib) == str(full.vibrations) and vib.counts == full.vibrations.counts


def _nearest(pos: np.ndarray) -> symmetry._Nearest:
    gap = float(np.min(np.linalg.norm(pos[:, None] - pos[None], axis=2) + np.diag(np.full(len(pos), np.inf))))
    return symmetry._Nearest(pos, cKDTree(pos), gap)


@pytest.mark.parametrize("name", ["C60", "C6H6", "CH3CH2OH"])
@pytest.mark.parametrize("tol", [0.05, 0.25, 1.0])
def test_grid_answers_as_the_tree(name: str, tol: float) -> None:
    pos = molecule(name).positions
    rng = np.random.default_rng(len(pos))
    near = pos[rng.integers(0, len(pos), size=3000)] + rng.normal(scale=tol / 3, size=(3000, 3))
    far = rng.uniform(-30, 30, size=(600, 3))
    points = np.concatenate([near, far, pos, pos + 1e-12])
    grid = _nearest(pos)
    assert grid.owner is not None
    for bound in (tol, 3 * tol * (1 + 1e-9), np.inf):
        d, j = grid.query(points, bound)
        d_t, j_t = grid.tree.query(points, distance_upper_bound=bound)
        assert np.array_equal(d, d_t) and np.array_equal(j, j_t)


@pytest.mark.parametrize("name", ["C60", "C6H6"])
@pytest.mark.parametrize("tol", [0.1, 0.25, 0.6])
def test_search_with_the_grid_is_the_search_with_the_tree(name: str, tol: float, monkeypatch) -> None:
    for numbers, pos in _copies(name, 11):
        z, centred = _centred(numbers, pos)
        fast = symmetry._search(z, centred, tol)
        with monkeypatch.context() as m:
            m.setattr(symmetry._Nearest, "SMALL", 10**9)  # every point asks the tree
            slow = symmetry._search(z, centred, tol)
        assert np.array_equal(fast[0], slow[0]) and np.array_equal(fast[1], slow[1])

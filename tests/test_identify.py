"""Naming a group given as matrices in any orientation, and finding its standard frame."""

from __future__ import annotations

import numpy as np
import pytest
from scipy.spatial.transform import Rotation

from splitting.errors import SymmetryError
from splitting.groups import all_group_names, identify, oriented, point_group
from splitting.groups.identify import OrientedGroup, crystal_preference, name_of
from splitting.groups.operations import reflection, rotation

ALL = all_group_names()
E = np.eye(3)


def conjugate(r: np.ndarray, ops: np.ndarray) -> np.ndarray:
    return np.einsum("ij,njk,lk->nil", r, ops, r)


def random_copy(name: str, seed: int, *, improper: bool = False) -> tuple[np.ndarray, np.ndarray]:
    """The group's operations in a random frame, in a shuffled order; returns (ops, frame)."""
    rng = np.random.default_rng(seed)
    r = Rotation.random(random_state=rng).as_matrix()
    if improper:
        r = r @ reflection([0.3, -0.5, 0.8])
    ops = conjugate(r, point_group(name).operations)
    return ops[rng.permutation(len(ops))], r


def same_set(a: np.ndarray, b: np.ndarray, tol: float = 1e-6) -> bool:
    if len(a) != len(b):
        return False
    d = np.abs(a[:, None] - b[None]).reshape(len(a), len(b), 9).max(axis=2)
    return bool(d.min(axis=1).max() < tol and d.min(axis=0).max() < tol)


@pytest.mark.parametrize("name", ALL)
@pytest.mark.parametrize("seed", [1, 2])
def test_identify_random_copies(name, seed):
    ops, _ = random_copy(name, seed + 100 * ALL.index(name))
    og = identify(ops)
    assert og.name == name
    assert np.allclose(og.frame.T @ og.frame, E, atol=1e-9)
    assert np.isclose(np.linalg.det(og.frame), 1.0)
    # the frame carries the standard operations onto the given ones
    assert same_set(og.operations, ops)
    g = point_group(name)
    for op in ops:
        j = og.locate(op)
        assert np.allclose(og.frame @ g.operations[j] @ og.frame.T, op, atol=1e-6)
        for s in g.species:
            assert og.character(s.label, op) == s.characters[g.class_of[j]]


@pytest.mark.parametrize("name", ALL)
def test_name_of_improper_copies(name):
    # conjugating by an improper matrix gives the same group in a mirrored frame
    ops, _ = random_copy(name, 7 + ALL.index(name), improper=True)
    assert name_of(ops) == name
    assert identify(ops).name == name


def test_name_of_rejects_a_c3_without_its_square():
    with pytest.raises(SymmetryError):
        name_of(np.array([E, rotation([0, 0, 1], 2 * np.pi / 3)]))
    with pytest.raises(SymmetryError):
        identify(np.array([E, rotation([0, 0, 1], 2 * np.pi / 3)]))


NOT_CLOSED = {
    # four operations of order <= 2, but C2(z) sigma(xz) = sigma(yz) is missing
    "C2-sxz-sxy": np.array([E, rotation([0, 0, 1], np.pi), reflection([0, 1, 0]), reflection([0, 0, 1])]),
    # the identity, C3 and C3 again: three matrices, not three distinct elements
    "C3-twice": np.array([E, rotation([0, 0, 1], 2 * np.pi / 3), rotation([0, 0, 1], 2 * np.pi / 3)]),
}


@pytest.mark.parametrize("key", sorted(NOT_CLOSED))
def test_identify_rejects_sets_that_are_not_groups(key):
    with pytest.raises(SymmetryError):
        identify(NOT_CLOSED[key])


@pytest.mark.parametrize("key", sorted(NOT_CLOSED))
def test_name_of_rejects_sets_that_are_not_groups(key):
    with pytest.raises(SymmetryError):
        name_of(NOT_CLOSED[key])


def test_identify_rejects_malformed_input():
    with pytest.raises(SymmetryError):
        identify(np.zeros((0, 3, 3)))
    with pytest.raises(SymmetryError):
        identify(np.ones((2, 2, 2)))
    with pytest.raises(SymmetryError):
        identify(np.array([E, 2 * E]))  # not orthogonal


@pytest.mark.parametrize("name", ["D4h", "D6h", "C2v", "D3d", "D2h", "C4v"])
def test_crystal_preference_recovers_the_reference_frame(name):
    # when the reference axes are the rotated standard axes, the preferred frame is that rotation
    ops, r = random_copy(name, 11)
    og = identify(ops, prefer=crystal_preference(r))
    assert np.allclose(og.frame, r, atol=1e-6)


def test_oriented_group_contains_restrict_and_to_dict():
    ops, _ = random_copy("Td", 3)
    td = identify(ops)
    # a C3v subgroup written in the same (rotated) frame
    c3v_std = [g for g in point_group("Td").operations if np.allclose(g @ [1, 1, 1], [1, 1, 1])]
    sub = identify(np.array([td.frame @ g @ td.frame.T for g in c3v_std]))
    assert sub.name == "C3v"
    # Td -> C3v (WDC App. X, from memory): T2 -> A1 + E, T1 -> A2 + E
    assert str(td.restrict("T2", sub)) == "A1 + E"
    assert str(td.restrict("T1", sub)) == "A2 + E"
    off = td.frame @ rotation([0.1, 0.2, 0.9], 1.0) @ td.frame.T  # 57 degrees from any element
    slightly_off = td.frame @ rotation([0.1, 0.2, 0.9], 0.3) @ td.frame.T  # 17 degrees off E
    assert td.contains(ops[3])
    assert not td.contains(off)
    assert not td.contains(slightly_off, tol=0.05)
    with pytest.raises(SymmetryError):
        td.locate(off)
    d = td.to_dict()
    assert d["name"] == "Td" and set(d["axes"]) == {"x", "y", "z"}
    assert np.allclose(td.to_standard(ops[5]), td.frame.T @ ops[5] @ td.frame)


def test_restrict_refuses_an_operation_outside_the_group():
    d4h = oriented("D4h")
    c3v = oriented("C3v")
    with pytest.raises(SymmetryError):
        d4h.restrict("A1g", c3v)


def test_oriented_linear_group():
    frame = Rotation.from_euler("xyz", [0.3, 0.5, -0.2]).as_matrix()
    co2 = oriented("D∞h", frame)
    axis = frame[:, 2]
    assert isinstance(co2, OrientedGroup)
    assert co2.contains(frame @ rotation([0, 0, 1], 0.77) @ frame.T)
    assert co2.contains(-np.eye(3))
    assert not co2.contains(rotation(np.cross(axis, [1.0, 0, 0]), 0.4))
    # Πu at a rotation by phi about the molecular axis: 2 cos(phi) (Herzberg 1945, from memory)
    assert np.isclose(co2.character("Πu", rotation(axis, 0.77)), 2 * np.cos(0.77))
    with pytest.raises(SymmetryError):
        co2.operations  # noqa: B018 - infinitely many
    assert not oriented("C∞v").contains(-np.eye(3))

"""The vectorised and shortcut paths of the group engine give the answers of the plain definitions.

Each fast path (one numpy pass classifying all operations, the multiplication table looked up
by rounded keys, the closure of atom permutations checked on a few generators) is compared with
the slow definition it replaces, on every group of the catalogue in random frames.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.spatial.transform import Rotation

from splitting.groups import all_group_names, point_group
from splitting.groups.operations import classify, describe, multiplication_table, nearest_matrices
from splitting.molecule.symmetry import _closed

ALL = all_group_names()


def _copy(name: str, seed: int) -> np.ndarray:
    rng = np.random.default_rng(seed)
    r = Rotation.random(random_state=rng).as_matrix()
    ops = np.einsum("ij,njk,lk->nil", r, point_group(name).operations, r)
    return ops[rng.permutation(len(ops))]


@pytest.mark.parametrize("name", ALL)
def test_classify_of_a_stack_is_describe_of_each_operation(name):
    ops = _copy(name, 3 + ALL.index(name))
    kinds = classify(ops)
    for i, op in enumerate(ops):
        one, k = describe(op), kinds[i]
        assert (one.proper, one.order, one.power, one.symbol) == (k.proper, k.order, k.power, k.symbol)
        assert one.angle == k.angle and np.array_equal(one.axis, k.axis)


def test_classify_names_known_operations():
    from splitting.groups.operations import improper_rotation, reflection, rotation

    ops = np.array(
        [
            np.eye(3),
            -np.eye(3),
            reflection([0, 1, 1]),
            rotation([1, 1, 1], 2 * np.pi / 3),
            rotation([0, 0, 1], 4 * np.pi / 5),
            improper_rotation([0, 0, 1], np.pi / 3),
            rotation([1, 0, 0], np.pi),
        ]
    )
    kinds = classify(ops)
    assert kinds.symbol == ("E", "i", "σ", "C3", "C5^2", "S6", "C2")
    assert kinds.order.tolist() == [1, 2, 1, 3, 5, 6, 2]
    assert kinds.proper.tolist() == [True, False, False, True, True, False, True]
    assert np.allclose(kinds.axis[3], np.ones(3) / np.sqrt(3))


def _table_by_nearest(ops: np.ndarray) -> np.ndarray:
    n = len(ops)
    prods = np.einsum("aij,bjk->abik", ops, ops).reshape(n * n, 9)
    return nearest_matrices(ops.reshape(n, 9), prods)[1].reshape(n, n)


@pytest.mark.parametrize("name", ALL)
def test_multiplication_table_by_keys_is_the_nearest_match(name):
    rng = np.random.default_rng(ALL.index(name))
    ops = _copy(name, 50 + ALL.index(name))
    assert np.array_equal(multiplication_table(ops), _table_by_nearest(ops))
    noisy = ops + rng.normal(scale=1e-4, size=ops.shape)  # keys miss: the nearest search answers
    assert np.array_equal(multiplication_table(noisy, tol=1e-3), _table_by_nearest(noisy))


def _closed_by_definition(perms: np.ndarray, dets: np.ndarray) -> bool:
    elements = {(p.tobytes(), d > 0) for p, d in zip(perms, dets, strict=True)}
    return all(
        (p[q].tobytes(), (d * e) > 0) in elements
        for p, d in zip(perms, dets, strict=True)
        for q, e in zip(perms, dets, strict=True)
    )


def _permutations(name: str) -> tuple[np.ndarray, np.ndarray]:
    """The operations of ``name`` as permutations of a generic orbit, with the signs of det."""
    ops = point_group(name).operations
    orbit = ops @ np.array([0.31, 0.57, 0.83])
    moved = np.einsum("gij,aj->gai", ops, orbit)
    perms = np.argmin(np.linalg.norm(moved[:, :, None] - orbit[None, None], axis=3), axis=2)
    return perms, np.sign(np.linalg.det(ops))


@pytest.mark.parametrize("name", ["Ih", "Oh", "D6h", "C3v", "S8", "Cs", "C1"])
def test_closure_on_generators_is_closure_of_all_pairs(name):
    perms, dets = _permutations(name)
    rng = np.random.default_rng(len(perms))
    cases = [(perms, dets)]
    for _ in range(20):
        keep = rng.random(len(perms)) < rng.uniform(0.3, 1.0)
        keep[0] = keep[0] or rng.random() < 0.7
        order = rng.permutation(np.flatnonzero(keep))
        if not len(order):
            continue
        cases.append((perms[order], dets[order]))
        flipped = dets[order].copy()
        flipped[rng.integers(len(flipped))] *= -1
        cases.append((perms[order], flipped))
    # subgroups: the operations fixing a direction of the orbit, and their cosets
    fixed = np.flatnonzero(perms[:, 0] == 0)
    cases += [(perms[fixed], dets[fixed]), (perms[fixed][::-1], dets[fixed][::-1])]
    for p, d in cases:
        if len({(r.tobytes(), x) for r, x in zip(p, d, strict=True)}) != len(p):
            continue
        assert _closed(p, d) == _closed_by_definition(p, d)


@pytest.mark.parametrize("name", ALL)
def test_table_read_off_the_closure_is_the_multiplication_table(name):
    from splitting.groups.catalogue import generators
    from splitting.groups.operations import close_group_with_table

    ops, table = close_group_with_table(generators(name))
    assert np.array_equal(table, _table_by_nearest(ops))
    assert np.array_equal(point_group(name).table, table)


def test_one_decomposition_fits_both_handednesses():
    from splitting.molecule.symmetry import _kabsch_both, _kabsch_many

    rng = np.random.default_rng(4)
    a = rng.normal(size=(1, 3, 3)).repeat(50, axis=0)
    b = rng.normal(size=(50, 3, 3))
    both = _kabsch_both(a, b)
    for k, det in enumerate((1.0, -1.0)):
        assert np.array_equal(both[:, k], _kabsch_many(a, b, np.full(50, det)))
        assert np.allclose(np.linalg.det(both[:, k]), det)

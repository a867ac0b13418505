"""Shortcuts of the group engine give what the general route gives, on every catalogue group.

The activity table projects only the species that occur in the vector or the quadratic
representation (multiplicities from the characters); a species that does not occur must
project to zero, so the general route (projecting every species) gives the same table.
Rotation axes are joined into lines all at once, crystal and molecular frames scored all at
once, representations reduced for all species at once, conjugacy classes, labelling operations
and class powers found for all elements at once, as one by one; small multiplication tables are
searched instead of keyed, echelon forms run on Python floats, the first weights of the
character table are written out, all with the same results.
"""

from __future__ import annotations

import importlib

import numpy as np
import pytest

from splitting import activity
from splitting.errors import BookkeepingError, SymmetryError
from splitting.groups import all_group_names, characters, labels, operations, point_group, pointgroup
from splitting.groups.characters import all_close
from splitting.groups.identify import crystal_preference, molecular_preference
from splitting.groups.operations import classify, find_operation, rotation

# the package exports a function of the same name as the module
identify_mod = importlib.import_module("splitting.groups.identify")

ALL = all_group_names()


@pytest.mark.parametrize("name", ALL)
def test_species_left_unprojected_project_to_zero(name: str) -> None:
    g = point_group(name)
    quad = activity._quadratic_matrices(g.operations)
    vector, quadratic = activity._carriers(g, g.operations, quad)
    for k in range(len(g.species)):
        for mats, carries in ((g.operations, vector[k]), (quad, quadratic[k])):
            size = np.abs(activity._projector(g, k, mats)).max()
            assert (size > 1e-8) == bool(carries), (g.species[k].label, size)


ROTATIONS = [rotation([0.3, -1.0, 2.0], 1.1), rotation([1.0, 1.0, 0.2], 0.4)]


def _rotated(name: str, r: np.ndarray) -> np.ndarray:
    return np.einsum("ij,njk,lk->nil", r, point_group(name).operations, r)


@pytest.mark.parametrize("name", ALL)
def test_axes_joined_at_once_as_one_by_one(name: str) -> None:
    for r in ROTATIONS:
        kinds = classify(_rotated(name, r))
        sel = np.flatnonzero(kinds.proper & (kinds.order >= 2))
        if not len(sel):
            continue
        dirs = kinds.axis[sel]
        par = np.abs(np.abs(dirs @ dirs.T) - 1) < 1e-3
        reps, best = identify_mod._join_axes(par, kinds.order[sel])
        reps1, best1 = identify_mod._join_one_by_one(par, kinds.order[sel])
        assert reps.tolist() == reps1.tolist() and best == best1


@pytest.mark.parametrize("name", ALL)
def test_crystal_preference_scores_frames_at_once_as_one_by_one(name: str) -> None:
    for r in ROTATIONS:
        ops = _rotated(name, r)
        kinds = classify(ops)
        frames = identify_mod._candidate_frames(identify_mod.name_of(ops), kinds, r)
        score = crystal_preference(r)
        assert score.many(frames) == [score(f) for f in frames]
        ref = r / np.linalg.norm(r, axis=0)
        for f, s in zip(frames, score.many(frames), strict=True):  # the same numbers as np.dot gives
            dots = [float(np.dot(f[:, k], ref[:, k])) for k in (2, 0, 1)]
            assert s == pytest.approx([abs(d) for d in dots] + dots[:2], abs=1e-6)


def test_crystal_preference_does_not_depend_on_the_last_bit() -> None:
    # the last bit of a dot product depends on the machine's BLAS kernel (seen: an AMD EPYC
    # gave -1.0000000000000002 where another machine gave -1.0); a tie must stay a tie
    score = crystal_preference(np.eye(3))
    frame = np.diag([1.0, -1.0, -1.0])
    nudged = frame * (1 + np.finfo(float).eps)
    assert score(frame) == score(nudged) == (1.0, 1.0, 1.0, -1.0, 1.0)


def test_usual_quadratic_forms_are_orthogonal() -> None:
    # _usual_basis keeps every usual form that lies in a species without a rank test
    gram = activity._USUAL @ activity._USUAL.T
    assert np.array_equal(gram, np.diag(np.diag(gram)))


def _reduce_species_by_species(g, chi: np.ndarray, what: str = "representation"):
    """PointGroup.reduce written species by species (the general route)."""
    n = (g.irreps.conj() * g.class_sizes) @ np.asarray(chi, dtype=complex) / g.order
    counts = []
    for s in g.species:
        vals = n[list(s.irreps)]
        v = vals[0]
        if abs(v.imag) > 1e-6 or abs(v.real - round(v.real)) > 1e-6 or round(v.real) < 0:
            raise BookkeepingError(
                f"{what} does not reduce to whole multiplicities in {g.name} ({s.label}: {v.real:.4f})"
            )
        if len(vals) == 2 and abs(vals[0] - vals[1]) > 1e-6:
            raise BookkeepingError(f"{what} is not a real representation of {g.name}")
        counts.append((s.label, round(v.real)))
    return tuple(counts)


def _outcome(f, *args):
    try:
        return f(*args)
    except BookkeepingError as exc:
        return str(exc)


@pytest.mark.parametrize("name", ALL)
def test_reduce_at_once_as_species_by_species(name: str) -> None:
    g = point_group(name)
    rng = np.random.default_rng(len(name))
    trials = [rng.integers(0, 3, size=len(g.species)) @ g.species_characters for _ in range(3)]
    trials += [*g.irreps, g.species_characters[-1] / 2, -g.species_characters[0]]  # complex, fractional, negative
    for chi in trials:
        fast = _outcome(lambda c: g.reduce(c).counts, chi)
        assert fast == _outcome(_reduce_species_by_species, g, chi)


@pytest.mark.parametrize("name", ALL)
def test_molecular_preference_scores_frames_at_once_as_one_by_one(name: str) -> None:
    rng = np.random.default_rng(3)
    for r in ROTATIONS:
        ops = _rotated(name, r)
        kinds = classify(ops)
        seeds = np.array([r @ [0.0, 0.0, 1.3], r @ [1.1, 0.0, 0.0], rng.normal(size=3)])  # atoms on z, on x, off
        pos = np.einsum("nij,aj->nai", ops, seeds).reshape(-1, 3)
        frames = identify_mod._candidate_frames(identify_mod.name_of(ops), kinds, np.eye(3))
        score = molecular_preference(pos)
        assert score.many(frames) == [score(f) for f in frames]


def test_written_out_weights_are_the_generators_draws() -> None:
    # the first attempt's weights of character_table are written out, later attempts drawn
    k = len(characters._SEED7_DRAWS)
    assert np.array_equal(characters._SEED7_DRAWS, np.random.default_rng(7).normal(size=k))
    for size in (1, 5, k, k + 1):
        rng = np.random.default_rng(7)
        for attempt in range(3):
            assert np.array_equal(characters._weights(7, attempt, size), rng.normal(size=size))
    assert np.array_equal(characters._weights(3, 0, 4), np.random.default_rng(3).normal(size=4))


@pytest.mark.parametrize("name", ALL)
def test_echelon_form_on_floats_as_on_numpy_rows(name: str) -> None:
    # every matrix activity_table reduces, and one with a zero column and a tie of pivots;
    # elementwise arithmetic only, so bit for bit on every machine
    g = point_group(name)
    quad = activity._quadratic_matrices(g.operations)
    mats = [np.array([[0.0, 2.0, 1.0], [0.0, -2.0, 3.0], [0.0, 1.0, 1e-9]]), np.zeros((0, 6))]
    for k in range(len(g.species)):
        for m in (g.operations, quad):
            p = activity._projector(g, k, m)
            mats += [p, p.T.copy()]
            image = activity._rref(p.T.copy())
            for scale in (np.sqrt(2), 1 / np.sqrt(2)):
                scaled = image.copy()
                scaled[:, 3:] *= scale
                mats.append(scaled)
    for m in mats:
        fast, general = activity._rref(m), activity._rref_numpy(m)
        assert fast.shape == general.shape and fast.tobytes() == general.tobytes()


def test_cross_and_norms_of_rows_as_numpy_gives_them() -> None:
    # the same elementwise products, differences and sums as np.cross and np.linalg.norm (no BLAS)
    rng = np.random.default_rng(5)
    a, b = rng.normal(size=(7, 3)), rng.normal(size=(4, 1, 3))
    for x, y in ((a, a[::-1]), (a[None], b), (a[0], b)):
        assert identify_mod._cross_rows(x, y).tobytes() == np.cross(x, y).tobytes()
    for u in (a, b, rng.normal(size=(0, 3))):
        assert operations.row_norms(u).tobytes() == np.linalg.norm(u, axis=-1).tobytes()


@pytest.mark.parametrize("name", ALL)
def test_small_multiplication_tables_searched_as_keyed(name: str) -> None:
    for r in [np.eye(3), *ROTATIONS]:
        ops = _rotated(name, r)
        n = len(ops)
        if n > operations._SMALL_TABLE:
            continue
        prods = (ops[:, None] @ ops[None]).reshape(n * n, 9)
        keyed = operations._table_by_keys(ops.reshape(n, 9), prods, 1e-3)
        assert np.array_equal(operations.multiplication_table(ops, tol=1e-3), keyed)
        if n > 2:  # an operation missing: neither route closes the set
            for f in (
                operations.multiplication_table,
                lambda o, tol: operations._table_by_keys(
                    o.reshape(len(o), 9), (o[:, None] @ o[None]).reshape(-1, 9), tol
                ),
            ):
                with pytest.raises(SymmetryError):
                    f(ops[:-1], tol=1e-3)


@pytest.mark.parametrize("name", ALL)
def test_classes_at_once_as_element_by_element(name: str) -> None:
    # abelian: one class per element; else every conjugate of every element in one look-up
    table = point_group(name).table
    classes, class_of, inverse = characters.conjugacy_classes(table)
    general, general_of = characters._conjugating(table, inverse)
    assert [c.tolist() for c in classes] == [c.tolist() for c in general]
    assert class_of.tolist() == general_of.tolist() and class_of.dtype == general_of.dtype


@pytest.mark.parametrize("name", ALL)
def test_labelling_operations_found_at_once_as_one_by_one(name: str) -> None:
    g = point_group(name)
    fixed = labels.fixed_operations(name)
    found = pointgroup._find_operations(g.operations, fixed)
    assert found == {m.tobytes(): find_operation(g.operations, m, tol=1e-6) for m in fixed}


@pytest.mark.parametrize("name", ALL)
def test_operations_about_the_axes_as_by_dot_products(name: str) -> None:
    # class_names reads |axis . v| for v = x, y, z off the axis components
    axes = classify(point_group(name).operations).axis
    for k, v in enumerate(np.eye(3)):
        along = np.abs(np.abs(axes[:, k]) - 1) < 1e-6
        assert np.array_equal(along, np.abs(np.abs(axes @ v) - 1) < 1e-6)


def test_usual_spelling_test_as_all_close() -> None:
    z2 = activity._Z2
    for vec in (z2, z2 + 1e-9, z2 + 1e-7, -z2, z2 * 2, np.zeros(6), z2 + np.array([0, 0, 0, 0, 0, 2e-8])):
        usual = activity._polynomial(np.asarray(vec, dtype=float)) == "2z²-x²-y²"
        assert usual == all_close(np.asarray(vec, dtype=float), z2)


@pytest.mark.parametrize("name", ALL)
def test_powers_of_all_operations_as_class_by_class(name: str) -> None:
    g = point_group(name)
    every = classify(g.operations)
    powers = labels._all_powers(every, np.abs(np.abs(every.axis[:, 2]) - 1) < 1e-6)
    for c in g.classes:
        m = np.array(c.members)
        kind = every[int(m[0])]
        if kind.order > 2 and kind.symbol not in ("E", "i", "σ"):
            assert [powers[i] for i in c.members] == labels._powers(kind, every.axis[m], every.angle[m]).tolist()


@pytest.mark.parametrize("name", ALL)
def test_locating_the_identity_at_once_as_by_the_search(name: str) -> None:
    # a site C1 asks only where the identity lies: answered without writing it in the standard frame
    from splitting.groups.identify import oriented

    for r in ROTATIONS:
        og = oriented(name, r)
        ident = np.broadcast_to(np.eye(3) + 1e-12, (2, 3, 3))
        assert og.locate_all(ident).tolist() == [og.locate(np.eye(3))] * 2
        assert np.allclose(og.group.operations[og.locate(np.eye(3))], np.eye(3))

"""Shortcuts of the group engine give what the general route gives, on every catalogue group.

The activity table projects only the species that occur in the vector or the quadratic
representation (multiplicities from the characters); a species that does not occur must
project to zero, so the general route (projecting every species) gives the same table.
Rotation axes are joined into lines all at once, crystal frames scored all at once, and
representations reduced for all species at once, as one by one.
"""

from __future__ import annotations

import importlib

import numpy as np
import pytest

from splitting import activity
from splitting.errors import BookkeepingError
from splitting.groups import all_group_names, point_group
from splitting.groups.identify import crystal_preference, molecular_preference
from splitting.groups.operations import classify, rotation

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

"""The shortcut paths of the crystal stages give the answers of the general routes they stand for.

``wyckoff_names`` (one spglib search naming the points on no atom and every standard description)
against ``canonical_names`` of ``CellSymmetry.wyckoff_of`` (a skeleton search, then the
descriptions); the table of where shifted sites land against the one-pair definition of a
Wyckoff position; the cosets of origin shifts against a sort; atoms near points without a tree
against the tree; orbit sizes against :meth:`CellSymmetry.orbit_of`; the first three general
orbits drawn at once against the draw-by-draw loop; the periodic pair search against all pairs;
the atoms' part of the description key against its sorted definition.
"""

from __future__ import annotations

import itertools
from pathlib import Path

import ase.io
import numpy as np
import pytest
from ase import Atoms

from splitting.crystal import origin, spacegroup
from splitting.crystal.neighbours import periodic_pairs
from splitting.crystal.predict import Options, _orbits, units_of
from splitting.crystal.spacegroup import analyse_cell

STRUCTURES = Path(__file__).resolve().parent.parent / "structures"
ORDERED = sorted(p.name for p in STRUCTURES.glob("*.cif") if "disordered" not in p.name)
SHIFTS = [(0.0, 0.0, 0.0), (0.5, 0.5, 0.5), (0.25, 0.1, 0.37)]


def _cell(atoms: Atoms, shift) -> spacegroup.CellSymmetry:
    a = atoms.copy()
    a.translate(np.array(shift) @ a.cell[:])
    a.wrap()
    return analyse_cell(a.cell[:], a.get_scaled_positions(wrap=True), a.numbers)


def _centres(cell):
    units = units_of(cell, Options())
    orbits = _orbits(cell, units)
    centres = [units[o[0][0]].centre for o in orbits]
    keys = [(-len(units[o[0][0]].atoms), units[o[0][0]].formula) for o in orbits]
    return centres, keys


def _special_points(cell) -> list[np.ndarray]:
    """Cartesian points at special positions of the standard setting (few hold an atom)."""
    p_inv = np.linalg.inv(np.asarray(cell.transformation, dtype=float))
    out = []
    for x in [(0, 0, 0), (0.5, 0.5, 0.5), (0.25, 0.25, 0.25), (0, 0.5, 0), (0.5, 0, 0.25)]:
        out.append(((np.array(x) - cell.origin_shift) @ p_inv.T) @ cell.given_lattice)
    return out


def _general(cell, pts, keys):
    return origin.canonical_names(cell, pts, keys, cell.wyckoff_of(pts))


def _same(a, b) -> None:
    assert a[0] == b[0]
    assert np.array_equal(a[1], b[1])


@pytest.mark.parametrize("shift", SHIFTS)
@pytest.mark.parametrize("name", ORDERED)
def test_wyckoff_names_is_the_general_route(name: str, shift) -> None:
    cell = _cell(ase.io.read(STRUCTURES / name), shift)
    centres, keys = _centres(cell)
    _same(origin.wyckoff_names(cell, centres, keys), _general(cell, centres, keys))
    extra = _special_points(cell)
    pts, ks = centres + extra, keys + [(-1, f"X{k}") for k in range(len(extra))]
    try:
        general = _general(cell, pts, ks)
    except spacegroup.BookkeepingError:  # the skeleton search finds no room (diamond)
        return
    _same(origin.wyckoff_names(cell, pts, ks), general)


def test_wyckoff_names_of_no_points_and_of_a_cell_from_operations() -> None:
    cell = _cell(ase.io.read(STRUCTURES / "calcite.cif"), (0, 0, 0))
    assert origin.wyckoff_names(cell, [], [])[0] == []
    cop = spacegroup.cell_from_operations(
        cell.lattice, cell.frac, cell.numbers, cell.frac_rotations, cell.frac_translations, cell.conventional
    )
    names, shift = origin.wyckoff_names(cop, [cell.cartesian[0]], [(-1, "Ca")])
    assert names == [("?", "?")] and not np.any(shift)


def _same_position(w, t, y, x, site) -> bool:
    """The one-pair definition: y is in the Wyckoff position of x (site rotation parts ``site``)."""
    if len(origin._stabiliser(w, t, y)) != len(site):
        return False
    a = (np.eye(3)[None] - site).reshape(-1, 3)
    _, sv, vt = np.linalg.svd(a)
    rank = int(np.sum(sv > 1e-9))
    if rank == 0:
        return True
    d = np.mod(y @ np.transpose(w, (0, 2, 1)) + t - x, 1.0)
    cands = d[:, None, :] + origin._STEPS[None]
    return bool(np.any(np.all(np.abs(cands @ vt[:rank].T) < 1e-6, axis=2)))


@pytest.mark.parametrize("hall", [81, 501, 517, 525, 529, 458, 222, 1])
def test_landing_is_the_one_pair_definition(hall: int) -> None:
    """Sites on special positions (eighths of the cell) moved by every origin shift of the group."""
    w, t = origin._database(hall)
    grid = np.array(list(itertools.product(np.arange(8) / 8, repeat=3)))
    order = np.array([len(origin._stabiliser(w, t, x)) for x in grid])
    rng = np.random.default_rng(hall)
    special = grid[order > 1]
    sites = [special[k] for k in rng.choice(len(special), size=min(5, len(special)), replace=False)]
    sites.append(rng.random(3))  # and a general point
    moves = np.vstack([np.zeros(3), origin.origin_shifts(hall), grid[rng.choice(len(grid), 4)]])
    got = origin._landing(w, t, sites, moves)
    for k, x in enumerate(sites):
        for i, u in enumerate(moves):
            want = next(
                (j for j, s in enumerate(sites) if _same_position(w, t, x + u, s, origin._stabiliser(w, t, s))), -1
            )
            assert got[k, i] == want, (k, i)


@pytest.mark.parametrize("hall", [81, 501, 517, 458, 222])
def test_cosets_are_the_smallest_reduced_shift(hall: int) -> None:
    _, _, centring, free = origin._parts(hall)
    shifts = origin.origin_shifts(hall)
    rng = np.random.default_rng(hall)
    for steady in ([np.zeros(3)], [np.zeros(3), *shifts[: len(shifts) // 2]]):
        steady_r = origin._reduce(np.vstack(steady), centring, free)
        us = np.vstack([np.zeros(3), shifts, rng.random((5, 3))])
        got = origin._cosets(us, steady_r, centring, free)
        for u, g in zip(us, got, strict=True):
            reps = origin._reduce(u[None] + steady_r, centring, free)
            assert g == tuple(reps[np.lexsort(reps.T[::-1])][0].tolist())


@pytest.mark.parametrize("name", ["calcite.cif", "c60_ordered_Pa-3.cif", "nh4cl_ordered_P-43m.cif"])
def test_atoms_at_points_without_a_tree(name: str, monkeypatch: pytest.MonkeyPatch) -> None:
    cell = _cell(ase.io.read(STRUCTURES / name), (0.1, 0.2, 0.3))
    rng = np.random.default_rng(0)
    cart = cell.cartesian
    pts = np.vstack(
        [
            cart + rng.normal(scale=0.02, size=cart.shape),  # near an atom
            cart + cell.lattice[0] + rng.normal(scale=0.04, size=cart.shape),  # near an image of one
            rng.random((20, 3)) @ cell.lattice,
            *_centres(cell)[0],
        ]
    )
    small = np.concatenate([cell._atom_at(p[None]) for p in pts])  # one point at a time: no tree
    if len(pts) * len(cell.frac) > spacegroup._FEW_PAIRS:  # the tree route of many points at once
        assert np.array_equal(cell._atom_at(pts), small)
    monkeypatch.setattr(spacegroup, "_FEW_PAIRS", 0)  # the tree, however few the pairs
    assert np.array_equal(small, cell._atom_at(pts))


@pytest.mark.parametrize("name", ORDERED)
def test_orbit_sizes_count_the_orbit(name: str) -> None:
    cell = _cell(ase.io.read(STRUCTURES / name), (0.0, 0.0, 0.0))
    rng = np.random.default_rng(1)
    pts = [*_centres(cell)[0], *_special_points(cell), *(rng.random((3, 3)) @ cell.lattice), *cell.cartesian[:5]]
    assert cell._orbit_sizes(np.array(pts)) == [len(cell.orbit_of(p)) for p in pts]


def _general_orbits_loop(lattice, w, t, fixed, seed=0, apart=0.5):
    rng = np.random.default_rng(seed)
    points = []
    for _ in range(30):
        if len(points) == 3:
            break
        orbit = rng.random(3) @ np.transpose(w, (0, 2, 1)) + t
        orbit -= np.floor(orbit)
        others = np.vstack([orbit, *points, fixed])
        d = orbit[:, None] - others[None]
        d -= np.round(d)
        dist = np.linalg.norm(d @ lattice, axis=2) + np.eye(len(orbit), len(others)) * 1e3
        if dist.min() > apart:
            points.append(orbit)
    return points if len(points) == 3 else None


@pytest.mark.parametrize("hall", [501, 81, 458])
def test_general_orbits_drawn_at_once(hall: int) -> None:
    w, t = origin._database(hall)
    rng = np.random.default_rng(hall)
    for trial in range(150):
        lattice = np.diag(rng.uniform(3.0, 14.0, size=3))
        fixed = rng.random((int(rng.integers(0, 30)), 3))
        apart = float(rng.choice([0.05, 0.5, 1.0, 1.5]))
        want = _general_orbits_loop(lattice, w, t, fixed, trial % 4, apart)
        got = spacegroup._general_orbits(lattice, w, t, fixed, trial % 4, apart)
        if want is None:
            assert got is None
        else:
            assert all(np.array_equal(a, b) for a, b in zip(want, got, strict=True))


@pytest.mark.parametrize("seed", range(4))
def test_periodic_pairs_are_all_close_pairs(seed: int) -> None:
    rng = np.random.default_rng(seed)
    lattice = np.diag(rng.uniform(3.0, 6.0, size=3)) + rng.uniform(-1.0, 1.0, size=(3, 3))
    frac = rng.random((12, 3))
    cutoff = float(rng.uniform(1.5, 4.0))
    pairs = periodic_pairs(lattice, frac, cutoff)
    got = {(int(i), int(j), *map(int, s)) for i, j, s in zip(pairs.i, pairs.j, pairs.shift, strict=True)}
    want = set()
    for s in itertools.product(range(-3, 4), repeat=3):
        d = np.linalg.norm((frac[None] + np.array(s) - frac[:, None]) @ lattice, axis=2)
        for i, j in zip(*np.nonzero(d < cutoff), strict=True):
            if i != j or any(s):
                want.add((int(i), int(j), *s))
    assert got == want


def test_description_key_sorts_the_atoms() -> None:
    rng = np.random.default_rng(2)
    letters = [str(x) for x in rng.choice(list("abcdefA"), size=200)]
    numbers = rng.choice([1, 6, 8, 55], size=200)
    _, _, atoms = origin.description_key([], [], letters, numbers)
    assert atoms == tuple(sorted((-int(z), origin._rank(x)) for z, x in zip(numbers, letters, strict=True)))
    with pytest.raises(ValueError):
        origin.description_key([], [], letters[:3], numbers[:2])


def _origin_matches_plain(w_f, t_f, target) -> bool:
    """Every origin of the grid, one at a time, in floating point."""
    from splitting.crystal.setting import _ORIGINS, _keys

    return any(np.array_equal(_keys(w_f, t_f + (w_f - np.eye(3)) @ o), target) for o in _ORIGINS)


@pytest.mark.parametrize("number", [14, 62, 142, 167, 205, 227])
def test_origin_matching_of_settings(number: int) -> None:
    """The operations of every setting of a type, moved to other origins, against every setting's keys."""
    from splitting.crystal.setting import _any_origin_matches, _halls_of, _keys, _operations

    rng = np.random.default_rng(number)
    halls = _halls_of(number)
    for h in rng.choice(halls, size=min(4, len(halls)), replace=False):
        w, t = _operations(int(h))
        for o in (np.zeros(3), rng.integers(0, 8, 3) / 8, rng.integers(0, 16, 3) / 16):
            t_f = t + (w - np.eye(3)) @ o
            for h2 in rng.choice(halls, size=min(2, len(halls)), replace=False):
                target = _keys(*_operations(int(h2)))
                if len(target) != len(_keys(w, t_f)):  # told apart before the origins are tried
                    continue
                assert _any_origin_matches(w, t_f, target) == _origin_matches_plain(w, t_f, target), (h, o, h2)

"""What is cached between structures gives the same answers as computing afresh.

Identified crystal groups and factor groups are kept per process (keyed on the Cartesian
operations and reference axes), induction uses a conjugation table, restriction looks up
all operations at once, and free-unit analyses are found by a shape fingerprint.
"""

from __future__ import annotations

import importlib
from pathlib import Path

import numpy as np
import pytest

import splitting.correlation as correlation
import splitting.crystal.freeunits as freeunits
from splitting.correlation import FactorGroup, induce
from splitting.crystal.predict import predict
from splitting.groups import point_group
from splitting.groups.identify import crystal_preference, identify, identify_in_crystal
from splitting.groups.operations import rotation

# the package exports a function of the same name as the module
identify_mod = importlib.import_module("splitting.groups.identify")

CRYSTALS = ["calcite.cif", "naphthalene_P21a.cif", "nh4cl_ordered_P-43m.cif", "co2_Pa-3.cif", "diamond.cif"]


def _clear() -> None:
    identify_mod._CRYSTAL_CACHE.clear()
    correlation._FACTOR_CACHE.clear()


@pytest.mark.parametrize("name", CRYSTALS)
def test_warm_caches_give_the_same_prediction(name: str, structures_dir: Path) -> None:
    _clear()
    cold = predict(structures_dir / name).to_dict()
    for other in CRYSTALS:  # fill the caches with other structures first
        predict(structures_dir / other)
    warm = predict(structures_dir / name).to_dict()
    assert warm == cold


def test_identify_in_crystal_is_identify_with_crystal_preference() -> None:
    r = rotation([0.3, -1.0, 2.0], 1.1)
    ops = np.einsum("ij,njk,lk->nil", r, point_group("D4h").operations, r)
    ref = np.eye(3)
    _clear()
    a = identify_in_crystal(ops, ref)
    b = identify(ops, prefer=crystal_preference(ref), reference=ref, tol=1e-3)
    assert a.name == b.name == "D4h" and np.allclose(a.frame, b.frame)
    assert identify_in_crystal(ops + 1e-12, ref) is a  # the same group, found once


def _induce_direct(factor: FactorGroup, site_cell_ops: list[int], site_chars: np.ndarray) -> np.ndarray:
    """Ind chi(x) = (1/|S|) sum over h in F with h^-1 x h in S of chi(h^-1 x h) (Frobenius)."""
    g = factor.oriented.group
    table = g.table
    inverse = np.argmax(table == 0, axis=1)
    in_site = {int(factor.index[k]): float(c) for k, c in zip(site_cell_ops, site_chars, strict=True)}
    out = np.zeros(g.order)
    for x in range(g.order):
        out[x] = sum(in_site.get(int(table[table[inverse[h], x], h]), 0.0) for h in range(g.order)) / len(in_site)
    return out


@pytest.mark.parametrize(
    ("factor_name", "direction"), [("Oh", [0, 0, 1.0]), ("Oh", [1.0, 1, 1]), ("D4h", [1.0, 0, 0]), ("C2h", [0, 0, 1.0])]
)
def test_induction_by_conjugation_table(factor_name: str, direction: list[float]) -> None:
    ops = point_group(factor_name).operations
    factor = FactorGroup.from_rotations(ops, np.eye(3))
    rng = np.random.default_rng(0)
    # a subgroup: the operations that leave a direction in place; the characters are arbitrary
    # numbers, as both routes are linear in them
    site = [k for k in range(len(ops)) if np.allclose(ops[k] @ direction, direction)]
    chars = rng.normal(size=len(site))
    # compare through the reduced representation and through the raw characters
    expected = _induce_direct(factor, site, chars)
    g = factor.oriented.group
    site_full = np.zeros(g.order)
    site_full[factor.index[site]] = chars
    got = site_full[factor.conjugates].sum(axis=1) / len(site)
    assert np.allclose(got, expected)
    whole = np.array([np.trace(ops[k]) for k in site])
    rep = induce(factor, site, whole, what="test")
    assert rep.counts == g.reduce_operations(_induce_direct(factor, site, whole), what="test").counts


def test_restriction_all_at_once_equals_one_by_one() -> None:
    r = rotation([1.0, 2.0, 3.0], 0.7)
    oh = identify(np.einsum("ij,njk,lk->nil", r, point_group("Oh").operations, r))
    sub_ops = [op for op in oh.operations if np.allclose(op @ oh.frame[:, 2], oh.frame[:, 2])]
    sub = identify(np.array(sub_ops))
    assert sub.name == "C4v"
    for sp in oh.group.species:
        chars = np.array([oh.rep_character(oh.group.representation({sp.label: 1}), op) for op in sub.operations])
        assert oh.restrict(sp.label, sub).counts == sub.reduce_at(chars).counts


def test_free_units_analysed_once_per_shape(structures_dir: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    calls: list[int] = []
    real = freeunits.unit_vibrations

    def counting(*args, **kwargs):
        calls.append(1)
        return real(*args, **kwargs)

    monkeypatch.setattr(freeunits, "unit_vibrations", counting)
    p = predict(structures_dir / "naphthalene_P21a.cif")
    # two symmetry-equivalent molecules in the cell (P2_1/a, Z = 2): one analysis
    assert p.unit("C10H8").count == 2 and len(calls) == 1


def test_fingerprint_separates_shapes() -> None:
    square = np.array([[1.0, 0, 0], [0, 1, 0], [-1, 0, 0], [0, -1, 0]])
    turned = square @ rotation([0, 0, 1.0], 0.4).T
    assert freeunits._fingerprint([6] * 4, square, 0.1) == freeunits._fingerprint([6] * 4, turned, 0.1)
    assert freeunits._fingerprint([6] * 4, square, 0.1) != freeunits._fingerprint([6, 6, 6, 7], square, 0.1)
    # the radii do not see rotations, and tell a larger square apart
    assert np.allclose(freeunits._radii([6] * 4, square), freeunits._radii([6] * 4, turned))
    assert np.max(np.abs(freeunits._radii([6] * 4, square) - freeunits._radii([6] * 4, 2 * square))) > 0.5


def _displaced_naphthalene(structures_dir: Path, reps=(2, 2, 2), sigma=0.01):
    """A naphthalene supercell with every atom moved at random (invented, seed fixed): stays P1."""
    import ase.io

    atoms = ase.io.read(structures_dir / "naphthalene_P21a.cif").repeat(reps)
    atoms.positions += np.random.default_rng(3).normal(0.0, sigma, atoms.positions.shape)
    return atoms


def test_displaced_supercell_cache_gives_the_fresh_answers(structures_dir: Path) -> None:
    """Every molecule distinct: the carried analyses equal a fresh point-group search of each molecule.

    The displacements (0.01 A) are small enough that a fresh search finds D2h for every
    molecule (at 0.02-0.03 A the fresh search itself finds D2h, C2v, C2h or Cs from molecule to
    molecule at the default unit tolerance, so it is no reference there).
    """
    from splitting.crystal.predict import predict_atoms, units_of
    from splitting.crystal.spacegroup import analyse_cell
    from splitting.molecule.analysis import analyse_unit

    atoms = _displaced_naphthalene(structures_dir)
    cache = freeunits.FreeUnitCache(0.25)
    p = predict_atoms(atoms, free_cache=cache)
    assert p.space_group.number == 1
    molecules = [u for u in p.units if u.formula == "C10H8"]
    assert len(molecules) == 16 and all(u.count == 1 for u in molecules)
    assert cache.analyses < len(molecules)  # the cache was used
    cell = analyse_cell(atoms.cell[:], atoms.get_scaled_positions(wrap=True), atoms.numbers, tolerance=0.01)
    fresh = [analyse_unit(u.numbers, u.positions, tolerance=0.25) for u in units_of(cell, _opts()) if len(u.atoms) > 1]
    assert [u.free_group for u in molecules] == [a.point_group for a in fresh] == ["D2h"] * 16
    assert all(str(u.free_vibrations) == str(a.vibrations) for u, a in zip(molecules, fresh, strict=True))
    assert all(u.max_deviation <= 0.25 for u in molecules)
    assert [s.label for s in p.species] and p.units[0].free_vibrations is not None
    # and the species counts equal those of a prediction whose cache never carries
    uncached = predict_atoms(atoms, free_cache=_NoCarry(0.25))
    assert [(s.label, s.internal, s.librational, s.translational) for s in p.species] == [
        (s.label, s.internal, s.librational, s.translational) for s in uncached.species
    ]
    assert [u.free_group for u in uncached.units if u.formula == "C10H8"] == [u.free_group for u in molecules]


def _opts():
    from splitting.crystal.predict import Options

    return Options()


class _NoCarry(freeunits.FreeUnitCache):
    """A cache that analyses every unit afresh."""

    def get(self, unit):
        self._store.clear()
        return super().get(unit)


def test_hall_numbers_found_by_bisection_are_all_of_the_type() -> None:
    from splitting.crystal import setting

    numbers = [int(setting._type(h).number) for h in range(1, 531)]
    assert numbers == sorted(numbers)  # what the bisection relies on
    for n in (1, 14, 62, 167, 205, 225, 230):
        assert setting._halls_of(n) == tuple(h for h in range(1, 531) if numbers[h - 1] == n)


def test_connected_pieces_match_a_graph_library() -> None:
    from scipy.sparse import coo_matrix
    from scipy.sparse.csgraph import connected_components

    from splitting.crystal.units import _connected

    rng = np.random.default_rng(0)
    for _ in range(100):
        n, m = int(rng.integers(1, 60)), int(rng.integers(0, 80))
        i, j = rng.integers(0, n, m), rng.integers(0, n, m)
        count, label = connected_components(coo_matrix((np.ones(m), (i, j)), shape=(n, n)), directed=False)
        got_count, got = _connected(n, i, j)
        assert got_count == count and len(set(zip(label.tolist(), got.tolist(), strict=True))) == count

"""The short cuts of ``lower``: the vectorised closure test agrees with closing operation by operation;
a candidate whose space group is known from its operations (a skeleton searched instead of every atom)
gets the prediction a search of all its atoms gives; a search that would predict too many candidates is
refused early with the index to give."""

from __future__ import annotations

import itertools
from collections.abc import Callable, Sequence
from pathlib import Path

import numpy as np
import pytest
from ase import Atoms

import splitting.phases.lower as lowering
from splitting.correlation import FactorGroup
from splitting.crystal.predict import Options, predict_with_cell
from splitting.crystal.read import load_structure
from splitting.errors import InputError
from splitting.groups.subgroups import generators_of, subgroup_classes
from splitting.phases.sublattice import (
    close_operations,
    closing_choices,
    coset_vectors,
    kept_lattices,
    sublattices,
)

ROOT = Path(__file__).resolve().parent.parent
Runner = Callable[[Sequence[str]], tuple[int, str, str]]


@pytest.fixture(scope="module")
def co2_cell():
    _, cell = predict_with_cell(load_structure(ROOT / "structures" / "co2_Pa-3.cif"), Options())
    return cell, FactorGroup.from_rotations(cell.rotations, cell.reference_axes)


def _generators(cell, factor, members):
    g = factor.oriented.group
    by_std = {int(s): k for k, s in enumerate(factor.index)}
    return [
        (np.rint(cell.frac_rotations[by_std[s]]).astype(int), cell.frac_translations[by_std[s]])
        for s in generators_of(g.table, members)
    ]


@pytest.mark.parametrize("mult", [2, 3, 4])
def test_closing_choices_are_the_choices_that_close_one_by_one(co2_cell, mult: int) -> None:
    """Every choice of coset per generator, closed operation by operation, against the vectorised test (Pa-3)."""
    cell, factor = co2_cell
    g = factor.oriented.group
    by_std = {int(s): k for k, s in enumerate(factor.index)}
    checked = 0
    for members in subgroup_classes(g.name):
        gens = _generators(cell, factor, members)
        stack = np.array(sublattices(mult))
        kept = kept_lattices(stack, [w for w, _ in gens])
        for m, keep in zip(stack, kept, strict=True):
            inv = np.linalg.inv(m.T)
            one_by_one = all(
                np.allclose(c := inv @ w @ m.T, np.round(c), atol=1e-8)
                for w in cell.frac_rotations[[by_std[s] for s in members]]
            )
            assert keep == one_by_one
            if not keep:
                continue
            cosets = coset_vectors(m)
            slow = [
                choice
                for choice in itertools.product(range(len(cosets)), repeat=len(gens))
                if (
                    ops := close_operations(
                        [(w, t + cosets[k]) for (w, t), k in zip(gens, choice, strict=True)], m, len(members)
                    )
                )
                is not None
                and len(ops) == len(members)
            ]
            assert [tuple(c) for c in closing_choices(gens, m, cosets).tolist()] == slow
            checked += 1
    assert checked > 0


def test_too_many_candidates_are_refused_with_the_index_that_fits(monkeypatch) -> None:
    calcite = ROOT / "structures" / "calcite.cif"
    monkeypatch.setattr(lowering, "_SUBGROUPS", {})
    monkeypatch.setattr(lowering, "MAX_CANDIDATES", 6)
    with pytest.raises(
        InputError, match=r"more than 6 candidate subgroups by index \d+; give --max-index \d+ or less"
    ) as err:
        lowering.lower(calcite, max_index=8)
    fits = int(str(err.value).split("--max-index ")[1].split()[0])
    result = lowering.lower(calcite, max_index=fits)
    assert 0 < sum(c.variants for c in result.candidates) <= 6
    # the same limits apply to subgroups kept from the first search
    monkeypatch.setattr(lowering, "MAX_CANDIDATE_ATOMS", 10)
    with pytest.raises(
        InputError,
        match=r"more than 10 atoms in all by index 2 \(10 atoms in the primitive cell\); give a smaller cell",
    ):
        lowering.lower(calcite, max_index=fits)


def test_a_low_symmetry_cell_at_a_large_index_is_refused_early(tmp_path: Path, run_cli: Runner) -> None:
    """A P1 cell has a candidate for every sublattice (thousands to index 48): refused, not searched for minutes."""
    rng = np.random.default_rng(5)
    grid = np.array(list(itertools.product(range(3), range(3), range(3))), dtype=float)[:20]
    frac = (grid + 0.2 * rng.random(grid.shape)) / 3  # invented: 20 atoms, no symmetry
    atoms = Atoms(
        ["Na", "Cl"] * 10, scaled_positions=frac, cell=[[9.1, 0, 0], [0.8, 9.6, 0], [0.5, 0.3, 10.2]], pbc=True
    )
    path = tmp_path / "p1.cif"
    atoms.write(path, format="cif")
    code, out, err = run_cli(["lower", str(path), "--max-index", "48"])
    assert code == 2 and out == ""
    assert err.startswith("error: lower to index 48 is too large:") and "give --max-index" in err
    assert len(err.strip().splitlines()) == 1


@pytest.mark.parametrize(
    ("name", "index"), [("c60_fcc_Fm-3.cif", 4), ("c60_ordered_Pa-3.cif", 2), ("naphthalene_P21a.cif", 4)]
)
def test_known_group_prediction_is_the_full_search_prediction(name: str, index: int) -> None:
    atoms = load_structure(ROOT / "structures" / name)
    _, cell = predict_with_cell(atoms, Options())
    factor = FactorGroup.from_rotations(cell.rotations, cell.reference_axes)
    opts = Options(tolerance=1e-3)
    cache = lowering.FreeUnitCache(opts.unit_tolerance, {})
    known = 0
    for m, ops, _mult, _i in lowering.subgroups_of(cell, factor, index):
        realised, fixed, shift = lowering._realise(cell, m, ops, 1)
        label = lowering._label_cell(cell, m)
        short = lowering._predict_known(cell, m, ops, realised, fixed, shift, opts, cache, "candidate", label)
        if short is None:
            continue
        known += 1
        full, _ = predict_with_cell(realised, opts, source="candidate", free_cache=cache, label_cell=label)
        assert short.symbol == full.symbol and short.factor_axes == full.factor_axes
        assert short.space_group.number == full.space_group.number
        assert short.space_group.hall_number == full.space_group.hall_number
        assert short.factor_group == full.factor_group and short.atoms_primitive == full.atoms_primitive
        # a free unit's axes are one of the equivalent frames of its free group (a D2h naphthalene may
        # come out turned by a two-fold axis): the positions differ by float noise from spglib's idealised ones
        assert [{**u, "free_axes": None} for u in short.to_dict()["units"]] == [
            {**u, "free_axes": None} for u in full.to_dict()["units"]
        ]
    assert known > 0

"""Candidate lower-symmetry phases: complete enumeration on hand-checkable cubic cases.

References: the conjugacy classes of subgroups of Oh (33 classes including Oh itself; common
practice, e.g. the subgroup diagrams of International Tables for Crystallography Vol. A,
from memory); the t-subgroups of Pm-3m and their space-group types (ITA Vol. A1, from memory;
each also follows from the point group and the axes it keeps); the number of sublattices of
index n of Z^3 (1, 7, 13, 35 for n = 1..4: sum over d | n of d * sigma(d), from memory).
"""

from __future__ import annotations

import json
from collections import Counter
from pathlib import Path

import pytest
from ase import Atoms
from ase.spacegroup import crystal

import splitting.phases.lower as lowering
from splitting.errors import InputError
from splitting.groups.subgroups import subgroup_classes
from splitting.phases.lower import lower, parse_observed, sublattices

S = Path(__file__).resolve().parent.parent / "structures"

# t-subgroups of Pm-3m up to conjugacy, Oh itself excluded: point group -> space-group numbers
# (ITA A1 / common practice, from memory).  Classes with the same point group differ in the axes
# they keep (C2 along a cube axis or a face diagonal, etc.).
T_SUBGROUPS_OF_PM3M = {
    "O": [207],
    "Td": [215],
    "Th": [200],
    "D4h": [123],
    "T": [195],
    "D3d": [166],
    "D4": [89],
    "C4v": [99],
    "C4h": [83],
    "D2d": [111, 115],
    "D2h": [47, 65],
    "D3": [155],
    "C3v": [160],
    "S6": [148],
    "C4": [75],
    "S4": [81],
    "C2v": [25, 35, 38],
    "D2": [16, 21],
    "C2h": [10, 12],
    "C3": [146],
    "C2": [3, 5],
    "Cs": [6, 8],
    "Ci": [2],
    "C1": [1],
}
ORDER = {
    "O": 24,
    "Td": 24,
    "Th": 24,
    "D4h": 16,
    "T": 12,
    "D3d": 12,
    "D4": 8,
    "C4v": 8,
    "C4h": 8,
    "D2d": 8,
    "D2h": 8,
    "D3": 6,
    "C3v": 6,
    "S6": 6,
    "C4": 4,
    "S4": 4,
    "C2v": 4,
    "D2": 4,
    "C2h": 4,
    "C3": 3,
    "C2": 2,
    "Cs": 2,
    "Ci": 2,
    "C1": 1,
    "Oh": 48,
}


def test_reference_lists_agree_with_the_subgroup_classes_of_oh():
    classes = subgroup_classes("Oh")
    # 33 classes including Oh (common practice, from memory)
    assert len(classes) == 33
    # the reference list: 32 proper classes with the same multiset of orders as the package's classes
    mine = Counter()
    for g, v in T_SUBGROUPS_OF_PM3M.items():
        mine[ORDER[g]] += len(v)
    assert sum(mine.values()) == 32
    assert Counter(len(m) for m in classes if len(m) < 48) == mine


def _t_only(index: int):
    return _SUBLATTICES(index) if index == 1 else []


_SUBLATTICES = sublattices


def _t_candidates(atoms: Atoms, max_index: int = 48):
    """Candidates with cell multiple 1 only: the sublattice enumeration is cut to the parent lattice."""
    with pytest.MonkeyPatch.context() as mp:
        mp.setattr(lowering, "sublattices", _t_only)
        return lower(atoms=atoms, max_index=max_index)


@pytest.fixture(scope="module")
def single_atom():
    # simple cubic, one atom on 1a (m-3m): Pm-3m, ITA No. 221
    return _t_candidates(Atoms("Cs", scaled_positions=[[0, 0, 0]], cell=[4.1] * 3, pbc=True))


@pytest.fixture(scope="module")
def decorated():
    # Pm-3m with Cs on 1a and Ne on 24k (0, y, z): atoms that can move off every special position
    # of any t-subgroup, so every subgroup can be realised by a displacement (Ne...Ne >= 2.4 A, no bonds)
    atoms = crystal(["Cs", "Ne"], basis=[(0, 0, 0), (0, 0.31, 0.17)], spacegroup=221, cellpar=[10, 10, 10, 90, 90, 90])
    return atoms, _t_candidates(atoms)


def test_single_atom_every_t_subgroup_class_is_enumerated(single_atom):
    cands = single_atom.candidates
    assert all(c.kind == "t" and c.cell_multiple == 1 for c in cands)
    # 32 proper subgroups of Oh up to conjugacy; candidates with identical predictions are merged,
    # so the count is the sum of 'variants'
    assert sum(c.variants for c in cands) == len(subgroup_classes("Oh")) - 1 == 32


def test_single_atom_t_subgroups_have_the_right_point_groups(single_atom):
    got = Counter()
    for c in single_atom.candidates:
        got[c.point_group] += c.variants
    assert got == Counter({g: len(v) for g, v in T_SUBGROUPS_OF_PM3M.items()})


def test_decorated_cubic_t_subgroups_match_oh_subgroups(decorated):
    _, result = decorated
    cands = result.candidates
    # no merging here: every class gives its own prediction
    assert len(cands) == 32 and all(c.variants == 1 for c in cands)
    assert all(c.kind == "t" and c.cell_multiple == 1 for c in cands)
    got: dict[str, list[int]] = {}
    for c in cands:
        got.setdefault(c.point_group, []).append(c.space_group[0])
        assert c.index == 48 // ORDER[c.point_group]
    assert {g: sorted(v) for g, v in got.items()} == T_SUBGROUPS_OF_PM3M
    # the atom on 1a keeps the whole subgroup as its site group (its stabiliser in H is H)
    for c in cands:
        (cs,) = [u for u in c.prediction.units if u.formula == "Cs"]
        assert cs.site_group == c.point_group and cs.count == 1


def test_decorated_cubic_full_enumeration_small_index(decorated):
    atoms, _ = decorated
    result = lower(atoms=atoms, max_index=4)
    t = sorted(c.space_group[0] for c in result.candidates if c.cell_multiple == 1)
    # t-subgroups of index <= 4: O, Td, Th (2), D4h (3), T, D3d (4)
    assert t == [123, 166, 195, 200, 207, 215]
    k2 = {c.space_group[1] for c in result.candidates if c.kind == "k" and c.index == 2}
    # k-subgroups of index 2 (a' = 2a, F lattice): Fm-3m and Fm-3c (ITA A1, from memory)
    assert k2 == {"Fm-3m", "Fm-3c"}
    assert all(c.index <= 4 and c.index == c.cell_multiple * (48 // ORDER[c.point_group]) for c in result.candidates)
    json.dumps(result.to_dict())


def test_nh4cl_ordered_index_2_lists_p23():
    result = lower(S / "nh4cl_ordered_P-43m.cif", max_index=2)
    t = [(c.space_group[0], c.point_group) for c in result.candidates if c.kind == "t"]
    # P23 is the only t-subgroup of P-43m of index 2 (ITA A1, from memory)
    assert t == [(195, "T")]


def test_pmmm_general_position_is_predicted(tmp_path):
    # Pmmm (ITA No. 47) has Wyckoff positions a..z and alpha (8 alpha: the general position)
    import ase.io

    from splitting.crystal.predict import predict

    atoms = crystal(["Cs", "Ne"], basis=[(0, 0, 0), (0.31, 0.22, 0.13)], spacegroup=47, cellpar=[7, 8, 9, 90, 90, 90])
    path = tmp_path / "pmmm.cif"
    ase.io.write(path, atoms)
    p = predict(path)
    assert p.space_group.number == 47


def test_sublattice_counts():
    # sublattices of Z^3 of index 1..4: 1, 7, 13, 35 (sum_{d|n} d sigma(d), from memory)
    assert [len(sublattices(n)) for n in (1, 2, 3, 4)] == [1, 7, 13, 35]


def test_parse_observed():
    assert parse_observed(["T1u:ir=3", "C60/Hg:Raman=5", "Au:total=2"]) == (
        ("T1u", "ir", 3),
        ("C60/Hg", "raman", 5),
        ("Au", "total", 2),
    )
    assert parse_observed(None) == ()
    for bad in ("T1u:ir3", "T1u=3", "T1u:uv=3", "T1u:ir=three", "a:b:ir=1"):
        with pytest.raises(InputError, match="BAND:ir=N"):
            parse_observed([bad])


def test_max_index_below_two_is_rejected():
    with pytest.raises(InputError, match="at least 2"):
        lower(S / "nh4cl_ordered_P-43m.cif", max_index=1)


def test_observed_counts_rank_candidates():
    result = lower(S / "nh4cl_ordered_P-43m.cif", max_index=4, observed=parse_observed(["T2:ir=2"]))
    scores = [c.score for c in result.candidates]
    assert scores == sorted(scores) and scores[0] == 0
    # T2 (Td) at a D2d site (P-42m, index 3) -> B2 + E: 2 IR components (Wilson, Decius & Cross tables)
    best = [c for c in result.candidates if c.score == 0]
    assert any(c.space_group[0] == 111 for c in best)
    # a candidate that keeps Td with one ion per orbit (k-subgroup F-43m, a' = 2a) predicts one IR
    # component of T2 and says so
    f43m = [c for c in result.candidates if c.space_group[0] == 216 and c.cell_multiple == 2]
    assert f43m and all(u.count == 1 for c in f43m for u in c.prediction.units)
    assert all(c.score == 1 and c.reasons == ("T2: predicts 1 IR component, 2 observed",) for c in f43m)


def test_subgroups_kept_per_space_group_give_the_same_candidates(tmp_path, monkeypatch):
    """The subgroup search runs once per space group: again in the process, and read back from a folder."""
    atoms = crystal(["Cs", "Ne"], basis=[(0, 0, 0), (0, 0.31, 0.17)], spacegroup=221, cellpar=[10, 10, 10, 90, 90, 90])

    def summary(result):
        return [(c.space_group, c.index, c.variants, c.supercell) for c in result.candidates]

    monkeypatch.setattr(lowering, "_SUBGROUPS", {})
    monkeypatch.setenv(lowering.SUBGROUP_CACHE_ENV, str(tmp_path))
    calls = []
    real = lowering._search_subgroups
    monkeypatch.setattr(lowering, "_search_subgroups", lambda *a: calls.append(1) or real(*a))
    first = summary(lower(atoms=atoms, max_index=4))
    assert summary(lower(atoms=atoms, max_index=4)) == first and len(calls) == 1  # kept in the process
    assert len(list(tmp_path.glob("subgroups-*.json"))) == 1
    monkeypatch.setattr(lowering, "_SUBGROUPS", {})
    assert summary(lower(atoms=atoms, max_index=4)) == first and len(calls) == 1  # read from the folder
    for f in tmp_path.glob("subgroups-*.json"):
        f.write_text("not json", encoding="utf-8")
    monkeypatch.setattr(lowering, "_SUBGROUPS", {})
    assert summary(lower(atoms=atoms, max_index=4)) == first and len(calls) == 2  # an unreadable entry: again

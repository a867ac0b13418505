"""Orientational-ordering transitions checked against published structures and the correlation method.

Three transitions:

* C60: fcc Fm-3m (merohedral disorder, two standard orientations) -> simple cubic Pa-3
  (P. A. Heiney et al., Phys. Rev. Lett. 66, 2911 (1991); W. I. F. David et al., Nature 353,
  147 (1991));
* NH4Cl: disordered Pm-3m -> ordered P-43m (H. A. Levy and S. W. Peterson, Phys. Rev. 86, 766
  (1952); lambda transition near 242 K, from memory);
* NH4Br: disordered Pm-3m (phase II) -> antiparallel P4/nmm (phase III, cell doubled) -> parallel
  P-43m (phase IV) (H. A. Levy and S. W. Peterson, J. Am. Chem. Soc. 75, 1536 (1953), from memory),
  files written by structures/build_ordering_pairs.py.

Counts "by hand" are the correlation method (R. S. Halford, J. Chem. Phys. 14, 8 (1946);
W. G. Fateley et al., *The Correlation Method*, Wiley (1972)) worked out in the comment beside
each check; "ITA" is International Tables for Crystallography Vol. A (site symmetries) and
Vol. A1 (subgroups).
"""

from __future__ import annotations

import importlib.util
import sys
from pathlib import Path

import ase.io
import pytest

from splitting.phases.compare import compare_phases
from splitting.phases.lower import lower

ROOT = Path(__file__).resolve().parent.parent
S = ROOT / "structures"


def _band(seq, band):
    return next(b for b in seq.bands if b.band == band)


# ----------------------------------------------------------------------------- C60
@pytest.fixture(scope="module")
def c60():
    return compare_phases([S / "c60_fcc_Fm-3m_disordered.cif", S / "c60_ordered_Pa-3.cif"], ["fcc", "sc"])


def test_c60_phases(c60):
    fcc, sc = c60.phases
    # Heiney et al. (1991): fcc Fm-3m above ~260 K (from memory), Pa-3 below; ITA No. 225 and 205
    assert fcc.space_group.number == 225 and not fcc.ordered and fcc.factor_group == "Oh"
    assert sc.space_group.number == 205 and sc.ordered and sc.factor_group == "Th"
    u = fcc.disorder.unit("C60")
    # two standard orientations at half occupancy (merohedral disorder; David et al. 1991);
    # averaged site m-3m (ITA Fm-3m 4a); one orientation keeps m-3 = Th (Ih in its standard
    # orientation, intersected with Oh: common practice)
    assert (u.state, u.orientations, u.averaged_site_group, u.orientation_site_group) == ("static", 2, "Oh", "Th")
    # David et al. (1991): four molecules per cell on -3 (S6) sites (ITA Pa-3 4a)
    (orbit,) = [o for o in sc.crystal.units if o.formula == "C60"]
    assert (orbit.site_group, orbit.count, orbit.wyckoff) == ("S6", 4, "4a")


def test_c60_step_is_t_plus_k(c60):
    (step,) = c60.steps
    # Th is a subgroup of Oh of index 2 (ITA A1: Pa-3 is a subgroup of Fm-3m via Fm-3 / Pm-3);
    # one molecule per primitive fcc cell -> four per primitive sc cell: a t+k step
    assert step.subgroup and step.point_index == 2 and step.cell_multiple == pytest.approx(4)
    assert step.kind == "t+k"
    # volume per molecule (14.04 / 14.17)^3 = 0.9727 with the cells of the files (a from memory of
    # Heiney et al. / David et al.); the published contraction at the transition is ~1 % (from memory)
    assert step.volume_ratio == pytest.approx((14.04 / 14.17) ** 3, abs=1e-3)


def test_c60_t1u_one_ir_component_to_three(c60):
    t1u = _band(c60, "T1u")
    fcc, sc = t1u.states
    # by hand: T1u (Ih) at the Th site of one orientation -> Tu: one IR component
    assert (fcc.group, fcc.coupling, fcc.text(), fcc.ir) == ("Th", "one-orientation site", "Tu", 1)
    # by hand: T1u (Ih) -> S6: Au + Eu; induced over the 4 S6 sites of Pa-3 (Th):
    # Au -> Au + Tu, Eu -> Eu + 2Tu; so Au + Eu + 3Tu, IR active Tu only: 3 components.
    # Three IR components of each T1u line in the ordered phase are the usual factor-group
    # prediction for Pa-3 C60 (from memory; common practice)
    assert (sc.group, sc.coupling, sc.ir, sc.raman, sc.total) == ("Th", "factor group", 3, 0, 5)
    assert any("IR splits from 1 to 3" in r for r in t1u.remarks)


def test_c60_librations_raman_active_only_when_ordered(c60):
    fcc, sc = (p.lattice() for p in c60.phases)
    # disordered phase: no sharp librations (method notes, common practice)
    assert fcc["librational_raman"] == 0 and not fcc["librations_sharp"]
    # by hand: librations T1g (Ih) -> S6: Ag + Eg -> Th: (Ag + Tg) + (Eg + 2Tg) = Ag + Eg + 3Tg,
    # all Raman active: 5 Raman librational lines (common practice for Pa-3 C60, from memory)
    assert sc["librational_raman"] == 5 and sc["librational_ir"] == 0
    # optical translations Au + Eu + 2Tu (T1u pattern less the acoustic Tu): 2 IR lines
    assert sc["translational_ir"] == 2 and sc["translational_raman"] == 0
    assert any("5 Raman-active librational lines appear" in r for r in c60.lattice_remarks)


@pytest.fixture(scope="module")
def c60_lowering():
    # once per module: enumerating and realising every candidate takes a few seconds
    return lower(S / "c60_fcc_Fm-3.cif", max_index=8, observed=(("T1u", "ir", 3),))


def test_c60_lower_finds_pa3(c60_lowering):
    pa3 = [c for c in c60_lowering.candidates if c.space_group[0] == 205]
    assert len(pa3) == 1
    (c,) = pa3
    # Pa-3 is a klassengleiche subgroup of Fm-3 of index 4 (centring lost; ITA A1, from memory);
    # C60 on -3 (S6), four per primitive cell (David et al. 1991; ITA Pa-3 4a)
    assert (c.kind, c.index, c.cell_multiple, c.point_group) == ("k", 4, 4, "Th")
    (orbit,) = c.prediction.units
    assert (orbit.formula, orbit.site_group, orbit.wyckoff, orbit.count) == ("C60", "S6", "4a", 4)
    # observed 3 IR components of T1u (the ordered-phase prediction above): Pa-3 fits exactly
    assert c.score == 0 and c.reasons == ()
    rank = c60_lowering.candidates.index(c)
    assert all(other.score == 0 for other in c60_lowering.candidates[: rank + 1])


def test_c60_lower_t_subgroups_of_fm3(c60_lowering):
    # t-subgroups of Fm-3 (Th) of index <= 8, up to conjugacy: subgroups of Th of order >= 3:
    # T F23 (2), D2h Fmmm (3), S6 R-3 (4), C2v Fmm2, D2 F222, C2h C2/m (6), C3 R3 (8)
    # (ITA A1 maximal ones F23, Fmmm, R-3 from memory; the rest follow: common practice)
    t = {(c.space_group[0], c.point_group, c.index) for c in c60_lowering.candidates if c.kind == "t"}
    assert t == {
        (196, "T", 2),
        (69, "D2h", 3),
        (148, "S6", 4),
        (42, "C2v", 6),
        (22, "D2", 6),
        (12, "C2h", 6),
        (146, "C3", 8),
    }


# ----------------------------------------------------------------------------- NH4Cl
@pytest.fixture(scope="module")
def nh4cl():
    return compare_phases([S / "nh4cl_disordered_Pm-3m.cif", S / "nh4cl_ordered_P-43m.cif"], ["295 K", "200 K"])


def test_nh4cl_step_is_t_of_index_2(nh4cl):
    # Levy & Peterson (1952): disordered CsCl-type Pm-3m above the lambda point near 242 K
    # (from memory), ordered P-43m below; Td is a subgroup of Oh of index 2, same cell (ITA A1:
    # P-43m is a maximal t-subgroup of Pm-3m)
    (step,) = nh4cl.steps
    assert (step.subgroup, step.point_index, step.cell_multiple, step.kind) == (True, 2, 1, "t")
    # both files use a = 3.87 A (idealised, see structures/README.md)
    assert step.volume_ratio == pytest.approx(1.0)


def test_nh4cl_one_orientation_site_is_td(nh4cl):
    u = nh4cl.phases[0].disorder.unit("H4N")
    # averaged site m-3m (ITA Pm-3m 1a); one NH4+ orientation keeps -43m = Td (Levy & Peterson 1952)
    assert (u.orientations, u.averaged_site_group, u.averaged_wyckoff, u.orientation_site_group) == (
        2,
        "Oh",
        "1a",
        "Td",
    )


def test_nh4cl_internal_modes_unchanged(nh4cl):
    # by hand: Td free ion at a Td site, one ion per cell: A1 -> A1, E -> E, T2 -> T2 in both
    # phases, so nu1..nu4 neither split nor change activity (site Td in both; common practice)
    bands = {b.band: b for b in nh4cl.bands}
    assert set(bands) == {"A1", "E", "T2"}
    for band in bands.values():
        a, b = band.states
        assert (a.ir, a.raman, a.total) == (b.ir, b.raman, b.total)
        assert band.remarks == ()
    assert (bands["T2"].states[1].ir, bands["T2"].states[1].raman) == (1, 1)
    # lattice: averaged Pm-3m has one optical T1u (IR only); ordered P-43m: one optical T2
    # translation (IR and Raman) and a silent T1 libration (Fateley et al. 1972, P-43m 1a/1b)
    lat = [p.lattice() for p in nh4cl.phases]
    assert (lat[0]["translational_ir"], lat[0]["translational_raman"]) == (1, 0)
    assert (lat[1]["translational_ir"], lat[1]["translational_raman"]) == (1, 1)
    assert (lat[1]["librational_ir"], lat[1]["librational_raman"]) == (0, 0)


# ----------------------------------------------------------------------------- NH4Br
NH4BR = ["nh4br_disordered_Pm-3m.cif", "nh4br_ordered_P4nmm.cif", "nh4br_ordered_P-43m.cif"]


def _pairs_builder():
    spec = importlib.util.spec_from_file_location("build_ordering_pairs", S / "build_ordering_pairs.py")
    module = importlib.util.module_from_spec(spec)
    sys.modules.setdefault("build_ordering_pairs", module)
    spec.loader.exec_module(module)
    return module


def test_nh4br_files_are_up_to_date_and_read_back():
    texts = _pairs_builder().build_all(write=False)  # rebuilds and re-checks with spglib
    assert sorted(texts) == sorted(NH4BR)
    for name, text in texts.items():
        assert (S / name).read_text() == text, name
        assert "Generated by structures/build_ordering_pairs.py" in text and "Source:" in text
    # atoms per conventional cell: 1 N + 8 half H + 1 Br; 2 N + 8 H + 2 Br; 1 N + 4 H + 1 Br
    assert [len(ase.io.read(S / n)) for n in NH4BR] == [10, 12, 6]


@pytest.fixture(scope="module")
def nh4br():
    return compare_phases([S / n for n in NH4BR], ["II", "III", "IV"])


def test_nh4br_phases_and_sites(nh4br):
    ii, iii, iv = nh4br.phases
    # Levy & Peterson (1953), from memory: II Pm-3m, III P4/nmm (Z = 2), IV P-43m (ITA Nos. 221, 129, 215)
    assert [p.space_group.number for p in nh4br.phases] == [221, 129, 215]
    assert ii.disorder.unit("H4N").orientation_site_group == "Td"
    # ITA P4/nmm 2a: site -4m2 (D2d); two ions per cell
    (orbit,) = [o for o in iii.crystal.units if o.formula == "H4N"]
    assert (orbit.site_group, orbit.wyckoff, orbit.count) == ("D2d", "2a", 2)
    assert iv.units_per_cell("H4N") == 1


def test_nh4br_relations(nh4br):
    up, down = nh4br.steps
    # II -> III: D4h in Oh has index 3 and the primitive cell doubles (a' = a + b, b' = -a + b):
    # a t+k step of total index 6 (ITA A1 lists P4/nmm among the subgroups of Pm-3m via P4/mmm, from memory)
    assert (up.subgroup, up.point_index, up.cell_multiple, up.kind) == (True, 3, 2, "t+k")
    # III -> IV: Td is not a subgroup of D4h and the cell halves: no group-subgroup relation
    # (the III -> IV transition is first order, from memory)
    assert (down.subgroup, down.kind) == (False, "not group-subgroup")
    assert down.cell_multiple == pytest.approx(0.5)


def test_nh4br_bands_in_the_antiparallel_phase(nh4br):
    bands = {b.band: b.states for b in nh4br.bands}
    # by hand, D2d site (S4 along c, C2'' along the diagonals, sigma_v normal to a', b') in D4h,
    # two sites exchanged by the inversion:
    #   T2 (Td) -> B2 + E (D2d) -> B1g + A2u + Eg + Eu: 2 IR (A2u, Eu) + 2 Raman (B1g, Eg)
    #   E  (Td) -> A1 + B1      -> A1g + B2u + B2g + A1u: 0 IR + 2 Raman
    #   A1 (Td) -> A1           -> A1g + B2u: 0 IR + 1 Raman
    t2, e, a1 = bands["T2"][1], bands["E"][1], bands["A1"][1]
    assert (t2.ir, t2.raman, t2.total) == (2, 2, 4)
    assert {c.label for c in t2.components} == {"B1g", "Eg", "A2u", "Eu"}
    assert (e.ir, e.raman, e.total) == (0, 2, 4)
    assert (a1.ir, a1.raman, a1.total) == (0, 1, 2)
    # centrosymmetric D4h: mutual exclusion, no component both IR and Raman active
    assert not any(c.ir and c.raman for s in (t2, e, a1) for c in s.components)
    # phases II and IV: one T2 component, IR and Raman (Td site, one ion per cell)
    for s in (bands["T2"][0], bands["T2"][2]):
        assert (s.ir, s.raman) == (1, 1)


def test_nh4br_lattice_lines_appear_with_the_cell_doubling(nh4br):
    ii, iii, iv = (p.lattice() for p in nh4br.phases)
    # by hand: translations NH4 (D2d) B1g + A2u + Eg + Eu, Br (2c, C4v) A1g + A2u + Eg + Eu, less
    # acoustic A2u + Eu: A1g + B1g + 2Eg (4 Raman) + A2u + Eu (2 IR); librations T1 -> A2 + E (D2d)
    # -> A2g + B1u + Eg + Eu: 1 Raman (Eg) + 1 IR (Eu)
    assert (iii["translational_raman"], iii["translational_ir"]) == (4, 2)
    assert (iii["librational_raman"], iii["librational_ir"]) == (1, 1)
    # phase II (averaged Pm-3m): one optical T1u, no Raman lattice line
    assert (ii["translational_raman"], ii["translational_ir"]) == (0, 1)
    # Published observation this compares with (from memory, citation details not checked):
    # Raman spectra of NH4Br show lattice lines in the tetragonal phase III that are absent in the
    # disordered phase II, assigned to zone-boundary (M point) modes of the CsCl cell brought to
    # k = 0 by the cell doubling (e.g. C. H. Perry and R. P. Lowndes, J. Chem. Phys. 51, 3648 (1969)).
    # The tool reports the same qualitative change: Raman lattice lines 0 -> 4 and librations appearing.
    assert any("translational raman lines 0 -> 4" in r for r in nh4br.lattice_remarks)
    assert any("II -> III: 1 Raman-active librational lines appear" in r for r in nh4br.lattice_remarks)
    assert (iv["translational_raman"], iv["translational_ir"]) == (1, 1)

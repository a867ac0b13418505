"""The crystal pipeline (``splitting predict``) against published factor-group results.

Sources (abbreviations used beside the checks):

* RBP: D. L. Rousseau, R. P. Bauman and S. P. S. Porto, J. Raman Spectrosc. 10, 253 (1981):
  site tables for all space groups (which Wyckoff sets exist, the site groups, and the
  factor-group species each site contributes).
* Fateley: W. G. Fateley, F. R. Dollish, N. T. McDevitt and F. F. Bentley, *Infrared and Raman
  Selection Rules for Molecular and Lattice Vibrations: The Correlation Method*, Wiley (1972):
  correlation tables and the worked examples (calcite, naphthalene-type P2_1/c crystals).
* Hornig: D. F. Hornig, J. Chem. Phys. 16, 1063 (1948); Winston & Halford: H. Winston and
  R. S. Halford, J. Chem. Phys. 17, 607 (1949): translations and librations of molecules in
  crystals, site-group and factor-group counting.
* WDC: E. B. Wilson, J. C. Decius and P. C. Cross, *Molecular Vibrations*, McGraw-Hill (1955):
  character and correlation tables (Appendix X).
* ITA: International Tables for Crystallography, Vol. A: space groups, Wyckoff letters,
  site symmetries.

No source was open while the expected values were typed: every value is "from memory" unless
it is re-derived by hand in the comment beside it (a hand derivation is the method notes'
restriction/induction done on paper).  Comparisons with measured spectra are stated in
comments and are from memory as well.
"""

from __future__ import annotations

import functools
from pathlib import Path

import numpy as np
import pytest
import spglib

from splitting.crystal.predict import predict
from splitting.crystal.results import CrystalPrediction

ROOT = Path(__file__).resolve().parent.parent
STRUCTURES = ROOT / "structures"

#: every ordered crystal shipped in structures/ (the disordered files are refused by design)
ORDERED = [
    *sorted(p.name for p in STRUCTURES.glob("*.cif") if "disordered" not in p.name),
    "calcite.vasp",
    "calcite.extxyz",
]
NAPHTHALENE = ["naphthalene_P21a.cif", "naphthalene_P21c.cif", "naphthalene_P21n.cif"]


@functools.cache
def _predict(name: str) -> CrystalPrediction:
    """One prediction per bundled file (results are frozen, so sharing them is safe)."""
    return predict(STRUCTURES / name)


def _rep(rep) -> dict[str, int]:
    return rep.as_dict()


# ----------------------------------------------------------------------------- calcite
@pytest.mark.parametrize("name", ["calcite.cif", "calcite.vasp", "calcite.extxyz"])
def test_calcite_space_and_factor_group(name: str) -> None:
    p = _predict(name)
    # ITA No. 167, R-3c; crystal class -3m = D3d (RBP table for D3d^6; from memory)
    assert (p.space_group.number, p.space_group.symbol) == (167, "R-3c")
    assert p.factor_group == "D3d"
    assert p.centrosymmetric
    # rhombohedral primitive cell: Z = 2 CaCO3, 10 atoms (ITA: 30 atoms in the hexagonal
    # cell / 3 for the R centring)
    assert p.atoms_primitive == 10
    # principal axis along the hexagonal c (common practice, method notes)
    assert p.factor_axes["z"] == "c"


@pytest.mark.parametrize("name", ["calcite.cif", "calcite.vasp", "calcite.extxyz"])
def test_calcite_gamma_3n_and_activity(name: str) -> None:
    p = _predict(name)
    # Gamma_3N = A1g + 3A2g + 4Eg + 2A1u + 4A2u + 6Eu (RBP 1981; Fateley 1972 calcite example;
    # the common textbook result -- from memory).  Check of the count: 1 + 3 + 8 + 2 + 4 + 12 = 30.
    assert _rep(p.gamma_3n) == {"A1g": 1, "A2g": 3, "Eg": 4, "A1u": 2, "A2u": 4, "Eu": 6}
    # acoustic: the vector representation of D3d = A2u (z) + Eu (x, y) (WDC character table)
    assert _rep(p.acoustic) == {"A2u": 1, "Eu": 1}
    raman = {s.label: s.optical for s in p.species if s.raman}
    ir = {s.label: s.optical for s in p.species if s.ir}
    silent = {s.label: s.optical for s in p.species if not s.ir and not s.raman and s.optical}
    # Raman A1g + 4Eg, IR 3A2u + 5Eu, silent 2A1u + 3A2g (same sources, from memory).  Measured
    # (from memory): five first-order Raman lines of calcite, 156, 282, 712, 1086 (A1g) and
    # 1436 cm-1, e.g. S. P. S. Porto, J. A. Giordmaine and T. C. Damen, Phys. Rev. 147, 608 (1966).
    assert raman == {"A1g": 1, "Eg": 4}
    assert ir == {"A2u": 3, "Eu": 5}
    assert silent == {"A1u": 2, "A2g": 3}
    # mutual exclusion in a centrosymmetric factor group (method notes, step 5); every
    # IR-active species is still polar and LO/TO split, seen in IR reflectance only
    # (M. Born and K. Huang, Dynamical Theory of Crystal Lattices, Oxford 1954, ch. II)
    assert {s.label for s in p.species if s.polar} == {"A2u", "Eu"}
    assert all(s.lo_to_seen_in == ("IR reflectance",) for s in p.species if s.polar)
    assert p.totals() == {"ir": 8, "raman": 5, "silent": 5, "polar": 8, "optical": 18}


def test_calcite_units_sites_and_correlation() -> None:
    p = _predict("calcite.cif")
    co3, ca = p.unit("CO3"), p.unit("Ca")
    # CO3 2-: free group D3h (planar trigonal ion; WDC), centre on 6a with site symmetry 32 = D3;
    # Ca on 6b, site -3 = S6 (ITA No. 167; RBP; from memory)
    assert (co3.free_group, co3.site_group, co3.wyckoff, co3.site_symmetry, co3.count) == ("D3h", "D3", "6a", "32", 2)
    assert (ca.free_group, ca.site_group, ca.wyckoff, ca.site_symmetry, ca.count) == (None, "S6", "6b", "-3.", 2)
    # free CO3: A1' + A2'' + 2E' (WDC / Herzberg, planar XY3; from memory)
    assert _rep(co3.free_vibrations) == {"A1'": 1, "A2''": 1, "E'": 2}
    # D3h -> D3 (drop the mirrors): A1' -> A1, A2'' -> A2, E' -> E (WDC correlation table);
    # D3 -> D3d with Z = 2 on a site containing no inversion: each site species gives its g and
    # its u partner (Fateley 1972 calcite example; from memory)
    corr = {c.free: (str(c.site), _rep(c.factor), c.modes) for c in co3.correlation}
    assert corr == {
        "A1'": ("A1", {"A1g": 1, "A1u": 1}, 1),
        "A2''": ("A2", {"A2g": 1, "A2u": 1}, 1),
        "E'": ("E", {"Eg": 1, "Eu": 1}, 2),
    }
    # external modes of CO3: vector in D3 = A2 + E, axial vector in D3 = A2 + E, each induced
    # to A2g + Eg + A2u + Eu (hand derivation; Fateley 1972)
    assert _rep(co3.translations) == {"A2g": 1, "Eg": 1, "A2u": 1, "Eu": 1}
    assert _rep(co3.librations) == {"A2g": 1, "Eg": 1, "A2u": 1, "Eu": 1}
    assert _rep(co3.internal) == {"A1g": 1, "A2g": 1, "Eg": 2, "A1u": 1, "A2u": 1, "Eu": 2}
    # Ca on S6: vector = Au + Eu; induced to D3d: Au -> A1u + A2u, Eu -> 2Eu (hand derivation)
    assert _rep(ca.translations) == {"A1u": 1, "A2u": 1, "Eu": 2}
    assert _rep(ca.librations) == {}


# ------------------------------------------------------------------------- naphthalene
@pytest.mark.parametrize("name", NAPHTHALENE)
def test_naphthalene_type_correlation(name: str) -> None:
    p = _predict(name)
    # P2_1/c (ITA No. 14), factor group C2h, Z = 2 molecules on -1 (Ci) sites (2a)
    # (Fateley 1972; Hornig 1948; Cruickshank, Acta Cryst. 10, 504 (1957): from memory)
    assert (p.space_group.number, p.space_group.symbol, p.factor_group) == (14, "P2_1/c", "C2h")
    (unit,) = p.units
    assert (unit.formula, unit.free_group, unit.site_group, unit.wyckoff, unit.count) == ("C10H8", "D2h", "Ci", "2a", 2)
    # free naphthalene: 9Ag + 3B1g + 4B2g + 8B3g + 4Au + 8B1u + 8B2u + 4B3u (48 modes;
    # Mulliken axes, see test_molecule_reference.py; from memory)
    assert _rep(unit.free_vibrations) == {
        "Ag": 9,
        "B1g": 3,
        "B2g": 4,
        "B3g": 8,
        "Au": 4,
        "B1u": 8,
        "B2u": 8,
        "B3u": 4,
    }
    # D2h -> Ci: every g species -> Ag, every u -> Au; Ci -> C2h with Z = 2: Ag -> Ag + Bg,
    # Au -> Au + Bu (hand derivation; Fateley 1972 naphthalene-type table)
    for c in unit.correlation:
        if c.free.endswith("g"):
            assert (str(c.site), _rep(c.factor)) == ("Ag", {"Ag": 1, "Bg": 1}), c.free
        else:
            assert (str(c.site), _rep(c.factor)) == ("Au", {"Au": 1, "Bu": 1}), c.free
    # librations: axial vector in Ci = 3Ag, induced -> 3Ag + 3Bg (six Raman-active librational
    # lines, observed for naphthalene -- from memory; Hornig 1948, Winston & Halford 1949)
    assert _rep(unit.librations) == {"Ag": 3, "Bg": 3}
    # translations: vector in Ci = 3Au -> 3Au + 3Bu; acoustic in C2h (b unique, z along b):
    # Au (z) + 2Bu (x, y); optical translations 2Au + Bu, IR active (hand derivation)
    assert _rep(unit.translations) == {"Au": 3, "Bu": 3}
    assert _rep(p.acoustic) == {"Au": 1, "Bu": 2}
    transl = {s.label: s.translational for s in p.species if s.translational}
    assert transl == {"Au": 2, "Bu": 1}
    # internal: 24 g fundamentals -> 24Ag + 24Bg; 24 u -> 24Au + 24Bu (Davydov pairs)
    assert _rep(unit.internal) == {"Ag": 24, "Bg": 24, "Au": 24, "Bu": 24}
    # Gamma_3N: 108 = 3 x 36 -> 27 of each of the four species (hand derivation)
    assert _rep(p.gamma_3n) == {"Ag": 27, "Bg": 27, "Au": 27, "Bu": 27}
    # C2h activity (WDC character table): g Raman, u IR; the u species are polar
    # (LO/TO split, Born and Huang 1954), the g species not
    act = {s.label: (bool(s.ir), bool(s.raman), s.polar) for s in p.species}
    assert act == {
        "Ag": (False, True, False),
        "Bg": (False, True, False),
        "Au": (True, False, True),
        "Bu": (True, False, True),
    }


# ------------------------------------------------------------------------------- C60
def test_c60_ordered_pa3() -> None:
    p = _predict("c60_ordered_Pa-3.cif")
    # Pa-3 (ITA No. 205), factor group Th, Z = 4 molecules on 4a, site -3 = S6
    # (David et al., Nature 353, 147 (1991); Heiney et al., Phys. Rev. Lett. 66, 2911 (1991);
    # from memory)
    assert (p.space_group.number, p.factor_group) == (205, "Th")
    (c60,) = p.units
    assert (c60.formula, c60.free_group, c60.site_group, c60.wyckoff, c60.count) == ("C60", "Ih", "S6", "4a", 4)
    corr = {c.free: (_rep(c.site), _rep(c.factor), c.modes) for c in c60.correlation}
    # Ih -> S6 (WDC-style correlation; from memory): T1u -> Au + Eu; S6 -> Th with Z = 4
    # (induction by hand: Au -> Au + Tu, Eu -> Eu + 2Tu) gives Au + Eu + 3Tu per T1u line,
    # i.e. three IR-active Tu components for each of the four IR lines of free C60.
    assert corr["T1u"] == ({"Au": 1, "Eu": 1}, {"Au": 1, "Eu": 1, "Tu": 3}, 4)
    # Raman-active Ag and Hg of free C60 (2Ag + 8Hg): Hg -> Ag + 2Eg (S6) -> Ag + 2Eg + 5Tg
    assert corr["Ag"] == ({"Ag": 1}, {"Ag": 1, "Tg": 1}, 2)
    assert corr["Hg"] == ({"Ag": 1, "Eg": 2}, {"Ag": 1, "Eg": 2, "Tg": 5}, 8)
    assert corr["Gu"] == ({"Au": 2, "Eu": 1}, {"Au": 2, "Eu": 1, "Tu": 4}, 6)
    # librations: axial vector in S6 = Ag + Eg -> Ag + Eg + 3Tg; translations Au + Eu + 3Tu,
    # acoustic Tu (hand derivation; the usual Pa-3 lattice-mode count for C60, from memory)
    assert _rep(c60.librations) == {"Ag": 1, "Eg": 1, "Tg": 3}
    assert _rep(c60.translations) == {"Au": 1, "Eu": 1, "Tu": 3}
    assert _rep(p.acoustic) == {"Tu": 1}
    # 720 = 3 x 240 degrees of freedom (hand check: 30 + 60 + 270 for g and for u)
    assert _rep(p.gamma_3n) == {"Ag": 30, "Eg": 30, "Tg": 90, "Au": 30, "Eu": 30, "Tu": 90}
    # Comparison with measurement (from memory, details not checked): in the IR of solid C60
    # below the orientational ordering transition (~250-260 K) the four T1u lines stay by far
    # the strongest; fine structure / small splittings (a few cm-1 or less) and many weak extra
    # lines appear (K.-J. Fu et al., Phys. Rev. B 46, 1937 (1992); C. C. Homes et al., Phys. Rev.
    # B 49, 7052 (1994)).  The prediction is an upper bound: at most three Tu components per
    # T1u line; the Davydov coupling in C60 is weak, so fewer resolved components is consistent.
    tu = p.species_by_label("Tu")
    assert tu.ir == ("x", "y", "z") and not tu.raman
    # Tu from internal modes: every u species of Ih contributes its Tu count (1 + 4x3 + 5x3 + 6x4 + 7x5)
    assert tu.internal == 1 + 4 * 3 + 5 * 3 + 6 * 4 + 7 * 5


def test_c60_fcc_one_orientation_th_site() -> None:
    p = _predict("c60_fcc_Fm-3.cif")
    # Fm-3 (ITA No. 202): one molecule per primitive cell on 4a, site m-3 = Th; Ih -> Th
    # (WDC-style correlation; from memory): T1u -> Tu (no splitting), Hg -> Eg + Tg, Gg -> Ag + Tg
    (c60,) = p.units
    assert (c60.site_group, c60.wyckoff, c60.count, p.factor_group) == ("Th", "4a", 1, "Th")
    corr = {c.free: _rep(c.site) for c in c60.correlation}
    assert corr["T1u"] == {"Tu": 1}
    assert corr["Hg"] == {"Eg": 1, "Tg": 1}
    assert corr["Gg"] == {"Ag": 1, "Tg": 1}
    # one molecule: librations Tg, translations Tu = acoustic (no optical translation)
    assert _rep(c60.librations) == {"Tg": 1}
    assert _rep(c60.translations) == {"Tu": 1} == _rep(p.acoustic)


# --------------------------------------------------------------------------- diamond
def test_diamond() -> None:
    p = _predict("diamond.cif")
    # Fd-3m (ITA No. 227), C on 8a (-43m = Td), 2 atoms per primitive cell, factor group Oh
    assert (p.space_group.number, p.factor_group, p.atoms_primitive) == (227, "Oh", 2)
    (c,) = p.units
    assert (c.kind, c.site_group, c.wyckoff, c.count) == ("framework", "Td", "8a", 2)
    # Gamma_3N = T1u (acoustic) + T2g (optical, Raman only); the single first-order Raman line of
    # diamond at 1332 cm-1 (common practice; R. Loudon, Adv. Phys. 13, 423 (1964); from memory)
    assert _rep(p.gamma_3n) == {"T2g": 1, "T1u": 1}
    assert _rep(p.acoustic) == {"T1u": 1}
    optical = {s.label: s.optical for s in p.species if s.optical}
    assert optical == {"T2g": 1}
    t2g = p.species_by_label("T2g")
    assert t2g.raman and not t2g.ir and not t2g.polar
    assert p.totals()["ir"] == 0


# -------------------------------------------------------------------------- NH4Cl
def test_nh4cl_ordered() -> None:
    p = _predict("nh4cl_ordered_P-43m.cif")
    # ordered NH4Cl, P-43m (ITA No. 215), Z = 1; N on 1a and Cl on 1b, both -43m = Td
    # (H. A. Levy and S. W. Peterson, Phys. Rev. 86, 766 (1952); from memory)
    assert (p.space_group.number, p.factor_group, p.centrosymmetric) == (215, "Td", False)
    nh4, cl = p.unit("H4N"), p.unit("Cl")
    assert (nh4.free_group, nh4.site_group, nh4.wyckoff, nh4.count) == ("Td", "Td", "1a", 1)
    assert (cl.site_group, cl.wyckoff, cl.count) == ("Td", "1b", 1)
    # tetrahedral XY4: A1 + E + 2T2 (WDC; Herzberg 1945; from memory), unchanged on a Td site
    assert _rep(nh4.internal) == {"A1": 1, "E": 1, "T2": 2}
    assert {c.free: str(c.site) for c in nh4.correlation} == {"A1": "A1", "E": "E", "T2": "T2"}
    # librations: axial vector of Td = T1; translations: vector = T2, one per unit; one T2 is
    # acoustic (hand derivation; Fateley 1972)
    assert _rep(nh4.librations) == {"T1": 1}
    assert _rep(nh4.translations) == {"T2": 1} == _rep(cl.translations)
    assert _rep(p.acoustic) == {"T2": 1}
    assert _rep(p.gamma_3n) == {"A1": 1, "E": 1, "T1": 1, "T2": 4}
    # activity in Td (WDC): T2 is IR (x, y, z) and Raman (xy, xz, yz) -> polar (LO/TO split);
    # the T1 libration is silent (seen only in combinations and by neutrons -- from memory)
    t2, t1 = p.species_by_label("T2"), p.species_by_label("T1")
    assert t2.ir and t2.raman and t2.polar
    assert (t2.internal, t2.translational, t2.librational) == (2, 1, 0)
    assert not t1.ir and not t1.raman and not t1.polar and t1.librational == 1
    assert not p.species_by_label("A1").polar and not p.species_by_label("E").polar


# ------------------------------------------------------------------- Pa-3 N2 and CO2
@pytest.mark.parametrize("name, formula", [("alpha_N2_Pa-3.cif", "N2"), ("co2_Pa-3.cif", "CO2")])
def test_linear_molecules_pa3(name: str, formula: str) -> None:
    p = _predict(name)
    # Pa-3, Z = 4 linear molecules on S6 sites along <111> (Jordan et al., J. Chem. Phys. 41, 756
    # (1964); Simon & Peters, Acta Cryst. B36, 2750 (1980); from memory)
    u = p.unit(formula)
    assert (u.free_group, u.site_group, u.wyckoff, u.count) == ("D∞h", "S6", "4a", 4)
    # linear unit: two librations, the axial vector perpendicular to the axis = Eg in S6,
    # induced -> Eg + 2Tg: three Raman-active libron lines (observed for alpha-N2 and for solid
    # CO2 -- from memory, e.g. J. E. Cahill and G. E. Leroi, J. Chem. Phys. 51, 1324 (1969))
    assert _rep(u.librations) == {"Eg": 1, "Tg": 2}
    # translations Au + Eu + 3Tu, acoustic Tu: two IR-active Tu translational lines (from memory,
    # e.g. the two far-IR lattice lines of alpha-N2, A. Ron and O. Schnepp, J. Chem. Phys. 46,
    # 3991 (1967))
    assert _rep(u.translations) == {"Au": 1, "Eu": 1, "Tu": 3}
    assert p.species_by_label("Tu").translational == 2
    corr = {c.free: _rep(c.factor) for c in u.correlation}
    # Sigma_g+ stretch -> Ag + Tg (Raman doublet); for CO2 also Sigma_u+ -> Au + Tu and the
    # bend Pi_u -> Eu (site) -> Eu + 2Tu: two IR components of nu2 (hand derivation)
    assert corr["Σg+"] == {"Ag": 1, "Tg": 1}
    if formula == "CO2":
        assert corr["Σu+"] == {"Au": 1, "Tu": 1}
        assert corr["Πu"] == {"Eu": 1, "Tu": 2}


# ------------------------------------------- the whole-cell identity on every structure
def _primitive_inversion_fixed(name: str) -> int | None:
    """Atoms of the primitive cell left in place (mod lattice) by the inversion, or None.

    Computed with spglib and ase only, independently of the package.
    """
    import ase.io

    atoms = ase.io.read(STRUCTURES / name)
    old = spglib.error.OLD_ERROR_HANDLING
    spglib.error.OLD_ERROR_HANDLING = False
    try:
        lat, frac, num = spglib.standardize_cell(
            (atoms.cell[:], atoms.get_scaled_positions(), atoms.numbers), to_primitive=True, symprec=1e-2
        )
        ds = spglib.get_symmetry_dataset((lat, frac, num), symprec=1e-2)
    finally:
        spglib.error.OLD_ERROR_HANDLING = old
    for rot, t in zip(ds.rotations, ds.translations, strict=True):
        if np.array_equal(rot, -np.eye(3, dtype=int)):
            d = -frac + t - frac
            d -= np.round(d)
            return int(np.sum(np.linalg.norm(d @ lat, axis=1) < 0.05))
    return None


@pytest.mark.parametrize("name", ORDERED)
def test_internal_plus_external_is_gamma_3n(name: str) -> None:
    """Method notes, step 4: the sum over units equals the whole-cell count, species by species."""
    p = _predict(name)
    total = {lab: 0 for lab, _ in p.gamma_3n.counts}
    for u in p.units:
        for rep in (u.internal, u.translations, u.librations):
            for lab, n in rep.counts:
                total[lab] += n
    assert total == dict(p.gamma_3n.counts)
    # number of modes = 3 x atoms of the primitive cell (counting degeneracy)
    assert p.gamma_3n.dimension == 3 * p.atoms_primitive
    assert sum(s.dimension * (s.acoustic + s.optical) for s in p.species) == 3 * p.atoms_primitive
    assert sum(u.count * u.atoms_per_unit for u in p.units) == p.atoms_primitive
    # per species: acoustic + optical = Gamma_3N multiplicity; the acoustic modes are 3
    for s in p.species:
        assert s.acoustic + s.optical == p.gamma_3n[s.label], s.label
    assert p.acoustic.dimension == 3


@pytest.mark.parametrize("name", ORDERED)
def test_gamma_3n_character_of_inversion(name: str) -> None:
    """Independent check: chi_3N(i) = -3 U(i) (method notes, step 4), with U(i) from spglib.

    For a centrosymmetric factor group, chi(i) = sum of g dimensions - sum of u dimensions.
    """
    p = _predict(name)
    fixed = _primitive_inversion_fixed(name)
    assert (fixed is not None) == p.centrosymmetric
    if fixed is None:
        return
    chi = sum(
        d * n * (1 if lab.endswith("g") else -1)
        for (lab, n), d in zip(p.gamma_3n.counts, p.gamma_3n.dimensions, strict=True)
    )
    assert chi == -3 * fixed

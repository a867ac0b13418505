"""Labels, IR components, Raman tensors and scattering geometries in the axes of the file.

Conventions (docs/conventions.md): Mulliken's rules (R. S. Mulliken, J. Chem. Phys. 23, 1997
(1955)) applied to the file's own a, b, c: orthorhombic D2h with x, y, z along a, b, c, so
that B1g carries xy, B2g xz and B3g yz; monoclinic C2h with z along the file's unique axis;
trigonal D3d with z along the three-fold axis.  The six settings of an orthorhombic space
group, abc, ba-c, cab, -cba, bca, a-cb, and their Hermann-Mauguin symbols are those of
International Tables for Crystallography, Vol. A, Table 4.3.2.1 (for No. 62: Pnma, Pmnb, Pbnm,
Pcmn, Pmcn, Pnam; from memory, and as spglib's tables of Hall symbols list them).

The orthorhombic crystal is aragonite, CaCO3, as usually published in Pmcn (J. P. R. de
Villiers, Am. Mineral. 56, 758 (1971); cell and coordinates from memory, rounded); what the
tests check does not depend on the exact coordinates, only on the space group.
"""

from __future__ import annotations

import itertools
import re
from pathlib import Path

import ase.io
import numpy as np
import pytest
import spglib
from ase import Atoms

from splitting.crystal.predict import Options, predict_atoms

ROOT = Path(__file__).resolve().parent.parent
STRUCTURES = ROOT / "structures"

PAIRS = {"xx": (0, 0), "yy": (1, 1), "zz": (2, 2), "xy": (0, 1), "xz": (0, 2), "yz": (1, 2)}

#: the six settings of ITA Table 4.3.2.1 as (new a, b, c) = rows of signed permutations of (a, b, c)
SETTINGS = {
    "abc": ((0, 1), (1, 1), (2, 1)),
    "ba-c": ((1, 1), (0, 1), (2, -1)),
    "cab": ((2, 1), (0, 1), (1, 1)),
    "-cba": ((2, -1), (1, 1), (0, 1)),
    "bca": ((1, 1), (2, 1), (0, 1)),
    "a-cb": ((0, 1), (2, -1), (1, 1)),
}


def _expand(hall: int, cell: np.ndarray, sites: list[tuple[str, tuple[float, float, float]]]) -> Atoms:
    """Atoms of a crystal from its asymmetric unit and the operations of one Hall setting."""
    old = spglib.error.OLD_ERROR_HANDLING
    spglib.error.OLD_ERROR_HANDLING = False
    try:
        db = spglib.get_symmetry_from_database(hall)
    finally:
        spglib.error.OLD_ERROR_HANDLING = old
    symbols, frac = [], []
    for sym, x in sites:
        for w, t in zip(db["rotations"], db["translations"], strict=True):
            y = np.mod(w @ np.array(x) + t, 1.0)
            if not any(np.linalg.norm(((y - f + 0.5) % 1.0 - 0.5) @ cell) < 1e-3 for f in frac):
                symbols.append(sym)
                frac.append(y)
    return Atoms(symbols=symbols, scaled_positions=frac, cell=cell, pbc=True)


def aragonite_pmcn() -> Atoms:
    """Aragonite in Pmcn (Hall number 296, setting bca of No. 62); de Villiers 1971, from memory."""
    cell = np.diag([4.9616, 7.9705, 5.7394])
    sites = [
        ("Ca", (0.25, 0.41502, 0.75985)),
        ("C", (0.25, 0.76211, -0.08518)),
        ("O", (0.25, 0.92224, -0.09557)),
        ("O", (0.47347, 0.68065, -0.08726)),
    ]
    return _expand(296, cell, sites)


def rewritten(atoms: Atoms, rows) -> Atoms:
    """The same crystal (same Cartesian positions) written on new axes: new a_i = sign * old a_k."""
    m = np.zeros((3, 3))
    for i, (k, sign) in enumerate(rows):
        m[i, k] = sign
    lat = m @ atoms.cell[:]
    out = atoms.copy()
    out.set_cell(lat, scale_atoms=False)
    out.wrap()
    return out


def component_counts(p) -> dict[str, int]:
    """Optical frequencies seen in each Raman component and each IR component."""
    out = {}
    for name, (i, j) in PAIRS.items():
        out[name] = sum(s.optical for s in p.species if s.raman_tensor[i][j] != "0")
    for axis in "xyz":
        out[axis] = sum(s.optical for s in p.species if axis in s.ir)
    return out


def _permuted_name(name: str, rows) -> str:
    """Component name on the new axes -> the old component it is (new axis i = old axis rows[i][0])."""
    return "".join("xyz"[rows["xyz".index(c)][0]] for c in name)


def _sorted_pair(name: str) -> str:
    return "".join(sorted(name)) if len(name) == 2 else name


@pytest.fixture(scope="module")
def aragonite():
    base = aragonite_pmcn()
    return base, predict_atoms(base)


def test_aragonite_is_pnma_written_as_pmcn(aragonite) -> None:
    _, p = aragonite
    assert (p.space_group.number, p.space_group.symbol) == (62, "Pnma")
    assert p.setting.file_symbol == "P m c n"
    assert p.setting.standard_symbol == "P n m a"
    assert p.factor_axes == {"x": "a", "y": "b", "z": "c"}
    # 20 atoms; Ca and the CO3 ions on 4c, on the mirror (ITA No. 62)
    assert p.atoms_primitive == 20
    assert {u.formula: (u.site_group, u.count) for u in p.units} == {"Ca": ("Cs", 4), "CO3": ("Cs", 4)}


@pytest.mark.parametrize("name", list(SETTINGS))
def test_six_settings_counts_follow_the_permutation(aragonite, name: str) -> None:
    base, ref = aragonite
    rows = SETTINGS[name]
    p = predict_atoms(rewritten(base, rows))
    assert p.factor_axes == {"x": "a", "y": "b", "z": "c"}
    want, got = component_counts(ref), component_counts(p)
    for comp, n in got.items():
        assert n == want[_sorted_pair(_permuted_name(comp, rows))], comp
    # D2h labels (Mulliken 1955): B1g carries xy, B2g xz, B3g yz in the file's axes
    for s in p.species:
        if s.label in ("B1g", "B2g", "B3g"):
            (i, j) = {"B1g": (0, 1), "B2g": (0, 2), "B3g": (1, 2)}[s.label]
            assert s.raman_tensor[i][j] != "0" and s.raman_tensor[0][0] == "0"


def test_six_settings_are_named(aragonite) -> None:
    base, _ = aragonite
    names = {predict_atoms(rewritten(base, rows)).setting.file_symbol for rows in SETTINGS.values()}
    # the six settings of Pnma (ITA Vol. A, Table 4.3.2.1; from memory)
    assert names == {"P n m a", "P m n b", "P b n m", "P c m n", "P m c n", "P n a m"}


def test_standard_axes_are_the_same_for_every_setting(aragonite) -> None:
    base, _ = aragonite
    opts = Options(standard_axes=True)
    got = [predict_atoms(rewritten(base, rows), opts) for rows in SETTINGS.values()]
    first = got[0]
    for p in got[1:]:
        assert component_counts(p) == component_counts(first)
        assert {s.label: s.optical for s in p.species} == {s.label: s.optical for s in first.species}
        assert p.setting.labels == "standard"


@pytest.mark.parametrize("name", ["cab", "-cba", "a-cb"])
def test_fixed_laboratory_geometry_sees_the_same_lines(aragonite, name: str) -> None:
    """Light along the crystal's c, polarisations along a and then b: the same lines on every file."""
    base, ref = aragonite
    rows = SETTINGS[name]
    p = predict_atoms(rewritten(base, rows))
    new_of_old = {rows[i][0]: i for i in range(3)}  # old axis index -> new axis index
    for geometry in [(2, 0, 0), (2, 0, 1), (0, 1, 2), (1, 2, 2)]:
        k, e_i, e_s = geometry
        old = f"{'xyz'[k]}({'xyz'[e_i]}{'xyz'[e_s]})-{'xyz'[k]}"
        k2, i2, s2 = (new_of_old[v] for v in geometry)
        new = f"{'xyz'[k2]}({'xyz'[i2]}{'xyz'[s2]})-{'xyz'[k2]}"
        assert sorted(n for _, n in p.seen_in(new)) == sorted(n for _, n in ref.seen_in(old)), (old, new)


# ------------------------------------------------------------------ monoclinic
@pytest.mark.parametrize(
    "name, symbol",
    [
        ("naphthalene_P21c.cif", "P 1 2_1/c 1"),
        ("naphthalene_P21a.cif", "P 1 2_1/a 1"),
        ("naphthalene_P21n.cif", "P 1 2_1/n 1"),
    ],
)
def test_monoclinic_cell_choices(name: str, symbol: str) -> None:
    p = predict_atoms(ase.io.read(STRUCTURES / name))
    assert p.setting.file_symbol == symbol
    assert p.setting.standard_symbol == "P 1 2_1/c 1"
    # C2h with z along the unique axis b (Mulliken 1955): Au is z-polarised (along b), Bu in the ac plane
    assert p.factor_axes["z"] == "b"
    assert p.species_by_label("Au").ir == ("z",)
    assert set(p.species_by_label("Bu").ir) == {"x", "y"}


def test_c_unique_monoclinic() -> None:
    """The P2_1/c file rewritten with the unique axis along c: z follows it, the counts stay."""
    base = ase.io.read(STRUCTURES / "naphthalene_P21c.cif")
    ref = predict_atoms(base)
    p = predict_atoms(rewritten(base, ((2, 1), (0, 1), (1, 1))))  # new (a, b, c) = old (c, a, b)
    assert p.factor_axes["z"] == "c"
    assert p.setting.file_symbol.startswith("P 1 1 2_1/")
    assert component_counts(p) == component_counts(ref)
    assert {s.label: s.optical for s in p.species} == {s.label: s.optical for s in ref.species}


# -------------------------------------------------------- rhombohedral axes
def test_rhombohedral_versus_hexagonal_axes() -> None:
    """Calcite on rhombohedral axes (ITA obverse: a_R = (2a + b + c)/3 ...): the same components."""
    hexa = ase.io.read(STRUCTURES / "calcite.cif")
    ref = predict_atoms(hexa)
    a, b, c = hexa.cell[:]
    lat = np.array([(2 * a + b + c) / 3, (-a + b + c) / 3, (-a - 2 * b + c) / 3])
    frac = hexa.positions @ np.linalg.inv(lat)
    frac -= np.floor(frac + 1e-6)
    keep: list[int] = []
    for i, f in enumerate(frac):
        if not any(np.linalg.norm(((f - frac[j] + 0.5) % 1 - 0.5) @ lat) < 1e-3 for j in keep):
            keep.append(i)
    rhomb = Atoms(numbers=hexa.numbers[keep], scaled_positions=frac[keep], cell=lat, pbc=True)
    p = predict_atoms(rhomb)
    assert p.atoms_input == 10
    assert p.setting.file_symbol == "R -3 c" and p.setting.file_choice == "R"
    assert p.factor_axes["z"] == "[1,1,1]"  # the three-fold axis of the rhombohedral cell
    assert ref.factor_axes["z"] == "c"
    assert component_counts(p) == component_counts(ref)
    assert {s.label: s.optical for s in p.species} == {s.label: s.optical for s in ref.species}


def test_all_permutations_are_covered() -> None:
    assert {tuple(k for k, _ in rows) for rows in SETTINGS.values()} == set(itertools.permutations(range(3)))


# ------------------------------------------------------------------ command line
def test_cli_prints_setting_and_takes_standard_axes(run_cli, tmp_path: Path) -> None:
    import json

    path = tmp_path / "aragonite_pbnm.cif"
    ase.io.write(path, rewritten(aragonite_pmcn(), SETTINGS["-cba"]))  # Pmcn -> its -cba setting
    rc, out, err = run_cli(["predict", str(path)])
    assert rc == 0 and err == ""
    line = next(x for x in out.splitlines() if "setting of the file" in x)
    assert "standard P n m a" in line and "labels in the axes of the file's cell" in line
    assert "Wyckoff letters of the standard setting" in line
    rc, out, _ = run_cli(["predict", str(path), "--json"])
    st = json.loads(out)["setting"]
    assert st["labels"] == "file" and st["standard_symbol"] == "P n m a" and st["file_symbol"] is not None
    assert len(st["transformation_matrix"]) == 3 and len(st["origin_shift"]) == 3
    rc, out, _ = run_cli(["predict", str(path), "--json", "--standard-axes"])
    assert json.loads(out)["setting"]["labels"] == "standard"
    for command in ("lower", "compare", "report", "explain"):
        rc, out, _ = run_cli([command, "--help"])
        assert rc == 0 and "--standard-axes" in out, command


@pytest.mark.parametrize(
    "full, short",
    [
        # short symbols of International Tables for Crystallography, Vol. A, Table 4.3.2.1 (from memory)
        ("P 1 2_1/a 1", "P2_1/a"),
        ("P 1 1 2_1/n", "P2_1/n"),
        ("C 1 2/c 1", "C2/c"),
        ("P b n m", "Pbnm"),
        ("P 2_1 2_1 2_1", "P2_12_12_1"),
        ("P 3 1 2", "P312"),
        ("P 3 2 1", "P321"),
        ("P -1", "P-1"),
        ("P 1", "P1"),
        ("F m -3 m", "Fm-3m"),
    ],
)
def test_short_symbols(full: str, short: str) -> None:
    from splitting.crystal.setting import short_symbol

    assert short_symbol(full) == short


def test_headings_name_the_files_setting(run_cli, tmp_path: Path) -> None:
    """A P2_1/a file is headed P2_1/a (its labels are in its axes), the standard symbol beside it;
    with --standard-axes, or for a file in the standard setting, the standard symbol alone."""
    import json

    from splitting.report.display import summary

    a = str(STRUCTURES / "naphthalene_P21a.cif")
    rc, out, _ = run_cli(["predict", a])
    assert rc == 0
    assert "space group P2_1/a (No. 14, C2h^5; standard setting P2_1/c)" in out
    rc, out, _ = run_cli(["predict", a, "--json"])
    assert json.loads(out)["setting"]["label_symbol"] == "P2_1/a"
    rc, out, _ = run_cli(["predict", a, "--standard-axes"])
    assert "space group P2_1/c (No. 14, C2h^5)," in out and "standard setting P2_1/c" not in out
    rc, out, _ = run_cli(["predict", str(STRUCTURES / "naphthalene_P21c.cif")])
    assert "space group P2_1/c (No. 14, C2h^5)," in out
    p = predict_atoms(ase.io.read(a))
    assert p.symbol == "P2_1/a" and p.space_group.symbol == "P2_1/c"
    assert "space group P2_1/a" in summary(p)


@pytest.mark.parametrize("name", list(SETTINGS))
def test_site_symbols_in_the_files_axes(aragonite, name: str) -> None:
    """The oriented site symbol of CO3^2- (4c, .m. in Pnma; ITA Vol. A, No. 62) puts its m at
    the file's axis normal to the site mirror, which is the site group Cs's z (Mulliken 1955)."""
    base, _ = aragonite
    p = predict_atoms(rewritten(base, SETTINGS[name]))
    for u in p.units:
        assert u.site_group == "Cs"
        assert u.site_symmetry.count("m") == 1 and len(u.site_symmetry) == 3
        assert "abc"[u.site_symmetry.index("m")] == u.site_axes["z"].lstrip("-")
    std = predict_atoms(rewritten(base, SETTINGS[name]), options=Options(standard_axes=True))
    assert {u.site_symmetry for u in std.units} == {".m."}
    assert p.setting.to_dict()["site_symbols"] == "file" and std.setting.to_dict()["site_symbols"] == "standard"


def test_lower_names_the_parent_in_the_files_setting(run_cli, tmp_path: Path) -> None:
    path = tmp_path / "aragonite_pmcn.cif"
    ase.io.write(path, aragonite_pmcn())
    rc, out, err = run_cli(["lower", str(path), "--max-index", "2"])
    assert rc == 0, err
    head, second = out.splitlines()[:2]
    assert head.startswith("Parent Pmcn (No. 62; standard setting Pnma)")
    assert second.startswith("Candidates: named and labelled in the file's axes")
    rc, out, err = run_cli(["predict", str(path)])
    assert "space group Pmcn (No. 62, D2h^16; standard setting Pnma)" in out
    assert "site symbols in the file's axes" in out


def test_lower_candidates_in_the_files_axes(aragonite) -> None:
    """Below a Pmcn file every candidate's cell is the file's (same a, b, c), and each polar C2v
    candidate is named with its two-fold axis where the site group's z lies: P2_1cn (z = a),
    Pm2_1n (z = b), Pmc2_1 (z = c) - the three mm2 settings of the subgroups of Pnma written on
    the file's axes (ITA Vol. A, No. 62, maximal subgroups, from memory; checked here by the axes)."""
    from splitting.phases.lower import lower

    base, _ = aragonite
    found = lower(atoms=base, max_index=2)
    assert found.parent.symbol == "Pmcn"
    given = base.cell.cellpar()[:3]
    polar = {}
    for c in found.candidates:
        assert np.allclose(c.prediction.cell_parameters[:3], given, atol=1e-3), c.name
        if c.point_group == "C2v":
            polar[c.symbol] = c.prediction.factor_axes["z"]
            two = [k for k, part in enumerate(re.findall(r"2_1|2|[a-z]", c.symbol[1:])) if part.startswith("2")]
            assert "abc"[two[0]] == c.prediction.factor_axes["z"], c.name
    assert polar == {"P2_1cn": "a", "Pm2_1n": "b", "Pmc2_1": "c"}
    names = {c.name for c in found.candidates}
    assert {"P2_1cn (33, Pna2_1)", "Pm2_1n (31, Pmn2_1)", "Pmc2_1 (26)"} <= names
    # the counts do not depend on the axes they are written in
    std = lower(atoms=base, max_index=2, options=Options(standard_axes=True))

    def counts(result):
        return sorted(
            (c.space_group[0], sorted((s.dimension, s.optical) for s in c.prediction.species))
            for c in result.candidates
        )

    assert counts(found) == counts(std)


def test_lower_candidates_of_a_centred_parent_in_the_files_axes() -> None:
    """A t-subgroup of a centred parent keeps every translation, so the file's cell is a cell of it:
    below fcc C60 (Fm-3, cubic F cell) Fmmm, F23, F222 and Fmm2 are named in settings written on the
    cube and labelled along a, b, c, the monoclinic t-subgroup in the cube's B-centred setting
    B 1 1 2/m (ITA Vol. A, settings of No. 12, from memory), and the three-fold axis of R-3 is written
    as a body diagonal of the cube (not in the indices of the primitive cell, which the file never gave)."""
    from splitting.phases.lower import lower

    found = lower(ROOT / "structures" / "c60_fcc_Fm-3.cif", max_index=8)
    by_name = {c.name: c for c in found.candidates}
    for name, setting in (("Fmmm (69)", "F m m m"), ("F23 (196)", "F 2 3"), ("F222 (22)", "F 2 2 2")):
        pred = by_name[name].prediction
        assert pred.setting.file_symbol == setting
        assert pred.factor_axes == {"x": "a", "y": "b", "z": "c"}, name
    polar = by_name["Fmm2 (42)"].prediction
    assert polar.setting.file_symbol == "F m m 2" and polar.factor_axes["z"] == "c"
    assert by_name["B2/m (12, C2/m)"].prediction.setting.file_symbol == "B 1 1 2/m"
    for c in found.candidates:
        if c.point_group in ("S6", "C3"):
            axis = c.prediction.factor_axes["z"]
            assert re.fullmatch(r"\[-?1,-?1,-?1\]", axis), (c.name, axis)
    # the same subgroups and counts in the standard axes; two orthorhombic subgroups that are not
    # conjugate in Th (Cmce and Ccme, a and b exchanged) merge there, and stay apart in the cube
    std = lower(ROOT / "structures" / "c60_fcc_Fm-3.cif", max_index=8, options=Options(standard_axes=True))

    def counts(result):
        return {
            (c.space_group[0], tuple(sorted((s.dimension, s.optical) for s in c.prediction.species)))
            for c in result.candidates
        }

    assert counts(found) == counts(std)
    assert sum(c.variants for c in found.candidates) == sum(c.variants for c in std.candidates)
    assert {"Ccme (64, Cmce)", "Cmce (64)"} <= set(by_name)


def test_lower_candidates_of_a_rhombohedral_parent_on_its_hexagonal_cell() -> None:
    """Calcite's file gives the hexagonal cell of R-3c: the t-subgroups R3c, R32 and R-3 are named in
    their obverse hexagonal settings and labelled with z along c, the monoclinic C2/c with its two-fold
    axis along a (a two-fold axis of R-3c, ITA Vol. A No. 167, from memory)."""
    from splitting.phases.lower import lower

    found = lower(ROOT / "structures" / "calcite.cif", max_index=4)
    t = {c.name: c.prediction for c in found.candidates if c.kind == "t"}
    for name, setting in (("R3c (161)", "R 3 c"), ("R32 (155)", "R 3 2"), ("R-3 (148)", "R -3")):
        assert t[name].setting.file_symbol == setting and t[name].factor_axes["z"] == "c", name
    assert t["C2/c (15)"].factor_axes["z"] == "a"

"""``splitting predict`` on good input: text and JSON output, options.

The JSON keys checked here are the published schema of the command (docs and the brief of
the crystal pipeline): ``space_group {number, symbol}``, ``factor_group``, ``atoms_primitive``,
``units[{formula, free_group, site_group, wyckoff, count, correlation[{free, site[{label,
count}], factor[{label, count}]}]}]`` and ``species[{label, dimension, acoustic, optical,
internal, translational, librational, ir, raman}]``.
"""

from __future__ import annotations

import functools
import json
from collections.abc import Callable, Sequence
from pathlib import Path

import pytest

from splitting.crystal.predict import Options, predict
from splitting.crystal.results import CrystalPrediction

ROOT = Path(__file__).resolve().parent.parent
STRUCTURES = ROOT / "structures"
ORDERED = [
    *sorted(p.name for p in STRUCTURES.glob("*.cif") if "disordered" not in p.name),
    "calcite.vasp",
    "calcite.extxyz",
]

Runner = Callable[[Sequence[str]], tuple[int, str, str]]


def _ok(result: tuple[int, str, str]) -> str:
    code, out, err = result
    assert code == 0, err
    assert err == ""
    assert out.strip()
    return out


@functools.cache
def _api(name: str) -> CrystalPrediction:
    return predict(STRUCTURES / name)


def _json(run_cli: Runner, *argv: object) -> dict:
    return json.loads(_ok(run_cli(["predict", *map(str, argv), "--json"])))


def _check_schema(data: dict) -> None:
    assert isinstance(data["space_group"]["number"], int) and 1 <= data["space_group"]["number"] <= 230
    assert isinstance(data["space_group"]["symbol"], str) and data["space_group"]["symbol"]
    assert isinstance(data["factor_group"], str)
    assert isinstance(data["atoms_primitive"], int) and data["atoms_primitive"] > 0
    assert isinstance(data["units"], list) and data["units"]
    for u in data["units"]:
        assert isinstance(u["formula"], str)
        assert u["free_group"] is None or isinstance(u["free_group"], str)
        assert isinstance(u["site_group"], str)
        assert isinstance(u["wyckoff"], str) and u["wyckoff"][:-1].isdigit()
        assert isinstance(u["count"], int) and u["count"] > 0
        assert isinstance(u["correlation"], list)
        for c in u["correlation"]:
            assert isinstance(c["free"], str)
            for part in ("site", "factor"):
                assert c[part], (u["formula"], c["free"], part)
                for item in c[part]:
                    assert set(item) >= {"label", "count"}
                    assert isinstance(item["label"], str) and isinstance(item["count"], int) and item["count"] > 0
    assert isinstance(data["species"], list) and data["species"]
    for s in data["species"]:
        for key in ("dimension", "acoustic", "optical", "internal", "translational", "librational"):
            assert isinstance(s[key], int) and s[key] >= 0, key
        assert isinstance(s["label"], str)
        assert isinstance(s["ir"], bool) and isinstance(s["raman"], bool)
        assert s["optical"] == s["internal"] + s["translational"] + s["librational"]


@pytest.mark.parametrize("name", ORDERED)
def test_json_schema_on_every_bundled_crystal(name: str, run_cli: Runner) -> None:
    data = _json(run_cli, STRUCTURES / name)
    _check_schema(data)
    # the numbers are those of the Python API (JSON round trip of to_dict)
    assert data == json.loads(json.dumps(_api(name).to_dict()))
    # 3N modes in all (counting degeneracy)
    assert sum(s["dimension"] * (s["acoustic"] + s["optical"]) for s in data["species"]) == 3 * data["atoms_primitive"]


def test_json_calcite_values(run_cli: Runner) -> None:
    data = _json(run_cli, STRUCTURES / "calcite.cif")
    assert (data["space_group"]["number"], data["space_group"]["symbol"], data["factor_group"]) == (167, "R-3c", "D3d")
    assert data["atoms_primitive"] == 10
    co3 = next(u for u in data["units"] if u["formula"] == "CO3")
    assert (co3["free_group"], co3["site_group"], co3["wyckoff"], co3["count"]) == ("D3h", "D3", "6a", 2)
    a1 = next(c for c in co3["correlation"] if c["free"] == "A1'")
    # A1' -> A1 -> A1g + A1u (Fateley et al. 1972, calcite; from memory)
    assert a1["site"] == [{"label": "A1", "count": 1}]
    assert a1["factor"] == [{"label": "A1g", "count": 1}, {"label": "A1u", "count": 1}]
    species = {s["label"]: s for s in data["species"]}
    # Raman A1g + 4Eg, IR 3A2u + 5Eu (Rousseau, Bauman & Porto 1981; from memory)
    assert {k: v["optical"] for k, v in species.items() if v["raman"]} == {"A1g": 1, "Eg": 4}
    assert {k: v["optical"] for k, v in species.items() if v["ir"]} == {"A2u": 3, "Eu": 5}


def test_text_output_calcite(run_cli: Runner) -> None:
    out = _ok(run_cli(["predict", STRUCTURES / "calcite.cif"]))
    for words in (
        "R-3c",
        "No. 167",
        "D3d",
        "CO3",
        "D3h",
        "6a",
        "6b",
        "Γ3N = A1g + 3A2g + 4Eg + 2A1u + 4A2u + 6Eu",
        "A1g + A1u",
    ):
        assert words in out, words
    # one line per factor-group species in the species table
    for label in ("A1g", "A2g", "Eg", "A1u", "A2u", "Eu"):
        assert any(line.split()[:1] == [label] for line in out.splitlines()), label


@pytest.mark.parametrize("name", ORDERED)
def test_text_output_every_bundled_crystal(name: str, run_cli: Runner) -> None:
    out = _ok(run_cli(["predict", STRUCTURES / name]))
    p = _api(name)
    assert f"Γ3N = {p.gamma_3n}" in out
    assert p.space_group.symbol in out
    for u in p.units:
        assert u.formula in out


def test_option_bond_breaks_carbonate(run_cli: Runner) -> None:
    data = _json(run_cli, STRUCTURES / "calcite.cif", "--bond", "C-O=0")
    assert sorted(u["formula"] for u in data["units"]) == ["C", "Ca", "O"]
    # the whole-cell count does not depend on how the cell is cut into units
    assert data["gamma_3n"] == _json(run_cli, STRUCTURES / "calcite.cif")["gamma_3n"]


def test_option_units_filter(run_cli: Runner) -> None:
    # keep H4N as a molecule: same as the default
    default = _json(run_cli, STRUCTURES / "nh4cl_ordered_P-43m.cif")
    kept = _json(run_cli, STRUCTURES / "nh4cl_ordered_P-43m.cif", "--units", "H4N")
    assert [u["formula"] for u in kept["units"]] == [u["formula"] for u in default["units"]]
    # keep only Cl: the ammonium ion is split into atoms
    split = _json(run_cli, STRUCTURES / "nh4cl_ordered_P-43m.cif", "--units", "Cl")
    assert sorted(u["formula"] for u in split["units"]) == ["Cl", "H", "N"]


def test_option_free_group(run_cli: Runner) -> None:
    # naming a subgroup of D2h that still contains the Ci site: the correlation is then through C2h
    data = _json(run_cli, STRUCTURES / "naphthalene_P21a.cif", "--free-group", "C10H8=C2h")
    (unit,) = data["units"]
    assert (unit["free_group"], unit["free_group_source"]) == ("C2h", "given")
    assert [c["free"] for c in unit["correlation"]] == ["Ag", "Bg", "Au", "Bu"]
    # 48 internal modes whatever the free group (3 x 18 - 6)
    assert sum(c["modes"] * c["free_dimension"] for c in unit["correlation"]) == 48
    # the crystal's species table does not depend on the free group named
    assert data["species"] == _json(run_cli, STRUCTURES / "naphthalene_P21a.cif")["species"]


def test_option_bond_metals_and_scale(run_cli: Runner) -> None:
    data = _json(run_cli, STRUCTURES / "calcite.cif", "--bond-metals", "--bond-scale", "1.5")
    assert {u["formula"] for u in data["units"]} <= {"Ca", "C", "O", "CO3", "C2Ca2O6"}
    assert data["gamma_3n"] == "A1g + 3A2g + 4Eg + 2A1u + 4A2u + 6Eu"


def test_options_reach_the_pipeline() -> None:
    """The CLI options map onto Options one to one (one name per idea)."""
    from splitting.cli import build_parser
    from splitting.cli._shared import options as _options

    args = build_parser().parse_args(
        [
            "predict",
            "x.cif",
            "--tolerance",
            "0.02",
            "--unit-tolerance",
            "0.1",
            "--free-group",
            "C60=Th",
            "--units",
            "C60",
            "--bond",
            "C-C=1.7",
            "--bond-scale",
            "1.1",
            "--bond-metals",
        ]
    )
    assert _options(args) == Options(
        tolerance=0.02,
        unit_tolerance=0.1,
        free_groups=(("C60", "Th"),),
        formulas=("C60",),
        cutoffs=((("C", "C"), 1.7),),
        bond_scale=1.1,
        ionic_metals=False,
    )


def test_tolerance_option(run_cli: Runner) -> None:
    data = _json(run_cli, STRUCTURES / "calcite.cif", "--tolerance", "0.001")
    assert data["space_group"]["number"] == 167
    assert data["space_group"]["tolerance_angstrom"] == 0.001

"""The ``splitting group`` and ``splitting molecule`` commands, run in-process through ``main``.

Reference values repeat those of the reference test files (with their sources there):
Ih species (Cotton App. IIA), the four C2v subgroups of D4h, C60 Γvib (from memory).
"""

from __future__ import annotations

import json

import pytest

IH_SPECIES = ["Ag", "T1g", "T2g", "Gg", "Hg", "Au", "T1u", "T2u", "Gu", "Hu"]  # Cotton App. IIA (from memory)


def assert_one_error_line(code: int, out: str, err: str) -> None:
    assert code != 0
    assert out == ""
    lines = err.strip("\n").splitlines()
    assert len(lines) == 1, err
    assert lines[0].startswith("error:")
    assert "Traceback" not in err


# ------------------------------------------------------------------ group


def test_group_text(run_cli):
    code, out, err = run_cli(["group", "Ih"])
    assert code == 0 and err == ""
    assert "order 120" in out
    for label in IH_SPECIES:
        assert label in out
    assert "translations: T1u" in out and "rotations: T1g" in out


def test_group_accepts_hermann_mauguin_and_aliases(run_cli):
    code, out, _ = run_cli(["group", "4/mmm"])
    assert code == 0 and "D4h" in out
    code, out, _ = run_cli(["group", "C3i"])
    assert code == 0 and "S6" in out


def test_group_json(run_cli):
    code, out, err = run_cli(["group", "D4h", "--json"])
    assert code == 0 and err == ""
    d = json.loads(out)
    assert d["name"] == "D4h" and d["order"] == 16
    assert [s["label"] for s in d["species"]] == ["A1g", "A2g", "B1g", "B2g", "Eg", "A1u", "A2u", "B1u", "B2u", "Eu"]
    assert all(len(s["characters"]) == len(d["classes"]) for s in d["species"])
    rules = {r["label"]: r for r in d["selection_rules"]}
    assert rules["A2u"]["ir"] == ["z"] and rules["B1g"]["raman"] == ["x²-y²"]


def test_linear_group(run_cli):
    code, out, _ = run_cli(["group", "Dinfh"])
    assert code == 0 and "Πu" in out and "Σg+" in out
    code, out, _ = run_cli(["group", "D∞h", "--json"])
    assert code == 0 and json.loads(out)["name"] == "D∞h"


def test_group_to_subgroup_text(run_cli):
    code, out, err = run_cli(["group", "D4h", "--to", "C2v"])
    assert code == 0 and err == ""
    # four inequivalent C2v subgroups of D4h (see test_subgroups_reference.py)
    assert "4 inequivalent embedding" in out
    assert out.count("[") >= 4


def test_group_to_subgroup_json(run_cli):
    code, out, _ = run_cli(["group", "D4h", "--to", "C2v", "--json"])
    assert code == 0
    d = json.loads(out)
    embs = d["embeddings"]
    assert len(embs) == 4
    by_classes = {tuple(e["operations_from_classes"]): e for e in embs}
    # Fateley, D4h correlation table (from memory): B1g -> A1 through σv, B2g -> A1 through σd
    via_v = {row["species"]: row["becomes"] for row in by_classes[("E", "C2", "σv")]["correlation"]}
    via_d = {row["species"]: row["becomes"] for row in by_classes[("E", "C2", "σd")]["correlation"]}
    assert via_v["B1g"] == {"A1": 1} and via_d["B2g"] == {"A1": 1}


# ------------------------------------------------------------------ molecule


def test_molecule_c60_json(run_cli, structures_dir):
    code, out, err = run_cli(["molecule", structures_dir / "molecules" / "c60.xyz", "--json"])
    assert code == 0 and err == ""
    d = json.loads(out)
    assert d["point_group"] == "Ih"
    assert d["vibration_count"] == 174
    species = {s["label"]: s for s in d["species"]}
    assert list(species) == IH_SPECIES
    for s in d["species"]:
        assert {"label", "dimension", "count", "ir", "raman"} <= set(s)
    # Dresselhaus et al. (1996) (from memory): 4 T1u IR-active, 2Ag + 8Hg Raman-active
    assert species["T1u"]["count"] == 4 and species["T1u"]["ir"] is True
    assert species["Hg"]["count"] == 8 and species["Hg"]["raman"] is True
    assert sum(s["count"] for s in d["species"] if s["ir"]) == 4
    assert sum(s["count"] for s in d["species"] if s["raman"]) == 10


def test_molecule_text(run_cli, structures_dir):
    code, out, err = run_cli(["molecule", structures_dir / "molecules" / "h2o.xyz"])
    assert code == 0 and err == ""
    assert "C2v" in out and "2A1 + B2" in out and "H2O" in out


def test_molecule_with_a_lower_group_and_a_tolerance(run_cli, structures_dir):
    code, out, _ = run_cli(["molecule", structures_dir / "molecules" / "ch4.xyz", "--point-group", "C3v", "--json"])
    assert code == 0
    d = json.loads(out)
    assert d["point_group"] == "C3v" and d["vibrations"] == "3A1 + 3E"  # Td -> C3v, WDC App. X (from memory)
    code, out, _ = run_cli(["molecule", structures_dir / "molecules" / "nh3.xyz", "--tolerance", "0.05", "--json"])
    assert code == 0 and json.loads(out)["tolerance_angstrom"] == 0.05


# ------------------------------------------------------------------ bad input


@pytest.fixture
def bad_inputs(structures_dir, tmp_path):
    foo = tmp_path / "water.foo"
    foo.write_text("this is not a structure\n")
    return {
        "empty file": ["molecule", structures_dir / "bad" / "empty.xyz"],
        "unknown format": ["molecule", foo],
        "single atom": ["molecule", structures_dir / "bad" / "single_atom.xyz"],
        "overlapping atoms": ["molecule", structures_dir / "bad" / "overlapping.xyz"],
        "missing file": ["molecule", tmp_path / "no_such_file.xyz"],
        "folder": ["molecule", tmp_path],
        "malformed cif": ["molecule", structures_dir / "bad" / "malformed.cif"],
        "unknown group": ["group", "Q7x"],
        "unknown subgroup": ["group", "D4h", "--to", "Q2"],
        "not a subgroup": ["group", "D4h", "--to", "C3v"],
        "linear --to": ["group", "D∞h", "--to", "C2v"],
        "lower group not a subgroup": ["molecule", structures_dir / "molecules" / "h2o.xyz", "--point-group", "D2h"],
        "negative tolerance": ["molecule", structures_dir / "molecules" / "h2o.xyz", "--tolerance", "-1"],
    }


BAD = [
    "empty file",
    "unknown format",
    "single atom",
    "overlapping atoms",
    "missing file",
    "folder",
    "malformed cif",
    "unknown group",
    "unknown subgroup",
    "not a subgroup",
    "linear --to",
    "lower group not a subgroup",
    "negative tolerance",
]


@pytest.mark.parametrize("case", BAD)
def test_bad_input_gives_one_error_line(run_cli, bad_inputs, case):
    assert_one_error_line(*run_cli(bad_inputs[case]))


@pytest.mark.parametrize("case", ["empty file", "unknown format", "missing file", "malformed cif"])
def test_file_errors_name_the_file(run_cli, bad_inputs, case):
    argv = bad_inputs[case]
    _, _, err = run_cli(argv)
    assert str(argv[1]) in err


@pytest.mark.parametrize("case", ["single atom", "overlapping atoms"])
def test_analysis_errors_name_the_file(run_cli, bad_inputs, case):
    argv = bad_inputs[case]
    _, _, err = run_cli(argv)
    assert str(argv[1]) in err

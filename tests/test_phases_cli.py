"""Command line for orientational order: ``compare``, ``lower`` and ``predict --disordered``.

Expected values are those checked, with their sources, in tests/test_phases_reference.py and
tests/test_disorder.py (NH4Cl: H. A. Levy and S. W. Peterson, Phys. Rev. 86, 766 (1952));
here only the command-line contract is checked: text and valid JSON on stdout, and bad input
as one line on stderr with a non-zero exit status and nothing on stdout.
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest

S = Path(__file__).resolve().parent.parent / "structures"
DIS = S / "nh4cl_disordered_Pm-3m.cif"
ORD = S / "nh4cl_ordered_P-43m.cif"


def test_compare_text(run_cli):
    code, out, err = run_cli(["compare", DIS, ORD, "--labels", "295 K", "200 K"])
    # the file leaves the state open: static disorder is taken, with a warning on stderr
    assert code == 0 and err.startswith("warning: ") and "static disorder taken (default)" in err
    assert "Pm-3m (No. 221)" in out and "P-43m (No. 215)" in out and "295 K -> 200 K" in out
    assert "static disorder" in out
    code, out, err = run_cli(["compare", DIS, ORD, "--labels", "295 K", "200 K", "--state", "295 K=static"])
    assert code == 0 and err == ""


def test_compare_json(run_cli):
    code, out, err = run_cli(["compare", DIS, ORD, "--json", "--state", "1=static"])
    assert code == 0 and err == ""
    d = json.loads(out)
    assert set(d) == {"phases", "steps", "bands", "lattice_remarks"}
    (step,) = d["steps"]
    # Td in Oh, same cell: t of index 2 (see test_phases_reference.py)
    assert (step["kind"], step["point_group_index"], step["cell_multiple"], step["factor_subgroup"]) == (
        "t",
        2,
        1.0,
        True,
    )
    assert [p["ordered"] for p in d["phases"]] == [False, True]
    assert d["phases"][0]["disorder"][0]["orientation_site_group"] == "Td"
    t2 = next(b for b in d["bands"] if b["band"] == "T2")
    assert [(p["ir"], p["raman"]) for p in t2["phases"]] == [(1, 1), (1, 1)]


def test_compare_rotor_flag(run_cli):
    code, out, _ = run_cli(["compare", DIS, ORD, "--rotor", "H4N", "--json"])
    assert code == 0
    d = json.loads(out)
    assert d["phases"][0]["disorder"][0]["state"] == "dynamic"
    assert d["phases"][0]["bands"][0]["coupling"] == "free unit"


def test_lower_text_and_json(run_cli):
    code, out, err = run_cli(["lower", ORD, "--max-index", "4", "--observed", "T2:ir=2"])
    assert code == 0 and err == ""
    assert "Parent P-43m (No. 215)" in out and "P-42m (111)" in out and "T2 ir = 2" in out
    code, out, err = run_cli(["lower", ORD, "--max-index", "4", "--observed", "T2:ir=2", "--json"])
    assert code == 0 and err == ""
    d = json.loads(out)
    assert d["max_index"] == 4 and d["observed"] == [{"band": "T2", "technique": "ir", "count": 2}]
    assert d["parent"]["space_group"]["number"] == 215
    keys = {
        "space_group",
        "label_symbol",
        "kind",
        "index",
        "factor_group",
        "cell_multiple",
        "supercell",
        "units",
        "bands",
        "score",
        "reasons",
        "variants",
        "realised_by_displacements",
    }
    assert d["candidates"] and all(set(c) == keys for c in d["candidates"])
    assert d["candidates"][0]["score"] == 0


def test_predict_disordered_text_and_json(run_cli):
    code, out, err = run_cli(["predict", DIS, "--disordered", "--state", "static"])
    assert code == 0 and err == ""
    assert "static disorder, state given, 2 orientation(s)" in out and "averaged site Oh (1a)" in out
    assert "site of one orientation Td" in out
    code, out, _ = run_cli(["predict", DIS, "--disordered", "--json"])
    d = json.loads(out)
    (u,) = d["units"]
    assert (u["orientations"], u["averaged_site_group"], u["orientation_site_group"]) == (2, "Oh", "Td")
    assert d["ordered_model"]["space_group"]["number"] == 215


@pytest.mark.parametrize("flags", [["--rotor", "H4N"], ["--disorder", "H4N=dynamic"]])
def test_predict_rotor(run_cli, flags):
    code, out, _ = run_cli(["predict", ORD, *flags, "--json"])
    assert code == 0
    (u,) = json.loads(out)["units"]
    assert u["state"] == "dynamic" and u["orientation_site_group"] is None
    assert [p["site_text"] for p in u["pattern"]] == ["A1", "E", "T2"]


@pytest.mark.parametrize(
    ("argv", "words"),
    [
        (["compare", DIS], "at least two"),
        (["compare", DIS, ORD, "--labels", "only one"], "1 labels for 2 files"),
        (["compare", DIS, ORD, "--disorder", "H4N"], "[PHASE:]UNIT=ordered|static|rotor"),
        (["compare", DIS, ORD, "--disorder", "H4N=wobbly"], "is not a state"),
        (["lower", ORD, "--observed", "T2:ir3"], "BAND:ir=N"),
        (["lower", ORD, "--observed", "T2:uv=3"], "BAND:ir=N"),
        (["lower", ORD, "--max-index", "1"], "at least 2"),
        (["predict", S / "bad" / "partial_occupancy_no_model.cif", "--disordered"], "partial occupancy"),
        (["compare", S / "bad" / "partial_occupancy_no_model.cif", ORD], "partial occupancy"),
    ],
)
def test_bad_input_is_one_line(run_cli, argv, words):
    code, out, err = run_cli(argv)
    assert code != 0 and out == ""
    assert err.count("\n") == 1 and err.startswith("error: ") and words in err

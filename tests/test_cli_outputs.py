"""The commands that write files: draw, report, explain -o, demo (common practice: nothing half-written)."""

from __future__ import annotations

import json
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest

from splitting.cli import main

STRUCT = Path(__file__).resolve().parents[1] / "structures"
DEMO = Path(__file__).resolve().parents[1] / "splitting" / "data" / "demo"


def run(argv, capsys):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def test_draw_writes_an_svg_with_the_predicted_species(tmp_path, capsys):
    out = tmp_path / "calcite.svg"
    code, stdout, err = run(["draw", STRUCT / "calcite.cif", "-o", out], capsys)
    assert code == 0, err
    assert "written" in stdout
    root = ET.parse(out).getroot()  # a well-formed SVG document
    assert root.tag.endswith("svg")


def test_draw_several_phases_and_line_pattern(tmp_path, capsys):
    for kind in ("correlation", "lines"):
        out = tmp_path / f"{kind}.png"
        code, _, err = run(
            [
                "draw",
                STRUCT / "c60_fcc_Fm-3m_disordered.cif",
                STRUCT / "c60_ordered_Pa-3.cif",
                "--labels",
                "300 K",
                "90 K",
                "--band",
                "T1u",
                "--kind",
                kind,
                "-o",
                out,
            ],
            capsys,
        )
        assert code == 0, err
        assert out.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


@pytest.mark.parametrize("name", ["figure.jpg", "figure"])
def test_draw_refuses_unknown_suffix_and_writes_nothing(tmp_path, capsys, name):
    out = tmp_path / name
    code, stdout, err = run(["draw", STRUCT / "calcite.cif", "-o", out], capsys)
    assert code != 0 and stdout == ""
    assert err.startswith("error:") and len(err.strip().splitlines()) == 1
    assert list(tmp_path.iterdir()) == []


def test_report_is_one_self_contained_html_file(tmp_path, capsys):
    out = tmp_path / "r.html"
    code, _, err = run(["report", STRUCT / "calcite.cif", "-o", out, "--title", "Calcite", "--note", "a note"], capsys)
    assert code == 0, err
    html = out.read_text(encoding="utf-8")
    assert "<svg" in html
    # nothing is loaded from elsewhere (namespace URIs inside the SVG metadata are not loads)
    assert "<script" not in html and "<link" not in html and 'src="http' not in html
    assert "a note" in html


def test_report_bad_input_writes_nothing(tmp_path, capsys):
    out = tmp_path / "r.html"
    code, stdout, err = run(["report", STRUCT / "bad" / "malformed.cif", "-o", out], capsys)
    assert code != 0 and stdout == "" and err.startswith("error:")
    assert not out.exists()


def test_explain_json_and_figure(tmp_path, capsys):
    fig = tmp_path / "ir.svg"
    code, out, err = run(
        ["explain", STRUCT / "c60_ordered_Pa-3.cif", "--peaks", DEMO / "c60_90K_ir_peaks.csv", "--json", "-o", fig],
        capsys,
    )
    assert code == 0, err
    payload = json.loads(out)
    assert payload["lines"] and fig.exists()


def test_explain_needs_measured_data(capsys):
    code, out, err = run(["explain", STRUCT / "c60_ordered_Pa-3.cif"], capsys)
    assert code != 0 and out == "" and err.startswith("error:")


@pytest.mark.slow
def test_demo_leaves_the_files_it_announces(tmp_path, capsys):
    out = tmp_path / "demo"
    code, stdout, err = run(["demo", "--out", out], capsys)
    assert code == 0, err
    for name in (
        "report.html",
        "correlation_C60_90K.svg",
        "phases.txt",
        "candidates.txt",
        "assignment_90K_ir.txt",
        "species_90K.tex",
    ):
        assert (out / name).exists(), name
        assert name in stdout
    assert "INVENTED" in stdout
    # the ranking of candidate ordered phases puts the published low-temperature phase first
    # (Pa-3: W. I. F. David et al., Nature 353, 147 (1991))
    ranking = json.loads((out / "candidates.json").read_text())
    assert ranking["candidates"][0]["space_group"]["number"] == 205


def test_every_command_takes_json() -> None:
    """README: every command takes --json (common practice for scripting a command line)."""
    import argparse

    from splitting.cli import build_parser

    sub = next(a for a in build_parser()._actions if isinstance(a, argparse._SubParsersAction))
    missing = [name for name, p in sub.choices.items() if not any("--json" in a.option_strings for a in p._actions)]
    assert missing == []


def test_draw_json_says_what_was_written(run_cli, structures_dir, tmp_path) -> None:
    import json

    out = tmp_path / "calcite.svg"
    code, stdout, _ = run_cli(["draw", str(structures_dir / "calcite.cif"), "-o", str(out), "--json"])
    assert code == 0 and out.exists()
    data = json.loads(stdout)
    assert data["figure"] == str(out) and data["phases"][0]["state"] == "ordered"

"""``predict --format csv|md|tex``: the species and correlation tables, parseable, in the chosen format."""

from __future__ import annotations

import csv
import io

import pytest


def test_csv_tables(run_cli, structures_dir):
    code, out, err = run_cli(["predict", str(structures_dir / "calcite.cif"), "--format", "csv"])
    assert code == 0 and not err
    species, correlation = out.strip().split("\n\n")
    rows = list(csv.reader(io.StringIO(species)))
    assert rows[0][:2] == ["species", "dim"]
    # the optical counts of the species table (same numbers as the text output of predict)
    assert {r[0]: int(r[6]) for r in rows[1:]} == {"A1g": 1, "A2g": 3, "Eg": 4, "A1u": 2, "A2u": 3, "Eu": 5}
    assert next(csv.reader(io.StringIO(correlation)))[0].endswith("(D3h)")


def test_markdown_and_latex_tables(run_cli, structures_dir):
    code, md, _ = run_cli(["predict", str(structures_dir / "calcite.cif"), "--format", "md"])
    assert code == 0 and "**Correlation of CO3 (site 6a)**" in md and "| species | dim |" in md
    code, tex, _ = run_cli(["predict", str(structures_dir / "calcite.cif"), "--format", "tex"])
    assert code == 0 and tex.count(r"\begin{tabular}") == 2 and r"\toprule" in tex and "$A_{1g}$" in tex


@pytest.mark.parametrize(
    "extra", [["--json"], ["--geometry", "z(xx)-z"], ["--disordered"], ["--format", "xls"]], ids=str
)
def test_format_never_silently_dropped(run_cli, structures_dir, extra):
    args = ["predict", str(structures_dir / "calcite.cif")]
    args += extra if extra[0] == "--format" else ["--format", "csv", *extra]
    code, out, err = run_cli(args)
    assert code != 0 and not out
    assert err.strip().splitlines()[-1].startswith(("error:", "splitting predict: error:"))

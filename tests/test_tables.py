"""Tables of a prediction: Markdown, LaTeX (booktabs) and CSV carry the right rows and counts."""

from __future__ import annotations

import csv
import io
import re

import pytest

from splitting.errors import InputError
from splitting.report.tables import correlation_table, escape_latex, render_table, species_table


def _csv(text):
    return list(csv.reader(io.StringIO(text)))


@pytest.mark.parametrize("name", ["calcite", "c60"])
def test_species_csv_matches_prediction(name, request):
    pred = request.getfixturevalue(name)
    rows = _csv(species_table(pred, "csv"))
    header, body = rows[0], rows[1:]
    assert header[:7] == ["species", "dim", "internal", "translational", "librational", "acoustic", "optical"]
    assert [r[0] for r in body] == [s.label for s in pred.species]
    for r, s in zip(body, pred.species, strict=True):
        assert [int(x) for x in r[1:7]] == [
            s.dimension,
            s.internal,
            s.translational,
            s.librational,
            s.acoustic,
            s.optical,
        ]
        assert (r[7] != "-") == bool(s.ir) and (r[8] != "-") == bool(s.raman)
    # sum of optical column = the prediction's total optical frequencies
    assert sum(int(r[6]) for r in body) == pred.totals()["optical"]


def test_calcite_counts(calcite):
    # calcite R-3c (Z = 2 in the primitive cell): Γopt = A1g + 3A2g + 4Eg + 2A1u + 3A2u + 5Eu,
    # 18 optical frequencies -- the count usually quoted for calcite (from memory)
    rows = {r[0]: r for r in _csv(species_table(calcite, "csv"))[1:]}
    assert {k: int(v[6]) for k, v in rows.items()} == {"A1g": 1, "A2g": 3, "Eg": 4, "A1u": 2, "A2u": 3, "Eu": 5}


def test_correlation_csv(calcite):
    rows = _csv(correlation_table(calcite, "CO3", "csv"))
    assert rows[0] == ["free CO3^2- (D3h)", "dim", "modes", "site 6a (D3)", "factor group (D3d)"]
    unit = calcite.unit("CO3")
    assert [r[0] for r in rows[1:]] == [c.free for c in unit.correlation]
    for r, c in zip(rows[1:], unit.correlation, strict=True):
        assert r[1:] == [str(c.free_dimension), str(c.modes), str(c.site), str(c.factor)]


def test_markdown(c60):
    text = species_table(c60, "markdown")
    lines = text.splitlines()
    assert lines[0].startswith("| species | dim |")
    assert set(lines[1].replace(" ", "")) <= set("|-")
    assert len(lines) == 2 + len(c60.species)
    assert all(line.count("|") == lines[0].count("|") for line in lines)
    corr = correlation_table(c60, "C60", "markdown").splitlines()
    assert len(corr) == 2 + 10
    assert "| Hg | 5 | 8 | Ag + 2Eg | Ag + 2Eg + 5Tg |" in corr


def _latex_structure(text, ncols):
    lines = text.splitlines()
    assert lines[0].startswith(r"\begin{tabular}{")
    spec = re.match(r"\\begin\{tabular\}\{([lcr]+)\}", lines[0])[1]
    assert len(spec) == ncols
    assert lines[1] == r"\toprule" and lines[3] == r"\midrule"
    assert lines[-2] == r"\bottomrule" and lines[-1] == r"\end{tabular}"
    body = lines[4:-2]
    for line in [lines[2], *body]:
        assert line.endswith(r" \\")
        # unescaped & separates exactly ncols cells
        assert len(re.findall(r"(?<!\\)&", line)) == ncols - 1
        # math delimiters are balanced
        assert len(re.findall(r"(?<!\\)\$", line)) % 2 == 0
    return body


def test_latex_species(c60):
    body = _latex_structure(species_table(c60, "latex"), 9)
    assert len(body) == 6
    assert body[0].startswith("$A_{g}$ & 1 & 29 & 0 & 1 & 0 & 30 & -- & $x^2+y^2+z^2$")
    assert body[5].startswith("$T_{u}$ & 3 & 87 & 2 & 0 & 1 & 89 & $x$, $y$, $z$ & --")


def test_latex_correlation(calcite):
    text = correlation_table(calcite, "CO3", "latex")
    body = _latex_structure(text, 5)
    assert r"free CO$_{3}$$^{2-}$ ($D_{3h}$)" in text and r"site 6a ($D_{3}$)" in text
    assert body[0] == r"$A_{1}'$ & 1 & 1 & $A_{1}$ & $A_{1g} + A_{1u}$ \\"
    assert body[2] == r"$A_{2}''$ & 1 & 1 & $A_{2}$ & $A_{2g} + A_{2u}$ \\"


def test_escaping():
    assert escape_latex("a_b & 5% #1 {x} ~ ^ \\") == (
        r"a\_b \& 5\% \#1 \{x\} \textasciitilde{} \textasciicircum{} \textbackslash{}"
    )
    text = render_table(["a|b", "c"], [["x|y", "z"]], "markdown")
    assert r"a\|b" in text and r"x\|y" in text
    text = render_table(["a", "b"], [["1,2", 'say "hi"']], "csv")
    assert _csv(text) == [["a", "b"], ["1,2", 'say "hi"']]
    latex = render_table(["50%", "T_c"], [["R&D", "$5"]], "latex")
    assert r"50\% & T\_c \\" in latex and r"R\&D & \$5 \\" in latex


def test_bad_format(calcite):
    with pytest.raises(InputError, match="unknown table format"):
        species_table(calcite, "html")
    with pytest.raises(InputError):
        correlation_table(calcite, "CO3", "rst")


def test_character_table_formats(run_cli) -> None:
    """group --format: the C2v character table (Cotton, Chemical Applications of Group Theory, 3rd ed., App. IIA)."""
    code, out, _ = run_cli(["group", "C2v", "--format", "csv"])
    assert code == 0
    rows = list(csv.reader(io.StringIO(out)))
    assert rows[0][:5] == ["species", "E", "C2", "σv(xz)", "σv'(yz)"]
    assert [r[:5] for r in rows[1:]] == [
        ["A1", "1", "1", "1", "1"],
        ["A2", "1", "1", "-1", "-1"],
        ["B1", "1", "-1", "1", "-1"],
        ["B2", "1", "-1", "-1", "1"],
    ]
    code, out, _ = run_cli(["group", "D3h", "--format", "tex"])
    assert code == 0 and r"\toprule" in out and "$A_{1}'$" in out and "σ" not in out
    code, out, _ = run_cli(["group", "C3v", "--format", "md"])
    assert code == 0 and out.splitlines()[1].startswith("| ---")


@pytest.mark.parametrize("extra", [["--json"], ["--to", "C3"]])
def test_character_table_format_refuses_other_outputs(run_cli, extra) -> None:
    code, out, err = run_cli(["group", "C3v", "--format", "md", *extra])
    assert code == 2 and out == "" and err.startswith("error: --format md") and err.count("\n") == 1


def test_lower_table_formats(run_cli, structures_dir) -> None:
    """lower --format: the candidate subgroups of index 2 of R-3c are R3c, R32 and R-3
    (International Tables for Crystallography Vol. A1, maximal subgroups of No. 167)."""
    calcite = str(structures_dir / "calcite.cif")
    code, out, _ = run_cli(["lower", calcite, "--max-index", "2", "--format", "csv"])
    assert code == 0
    rows = list(csv.reader(io.StringIO(out)))
    assert rows[0] == ["#", "space group", "type", "index", "factor", "sites", "bands IR/Raman", "misfit"]
    assert sorted(r[1] for r in rows[1:]) == ["R-3 (148)", "R32 (155)", "R3c (161)"]
    code, out, err = run_cli(["lower", calcite, "--max-index", "2", "--format", "md", "--json"])
    assert code == 2 and out == "" and err.startswith("error: --format md")


def test_compare_table_formats(run_cli, structures_dir) -> None:
    """compare --format: in Pa-3 C60 (4 molecules on S6 sites) the free Ag band gives Ag + Tg
    (correlation Ih -> S6 -> Th; from memory, as in Dresselhaus, Dresselhaus and Eklund 1996)."""
    files = [str(structures_dir / "c60_fcc_Fm-3.cif"), str(structures_dir / "c60_ordered_Pa-3.cif")]
    code, out, _ = run_cli(["compare", *files, "--labels", "300 K", "90 K", "--format", "csv"])
    assert code == 0
    rows = list(csv.reader(io.StringIO(out)))
    assert rows[0] == ["unit", "band", "300 K", "90 K"]
    ag = next(r for r in rows if r[1] == "Ag")
    assert ag[3].startswith("Ag + Tg")
    code, out, err = run_cli(["compare", *files, "--format", "tex", "--json"])
    assert code == 2 and out == "" and err.startswith("error: --format tex")

"""Tables of a prediction for papers and notebooks: Markdown, LaTeX (booktabs) and CSV.

* :func:`species_table` -- factor-group species with their counts and activity;
* :func:`correlation_table` -- free species -> site species -> factor-group species of one unit.

LaTeX typesets species as Mulliken symbols in math (``$A_{1g}$``, ``$E''$``) and polarisability
components as ``$x^2+y^2$``; Markdown and CSV keep the plain labels (``A1g``), so a CSV file
reads back unchanged and Markdown stays legible as text.

Examples
--------
>>> rows = [["Ag", "1"]]
>>> print(render_table(["species", "dim"], rows, "markdown"))
| species | dim |
| --- | --- |
| Ag | 1 |
"""

from __future__ import annotations

import csv
import io
from collections.abc import Callable, Sequence
from typing import TYPE_CHECKING

from ..errors import InputError
from ..plot.mulliken import latex as species_latex

if TYPE_CHECKING:  # pragma: no cover
    from ..crystal.results import CrystalPrediction, UnitOrbit
    from ..groups import Representation

__all__ = [
    "TABLE_FORMATS",
    "character_table",
    "correlation_table",
    "escape_latex",
    "lowering_table",
    "render_table",
    "sequence_table",
    "species_table",
]

#: formats understood by the table functions
TABLE_FORMATS = ("markdown", "latex", "csv")

_LATEX_SPECIAL = {
    "\\": r"\textbackslash{}",
    "&": r"\&",
    "%": r"\%",
    "$": r"\$",
    "#": r"\#",
    "_": r"\_",
    "{": r"\{",
    "}": r"\}",
    "~": r"\textasciitilde{}",
    "^": r"\textasciicircum{}",
    "²": r"\textsuperscript{2}",
    "σ": r"$\sigma$",
    "∞": r"$\infty$",
}


def escape_latex(text: str) -> str:
    r"""Escape the characters LaTeX treats specially.

    Examples
    --------
    >>> escape_latex("x_1 & 50%")
    'x\\_1 \\& 50\\%'
    """
    return "".join(_LATEX_SPECIAL.get(ch, ch) for ch in text)


def _escape_markdown(text: str) -> str:
    return text.replace("|", r"\|")


class _Cell(str):
    """A cell already written in the target markup (not escaped again)."""


def _check(fmt: str) -> None:
    if fmt not in TABLE_FORMATS:
        raise InputError(f"unknown table format {fmt!r}; use one of {', '.join(TABLE_FORMATS)}")


def render_table(
    headers: Sequence[str],
    rows: Sequence[Sequence[object]],
    fmt: str,
    *,
    align: str | None = None,
    caption: str | None = None,
) -> str:
    """Render rows as a Markdown, LaTeX (booktabs) or CSV table.

    Parameters
    ----------
    headers : sequence of str
    rows : sequence of sequences
        Cells; strings are escaped for the format unless produced by the species helpers.
    fmt : str
        ``"markdown"``, ``"latex"`` or ``"csv"``.
    align : str, optional
        LaTeX column specification, e.g. ``"lrr"`` (default: first column ``l``, others ``c``).
    caption : str, optional
        LaTeX only: a ``% caption`` comment line on top (the table is a bare ``tabular``).

    Raises
    ------
    InputError
        For an unknown format.
    """
    _check(fmt)
    if fmt == "csv":
        buf = io.StringIO()
        writer = csv.writer(buf, lineterminator="\n")
        writer.writerow(headers)
        writer.writerows([[str(c) for c in r] for r in rows])
        return buf.getvalue()

    def cell(c: object, esc: Callable[[str], str]) -> str:
        return str(c) if isinstance(c, _Cell) else esc(str(c))

    if fmt == "markdown":
        out = [
            "| " + " | ".join(_escape_markdown(h) for h in headers) + " |",
            "| " + " | ".join("---" for _ in headers) + " |",
        ]
        out += ["| " + " | ".join(cell(c, _escape_markdown) for c in r) + " |" for r in rows]
        return "\n".join(out)
    spec = align or ("l" + "c" * (len(headers) - 1))
    out = []
    if caption:
        out.append(f"% {caption}")
    out += [
        rf"\begin{{tabular}}{{{spec}}}",
        r"\toprule",
        " & ".join(cell(h, escape_latex) for h in headers) + r" \\",
        r"\midrule",
    ]
    out += [" & ".join(cell(c, escape_latex) for c in r) + r" \\" for r in rows]
    out += [r"\bottomrule", r"\end{tabular}"]
    return "\n".join(out)


def _species(label: str, fmt: str) -> str:
    return _Cell(species_latex(label)) if fmt == "latex" else label


def _rep(rep: Representation, fmt: str) -> str:
    """A representation as ``2Ag + Eg``, typeset for LaTeX as ``$2A_{g} + E_{g}$``."""
    if fmt != "latex":
        return str(rep)
    parts = [(str(n) if n > 1 else "") + species_latex(lab)[1:-1] for lab, n in rep]
    return _Cell("$" + " + ".join(parts) + "$") if parts else "0"


def _join(items: Sequence[str], fmt: str) -> str:
    if fmt == "latex":
        return _Cell(", ".join("$" + i.replace("²", "^2") + "$" for i in items) if items else "--")
    return ", ".join(items) if items else "-"


def species_table(prediction: CrystalPrediction, fmt: str = "markdown") -> str:
    """Factor-group species with the number of distinct frequencies of each kind and the activity.

    Columns: species, degeneracy, internal, translational (optical), librational, acoustic,
    optical, IR components, Raman components.  Counts are distinct frequencies at k = 0.

    Parameters
    ----------
    prediction : CrystalPrediction
    fmt : str
        ``"markdown"``, ``"latex"`` or ``"csv"``.

    Returns
    -------
    str

    Raises
    ------
    InputError
        For an unknown format.
    """
    _check(fmt)
    headers = ["species", "dim", "internal", "translational", "librational", "acoustic", "optical", "IR", "Raman"]
    rows = []
    for s in prediction.species:
        rows.append(
            [
                _species(s.label, fmt),
                s.dimension,
                s.internal,
                s.translational,
                s.librational,
                s.acoustic,
                s.optical,
                _join(s.ir, fmt),
                _join(s.raman, fmt),
            ]
        )
    return render_table(headers, rows, fmt, align="lrrrrrrll")


def correlation_table(prediction: CrystalPrediction, unit: str | UnitOrbit | None = None, fmt: str = "markdown") -> str:
    """Correlation of one unit: free species, number of fundamentals, site and factor-group species.

    The site and factor columns are for one fundamental of the free species (all units of
    the orbit together in the factor group).

    Parameters
    ----------
    prediction : CrystalPrediction
    unit : str or UnitOrbit, optional
        Formula of the unit (default: the first unit with internal vibrations).
    fmt : str
        ``"markdown"``, ``"latex"`` or ``"csv"``.

    Raises
    ------
    InputError
        For an unknown format or unit.
    """
    from ..plot.correlation import select_unit

    _check(fmt)
    u = select_unit(prediction, unit)
    free, site = u.free_group or "C1", u.site_group
    headers = [
        f"free {u.name} ({free})",
        "dim",
        "modes",
        f"site {u.wyckoff} ({site})",
        f"factor group ({prediction.factor_group})",
    ]
    if fmt == "latex":
        from ..plot.mulliken import formula_latex, schoenflies_latex

        headers = [
            _Cell(f"free {formula_latex(u.name)} ({schoenflies_latex(free)})"),
            "dim",
            "modes",
            _Cell(f"site {escape_latex(u.wyckoff)} ({schoenflies_latex(site)})"),
            _Cell(f"factor group ({schoenflies_latex(prediction.factor_group)})"),
        ]
    rows = [
        [_species(c.free, fmt), c.free_dimension, c.modes, _rep(c.site, fmt), _rep(c.factor, fmt)]
        for c in u.correlation
    ]
    return render_table(headers, rows, fmt, align="lrrll")


#: Names of the table formats on the command line, and the writer's name for each.
def character_table(name: str, fmt: str = "markdown") -> str:
    """The character table of a finite point group, with its IR and Raman columns.

    Examples
    --------
    >>> print(character_table("C2v", "csv").splitlines()[0])
    species,E,C2,σv(xz),σv'(yz),IR,Raman
    """
    from .text import character_rows

    _check(fmt)
    headers, rows = character_rows(name)
    rows = [[_species(r[0], fmt), *r[1:]] for r in rows]
    return render_table(headers, rows, fmt, caption=f"character table of {name}")


def sequence_table(seq, fmt: str = "markdown") -> str:
    """The band table of :func:`splitting.phases.compare.compare_phases`: each band's components per phase."""
    from .text import band_sequence_rows

    _check(fmt)
    headers, rows = band_sequence_rows(seq)
    return render_table(headers, rows, fmt, caption="components of each band, phase by phase")


def lowering_table(result, fmt: str = "markdown", *, limit: int = 40) -> str:
    """The candidate phases of :func:`splitting.phases.lower.lower` as a table, best first."""
    from .text import LOWERING_HEADERS, lowering_rows

    _check(fmt)
    return render_table(list(LOWERING_HEADERS), lowering_rows(result, limit=limit), fmt, caption="candidate phases")


CLI_FORMATS = {"csv": "csv", "md": "markdown", "tex": "latex"}


def prediction_tables(prediction: CrystalPrediction, fmt: str = "markdown") -> str:
    """The species table, then the correlation table of every molecular unit, in one format.

    Markdown tables get a bold title line, LaTeX tables a ``%`` comment naming them; CSV
    tables are separated by one empty line (the first row of each is its header).

    Raises
    ------
    InputError
        For an unknown format.
    """
    _check(fmt)
    parts = [("Factor-group species (k = 0; counts are distinct frequencies)", species_table(prediction, fmt))]
    for u in prediction.units:
        if u.correlation:
            parts.append((f"Correlation of {u.formula} (site {u.wyckoff})", correlation_table(prediction, u, fmt)))
    out = []
    for title, body in parts:
        if fmt == "markdown":
            out.append(f"**{_escape_markdown(title)}**\n\n{body.rstrip()}")
        elif fmt == "latex":
            out.append(f"% {title}\n{body.rstrip()}")
        else:
            out.append(body.rstrip())
    return "\n\n".join(out) + "\n"

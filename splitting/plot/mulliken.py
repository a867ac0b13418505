"""Typesetting of Mulliken species labels and group symbols (pure string work).

The project spells species in plain text (``A1g``, ``E'``, ``E1''``, ``T1u``, ``Σg+``,
``Πu``; see :mod:`splitting.spectra.catalogue`).  This module turns them into

* matplotlib mathtext for figures: the letter upright, the index and g/u as a subscript,
  primes and the sign of Σ species as a superscript (``A$_{1g}$``, ``Σ$_{g}^{+}$``);
* LaTeX math for tables (``$A_{1g}$``, ``$\\Sigma_{g}^{+}$``);
* HTML with ``<sub>``/``<sup>`` for the report.

Group symbols are handled the same way: Schoenflies symbols (``D3h``, ``D∞h``, ``Th^6``)
and short Hermann-Mauguin space-group symbols (``Pa-3``, ``P2_1/c``, ``R-3c``).

Nothing here imports matplotlib.

Examples
--------
>>> mathtext("A1g"), mathtext("E'"), mathtext("Σg+")
('A$_{1g}$', "E$'$", 'Σ$_{g}^{+}$')
>>> latex("T1u"), html("E1''")
('$T_{1u}$', 'E<sub>1</sub>&Prime;')
>>> schoenflies_mathtext("D3h"), hermann_mauguin_mathtext("P2_1/c")
('D$_{3h}$', '$P2_1/c$')
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from html import escape

from ..errors import InputError

__all__ = [
    "MullikenParts",
    "formula_html",
    "formula_latex",
    "formula_mathtext",
    "hermann_mauguin_html",
    "hermann_mauguin_latex",
    "hermann_mauguin_mathtext",
    "html",
    "latex",
    "mathtext",
    "parse_label",
    "schoenflies_html",
    "schoenflies_latex",
    "schoenflies_mathtext",
]

_LABEL = re.compile(r"^(?P<letter>[ABETGHΣΠΔΦΓ])(?P<index>[0-9]*)(?P<parity>[gu]?)(?P<tail>'{0,2}|[+-]?)$")
_GREEK_LATEX = {"Σ": r"\Sigma", "Π": r"\Pi", "Δ": r"\Delta", "Φ": r"\Phi", "Γ": r"\Gamma"}


@dataclass(frozen=True)
class MullikenParts:
    """A species label cut into the pieces that are typeset differently.

    Attributes
    ----------
    letter : str
        ``A``, ``B``, ``E``, ``T``, ``G``, ``H`` or a Greek capital for linear groups.
    subscript : str
        Index and parity, e.g. ``"1g"`` (may be empty).
    superscript : str
        Primes (``"'"``, ``"''"``) or the sign of a Σ species (``"+"``, ``"-"``).
    """

    letter: str
    subscript: str
    superscript: str

    def to_dict(self) -> dict[str, str]:
        """JSON-ready form."""
        return {"letter": self.letter, "subscript": self.subscript, "superscript": self.superscript}


def parse_label(label: str) -> MullikenParts:
    """Cut a species label into letter, subscript and superscript.

    Raises
    ------
    InputError
        If ``label`` is not a species label in the project's spelling.

    Examples
    --------
    >>> parse_label("A2''")
    MullikenParts(letter='A', subscript='2', superscript="''")
    >>> parse_label("Σu-").superscript
    '-'
    """
    m = _LABEL.match(label.strip())
    if not m:
        raise InputError(f"{label!r} is not a Mulliken species label (expected e.g. A1g, E', T1u, Σg+)")
    return MullikenParts(m["letter"], m["index"] + m["parity"], m["tail"])


def mathtext(label: str) -> str:
    """Matplotlib mathtext of a species label (letter upright, indices in math).

    Examples
    --------
    >>> mathtext("Eg"), mathtext("E1''"), mathtext("Πu"), mathtext("A")
    ('E$_{g}$', "E$_{1}''$", 'Π$_{u}$', 'A')
    """
    p = parse_label(label)
    if not p.subscript and not p.superscript:
        return p.letter
    sub = f"_{{{p.subscript}}}" if p.subscript else ""
    if p.superscript in ("+", "-"):
        sup = f"^{{{p.superscript}}}"
    else:
        sup = p.superscript  # mathtext sets ' as a prime
    return f"{p.letter}${sub}{sup}$"


def latex(label: str) -> str:
    """LaTeX math of a species label, e.g. ``$A_{1g}$``, ``$E''$``, ``$\\Sigma_{g}^{+}$``.

    Examples
    --------
    >>> latex("A1g"), latex("E'"), latex("Σg+")
    ('$A_{1g}$', "$E'$", '$\\\\Sigma_{g}^{+}$')
    """
    p = parse_label(label)
    letter = _GREEK_LATEX.get(p.letter, p.letter)
    sub = f"_{{{p.subscript}}}" if p.subscript else ""
    sup = f"^{{{p.superscript}}}" if p.superscript in ("+", "-") else p.superscript
    return f"${letter}{sub}{sup}$"


def html(label: str) -> str:
    """HTML of a species label with ``<sub>`` and ``<sup>`` (primes as &prime; and &Prime;).

    Examples
    --------
    >>> html("A1g"), html("E'"), html("Σg+")
    ('A<sub>1g</sub>', 'E&prime;', 'Σ<sub>g</sub><sup>+</sup>')
    """
    p = parse_label(label)
    out = p.letter
    if p.subscript:
        out += f"<sub>{p.subscript}</sub>"
    if p.superscript == "'":
        out += "&prime;"
    elif p.superscript == "''":
        out += "&Prime;"
    elif p.superscript:
        out += f"<sup>{'&minus;' if p.superscript == '-' else '+'}</sup>"
    return out


# ------------------------------------------------------------------ group symbols
_SCHOENFLIES = re.compile(r"^(?P<letter>[CDSTOI])(?P<sub>[0-9]*∞?[a-z]?|∞[a-z]?)(?:\^(?P<sup>[0-9]+))?$")


def _schoenflies_parts(symbol: str) -> tuple[str, str, str]:
    m = _SCHOENFLIES.match(symbol.strip())
    if not m:
        raise InputError(f"{symbol!r} is not a Schoenflies symbol (expected e.g. D3h, Ci, D∞h, Th^6)")
    return m["letter"], m["sub"], m["sup"] or ""


def schoenflies_mathtext(symbol: str) -> str:
    """Mathtext of a Schoenflies symbol, e.g. ``D$_{3h}$``, ``D$_{\\infty h}$``, ``T$_{h}^{6}$``.

    Examples
    --------
    >>> schoenflies_mathtext("Ci"), schoenflies_mathtext("D∞h"), schoenflies_mathtext("Th^6")
    ('C$_{i}$', 'D$_{\\\\infty h}$', 'T$_{h}^{6}$')
    """
    letter, sub, sup = _schoenflies_parts(symbol)
    if not sub and not sup:
        return letter
    sub_tex = sub.replace("∞", r"\infty ").strip()
    out = f"_{{{sub_tex}}}" if sub else ""
    out += f"^{{{sup}}}" if sup else ""
    return f"{letter}${out}$"


def schoenflies_latex(symbol: str) -> str:
    """LaTeX of a Schoenflies symbol: ``$D_{3h}$``, ``$D_{\\infty h}$``.

    Examples
    --------
    >>> schoenflies_latex("S6")
    '$S_{6}$'
    """
    letter, sub, sup = _schoenflies_parts(symbol)
    sub_tex = sub.replace("∞", r"\infty ").strip()
    out = f"_{{{sub_tex}}}" if sub else ""
    out += f"^{{{sup}}}" if sup else ""
    return f"${letter}{out}$"


def schoenflies_html(symbol: str) -> str:
    """HTML of a Schoenflies symbol: ``D<sub>3h</sub>``, ``T<sub>h</sub><sup>6</sup>``.

    Examples
    --------
    >>> schoenflies_html("Th^6")
    'T<sub>h</sub><sup>6</sup>'
    """
    letter, sub, sup = _schoenflies_parts(symbol)
    return letter + (f"<sub>{sub}</sub>" if sub else "") + (f"<sup>{sup}</sup>" if sup else "")


_HM_TOKEN = re.compile(r"-(\d)|(\d)_(\d)|([A-Za-z])|(\d)|(/)")


def _hm_tokens(symbol: str) -> list[tuple[str, str]]:
    """Tokens (kind, text) of a short Hermann-Mauguin symbol: bar, screw, letter, digit, slash."""
    text = symbol.strip().replace(" ", "")
    out: list[tuple[str, str]] = []
    pos = 0
    while pos < len(text):
        m = _HM_TOKEN.match(text, pos)
        if not m:
            raise InputError(f"{symbol!r} is not a Hermann-Mauguin symbol (expected e.g. Pa-3, P2_1/c)")
        if m[1]:
            out.append(("bar", m[1]))
        elif m[2]:
            out.append(("screw", m[2] + m[3]))
        elif m[4]:
            out.append(("letter", m[4]))
        elif m[5]:
            out.append(("digit", m[5]))
        else:
            out.append(("slash", "/"))
        pos = m.end()
    return out


def hermann_mauguin_mathtext(symbol: str) -> str:
    """Mathtext of a space-group symbol: letters italic, bars over digits, screw subscripts.

    Examples
    --------
    >>> hermann_mauguin_mathtext("Pa-3"), hermann_mauguin_mathtext("R-3c")
    ('$Pa\\\\bar{3}$', '$R\\\\bar{3}c$')
    """
    parts = []
    for kind, text in _hm_tokens(symbol):
        if kind == "bar":
            parts.append(rf"\bar{{{text}}}")
        elif kind == "screw":
            parts.append(f"{text[0]}_{text[1]}")
        else:
            parts.append(text)
    return "$" + "".join(parts) + "$"


def hermann_mauguin_latex(symbol: str) -> str:
    """LaTeX of a space-group symbol, e.g. ``$Pa\\bar{3}$``.

    Examples
    --------
    >>> hermann_mauguin_latex("P2_1/c")
    '$P2_1/c$'
    """
    return hermann_mauguin_mathtext(symbol)


def hermann_mauguin_html(symbol: str) -> str:
    """HTML of a space-group symbol: italic letters, overlined digits, ``<sub>`` screws.

    Examples
    --------
    >>> hermann_mauguin_html("Pa-3")
    '<i>P</i><i>a</i><span class="bar">3</span>'
    """
    parts = []
    for kind, text in _hm_tokens(symbol):
        if kind == "bar":
            parts.append(f'<span class="bar">{escape(text)}</span>')
        elif kind == "screw":
            parts.append(f"{text[0]}<sub>{text[1]}</sub>")
        elif kind == "letter":
            parts.append(f"<i>{escape(text)}</i>")
        else:
            parts.append(escape(text))
    return "".join(parts)


# ------------------------------------------------------------------ formulas
_FORMULA = re.compile(r"([A-Z][a-z]?|\(|\))(\d*)")


def _formula_parts(formula: str) -> tuple[list[tuple[str, str]], str]:
    """(symbol or parenthesis, count) pairs and the charge text (``"2-"``, ``"+"``, ``""``)."""
    from ..crystal.names import _split_charge

    body, charge = _split_charge(formula.strip())
    text = body.replace(" ", "")
    parts = _FORMULA.findall(text)
    if not parts or "".join(e + n for e, n in parts) != text:
        raise InputError(f"{formula!r} is not a chemical formula (expected e.g. CO3, C10H8, SO4^2-)")
    if charge is None or charge == 0:
        return parts, ""
    sign = "+" if charge > 0 else "-"
    return parts, (f"{abs(charge)}{sign}" if abs(charge) > 1 else sign)


def formula_mathtext(formula: str) -> str:
    """Mathtext of a formula or unit name with subscript counts and a superscript charge.

    Examples
    --------
    >>> formula_mathtext("CO3"), formula_mathtext("Ca"), formula_mathtext("SO4^2-")
    ('CO$_{3}$', 'Ca', 'SO$_{4}$$^{2-}$')
    """
    parts, charge = _formula_parts(formula)
    text = "".join(e + (f"$_{{{n}}}$" if n else "") for e, n in parts)
    return text + (f"$^{{{charge}}}$" if charge else "")


def formula_html(formula: str) -> str:
    """HTML of a formula or unit name with ``<sub>`` counts and a ``<sup>`` charge.

    Examples
    --------
    >>> formula_html("C10H8"), formula_html("NH4+")
    ('C<sub>10</sub>H<sub>8</sub>', 'NH<sub>4</sub><sup>+</sup>')
    """
    parts, charge = _formula_parts(formula)
    text = "".join(e + (f"<sub>{n}</sub>" if n else "") for e, n in parts)
    return text + (f"<sup>{charge.replace('-', '&minus;')}</sup>" if charge else "")


def formula_latex(formula: str) -> str:
    """LaTeX of a formula, upright element symbols: ``CO$_{3}$``.

    Examples
    --------
    >>> formula_latex("CO3")
    'CO$_{3}$'
    """
    return formula_mathtext(formula)

"""Small HTML pieces shared by the sections of the report (pure string work)."""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from html import escape
from typing import TYPE_CHECKING

from ..plot.mulliken import html as species_html

if TYPE_CHECKING:  # pragma: no cover
    from ..groups import Representation

MARK_IR = '<span class="mark ir" role="img" aria-label="IR active" title="IR active"></span>'
MARK_RAMAN = '<span class="mark raman" role="img" aria-label="Raman active" title="Raman active"></span>'


def rep_html(rep: Representation) -> str:
    """``2A1g + Eg`` with the labels typeset."""
    parts = [(str(n) if n > 1 else "") + species_html(lab) for lab, n in rep]
    return " + ".join(parts) if parts else "0"


def axes_html(axes: Mapping[str, str]) -> str:
    """``x ∥ a, y ∥ b*, z ∥ c``."""
    return ", ".join(
        f'<span class="nowrap"><i>{k}</i> &#8741; {escape(axes[k])}</span>' for k in ("x", "y", "z") if k in axes
    )


#: Tables with at most this many rows are kept on one printed page.
SHORT_ROWS = 12


def table(
    headers: Sequence[str],
    rows: Sequence[Sequence[str]],
    *,
    numeric: Sequence[int] = (),
    caption: str | None = None,
    css: str = "",
) -> str:
    """HTML table; cells are already HTML; the header row repeats on every printed page."""
    head = "".join(f'<th scope="col"{" class=num" if i in numeric else ""}>{h}</th>' for i, h in enumerate(headers))
    body = []
    for r in rows:
        cells = "".join(f"<td{' class=num' if i in numeric else ''}>{c}</td>" for i, c in enumerate(r))
        body.append(f"<tr>{cells}</tr>")
    cap = f"<caption>{caption}</caption>" if caption else ""
    classes = " ".join(c for c in (css, "short" if len(rows) <= SHORT_ROWS else "") if c)
    cls = f' class="{classes}"' if classes else ""
    return (
        f'<div class="table-wrap"><table{cls}>{cap}<thead><tr>{head}</tr></thead>'
        f"<tbody>{''.join(body)}</tbody></table></div>"
    )


def geometry_html(text: str) -> str:
    """A scattering geometry ``z(xx)-z`` with the reversed direction overlined."""
    out = []
    i = 0
    while i < len(text):
        if text[i] == "-" and i + 1 < len(text):
            out.append(f'<span class="bar">{escape(text[i + 1])}</span>')
            i += 2
            continue
        out.append(escape(text[i]))
        i += 1
    return f'<span class="nowrap">{"".join(out)}</span>'


def cm1(value: float, digits: int = 0) -> str:
    """A wavenumber as text, cm-1 left to the column heading."""
    return f"{value:.{digits}f}"


class Figures:
    """Numbers the inline SVG figures so their ids never clash."""

    def __init__(self) -> None:
        self.count = 0

    def svg(self, fig) -> str:
        """The figure as inline SVG (the figure is closed afterwards)."""
        import matplotlib.pyplot as plt

        from ..plot.lines import figure_svg

        self.count += 1
        try:
            return figure_svg(fig, prefix=f"fig{self.count}-")
        finally:
            plt.close(fig)

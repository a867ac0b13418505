"""How results show themselves: a short summary as ``repr`` and an HTML table in Jupyter.

Result classes inherit :class:`Summarised` (and are declared with ``repr=False`` so the
dataclass does not write its own ``__repr__``). The text itself is written in
:mod:`splitting.report.display`, imported on first use only.
"""

from __future__ import annotations


class Summarised:
    """Mixin: ``repr`` gives :func:`splitting.report.display.summary`, Jupyter its HTML form."""

    __slots__ = ()

    def __repr__(self) -> str:
        from .report.display import summary

        return summary(self)

    def _repr_html_(self) -> str:
        from .report.display import summary_html

        return summary_html(self)

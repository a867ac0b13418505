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


def file_name(source: str | None) -> str:
    """The last part of a path, so no local folder shows in a figure or a report.

    Examples
    --------
    >>> file_name("/home/someone/data/calcite.cif"), file_name(r"C:\\runs\\a.cif"), file_name("structure")
    ('calcite.cif', 'a.cif', 'structure')
    """
    from pathlib import PurePosixPath, PureWindowsPath

    if not source:
        return ""
    name = PureWindowsPath(source).name if "\\" in source else PurePosixPath(source).name
    return name or source

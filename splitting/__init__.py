"""splitting: how the bands of molecules and molecular ions split in a crystal.

From a crystal structure (a CIF or any file ase reads, or an ``ase.Atoms``) the package
finds the space group, the units (molecules, molecular ions) and their sites, and
carries every free-unit species through the site group to the factor group by the
correlation method: how many components each band shows in the crystal (factor-group or
Davydov splitting), which are IR or Raman active, and the lattice modes. Measured lines
can then be assigned, phases compared and lower-symmetry candidates ranked.

The main entry points are here at the top level; they are imported on first use, so
``import splitting`` is quick.

Examples
--------
>>> import splitting
>>> p = splitting.predict(splitting.bundled_structure("calcite.cif"))
>>> p.factor_group, p.unit("CO3").site_group
('D3d', 'D3')
>>> splitting.point_group("C3v").order
6

See ``docs/notebook.md`` for a walk-through.
"""

from __future__ import annotations

import os
from importlib import import_module
from pathlib import Path
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:  # pragma: no cover
    from .crystal.predict import Options
    from .crystal.results import CrystalPrediction

#: Public name -> (module, attribute), imported on first access.
_LAZY: dict[str, tuple[str, str]] = {
    "Options": ("splitting.crystal.predict", "Options"),
    "predict_atoms": ("splitting.crystal.predict", "predict_atoms"),
    "compare_phases": ("splitting.phases.compare", "compare_phases"),
    "lower": ("splitting.phases.lower", "lower"),
    "explain": ("splitting.spectra.assign", "explain"),
    "explain_files": ("splitting.plot.explain", "explain_files"),
    "read_peaks": ("splitting.spectra.measured", "read_peaks"),
    "read_spectrum": ("splitting.spectra.measured", "read_spectrum"),
    "find_peaks": ("splitting.spectra.peaks", "find_peaks"),
    "find_table": ("splitting.spectra.catalogue", "find_table"),
    "load_mode_table": ("splitting.spectra.catalogue", "load_mode_table"),
    "analyse_unit": ("splitting.molecule.analysis", "analyse_unit"),
    "point_group": ("splitting.groups", "point_group"),
    "correlation_diagram": ("splitting.plot.correlation", "correlation_diagram"),
    "line_pattern": ("splitting.plot.lines", "line_pattern"),
    "explanation_figure": ("splitting.plot.explain", "explanation_figure"),
    "html_report": ("splitting.report.html", "html_report"),
    "write_report": ("splitting.report.html", "write_report"),
    "SplittingError": ("splitting.errors", "SplittingError"),
    "InputError": ("splitting.errors", "InputError"),
}

__all__ = sorted([*_LAZY, "__version__", "bundled_structure", "predict"])


def predict(structure: Any, options: Options | None = None, *, format: str | None = None) -> CrystalPrediction:
    """The k = 0 prediction for a crystal given as a file or an ``ase.Atoms``.

    Parameters
    ----------
    structure : path or ase.Atoms
        A structure file (CIF or anything ase reads) or a periodic ``ase.Atoms``.
    options : Options, optional
        Tolerances, bond rules and free-group choices (:class:`splitting.Options`).
    format : str, optional
        File format for ase when the suffix does not say it (files only).

    Returns
    -------
    CrystalPrediction

    Raises
    ------
    InputError
        A file that cannot be read, a structure without a periodic cell, ``format`` given
        with an ``ase.Atoms``.

    Examples
    --------
    >>> import splitting
    >>> from ase.io import read
    >>> atoms = read(splitting.bundled_structure("calcite.cif"))
    >>> splitting.predict(atoms).space_group.symbol
    'R-3c'
    """
    from .crystal import predict as pipeline
    from .errors import InputError

    if isinstance(structure, (str, os.PathLike)):
        return pipeline.predict(structure, options, format=format)
    from ase import Atoms

    if isinstance(structure, Atoms):
        if format is not None:
            raise InputError("format applies to files only, not to an ase.Atoms")
        if not structure.pbc.all() or structure.cell.rank < 3:
            raise InputError("the ase.Atoms has no periodic cell in three dimensions; a crystal needs one")
        source = structure.info.get("name") or structure.get_chemical_formula()
        return pipeline.predict_atoms(structure, options, source=str(source))
    raise InputError(f"predict takes a structure file path or an ase.Atoms, not {type(structure).__name__}")


def bundled_structure(name: str) -> Path:
    """Path of a crystal structure bundled with the source tree (``structures/``).

    Raises
    ------
    InputError
        No such bundled structure (the message lists the available ones).

    Examples
    --------
    >>> import splitting
    >>> splitting.bundled_structure("calcite.cif").name
    'calcite.cif'
    """
    from .errors import InputError

    folder = Path(__file__).resolve().parents[1] / "structures"
    path = folder / name
    if not path.is_file():
        have = ", ".join(sorted(p.name for p in folder.glob("*.cif"))) if folder.is_dir() else "none here"
        raise InputError(f"no bundled structure {name!r} (available: {have})")
    return path


def __getattr__(name: str) -> Any:
    if name == "__version__":
        from importlib.metadata import PackageNotFoundError, version

        try:
            value = version("splitting")
        except PackageNotFoundError:  # pragma: no cover - a source tree that was never installed
            value = "unknown"
        globals()[name] = value
        return value
    if name in _LAZY:
        module, attr = _LAZY[name]
        value = getattr(import_module(module), attr)
        globals()[name] = value
        return value
    raise AttributeError(f"module 'splitting' has no attribute {name!r}")


def __dir__() -> list[str]:
    return sorted({*globals(), *__all__})

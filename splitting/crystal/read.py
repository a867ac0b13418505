"""Reading crystal structures: periodic, ordered, with no overlapping atoms."""

from __future__ import annotations

import os

import numpy as np

from ..errors import InputError
from ..readers import read_atoms

__all__ = ["check_overlaps", "load_structure", "partial_sites"]


def partial_sites(atoms) -> list[str]:
    """Sites (as 'label: occupancy') whose occupancy is below one, from ase's CIF reader."""
    occ = atoms.info.get("occupancy") or {}
    out = []
    for key, by_symbol in occ.items():
        for sym, value in by_symbol.items():
            if float(value) < 0.999:
                out.append(f"{sym}{key} ({float(value):g})")
    return out


def check_overlaps(atoms, *, minimum: float = 0.5) -> None:
    """Raise InputError when two atoms (with periodic images) are closer than ``minimum`` angstrom."""
    from .neighbours import periodic_pairs

    found = periodic_pairs(atoms.cell[:], atoms.get_scaled_positions(wrap=False), minimum)
    i, j, d = found.i, found.j, found.distance
    if len(d):
        k = int(np.argmin(d))
        raise InputError(
            f"atoms {i[k] + 1} ({atoms[i[k]].symbol}) and {j[k] + 1} ({atoms[j[k]].symbol}) overlap "
            f"({d[k]:.3f} Å apart); the file may hold several orientations of a disordered unit"
        )


def load_structure(path: str | os.PathLike[str], *, format: str | None = None, allow_partial: bool = False):
    """Read a periodic crystal structure with ase and check that it describes an ordered crystal.

    Raises
    ------
    InputError
        Unreadable file, no periodic cell, partial occupancy (unless ``allow_partial``), or
        overlapping atoms.
    """
    atoms = read_atoms(path, format=format)
    if not all(atoms.pbc) or atoms.cell.rank < 3 or abs(atoms.cell.volume) < 1e-6:
        raise InputError(
            f"{path}: no three-dimensional periodic cell; give a crystal structure "
            "(CIF, POSCAR, extended XYZ with a Lattice)"
        )
    partial = partial_sites(atoms)
    if partial and not allow_partial:
        shown = ", ".join(partial[:4]) + (" ..." if len(partial) > 4 else "")
        raise InputError(
            f"{path}: partial occupancy at {shown}; the file describes a disordered structure, "
            "not an ordered one (run 'splitting predict --disordered' to treat it as a disordered phase)"
        )
    if not partial:
        try:
            check_overlaps(atoms)
        except InputError as exc:
            raise InputError(f"{path}: {exc}") from None
    return atoms

"""How large a crystal the pipeline takes before it says so, instead of running for minutes.

The space-group search grows faster than linearly with the atoms of a cell that is not
primitive (about 1 s for 8,000 atoms of a diamond supercell, 9 s for 22,000 and several
minutes for 100,000 on one core); a structure above the limit is refused at once with the
option that raises it.
"""

from __future__ import annotations

from ..defaults import DEFAULT_MAX_ATOMS
from ..errors import InputError

__all__ = ["DEFAULT_MAX_ATOMS", "check_atom_count"]


def check_atom_count(count: int, limit: int = DEFAULT_MAX_ATOMS) -> None:
    """Raise InputError when a cell has more atoms than ``limit``.

    Examples
    --------
    >>> check_atom_count(240)
    >>> check_atom_count(97336)  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    splitting.errors.InputError: the cell holds 97336 atoms, more than the limit of 20000 ...
    """
    if limit < 1:
        raise InputError(f"the atom limit {limit} must be at least 1")
    if count > limit:
        raise InputError(
            f"the cell holds {count} atoms, more than the limit of {limit} (the symmetry search would take "
            f"minutes); give --max-atoms {count} to go ahead"
        )

"""How large a crystal the pipeline takes before it says so, instead of running for minutes.

The space-group search grows faster than linearly with the atoms, steepest for a cell without
symmetry whose atoms are all of one element.  One spglib search at the default tolerance
(0.01 A), one core, for supercells moved at random by 0.03 A per coordinate (so they stay P1):
diamond (one element) 6.5 s at 5,184 atoms, 84 s at 9,680 and 277 s at 20,384; naphthalene
(C and H) 0.6 s at 5,184, 2.2 s at 10,080 and 12.5 s at 20,160 (an exact diamond supercell:
about 1 s at 8,000 and 9 s at 22,000).  The default limit of 12,000 atoms keeps the worst of
these near two minutes; a structure above the limit is refused at once with the option that
raises it.
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
    splitting.errors.InputError: the cell holds 97336 atoms, more than the limit of 12000 ...
    """
    if limit < 1:
        raise InputError(f"the atom limit {limit} must be at least 1")
    if count > limit:
        raise InputError(
            f"the cell holds {count} atoms, more than the limit of {limit} (the symmetry search would take "
            f"minutes); give --max-atoms {count} to go ahead"
        )

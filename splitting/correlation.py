"""Correlation engine: restriction from a free group to a site group, induction to the factor group.

The factor group ``F`` of a crystal is represented by its operations (rotation parts of the
space-group cosets) placed in a standard frame; a site group ``S`` is a subset of them.
Induction is done in two independent ways and the two must agree:

* the coset route (Frobenius): ``Ind chi (g) = (1/|S|) sum_{h in F, h^-1 g h in S} chi(h^-1 g h)``;
* the geometric route of the method notes: sum, over the units of the orbit that ``g`` leaves
  in place, of the character of ``g`` acting on that unit in its own orientation.

(S. Bhagavantam and T. Venkatarayudu, Proc. Indian Acad. Sci. A 9, 224 (1939);
R. S. Halford, J. Chem. Phys. 14, 8 (1946); W. G. Fateley et al., 1972.)
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from functools import cached_property

import numpy as np

from .errors import BookkeepingError
from .groups import OrientedGroup, Representation

__all__ = ["FactorGroup", "induce", "site_characters"]

# factor groups by (rotations, reference axes): the same space group and setting repeat in a batch
_FACTOR_CACHE: dict[tuple[bytes, bytes], FactorGroup] = {}


@dataclass(frozen=True, eq=False)
class FactorGroup:
    """The factor group of a crystal with its frame and the map from cell operations.

    Attributes
    ----------
    oriented : OrientedGroup
        The crystal point group in the crystal's Cartesian frame.
    index : numpy.ndarray
        ``index[k]`` is the position of cell operation ``k`` in ``oriented.group.operations``.
    """

    oriented: OrientedGroup
    index: np.ndarray = field(repr=False)

    @property
    def name(self) -> str:
        """Schoenflies symbol."""
        return self.oriented.name

    @classmethod
    def from_rotations(cls, rotations: np.ndarray, reference: np.ndarray) -> FactorGroup:
        """Identify the group of the Cartesian rotation parts, preferring frames near ``reference``."""
        from .groups.identify import _key_bytes, identify_in_crystal

        key = (_key_bytes(rotations), _key_bytes(reference))
        cached = _FACTOR_CACHE.get(key)
        if cached is not None:
            return cached
        og = identify_in_crystal(rotations, reference, tol=1e-3)
        idx = og.locate_all(rotations, tol=1e-3)
        if len(set(idx.tolist())) != len(idx):
            raise BookkeepingError("two cell operations map onto one factor-group element")
        idx.setflags(write=False)
        factor = cls(og, idx)
        if len(_FACTOR_CACHE) >= 256:
            _FACTOR_CACHE.pop(next(iter(_FACTOR_CACHE)))
        _FACTOR_CACHE[key] = factor
        return factor

    @cached_property
    def conjugates(self) -> np.ndarray:
        """``conjugates[x, h]``: position of ``h^-1 x h`` in ``oriented.group.operations``."""
        table = self.oriented.group.table
        n = len(table)
        inverse = np.argmax(table == 0, axis=1)
        h = np.arange(n)
        left = table[inverse[None, :], h[:, None]]  # [x, h] -> h^-1 x
        out = table[left, h[None, :]]  # (h^-1 x) h
        out.setflags(write=False)
        return out

    def reduce_cell(self, chars_by_cell_op: np.ndarray, *, what: str) -> Representation:
        """Reduce characters given per cell operation."""
        chars = np.zeros(len(self.index))
        chars[self.index] = chars_by_cell_op
        return self.oriented.group.reduce_operations(chars, what=what)


def site_characters(site: OrientedGroup, fn: Callable[[np.ndarray], float]) -> np.ndarray:
    """A class function of the site group evaluated at its operations (in its own order)."""
    return np.array([fn(op) for op in site.operations])


def induce(factor: FactorGroup, site_cell_ops: list[int], site_chars: np.ndarray, *, what: str) -> Representation:
    """Coset route: induce a site-group character to the factor group.

    Parameters
    ----------
    factor : FactorGroup
    site_cell_ops : list of int
        Cell-operation indices of the site group's elements.
    site_chars : numpy.ndarray
        Character at each of those operations (same order).
    """
    g = factor.oriented.group
    site = np.zeros(g.order)
    site[factor.index[np.asarray(site_cell_ops, dtype=int)]] = np.asarray(site_chars, dtype=float)
    out = site[factor.conjugates].sum(axis=1) / len(set(factor.index[list(site_cell_ops)].tolist()))
    return g.reduce_operations(out, what=what)

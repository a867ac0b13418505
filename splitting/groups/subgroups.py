"""Subgroups of a point group, up to conjugacy, and every way a group sits in another.

Subgroups are found from the multiplication table alone: the cyclic subgroups, then
repeated joins until nothing new appears.  Two subgroups are the same embedding when
an operation of the parent conjugates one onto the other.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cache

import numpy as np

from ..errors import SymmetryError
from .identify import OrientedGroup, crystal_preference, identify
from .pointgroup import PointGroup, point_group
from .representation import Representation

__all__ = ["Embedding", "embeddings", "subgroup_classes", "subgroup_lattice"]


def closure(table: np.ndarray, base: frozenset[int] | set[int], gens: tuple[int, ...] | list[int]) -> frozenset[int]:
    """Smallest subgroup holding ``base`` (already a group, or empty) and ``gens`` (indices into ``table``)."""
    elems = set(base) | {0}
    frontier = list(elems)
    while frontier:
        new = []
        for a in frontier:
            for g in gens:
                p = int(table[a, g])
                if p not in elems:
                    elems.add(p)
                    new.append(p)
        frontier = new
    return frozenset(elems)


@cache
def subgroup_lattice(name: str) -> tuple[frozenset[int], ...]:
    """Every subgroup of a group (sets of operation indices), smallest first."""
    g = point_group(name)
    table = g.table
    cyclic: dict[frozenset[int], int] = {}
    for a in range(g.order):
        cyclic.setdefault(closure(table, frozenset(), (a,)), a)
    found: dict[frozenset[int], tuple[int, ...]] = {c: (a,) for c, a in cyclic.items()}
    frontier = list(found)
    while frontier:
        new = []
        for s in frontier:
            gens = found[s]
            for _c, a in cyclic.items():
                if a in s:
                    continue
                j = closure(table, s, (*gens, a))
                if j not in found:
                    found[j] = (*gens, a)
                    new.append(j)
        frontier = new
    return tuple(sorted(found, key=lambda s: (len(s), sorted(s))))


def generators_of(table: np.ndarray, members: frozenset[int]) -> list[int]:
    """A small generating set of the subgroup ``members`` (greedy, smallest indices first)."""
    gens: list[int] = []
    span: frozenset[int] = frozenset({0})
    for g in sorted(members):
        if g in span:
            continue
        gens.append(g)
        span = closure(table, span, gens)
        if span == members:
            break
    return gens


def _conjugate(g: PointGroup, sub: frozenset[int], h: int) -> frozenset[int]:
    inv = int(np.argmax(g.table[h] == 0))
    return frozenset(int(g.table[g.table[h, s], inv]) for s in sub)


@cache
def subgroup_classes(name: str) -> tuple[frozenset[int], ...]:
    """One representative of every conjugacy class of subgroups."""
    g = point_group(name)
    seen: set[frozenset[int]] = set()
    reps = []
    for s in subgroup_lattice(name):
        if s in seen:
            continue
        conj = {_conjugate(g, s, h) for h in range(g.order)}
        seen |= conj
        reps.append(min(conj, key=lambda c: sorted(c)))
    return tuple(reps)


@dataclass(frozen=True, eq=False)
class Embedding:
    """One way (up to conjugacy) a subgroup H sits in a group G.

    Attributes
    ----------
    parent : str
        Name of G (standard orientation).
    subgroup : OrientedGroup
        H with its frame written in G's standard axes.
    members : tuple of int
        Indices of H's operations in ``point_group(parent).operations``.
    conjugates : int
        Number of subgroups conjugate to this one in G.
    """

    parent: str
    subgroup: OrientedGroup
    members: tuple[int, ...]
    conjugates: int

    @property
    def parent_classes(self) -> tuple[str, ...]:
        """Classes of G that H's operations come from (names the embedding)."""
        g = point_group(self.parent)
        idx = sorted({int(g.class_of[m]) for m in self.members})
        return tuple(g.classes[i].name.lstrip("0123456789") for i in idx)

    def axis_relation(self) -> dict[str, str]:
        """H's x, y, z axes written as directions in G's axes, e.g. ``{'z': 'z', 'x': '[1,1,0]'}``."""
        return {k: _direction_text(v) for k, v in self.subgroup.axes().items()}

    def correlation(self) -> list[tuple[str, Representation]]:
        """Restriction of every species of G to H."""
        g = point_group(self.parent)
        parent = OrientedGroup(g, np.eye(3))
        return [(s.label, parent.restrict(s.label, self.subgroup)) for s in g.species]

    def to_dict(self) -> dict[str, object]:
        """JSON-ready form."""
        return {
            "parent": self.parent,
            "subgroup": self.subgroup.name,
            "operations_from_classes": list(self.parent_classes),
            "conjugate_copies": self.conjugates,
            "axes": self.axis_relation(),
            "correlation": [
                {"species": lab, "becomes": rep.as_dict(), "text": str(rep)} for lab, rep in self.correlation()
            ],
        }


def _direction_text(v: np.ndarray) -> str:
    names = "xyz"
    v = np.asarray(v, dtype=float)
    for i in range(3):
        if abs(abs(v[i]) - 1) < 1e-6:
            return ("-" if v[i] < 0 else "") + names[i]
    m = np.max(np.abs(v))
    for scale in (1, 2, 3, 4, 5, 6):
        w = v / m * scale
        if np.allclose(w, np.round(w), atol=1e-4):
            ints = [round(x) for x in w]
            return "[" + ",".join(str(i) for i in ints) + "]"
    return "[" + ",".join(f"{x:.3f}" for x in v) + "]"


def embeddings(parent: str, sub: str | None = None) -> list[Embedding]:
    """Every inequivalent way a subgroup (named ``sub``, or any) sits in ``parent``.

    Examples
    --------
    >>> [e.parent_classes for e in embeddings("D4h", "C2v")][:2]
    [('E', 'C2', 'σv'), ('E', 'C2', 'σd')]
    """
    from .catalogue import canonical_name

    g = point_group(parent)
    target = canonical_name(sub) if sub else None
    out = []
    for members in subgroup_classes(g.name):
        ops = g.operations[sorted(members)]
        og = identify(ops, prefer=crystal_preference(np.eye(3)))
        if target and og.name != target:
            continue
        conj = len({_conjugate(g, members, h) for h in range(g.order)})
        out.append(Embedding(g.name, og, tuple(sorted(members)), conj))
    if target and not out:
        raise SymmetryError(f"{target} is not a subgroup of {g.name}")
    out.sort(key=lambda e: (-e.subgroup.group.order, e.subgroup.name, sorted({int(g.class_of[m]) for m in e.members})))
    return out

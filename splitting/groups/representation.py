"""Representations written as species multiplicities: ``2A1g + Eu``."""

from __future__ import annotations

from collections.abc import Iterator, Mapping
from dataclasses import dataclass
from functools import cached_property

from ..errors import BookkeepingError

__all__ = ["Representation", "SpeciesList"]


class SpeciesList:
    """Labels and dimensions of a group's ``species`` (shared by finite and linear groups)."""

    species: tuple

    @cached_property
    def labels(self) -> tuple[str, ...]:
        """Labels of the species, in table order."""
        return tuple(s.label for s in self.species)

    @cached_property
    def dimensions(self) -> tuple[int, ...]:
        """Dimensions of the species, in table order."""
        return tuple(s.dimension for s in self.species)


@dataclass(frozen=True)
class Representation:
    """A reducible representation of a point group as species multiplicities.

    Attributes
    ----------
    group : str
        Schoenflies name of the group.
    counts : tuple of (str, int)
        Every species of the group with its multiplicity, in character-table order
        (zeros included, so two representations of one group line up).
    dimensions : tuple of int
        Dimension of each species, same order.

    Examples
    --------
    >>> from splitting.groups import point_group
    >>> g = point_group("C2v")
    >>> str(g.vector)
    'A1 + B1 + B2'
    >>> g.vector["B1"]
    1
    """

    group: str
    counts: tuple[tuple[str, int], ...]
    dimensions: tuple[int, ...]

    def __getitem__(self, label: str) -> int:
        for lab, n in self.counts:
            if lab == label:
                return n
        raise KeyError(f"{label!r} is not a species of {self.group}")

    def __iter__(self) -> Iterator[tuple[str, int]]:
        return iter((lab, n) for lab, n in self.counts if n)

    @property
    def labels(self) -> tuple[str, ...]:
        """Species that occur (multiplicity above zero)."""
        return tuple(lab for lab, n in self.counts if n)

    @property
    def dimension(self) -> int:
        """Total dimension (number of modes counted with degeneracy)."""
        return sum(n * d for (_, n), d in zip(self.counts, self.dimensions, strict=True))

    @property
    def multiplicity(self) -> int:
        """Number of distinct species components (distinct frequencies)."""
        return sum(n for _, n in self.counts)

    def as_dict(self) -> dict[str, int]:
        """Mapping of the occurring species to their multiplicities."""
        return {lab: n for lab, n in self.counts if n}

    def to_dict(self) -> dict[str, object]:
        """JSON-ready form."""
        return {
            "group": self.group,
            "text": str(self),
            "species": [
                {"label": lab, "count": n, "dimension": d}
                for (lab, n), d in zip(self.counts, self.dimensions, strict=True)
                if n
            ],
        }

    def _check(self, other: Representation) -> None:
        if other.group != self.group:
            raise BookkeepingError(f"cannot combine representations of {self.group} and {other.group}")

    def __add__(self, other: Representation) -> Representation:
        self._check(other)
        counts = tuple((lab, n + m) for (lab, n), (_, m) in zip(self.counts, other.counts, strict=True))
        return Representation(self.group, counts, self.dimensions)

    def __sub__(self, other: Representation) -> Representation:
        self._check(other)
        counts = tuple((lab, n - m) for (lab, n), (_, m) in zip(self.counts, other.counts, strict=True))
        if any(n < 0 for _, n in counts):
            raise BookkeepingError(f"{self} does not contain {other}")
        return Representation(self.group, counts, self.dimensions)

    def __mul__(self, k: int) -> Representation:
        return Representation(self.group, tuple((lab, n * k) for lab, n in self.counts), self.dimensions)

    __rmul__ = __mul__

    def __str__(self) -> str:
        parts = [(f"{n}{lab}" if n > 1 else lab) for lab, n in self.counts if n]
        return " + ".join(parts) if parts else "0"

    @classmethod
    def from_mapping(
        cls, group: str, labels: tuple[str, ...], dims: tuple[int, ...], mapping: Mapping[str, int]
    ) -> Representation:
        """Build from a partial mapping label -> count."""
        unknown = set(mapping) - set(labels)
        if unknown:
            raise KeyError(f"{sorted(unknown)} are not species of {group}")
        return cls(group, tuple((lab, int(mapping.get(lab, 0))) for lab in labels), dims)

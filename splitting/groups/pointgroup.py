"""Finite point groups: operations, classes, characters, species and reduction."""

from __future__ import annotations

import cmath
from dataclasses import dataclass, field
from functools import cache, cached_property

import numpy as np

from ..errors import BookkeepingError, SymmetryError
from .catalogue import HERMANN_MAUGUIN, canonical_name, generators
from .characters import all_close, character_table, conjugacy_classes
from .labels import class_names, fixed_operations, mulliken_labels
from .operations import classify, close_group_with_table, find_operation
from .representation import Representation, SpeciesList

__all__ = ["ConjugacyClass", "PointGroup", "Species", "point_group"]


@dataclass(frozen=True)
class ConjugacyClass:
    """One class of conjugate operations.

    Attributes
    ----------
    name : str
        Name with its size, e.g. ``"2C3"``, ``"3C2'"``, ``"σh"``.
    members : tuple of int
        Indices of the operations (into ``PointGroup.operations``).
    """

    name: str
    members: tuple[int, ...]

    @property
    def size(self) -> int:
        """Number of operations in the class."""
        return len(self.members)


@dataclass(frozen=True)
class Species:
    """A physical symmetry species (an irrep, or a merged complex-conjugate pair).

    Attributes
    ----------
    label : str
        Mulliken label, e.g. ``"T1u"``, ``"E'"``, ``"B2g"``.
    dimension : int
        Degeneracy.
    characters : tuple of float
        Real character at every class, in class order.
    irreps : tuple of int
        Rows of the complex character table merged into this species (two for an
        ``E`` made of a complex-conjugate pair).
    """

    label: str
    dimension: int
    characters: tuple[float, ...]
    irreps: tuple[int, ...]

    @property
    def separably_degenerate(self) -> bool:
        """True for a species made of a complex-conjugate pair of irreps."""
        return len(self.irreps) == 2


@dataclass(frozen=True, eq=False)
class PointGroup(SpeciesList):
    """A finite point group in its standard orientation.

    Build with :func:`point_group`; see ``splitting.groups.catalogue`` for the orientation.

    Attributes
    ----------
    name : str
        Schoenflies symbol.
    operations : numpy.ndarray, shape (order, 3, 3)
        Orthogonal matrices, identity first (read-only).
    table : numpy.ndarray, shape (order, order)
        Multiplication table ``table[a, b] = index of operations[a] @ operations[b]``.
    classes : tuple of ConjugacyClass
    class_of : numpy.ndarray, shape (order,)
        Class index of every operation.
    irreps : numpy.ndarray, shape (n_classes, n_classes), complex
        Irreducible characters (rows) at every class (columns).
    species : tuple of Species
        Physical species in character-table order.

    Examples
    --------
    >>> g = point_group("Oh")
    >>> g.order, len(g.classes), [s.label for s in g.species][:4]
    (48, 10, ['A1g', 'A2g', 'Eg', 'T1g'])
    """

    name: str
    operations: np.ndarray = field(repr=False)
    table: np.ndarray = field(repr=False)
    classes: tuple[ConjugacyClass, ...] = field(repr=False)
    class_of: np.ndarray = field(repr=False)
    irreps: np.ndarray = field(repr=False)
    species: tuple[Species, ...] = field(repr=False)

    # ------------------------------------------------------------------ basics
    @property
    def order(self) -> int:
        """Number of operations."""
        return len(self.operations)

    @property
    def hermann_mauguin(self) -> str | None:
        """Short Hermann-Mauguin symbol for a crystallographic group, else None."""
        return HERMANN_MAUGUIN.get(self.name)

    @cached_property
    def class_sizes(self) -> np.ndarray:
        """Sizes of the classes."""
        return np.array([c.size for c in self.classes])

    @cached_property
    def _representatives(self) -> np.ndarray:
        """The first operation of every class."""
        return np.array([c.members[0] for c in self.classes])

    @cached_property
    def _by_label(self) -> dict[str, Species]:
        return {s.label: s for s in self.species}

    @cached_property
    def centrosymmetric(self) -> bool:
        """True when the inversion is an operation of the group."""
        return find_operation(self.operations, -np.eye(3)) >= 0

    def get_species(self, label: str) -> Species:
        """The species with this Mulliken label (raises SymmetryError if absent)."""
        s = self._by_label.get(label)
        if s is None:
            raise SymmetryError(f"{label!r} is not a species of {self.name}; species: {', '.join(self.labels)}")
        return s

    def index_of(self, matrix: np.ndarray, *, tol: float = 1e-4) -> int:
        """Index of an operation given in the standard orientation."""
        j = find_operation(self.operations, matrix, tol=tol)
        if j < 0:
            raise SymmetryError(f"the operation is not an element of {self.name} in its standard orientation")
        return j

    # ------------------------------------------------------------ characters
    @cached_property
    def species_characters(self) -> np.ndarray:
        """Real characters, shape (n_species, n_classes)."""
        return np.array([s.characters for s in self.species])

    def characters_at_operations(self) -> np.ndarray:
        """Species characters at every operation, shape (n_species, order)."""
        return self.species_characters[:, self.class_of]

    def reduce(self, characters: np.ndarray, *, what: str = "representation") -> Representation:
        """Multiplicities of the species in a representation given by its class characters.

        Raises
        ------
        BookkeepingError
            If the multiplicities are not non-negative integers (the characters were not
            those of a real representation of this group).
        """
        chi = np.asarray(characters, dtype=complex)
        n = (self._weighted_conjugates @ chi / self.order).tolist()
        whole = []
        for k, (i, j) in enumerate(self._irrep_pairs):  # species in table order: the first that fails is named
            v = n[i]
            w = round(v.real) if cmath.isfinite(v) else 0
            if not cmath.isfinite(v) or abs(v.imag) > 1e-6 or abs(v.real - w) > 1e-6 or w < 0:
                raise BookkeepingError(
                    f"{what} does not reduce to whole multiplicities in {self.name} "
                    f"({self.species[k].label}: {v.real:.4f})"
                )
            if abs(v - n[j]) > 1e-6:  # the two irreps of a merged pair differ
                raise BookkeepingError(f"{what} is not a real representation of {self.name}")
            whole.append(w)
        return Representation(self.name, tuple(zip(self.labels, whole, strict=True)), self.dimensions)

    @cached_property
    def _weighted_conjugates(self) -> np.ndarray:
        """``conj(irreps) * class_sizes``: multiplicities are this times the characters, over the order."""
        return self.irreps.conj() * self.class_sizes

    @cached_property
    def _irrep_pairs(self) -> tuple[tuple[int, int], ...]:
        """The first and the last irrep of every species (the same for a species of one irrep)."""
        return tuple((s.irreps[0], s.irreps[-1]) for s in self.species)

    def reduce_operations(self, characters: np.ndarray, *, what: str = "representation") -> Representation:
        """As :meth:`reduce`, from a character at every operation (checked constant on classes)."""
        chi = np.asarray(characters, dtype=float)
        per_class = chi[self._representatives]
        if np.abs(chi - per_class[self.class_of]).max() > 1e-6:
            raise BookkeepingError(f"{what} is not a class function of {self.name}")
        return self.reduce(per_class, what=what)

    def representation(self, mapping: dict[str, int]) -> Representation:
        """A representation from a mapping ``{label: count}``."""
        return Representation.from_mapping(self.name, self.labels, self.dimensions, mapping)

    def characters_of(self, rep: Representation) -> np.ndarray:
        """Class characters of a representation."""
        counts = np.array([n for _, n in rep.counts], dtype=float)
        return counts @ self.species_characters

    @cached_property
    def vector(self) -> Representation:
        """Representation of the translations (x, y, z)."""
        tr = np.trace(self.operations, axis1=1, axis2=2)
        return self.reduce_operations(tr, what="vector representation")

    @cached_property
    def axial(self) -> Representation:
        """Representation of the rotations (Rx, Ry, Rz)."""
        tr = np.linalg.det(self.operations) * np.trace(self.operations, axis1=1, axis2=2)
        return self.reduce_operations(tr, what="axial-vector representation")

    @cached_property
    def _square_class(self) -> np.ndarray:
        """Class of g^2 for a representative g of every class."""
        return np.array([self.class_of[self.table[c.members[0], c.members[0]]] for c in self.classes])

    def product(self, *labels: str) -> Representation:
        """Direct product of species, reduced.

        Examples
        --------
        >>> str(point_group("Td").product("T2", "T2"))
        'A1 + E + T1 + T2'
        """
        chi = np.ones(len(self.classes))
        for lab in labels:
            chi = chi * np.array(self.get_species(lab).characters)
        return self.reduce(chi, what=f"product {' x '.join(labels)}")

    def symmetric_square(self, label: str) -> Representation:
        """Symmetric square [X^2] of a species (first overtone of a degenerate mode).

        Examples
        --------
        >>> str(point_group("Td").symmetric_square("T2"))
        'A1 + E + T2'
        """
        chi = np.array(self.get_species(label).characters)
        sq = (chi**2 + chi[self._square_class]) / 2
        return self.reduce(sq, what=f"symmetric square of {label}")

    def symmetric_square_characters(self, characters: np.ndarray) -> np.ndarray:
        """Class characters of the symmetric square of a representation."""
        chi = np.asarray(characters, dtype=float)
        return (chi**2 + chi[self._square_class]) / 2

    @cached_property
    def raman(self) -> Representation:
        """Symmetric square of the vector representation (polarisability components)."""
        chi = self.characters_of(self.vector)
        return self.reduce(self.symmetric_square_characters(chi), what="polarisability")

    # ------------------------------------------------------------------ output
    def to_dict(self) -> dict[str, object]:
        """JSON-ready character table."""
        return {
            "name": self.name,
            "hermann_mauguin": self.hermann_mauguin,
            "order": self.order,
            "classes": [c.name for c in self.classes],
            "species": [
                {"label": s.label, "dimension": s.dimension, "characters": [_num(x) for x in s.characters]}
                for s in self.species
            ],
            "vector": str(self.vector),
            "axial": str(self.axial),
        }


def _num(x: float) -> float | int:
    r = round(x)
    return int(r) if abs(x - r) < 1e-9 else round(float(x), 6)


@cache
def point_group(name: str) -> PointGroup:
    """The point group called ``name``, built from its generators (cached).

    Accepts Schoenflies symbols (``"D4h"``), common aliases (``"C3i"``) and
    Hermann-Mauguin symbols of the crystallographic groups (``"4/mmm"``).
    Linear groups are in :func:`splitting.groups.linear_group`.

    Examples
    --------
    >>> point_group("4/mmm").name
    'D4h'
    """
    canon = canonical_name(name)
    if canon in ("C∞v", "D∞h"):
        raise SymmetryError(f"{canon} is a linear group; use linear_group({canon!r})")
    if canon != name:
        return point_group(canon)
    ops, table = close_group_with_table(generators(canon))  # the table as multiplication_table(ops) gives it
    if np.any(np.abs(np.abs(np.linalg.det(ops)) - 1) > 1e-9):  # pragma: no cover
        raise SymmetryError("generator is not orthogonal")
    classes_idx, class_of, _ = conjugacy_classes(table)
    kinds = classify(ops)
    cnames = class_names(canon, ops, classes_idx, kinds=kinds)
    firsts = [int(c[0]) for c in classes_idx]
    proper, orders = kinds.proper.tolist(), kinds.order.tolist()
    keys = [_class_key(kinds.symbol[f], proper[f], orders[f], n) for f, n in zip(firsts, cnames, strict=True)]
    ordering = sorted(range(len(classes_idx)), key=keys.__getitem__)
    classes_idx = [classes_idx[c] for c in ordering]
    cnames = [cnames[c] for c in ordering]
    for new_index, members in enumerate(classes_idx):
        class_of[members] = new_index
    irr = character_table(table, classes_idx, class_of)
    # merge complex-conjugate pairs
    groups: list[tuple[int, ...]] = []
    used: set[int] = set()
    real = (np.max(np.abs(irr.imag), axis=1) < 1e-9).tolist()
    for i, row in enumerate(irr):
        if i in used:
            continue
        if real[i]:
            groups.append((i,))
            used.add(i)
            continue
        j = next(j for j in range(len(irr)) if j not in used and j != i and all_close(irr[j], row.conj(), atol=1e-8))
        groups.append((i, j))
        used.update((i, j))
    singles = (irr + 0.0).real  # a row summed alone, as np.sum gives it (-0.0 becomes 0.0)
    chars = [singles[g[0]] if len(g) == 1 else np.sum(irr[list(g)], axis=0).real for g in groups]
    dims = [round(c[0]) for c in chars]

    # the labelling rules ask for the same few operations species by species: found all at once
    found = _find_operations(ops, fixed_operations(canon))

    values = [c.tolist() for c in chars]
    class_list = class_of.tolist()

    def chi(s: int, m: np.ndarray) -> float | None:
        key = np.asarray(m, dtype=float).tobytes()
        j = found.get(key)
        if j is None:
            j = found[key] = find_operation(ops, m, tol=1e-6)
        return None if j < 0 else values[s][class_list[j]]

    labels = mulliken_labels(canon, chi, dims)
    species = [Species(lab, d, tuple(c), g) for lab, d, c, g in zip(labels, dims, values, groups, strict=True)]
    order_key = _species_order(canon)
    species.sort(key=order_key)
    ops.setflags(write=False)
    table.setflags(write=False)
    class_of.setflags(write=False)
    return PointGroup(
        name=canon,
        operations=ops,
        table=table,
        classes=tuple(ConjugacyClass(n, tuple(c.tolist())) for n, c in zip(cnames, classes_idx, strict=True)),
        class_of=class_of,
        irreps=irr,
        species=tuple(species),
    )


def _find_operations(ops: np.ndarray, matrices: np.ndarray) -> dict[bytes, int]:
    """:func:`find_operation` (tolerance 1e-6) of every matrix at once, keyed by the matrix's bytes."""
    if not len(matrices):
        return {}
    diff = np.abs(ops[None] - matrices[:, None]).reshape(len(matrices), len(ops), 9).max(axis=2)
    j = np.argmin(diff, axis=1)
    hit = diff[np.arange(len(matrices)), j] < 1e-6
    return {m.tobytes(): (int(k) if h else -1) for m, k, h in zip(matrices, j.tolist(), hit.tolist(), strict=True)}


def _class_key(symbol: str, proper: bool, order: int, cname: str) -> tuple:
    """Textbook order of classes: E, rotations (high order first), i, S_n, sigma_h, sigma_v, sigma_d."""
    bare = cname.lstrip("0123456789")
    if symbol == "E":
        return (0, 0, 0, bare)
    if proper:
        return (1, -order, bare.count("'"), bare)
    if symbol == "i":
        return (2, 0, 0, bare)
    if symbol != "σ":
        return (3, order, 0, bare)
    return (4, {"h": 0, "v": 1, "d": 2}.get(bare[1:2], 0), bare.count("'"), bare)


def _species_order(name: str):
    """Character-table order: by g/u and '/'', then letter A, B, E, T, G, H, then subscripts."""
    letter_rank = {"A": 0, "B": 1, "E": 2, "T": 3, "G": 4, "H": 5}

    def key(s: Species) -> tuple:
        lab = s.label
        parity = 1 if lab.endswith("u") or lab.endswith("''") else 0
        core = lab.rstrip("'").rstrip("gu") if parity or lab.endswith("g") or lab.endswith("'") else lab
        core = lab.rstrip("'")
        if core.endswith(("g", "u")):
            core = core[:-1]
        digits = core[1:]
        return (parity, letter_rank[core[0]], int(digits) if digits else 0)

    return key

"""Molecules and polyatomic ions of a crystal, found from a bond graph over periodic images.

Two atoms are bonded when their distance is below ``scale`` times the sum of their
covalent radii (B. Cordero et al., Dalton Trans. 2832 (2008), as tabulated in
``ase.data.covalent_radii``); the default margin of 20 % is common practice.  Bonds to
electropositive metals (alkali, alkaline-earth, lanthanide) are not drawn, so those atoms
are separate ions.  A connected piece that is joined to its own periodic image is a
framework: its atoms are treated one by one.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass, field

import numpy as np

from ..defaults import DEFAULT_BOND_SCALE, MAX_BOND_SCALE
from ..errors import InputError
from .neighbours import periodic_pairs

__all__ = [
    "DEFAULT_BOND_SCALE",
    "IONIC_METALS",
    "MAX_BOND_LENGTH",
    "MAX_BOND_SCALE",
    "Unit",
    "check_bond_options",
    "find_units",
    "parse_cutoffs",
]

#: largest explicit bond length accepted (angstrom); the longest covalent bonds are near 3 A
MAX_BOND_LENGTH = 5.0

#: alkali, alkaline-earth (without Be) and lanthanide elements: kept as separate ions
_ALKALI_AND_ALKALINE_EARTH = ("Li", "Na", "K", "Rb", "Cs", "Fr", "Mg", "Ca", "Sr", "Ba", "Ra")
_LANTHANIDES = ("La", "Ce", "Pr", "Nd", "Pm", "Sm", "Eu", "Gd", "Tb", "Dy", "Ho", "Er", "Tm", "Yb", "Lu")
IONIC_METALS = frozenset(_ALKALI_AND_ALKALINE_EARTH + _LANTHANIDES)


@dataclass(frozen=True, eq=False)
class Unit:
    """A molecule, polyatomic ion, single ion or framework atom of the primitive cell.

    Attributes
    ----------
    atoms : tuple of int
        Indices of its atoms in the primitive cell.
    positions : numpy.ndarray, shape (n, 3)
        Unwrapped Cartesian positions (angstrom), with the centre inside the cell.
    numbers : numpy.ndarray
        Atomic numbers.
    kind : str
        ``"molecule"`` (two or more atoms), ``"atom"`` (a lone atom or ion) or
        ``"framework"`` (an atom of an extended network).
    """

    atoms: tuple[int, ...]
    positions: np.ndarray = field(repr=False)
    numbers: np.ndarray = field(repr=False)
    kind: str

    @functools.cached_property
    def centre(self) -> np.ndarray:
        """Mass-weighted centre (angstrom; computed once, read-only)."""
        from ase.data import atomic_masses

        m = atomic_masses[self.numbers]
        c = m @ self.positions / m.sum()
        c.setflags(write=False)
        return c

    @property
    def symbols(self) -> list[str]:
        """Element symbols."""
        from ase.data import chemical_symbols

        return [chemical_symbols[z] for z in self.numbers]

    @functools.cached_property
    def formula(self) -> str:
        """Hill formula (computed once)."""
        from ..molecule.analysis import hill_formula

        return hill_formula(self.symbols)


def parse_cutoffs(items: list[str] | None) -> dict[tuple[str, str], float]:
    """Parse ``["C-H=1.2", "Pb-I=0"]`` into ``{("C", "H"): 1.2, ("I", "Pb"): 0.0}``."""
    from ase.data import chemical_symbols

    out: dict[tuple[str, str], float] = {}
    for item in items or []:
        try:
            pair, value = item.split("=")
            a, b = (x.strip() for x in pair.split("-"))
            distance = float(value)
        except ValueError:
            raise InputError(f"bond cut-off {item!r} is not of the form A-B=distance in Å") from None
        unknown = [x for x in (a, b) if x not in chemical_symbols[1:]]
        if unknown:
            raise InputError(f"bond cut-off {item!r}: {', '.join(unknown)} is not an element symbol")
        out[tuple(sorted((a, b)))] = distance
    check_bond_options(DEFAULT_BOND_SCALE, out)
    return out


def check_bond_options(scale: float, cutoffs: dict[tuple[str, str], float] | None = None) -> None:
    """Raise InputError unless the bond scale and the explicit bond lengths are in range.

    Examples
    --------
    >>> check_bond_options(1.2, {("C", "O"): 1.5})
    >>> check_bond_options(1e3)
    Traceback (most recent call last):
    ...
    splitting.errors.InputError: the bond scale 1000 is out of range: give a number above 0 and at most 2.5
    """
    if not (np.isfinite(scale) and 0 < scale <= MAX_BOND_SCALE):
        raise InputError(
            f"the bond scale {scale:g} is out of range: give a number above 0 and at most {MAX_BOND_SCALE:g}"
        )
    for (a, b), distance in (cutoffs or {}).items():
        if not (np.isfinite(distance) and 0 <= distance <= MAX_BOND_LENGTH):
            raise InputError(
                f"bond cut-off {a}-{b}={distance:g} is out of range: give a distance from 0 (no bond) "
                f"to {MAX_BOND_LENGTH:g} Å"
            )


def find_units(
    lattice: np.ndarray,
    frac: np.ndarray,
    numbers: np.ndarray,
    *,
    scale: float = DEFAULT_BOND_SCALE,
    ionic_metals: bool = True,
    cutoffs: dict[tuple[str, str], float] | None = None,
    formulas: list[str] | None = None,
) -> tuple[Unit, ...]:
    """Split the primitive cell into units.

    Parameters
    ----------
    lattice, frac, numbers
        Primitive cell (rows of ``lattice`` in angstrom).
    scale : float
        Bond when distance < scale * (r_i + r_j).
    ionic_metals : bool
        Draw no bonds to alkali, alkaline-earth and lanthanide atoms.
    cutoffs : dict, optional
        Explicit largest bond length per element pair (``0`` forbids the bond).
    formulas : list of str, optional
        Keep only units with these formulas as molecules; split all others into atoms.
    """
    from ase.data import chemical_symbols, covalent_radii

    check_bond_options(scale, cutoffs)
    numbers = np.asarray(numbers, dtype=int)
    lattice = np.asarray(lattice, dtype=float)
    frac = np.asarray(frac, dtype=float)
    n = len(numbers)
    cutoffs = cutoffs or {}
    # largest bond length between element kinds present, one matrix over the distinct elements
    kinds, kind_of = np.unique(numbers, return_inverse=True)
    r = covalent_radii[kinds]
    limit = (r[:, None] + r[None, :]) * scale
    for a, za in enumerate(kinds):
        for b, zb in enumerate(kinds):
            pair = tuple(sorted((chemical_symbols[za], chemical_symbols[zb])))
            if pair in cutoffs:
                limit[a, b] = cutoffs[pair]
            if ionic_metals and (chemical_symbols[za] in IONIC_METALS or chemical_symbols[zb] in IONIC_METALS):
                limit[a, b] = 0.0
    reach = float(limit.max()) if n else 0.0
    if reach > 0:
        pairs = periodic_pairs(lattice, frac, reach)
        keep = pairs.distance < limit[kind_of[pairs.i], kind_of[pairs.j]]
        i_idx, j_idx, shifts = pairs.i[keep], pairs.j[keep], pairs.shift[keep]
    else:
        i_idx = j_idx = np.zeros(0, dtype=np.int64)
        shifts = np.zeros((0, 3), dtype=np.int64)
    label, offset, periodic = _components(n, i_idx, j_idx, shifts)
    cart = frac @ lattice
    inv = np.linalg.inv(lattice)
    masses = _masses(numbers)
    order = np.argsort(label, kind="stable")  # atoms of each component, in index order
    bounds = np.flatnonzero(np.diff(label[order])) + 1
    units: list[Unit] = []
    for comp in np.split(order, bounds) if n else []:
        if periodic[label[comp[0]]]:
            units += [
                _wrapped((int(a),), cart[[a]], numbers[[a]], masses[[a]], inv, lattice, "framework") for a in comp
            ]
            continue
        kind = "atom" if len(comp) == 1 else "molecule"
        pos = cart[comp] + offset[comp] @ lattice
        units.append(_wrapped(tuple(int(a) for a in comp), pos, numbers[comp], masses[comp], inv, lattice, kind))
    if formulas:
        from .names import match_unit

        found = sorted({u.formula for u in units})
        wanted = {match_unit(f, found, what="--units") for f in formulas}
        split: list[Unit] = []
        for u in units:
            if u.kind == "molecule" and u.formula not in wanted:
                split += [_wrapped((a,), cart[[a]], numbers[[a]], masses[[a]], inv, lattice, "atom") for a in u.atoms]
            else:
                split.append(u)
        units = split
    return tuple(units)


def _masses(numbers: np.ndarray) -> np.ndarray:
    from ase.data import atomic_masses

    return atomic_masses[numbers]


def _components(n: int, i: np.ndarray, j: np.ndarray, shifts: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Connected pieces of the bond graph: label per atom, lattice offset per atom, periodic flag per label.

    Offsets are carried outwards from the first atom of each piece, one bond layer per step
    (vectorised over all bonds); a piece whose bonds disagree with the offsets joins its own
    periodic image.  Where several bonds reach an atom in the same step any of them may give
    its offset: the offsets form a spanning tree either way, and a piece that is not periodic
    has one set of offsets only.
    """
    if n == 0:
        return np.zeros(0, dtype=int), np.zeros((0, 3), dtype=np.int64), np.zeros(0, dtype=bool)
    count, label = _connected(n, i, j)
    # relabel so that pieces are numbered by their first atom
    _, first = np.unique(label, return_index=True)
    rank = np.empty(count, dtype=int)
    rank[np.argsort(first)] = np.arange(count)
    label = rank[label]
    offset = np.zeros((n, 3), dtype=np.int64)
    known = np.zeros(n, dtype=bool)
    known[np.sort(first)] = True
    while True:
        step = known[i] & ~known[j]
        if not step.any():
            break
        targets = j[step]
        offset[targets] = offset[i[step]] + shifts[step]
        known[targets] = True
    periodic = np.zeros(count, dtype=bool)
    clash = np.any(offset[j] != offset[i] + shifts, axis=1)
    periodic[label[i[clash]]] = True
    return label, offset, periodic


def _connected(n: int, i: np.ndarray, j: np.ndarray) -> tuple[int, np.ndarray]:
    """Number of connected pieces of the graph with edges (i, j), and a piece number (0, 1, ...) per node.

    Each node takes the smallest label among its neighbours' and its own, and labels are
    followed to their own label (pointer jumping), until nothing changes: a few array
    passes for bond graphs of molecules, whatever the number of atoms.

    >>> count, label = _connected(5, np.array([0, 3]), np.array([1, 4]))
    >>> count, label.tolist()
    (3, [0, 0, 1, 2, 2])
    """
    label = np.arange(n)
    i = np.asarray(i, dtype=np.intp)
    j = np.asarray(j, dtype=np.intp)
    while True:
        low = np.minimum(label[i], label[j])
        new = label.copy()
        np.minimum.at(new, i, low)
        np.minimum.at(new, j, low)
        new = new[new]
        if np.array_equal(new, label):
            break
        label = new
    _, piece = np.unique(label, return_inverse=True)
    return int(piece.max()) + 1 if n else 0, piece.reshape(-1)


def _wrapped(
    atoms: tuple[int, ...],
    pos: np.ndarray,
    numbers: np.ndarray,
    masses: np.ndarray,
    inv: np.ndarray,
    lattice: np.ndarray,
    kind: str,
) -> Unit:
    centre = masses @ pos / masses.sum()
    f = centre @ inv
    p = pos - np.floor(f + 1e-7) @ lattice
    p.setflags(write=False)
    z = np.array(numbers)
    z.setflags(write=False)
    return Unit(atoms, p, z, kind)

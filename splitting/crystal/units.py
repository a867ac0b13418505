"""Molecules and polyatomic ions of a crystal, found from a bond graph over periodic images.

Two atoms are bonded when their distance is below ``scale`` times the sum of their
covalent radii (B. Cordero et al., Dalton Trans. 2832 (2008), as tabulated in
``ase.data.covalent_radii``); the default margin of 20 % is common practice.  Bonds to
electropositive metals (alkali, alkaline-earth, lanthanide) are not drawn, so those atoms
are separate ions.  A connected piece that is joined to its own periodic image is a
framework: its atoms are treated one by one.
"""

from __future__ import annotations

from collections import deque
from dataclasses import dataclass, field

import numpy as np

from ..errors import InputError

__all__ = ["DEFAULT_BOND_SCALE", "IONIC_METALS", "Unit", "find_units", "parse_cutoffs"]

DEFAULT_BOND_SCALE = 1.2

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

    @property
    def centre(self) -> np.ndarray:
        """Mass-weighted centre (angstrom)."""
        from ase.data import atomic_masses

        m = atomic_masses[self.numbers]
        return m @ self.positions / m.sum()

    @property
    def symbols(self) -> list[str]:
        """Element symbols."""
        from ase.data import chemical_symbols

        return [chemical_symbols[z] for z in self.numbers]

    @property
    def formula(self) -> str:
        """Hill formula."""
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
            raise InputError(f"bond cut-off {item!r} is not of the form A-B=distance (angstrom)") from None
        unknown = [x for x in (a, b) if x not in chemical_symbols[1:]]
        if unknown:
            raise InputError(f"bond cut-off {item!r}: {', '.join(unknown)} is not an element symbol")
        if distance < 0:
            raise InputError(f"bond cut-off {item!r}: the distance must not be negative")
        out[tuple(sorted((a, b)))] = distance
    return out


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
    from ase import Atoms
    from ase.data import chemical_symbols, covalent_radii
    from ase.neighborlist import neighbor_list

    atoms = Atoms(numbers=numbers, scaled_positions=frac, cell=lattice, pbc=True)
    symbols = [chemical_symbols[z] for z in numbers]
    radii = covalent_radii[numbers] * scale
    cutoffs = cutoffs or {}
    if cutoffs:
        radii = np.maximum(radii, max(cutoffs.values()) / 2 + 1e-6)
    i_idx, j_idx, shifts, dist = neighbor_list("ijSd", atoms, radii.tolist())
    keep = dist < (covalent_radii[numbers[i_idx]] + covalent_radii[numbers[j_idx]]) * scale
    if cutoffs:
        for k in range(len(i_idx)):
            pair = tuple(sorted((symbols[i_idx[k]], symbols[j_idx[k]])))
            if pair in cutoffs:
                keep[k] = dist[k] < cutoffs[pair]
    if ionic_metals:
        metal = np.array([s in IONIC_METALS for s in symbols])
        keep &= ~metal[i_idx] & ~metal[j_idx]
    i_idx, j_idx, shifts = i_idx[keep], j_idx[keep], shifts[keep]
    adj: list[list[tuple[int, np.ndarray]]] = [[] for _ in numbers]
    for i, j, s in zip(i_idx, j_idx, shifts, strict=True):
        adj[i].append((int(j), s))
    offset = np.full((len(numbers), 3), np.iinfo(np.int64).min, dtype=np.int64)
    units: list[Unit] = []
    cart = frac @ lattice
    for start in range(len(numbers)):
        if offset[start, 0] != np.iinfo(np.int64).min:
            continue
        offset[start] = 0
        comp, periodic = [start], False
        queue = deque([start])
        while queue:
            i = queue.popleft()
            for j, s in adj[i]:
                want = offset[i] + s
                if offset[j, 0] == np.iinfo(np.int64).min:
                    offset[j] = want
                    comp.append(j)
                    queue.append(j)
                elif np.any(offset[j] != want):
                    periodic = True
        comp.sort()
        if periodic:
            for a in comp:
                units.append(_single(a, cart, lattice, numbers, "framework"))
            continue
        pos = cart[comp] + offset[comp] @ lattice
        if len(comp) == 1:
            units.append(_single(comp[0], cart, lattice, numbers, "atom"))
            continue
        units.append(_wrapped(tuple(comp), pos, numbers[comp], lattice, "molecule"))
    if formulas:
        wanted = {f.replace(" ", "") for f in formulas}
        found = {u.formula for u in units}
        missing = wanted - found
        if missing:
            raise InputError(
                f"no unit with formula {', '.join(sorted(missing))}; units found: {', '.join(sorted(found))}"
            )
        split: list[Unit] = []
        for u in units:
            if u.kind == "molecule" and u.formula not in wanted:
                split += [_single(a, cart, lattice, numbers, "atom") for a in u.atoms]
            else:
                split.append(u)
        units = split
    return tuple(units)


def _single(a: int, cart: np.ndarray, lattice: np.ndarray, numbers: np.ndarray, kind: str) -> Unit:
    return _wrapped((a,), cart[[a]], numbers[[a]], lattice, kind)


def _wrapped(atoms: tuple[int, ...], pos: np.ndarray, numbers: np.ndarray, lattice: np.ndarray, kind: str) -> Unit:
    from ase.data import atomic_masses

    m = atomic_masses[numbers]
    centre = m @ pos / m.sum()
    f = centre @ np.linalg.inv(lattice)
    shift = -np.floor(f + 1e-7) @ lattice
    p = pos + shift
    p.setflags(write=False)
    n = np.array(numbers)
    n.setflags(write=False)
    return Unit(atoms, p, n, kind)

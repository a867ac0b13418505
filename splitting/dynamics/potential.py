"""Atom-atom potential between atoms of different units: parameters and force constants.

``E(r) = -A / r^6 + B exp(-C r) + D / r^12`` for every pair of atoms that belong to different
units (or to different periodic images of one unit), summed to a stated cut-off: the exp-6
(Buckingham) sets have D = 0, the Lennard-Jones 12-6 sets B = 0 (``A = 4 eps sigma^6``,
``D = 4 eps sigma^12``).  Pairs of unlike elements of the exp-6 sets follow their usual
combining rules: ``A_ij = sqrt(A_ii A_jj)``, ``B_ij = sqrt(B_ii B_jj)``, ``C_ij = (C_ii + C_jj) / 2``
(common practice), except where a set gives the unlike pair itself; the Lennard-Jones sets
give every unlike pair (their own combining rule applied when the set is built).

A set fitted to one kind of molecule only (the CO2 models) names the units it is for
(``units``) and may carry the point charges published with it (``charges``).

Neighbours are found with a k-d tree over the periodic images inside the cut-off, so the
cost grows linearly with the number of atoms at fixed density.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ..defaults import DEFAULT_CUTOFF
from ..errors import InputError
from .constants import KCAL_MOL, KELVIN, KJ_MOL

__all__ = [
    "DEFAULT_CUTOFF",
    "PARAMETER_SETS",
    "ParameterSet",
    "exp6_force_constants",
    "neighbour_pairs",
    "pair_terms",
    "sets_covering",
]

#: (A, B, C, D) of one pair: A in eV angstrom^6, B in eV, C in 1/angstrom, D in eV angstrom^12
Pair = tuple[float, float, float, float]


@dataclass(frozen=True)
class ParameterSet:
    """One published atom-atom parameter set (exp-6 or Lennard-Jones 12-6).

    Attributes
    ----------
    name : str
        Short name used on the command line.
    source : str
        Where the numbers come from (and whether they were recalled from memory).
    like : dict
        ``element -> (A, B, C, D)`` (see :data:`Pair`).
    unlike : dict
        ``(element, element) -> (A, B, C, D)`` given by the set itself (sorted pair).
    form : str
        The functional form, for messages and the model text (``"exp-6"``, ``"Lennard-Jones 12-6"``).
    units : tuple of str
        Hill formulas of the only units the set was fitted to (empty: any unit of its elements).
    charges : dict
        ``formula -> {element: charge (e)}``: the point charges published with the set.
    """

    name: str
    source: str
    like: dict[str, Pair]
    unlike: dict[tuple[str, str], Pair]
    form: str = "exp-6"
    units: tuple[str, ...] = ()
    charges: dict[str, dict[str, float]] = field(default_factory=dict)

    @property
    def label(self) -> str:
        """How messages name the set: ``exp-6 set 'williams'``."""
        return f"{self.form} set {self.name!r}"

    def covers(self, elements, formulas=()) -> bool:
        """True when every element has parameters and the set is for every unit formula given."""
        return all(e in self.like for e in elements) and (not self.units or set(formulas) <= set(self.units))

    def pair(self, a: str, b: str) -> Pair:
        """(A, B, C, D) of the pair a-b (eV angstrom^6, eV, 1/angstrom, eV angstrom^12)."""
        key = tuple(sorted((a, b)))
        if key in self.unlike:
            return self.unlike[key]
        for e in (a, b):
            if e not in self.like:
                raise InputError(
                    f"element {e} is not covered by the {self.label} "
                    f"(it covers {', '.join(sorted(self.like))}); choose another --potential"
                )
        (a1, b1, c1, d1), (a2, b2, c2, d2) = self.like[a], self.like[b]
        return (float(np.sqrt(a1 * a2)), float(np.sqrt(b1 * b2)), (c1 + c2) / 2, float(np.sqrt(d1 * d2)))


def sets_covering(elements, formulas) -> list[str]:
    """Names of the bundled sets that cover these elements and unit formulas.

    Examples
    --------
    >>> sets_covering({"C", "O"}, {"CO2"})
    ['williams', 'epm2', 'trappe']
    >>> sets_covering({"C", "H"}, {"C10H8"})
    ['williams', 'gavezzotti']
    """
    return [name for name, ps in PARAMETER_SETS.items() if ps.covers(elements, formulas)]


def pair_terms(abcd: np.ndarray, r: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Energy, first and second radial derivatives of ``-A/r^6 + B exp(-C r) + D/r^12``.

    ``abcd`` (m, 4) holds the pair parameters of every distance in ``r`` (m,).

    Examples
    --------
    A Lennard-Jones pair at its minimum, ``2^(1/6) sigma`` (sigma = eps = 1), has energy -eps and no force:

    >>> import numpy as np
    >>> e, d1, d2 = pair_terms(np.array([[4.0, 0.0, 0.0, 4.0]]), np.array([2 ** (1 / 6)]))
    >>> round(float(e[0]), 9), round(float(d1[0]), 9)
    (-1.0, 0.0)
    """
    a, b, c, d = abcd[:, 0], abcd[:, 1], abcd[:, 2], abcd[:, 3]
    ex = b * np.exp(-c * r)
    r6 = r**-6
    r12 = r6 * r6
    energy = -a * r6 + ex + d * r12
    d1 = (6 * a * r6 - 12 * d * r12) / r - c * ex
    d2 = (-42 * a * r6 + 156 * d * r12) / r**2 + c * c * ex
    return energy, d1, d2


def _kcal(a: float, b: float, c: float) -> Pair:
    return (a * KCAL_MOL, b * KCAL_MOL, c, 0.0)


def _kj(a: float, b: float, c: float) -> Pair:
    """Gavezzotti's order (A exp(-B r) - C / r^6) into ours."""
    return (c * KJ_MOL, a * KJ_MOL, b, 0.0)


def _lj(sigma: float, eps_kelvin: float) -> Pair:
    """Lennard-Jones ``4 eps ((sigma/r)^12 - (sigma/r)^6)``, sigma in angstrom and eps/k in K."""
    eps = eps_kelvin * KELVIN
    return (4 * eps * sigma**6, 0.0, 0.0, 4 * eps * sigma**12)


def _lorentz_berthelot(like: dict[str, tuple[float, float]]) -> dict[tuple[str, str], Pair]:
    """Every unlike pair of ``element -> (sigma, eps/k)`` by the Lorentz-Berthelot rule (common practice)."""
    names = sorted(like)
    return {
        (a, b): _lj((like[a][0] + like[b][0]) / 2, float(np.sqrt(like[a][1] * like[b][1])))
        for k, a in enumerate(names)
        for b in names[k + 1 :]
    }


WILLIAMS = ParameterSet(
    "williams",
    "C and H: D. E. Williams, J. Chem. Phys. 47, 4680 (1967), set IV; N and O: D. E. Williams and "
    "S. R. Cox, Acta Cryst. B40, 404 (1984); every number from memory",
    {
        "H": _kcal(27.3, 2654.0, 3.74),
        "C": _kcal(568.0, 83630.0, 3.60),
        "N": _kcal(691.0, 67220.0, 3.78),
        "O": _kcal(259.0, 42000.0, 3.96),
    },
    {("C", "H"): _kcal(125.0, 8766.0, 3.67)},
)

GAVEZZOTTI = ParameterSet(
    "gavezzotti",
    "A. Gavezzotti and G. Filippini, J. Phys. Chem. 98, 4831 (1994) and G. Filippini and "
    "A. Gavezzotti, Acta Cryst. B49, 868 (1993); C and H only; numbers from memory",
    {"H": _kj(24158.0, 4.01, 109.2), "C": _kj(226145.0, 3.47, 2418.0)},
    {("C", "H"): _kj(120000.0, 4.10, 472.8)},
)


def _lj_set(name: str, source: str, like: dict[str, tuple[float, float]], cross, charges) -> ParameterSet:
    """A Lennard-Jones set for CO2 only: ``element -> (sigma, eps/k)``, cross terms given or Lorentz-Berthelot."""
    return ParameterSet(
        name,
        source,
        {e: _lj(*p) for e, p in like.items()},
        {pair: _lj(*p) for pair, p in cross.items()} if cross else _lorentz_berthelot(like),
        form="Lennard-Jones 12-6",
        units=("CO2",),
        charges={"CO2": charges},
    )


EPM2 = _lj_set(
    "epm2",
    "CO2 only: J. G. Harris and K. H. Yung, J. Phys. Chem. 99, 12021 (1995), their EPM2 model "
    "(Lennard-Jones, C-O cross term given; charges C +0.6512, O -0.3256 e; fitted with C=O 1.149 Å); "
    "every number from memory",
    {"C": (2.757, 28.129), "O": (3.033, 80.507)},
    {("C", "O"): (2.892, 47.588)},
    {"C": 0.6512, "O": -0.3256},
)

TRAPPE = _lj_set(
    "trappe",
    "CO2 only: J. J. Potoff and J. I. Siepmann, AIChE J. 47, 1676 (2001) (Lennard-Jones, "
    "Lorentz-Berthelot combining; charges C +0.70, O -0.35 e; fitted with C=O 1.16 Å); "
    "every number from memory",
    {"C": (2.80, 27.0), "O": (3.05, 79.0)},
    None,
    {"C": 0.70, "O": -0.35},
)

#: the published sets, first one the default
PARAMETER_SETS: dict[str, ParameterSet] = {s.name: s for s in (WILLIAMS, GAVEZZOTTI, EPM2, TRAPPE)}


def neighbour_pairs(
    lattice: np.ndarray, positions: np.ndarray, cutoff: float
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Every ordered pair (i, j + L) of atoms closer than ``cutoff``, L a lattice vector.

    Parameters
    ----------
    lattice : numpy.ndarray, shape (3, 3)
        Lattice vectors as rows (angstrom).
    positions : numpy.ndarray, shape (n, 3)
        Cartesian positions (angstrom), not necessarily inside the cell.
    cutoff : float

    Returns
    -------
    i, j : numpy.ndarray of int
    shift : numpy.ndarray of int, shape (m, 3)
        Lattice translation (integer multiples of the rows of ``lattice``) of atom j.

    Examples
    --------
    >>> import numpy as np
    >>> i, j, s = neighbour_pairs(np.eye(3) * 3.0, np.zeros((1, 3)), 3.1)
    >>> len(i)  # six nearest images of a simple cubic lattice
    6
    """
    from scipy.spatial import cKDTree

    lattice = np.asarray(lattice, dtype=float)
    pos = np.asarray(positions, dtype=float)
    frac = pos @ np.linalg.inv(lattice)
    span = np.ptp(frac, axis=0) if len(frac) else np.zeros(3)
    # interplanar spacings: 1 / |row of the inverse transpose|
    heights = 1.0 / np.linalg.norm(np.linalg.inv(lattice).T, axis=1)
    reach = np.ceil(cutoff / heights + span).astype(int)
    grid = np.array(
        [
            (a, b, c)
            for a in range(-reach[0], reach[0] + 1)
            for b in range(-reach[1], reach[1] + 1)
            for c in range(-reach[2], reach[2] + 1)
        ]
    )
    images = (pos[None, :, :] + (grid @ lattice)[:, None, :]).reshape(-1, 3)
    tree = cKDTree(images)
    # all pairs at once as arrays (no Python lists), rows of each atom together
    found = cKDTree(pos).sparse_distance_matrix(tree, cutoff, output_type="ndarray")
    order = np.argsort(found["i"], kind="stable")
    ii = found["i"][order].astype(int)
    kk = found["j"][order].astype(int)
    jj = kk % len(pos)
    shift = grid[kk // len(pos)]
    keep = ~((ii == jj) & np.all(shift == 0, axis=1))
    return ii[keep], jj[keep], shift[keep]


def radial_hessian(vec: np.ndarray, d1: np.ndarray, d2: np.ndarray) -> np.ndarray:
    """Hessian blocks phi = f'' r r / r^2 + f' / r (1 - r r / r^2) of radial pair functions.

    ``vec`` (m, 3) separations, ``d1`` and ``d2`` the first and second radial derivatives.
    """
    r = np.linalg.norm(vec, axis=1)
    u = vec / r[:, None]
    uu = u[:, :, None] * u[:, None, :]
    return d2[:, None, None] * uu + (d1 / r)[:, None, None] * (np.eye(3)[None] - uu)


def add_pairs(fc: np.ndarray, i: np.ndarray, j: np.ndarray, phi: np.ndarray) -> None:
    """Add ordered-pair Hessian blocks to k = 0 force constants ``fc`` (n, 3, n, 3) in place.

    Each ordered pair adds ``-phi`` to block (i, j) and ``+phi`` to (i, i): translation
    invariance (the acoustic sum rule) holds by construction.
    """
    n = fc.shape[0]
    flat = fc.reshape(n, 3, n, 3)
    np.add.at(flat, (i, slice(None), j, slice(None)), -phi)
    np.add.at(flat, (i, slice(None), i, slice(None)), phi)


def exp6_force_constants(
    lattice: np.ndarray,
    positions: np.ndarray,
    symbols,
    unit_of: np.ndarray,
    params: ParameterSet,
    *,
    cutoff: float = DEFAULT_CUTOFF,
    sparse: bool = False,
) -> tuple[np.ndarray, np.ndarray, float]:
    """k = 0 force constants (eV/angstrom^2, (3n, 3n)), gradient (eV/angstrom, (n, 3)) and energy per cell (eV).

    Pairs inside one unit (same unit, no lattice shift) are left out: the free-unit
    Hessian holds them.  With ``sparse`` the force constants come as a ``scipy.sparse``
    CSR matrix, built in time and memory linear in the number of atoms.
    """
    symbols = list(symbols)
    n = len(symbols)
    i, j, shift = neighbour_pairs(lattice, positions, cutoff)
    inter = ~((unit_of[i] == unit_of[j]) & np.all(shift == 0, axis=1))
    i, j, shift = i[inter], j[inter], shift[inter]
    vec = positions[j] + shift @ lattice - positions[i]
    r = np.linalg.norm(vec, axis=1)
    elements = sorted(set(symbols))
    code = np.array([elements.index(s) for s in symbols])
    table = np.array([[params.pair(a, b) for b in elements] for a in elements])  # (k, k, 4)
    e, d1, d2 = pair_terms(table[code[i], code[j]], r)
    energy = float(np.sum(e) / 2)
    if sparse:
        from .pairs import pair_force_constants

        return pair_force_constants(n, i, vec, d1, d2, j), pair_gradient(n, i, vec, d1), energy
    fc = np.zeros((n, 3, n, 3))
    add_pairs(fc, i, j, radial_hessian(vec, d1, d2))
    return fc.reshape(3 * n, 3 * n), pair_gradient(n, i, vec, d1), energy


def pair_gradient(n: int, i: np.ndarray, vec: np.ndarray, d1: np.ndarray) -> np.ndarray:
    """Gradient (n, 3) on atoms i of ordered pair functions f(|r_j - r_i|): -f' r / |r| on i."""
    r = np.linalg.norm(vec, axis=1)
    grad = np.zeros((n, 3))
    np.add.at(grad, i, -(d1 / r)[:, None] * vec)
    return grad

"""Charge sites off the atoms: a unit's charge distribution on its atoms and on extra points.

Atom-centred charges make a molecule's electrostatic field rounder than it is: with the
charges fixed by the measured quadrupole, the next moment (the hexadecapole of a linear
molecule) is whatever the bond lengths make it.  Distributed-charge models put charges
on further points of the molecule (on the axis, at the bond centres) and fit them to
more than one measured moment (C. S. Murthy, S. F. O'Shea and I. R. McDonald, Mol. Phys.
50, 531 (1983), from memory, for solid N2 and CO2).

Every charge site here is a fixed linear combination of the positions of its unit's
atoms with weights adding up to one, ``s = sum_a w_a r_a`` (an atom is a site of weight
one on itself; the centre of a bond has 1/2 on either atom; a point on the C-O axis at a
fraction t from C has 1 - t on C and t on O).  Because the map is linear, the Coulomb
terms of the sites carry over to the atoms exactly: force constants
``Phi_atoms = W^T Phi_sites W`` and gradient ``g_atoms = W^T g_sites``, with no
second-order term; the weights add up to one, so a rigid translation or rotation of a
unit carries its sites along (acoustic sum rule and the rotational invariance kept), and
the sites follow every internal vibration too.  The sites have no mass.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

__all__ = ["BOND_CHARGES", "HEXADECAPOLE", "ChargeSites", "distributed_sites", "linear_site_charges"]


@dataclass(frozen=True, eq=False)
class ChargeSites:
    """Point charges on linear combinations of atom positions.

    Attributes
    ----------
    weights : scipy.sparse.csr_matrix, shape (m, n)
        Site positions are ``weights @ atom_positions``; every row adds up to one and
        holds atoms of one unit only.
    charges : numpy.ndarray, shape (m,)
        Charge of every site (e).
    unit_of : numpy.ndarray, shape (m,)
        Unit of every site (pairs inside one unit are left out of the sums).

    Examples
    --------
    Two atoms and a site half-way between them:

    >>> import numpy as np
    >>> s = ChargeSites.from_rows([{0: 1.0}, {1: 1.0}, {0: 0.5, 1: 0.5}], [0.2, 0.2, -0.4], [0, 0, 0], 2)
    >>> s.positions(np.array([[0.0, 0, 0], [2.0, 0, 0]]))[2].tolist()
    [1.0, 0.0, 0.0]
    """

    weights: object = field(repr=False)
    charges: np.ndarray = field(repr=False)
    unit_of: np.ndarray = field(repr=False)

    @classmethod
    def from_rows(cls, rows, charges, unit_of, n_atoms: int) -> ChargeSites:
        """Sites from one ``{atom: weight}`` dict per site."""
        from scipy.sparse import csr_matrix

        r, c, w = [], [], []
        for k, row in enumerate(rows):
            for a, x in row.items():
                r.append(k)
                c.append(int(a))
                w.append(float(x))
        mat = csr_matrix((w, (r, c)), shape=(len(rows), n_atoms))
        if len(rows) and not np.allclose(np.asarray(mat.sum(axis=1)).ravel(), 1.0):
            raise ValueError("the weights of every charge site must add up to one")
        return cls(mat, np.asarray(charges, dtype=float), np.asarray(unit_of, dtype=int))

    @property
    def count(self) -> int:
        """Number of sites."""
        return len(self.charges)

    def positions(self, atom_positions: np.ndarray) -> np.ndarray:
        """Site positions (m, 3) from atom positions (n, 3)."""
        return np.asarray(self.weights @ np.asarray(atom_positions, dtype=float))

    def atom_gradient(self, grad_sites: np.ndarray) -> np.ndarray:
        """Gradient on the atoms (n, 3) from the gradient on the sites (m, 3)."""
        return np.asarray(self.weights.T @ grad_sites)

    def atom_force_constants(self, fc_sites):
        """Force constants on the atoms (3n, 3n) from those on the sites (3m, 3m): ``W^T Phi W``.

        A dense input gives a dense result, a sparse one a sparse result.
        """
        from scipy.sparse import identity, issparse, kron

        wk = kron(self.weights, identity(3), format="csr")
        if issparse(fc_sites):
            return (wk.T @ fc_sites @ wk).tocsr()
        return np.asarray(wk.T @ (wk.T @ np.asarray(fc_sites).T).T)

    def atom_charges(self) -> np.ndarray:
        """The charge each atom would carry if every site gave its charge to its atoms by weight (n,).

        The total charge of every unit is kept; for output and checks only (the sums use the sites).
        """
        return np.asarray(self.weights.T @ self.charges).ravel()


#: measured or published hexadecapole moments along the axis of linear units, 10^-42 esu cm^4
#: (Buckingham's convention: for charges on the axis, Phi = sum_i q_i z_i^4), with sources
HEXADECAPOLE: dict[str, tuple[float, str]] = {
    "CO2": (
        -4.0,
        "C. G. Gray and K. E. Gubbins, Theory of Molecular Fluids, vol. 1, Oxford (1984), table of multipole moments "
        "(from memory; docs/estimate.md shows how much the lines depend on it)",
    ),
}

#: a bond site moves with its atoms by weights that differ from those of its bond centre
#: (1/2, 1/2) by at most this much; beyond it (nearly empty sites) it follows its bond
MAX_FLUX = 1.0

#: 1 e angstrom^4 in 10^-42 esu cm^4 (4.80320 x 10^-10 esu x 10^-32 cm^4)
_ESU_PER_E_ANGSTROM4 = 4.80320


def linear_site_charges(theta: float, phi: float, z_end: float, fraction: float = 0.5) -> tuple[float, float, float]:
    """Charges (centre, each end atom, each bond site) of a linear A-B2 unit with two extra sites on its bonds.

    The unit has its centre atom at z = 0, its end atoms at +-``z_end`` and one extra site
    on each bond at +-``fraction * z_end``; the three charges are fixed by neutrality, the
    quadrupole ``theta`` (10^-26 esu cm^2, ``Theta = sum q z^2``) and the hexadecapole
    ``phi`` (10^-42 esu cm^4, ``Phi = sum q z^4``).

    Examples
    --------
    Without a hexadecapole of its own (that of charges on the atoms), the bond sites stay empty:

    >>> qc, qo, qs = linear_site_charges(-4.3, -4.3 * 1.16**2, 1.16)
    >>> round(qc, 4), round(qo, 4), abs(qs) < 1e-12
    (0.6653, -0.3327, True)

    With the hexadecapole of CO2 of Gray and Gubbins (from memory) the bond centres carry
    negative charge and the carbon more positive charge:

    >>> [round(x, 3) for x in linear_site_charges(-4.3, -4.0, 1.16)]
    [1.487, -0.196, -0.548]
    """
    th = theta / 4.80320
    ph = phi / _ESU_PER_E_ANGSTROM4
    zs = fraction * z_end
    a = np.array([[2 * z_end**2, 2 * zs**2], [2 * z_end**4, 2 * zs**4]])
    q_end, q_site = np.linalg.solve(a, [th, ph])
    return float(-2 * (q_end + q_site)), float(q_end), float(q_site)


def distributed_sites(model, units) -> tuple[ChargeSites, list[str]]:
    """Charge sites of the cell: a distributed-charge model for every unit that has one bundled, atoms otherwise.

    A neutral linear A-B2 unit (CO2) with a quadrupole in
    :data:`splitting.dynamics.quadrupole.MEASURED` and a hexadecapole in
    :data:`HEXADECAPOLE` gets five charges on its axis: on its three atoms and on the
    centres of its two bonds, fitted to neutrality and both moments at the unit's bond
    length in the crystal (:func:`linear_site_charges`).  How a bond site follows the
    atoms is a further choice: its weights are set so that the dipole moment of every
    displacement of the unit is that of the tight-binding charges (``W^T q = q_tb``; the
    infrared transition dipoles, and with them the coupling of internal vibrations between
    units, stay those of the tight-binding model), while the site stays at the bond centre
    (CO2: weights 0.93 on C, 0.28 on its own O and -0.22 on the other).  Where that would
    need weights farther than :data:`MAX_FLUX` from the bond centre's (1/2, 1/2), as for
    nearly empty sites, the site simply follows its bond.  A unit with a bond-charge model
    in :data:`BOND_CHARGES` (C60) gets charges on the centres of its bonds (weights 1/2,
    1/2) on top of its tight-binding charges.  Every other unit keeps its tight-binding
    charges on its atoms.

    Returns the sites and one line of text per unit formula given distributed charges.
    """
    charges = np.asarray(model.charges, dtype=float)
    rows: list[dict[int, float]] = []
    q: list[float] = []
    uo: list[int] = []
    done: dict[str, str] = {}
    for k, u in enumerate(units):
        idx = np.flatnonzero(model.unit_of == k)
        found = _linear_sites(model, idx, charges, u.formula) or _bond_sites(model, idx, charges, u.formula)
        if found is None:
            found = [({int(a): 1.0}, float(charges[a])) for a in idx], ""
        sites, text = found
        for row, charge in sites:
            rows.append(row)
            q.append(charge)
            uo.append(k)
        if text:
            done.setdefault(u.formula, text)
    return ChargeSites.from_rows(rows, q, uo, len(charges)), list(done.values())


def _linear_sites(model, idx, charges, formula):
    """The five axial charges of a linear A-B2 unit with a bundled quadrupole and hexadecapole, or None."""
    from .quadrupole import MEASURED

    fit = _linear_fit(model, idx, charges, MEASURED.get(formula), HEXADECAPOLE.get(formula))
    if fit is None:
        return None
    (centre, ends), (qc, qe, qs), weight = fit
    sites = [({centre: 1.0}, qc)]
    for e, other in (ends, ends[::-1]):
        # the bond site: at (r_centre + r_e) / 2 for the unit as it sits, moving as weights a, b, c
        a, b, c = 1.0 - weight, (weight + 0.5) / 2, (weight - 0.5) / 2
        sites += [({e: 1.0}, qe), ({centre: a, e: b, other: c}, qs)]
    text = (
        f"distributed charges of {formula} on its atoms and bond centres ({qc:+.3f}, {qe:+.3f}, {qs:+.3f} e), "
        f"fitted to its quadrupole {MEASURED[formula][0]:g} x 10^-26 esu cm^2 and hexadecapole "
        f"{HEXADECAPOLE[formula][0]:g} x 10^-42 esu cm^4"
    )
    return sites, text


def _linear_fit(model, idx, charges, theta, phi):
    """((centre atom, (end atoms)), (q centre, q end, q site), weight of the ends) of a linear A-B2 unit, or None."""
    if theta is None or phi is None or len(idx) != 3 or abs(float(charges[idx].sum())) > 1e-3:
        return None
    pos = model.positions[idx]
    d = np.linalg.norm(pos[:, None] - pos[None], axis=2)
    centre = int(np.argmin(d.sum(axis=1)))
    ends = [a for a in range(3) if a != centre]
    e1, e2 = pos[ends[0]] - pos[centre], pos[ends[1]] - pos[centre]
    z = float(np.linalg.norm(e1) + np.linalg.norm(e2)) / 2
    # linear and symmetric to within 2 degrees and 2 % (a unit as found in a measured structure)
    linear = np.linalg.norm(np.cross(e1, e2)) < 0.035 * z * z and e1 @ e2 < 0
    if not linear or abs(np.linalg.norm(e2) - np.linalg.norm(e1)) > 0.02 * z:
        return None
    if model.symbols[idx[ends[0]]] != model.symbols[idx[ends[1]]]:
        return None
    qc, qe, qs = linear_site_charges(theta[0], phi[0], z)
    # dipole of a displacement: the end atom carries q_e + q_s (b + c) = q_tb  ->  b + c = weight
    q_end = float(charges[idx[ends[0]]] + charges[idx[ends[1]]]) / 2
    weight = (q_end - qe) / qs if abs(qs) > 1e-9 else np.inf
    if abs(weight - 0.5) > MAX_FLUX:  # (nearly) empty bond sites cannot carry the difference
        weight = 0.5
    return (int(idx[centre]), (int(idx[ends[0]]), int(idx[ends[1]]))), (qc, qe, qs), weight


#: bond-charge models: charges (e) on the centres of the shorter and of the longer bonds of
#: a unit with two bond lengths, and on every atom (added to its tight-binding charge), with sources
BOND_CHARGES: dict[str, tuple[dict[str, float], str]] = {
    "C60": (
        {"short": -0.35, "long": 0.175, "atom": 0.0},
        "M. Sprik, A. Cheng and M. L. Klein, J. Phys. Chem. 96, 2027 (1992): negative charge on the "
        "6:6 (double) bonds, balanced on the 6:5 bonds (values from memory)",
    ),
}


def _bond_sites(model, idx, charges, formula):
    """Charges on the bond centres of a unit with a bundled bond-charge model (two bond lengths), or None."""
    if formula not in BOND_CHARGES or len(idx) < 3:
        return None
    values, _source = BOND_CHARGES[formula]
    pos = model.positions[idx]
    d = np.linalg.norm(pos[:, None] - pos[None], axis=2)
    shortest = float(np.min(d[d > 0]))
    a, b = np.nonzero(np.triu((d > 0) & (d < 1.25 * shortest), 1))
    lengths = d[a, b]
    split = (lengths.min() + lengths.max()) / 2
    if lengths.max() - lengths.min() < 0.02:  # one bond length: the model does not apply
        return None
    sites = [({int(idx[k]): 1.0}, float(charges[idx[k]]) + values["atom"]) for k in range(len(idx))]
    for i, j, r in zip(a, b, lengths, strict=True):
        sites.append(({int(idx[i]): 0.5, int(idx[j]): 0.5}, values["short"] if r < split else values["long"]))
    short = int(np.sum(lengths < split))
    text = (
        f"bond charges of {formula}: {values['short']:+.3f} e on the centres of its {short} shorter bonds, "
        f"{values['long']:+.3f} e on its {len(lengths) - short} longer ones"
        + (f", {values['atom']:+.3f} e on every atom" if values["atom"] else "")
    )
    return sites, text

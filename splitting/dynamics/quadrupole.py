"""Point charges that carry a unit's measured quadrupole moment (``charges="quadrupole"``).

The orientational forces between neutral linear molecules such as CO2 come largely from
their electric quadrupole moments.  The tight-binding charges of GFN2-xTB underestimate
that of CO2: the free molecule's quadrupole from the tight-binding density (charges and
atomic multipoles, tblite) is about -2.9 x 10^-26 esu cm^2, the charges alone at the
crystal's geometry about -3.0, against the measured -4.3 x 10^-26 esu cm^2 (A. D.
Buckingham and R. L. Disch, Proc. R. Soc. A 273, 275 (1963), from memory).  Since the
quadrupole-quadrupole energy goes with the square of the moment, the librations come out
too soft.  This option scales the tight-binding charges of every unit with a measured
value in :data:`MEASURED` by one factor, so that the charges, as they sit in the crystal,
give the measured moment along the unit's axis; units without a value keep their
tight-binding charges.

Convention (Buckingham's): ``Theta = 1/2 sum_i q_i (3 r_i r_i - r_i^2 1)`` about the centre of
mass, in units of 10^-26 esu cm^2 (= 1 D angstrom, one "buckingham").  Only neutral units
with a unique axis (linear units and symmetric tops) are scaled: for them one number
fixes the traceless tensor.
"""

from __future__ import annotations

import numpy as np

__all__ = ["MEASURED", "axial_quadrupole", "quadrupole_charges"]

#: debye per (e angstrom): 1 e angstrom = 4.80320 D (CODATA; common practice)
_DEBYE_PER_E_ANGSTROM = 4.80320

#: measured gas-phase quadrupole moments along the axis, 10^-26 esu cm^2 (D angstrom), with sources
MEASURED: dict[str, tuple[float, str]] = {
    "CO2": (
        -4.3,
        "A. D. Buckingham and R. L. Disch, Proc. R. Soc. A 273, 275 (1963) (birefringence induced by a "
        "field gradient; from memory)",
    ),
}


def _axis(positions: np.ndarray, masses: np.ndarray) -> np.ndarray | None:
    """The unique principal axis of inertia (linear unit or symmetric top), or None."""
    centre = masses @ positions / masses.sum()
    r = positions - centre
    inertia = (masses * np.sum(r * r, axis=1)).sum() * np.eye(3) - (masses[:, None] * r).T @ r
    w, v = np.linalg.eigh(inertia)
    scale = max(float(w[-1]), 1e-12)
    if abs(w[1] - w[2]) < 1e-3 * scale and abs(w[0] - w[1]) > 1e-2 * scale:
        return v[:, 0]  # prolate top or linear unit: the small moment's axis
    if abs(w[0] - w[1]) < 1e-3 * scale and abs(w[1] - w[2]) > 1e-2 * scale:
        return v[:, 2]  # oblate top
    return None


def axial_quadrupole(positions, charges, masses) -> float | None:
    """Quadrupole moment of point charges along the unit's axis (10^-26 esu cm^2), or None without a unique axis.

    Examples
    --------
    CO2 with charges -0.3326 e on the oxygens 1.16 A from the carbon gives the measured
    -4.3 x 10^-26 esu cm^2:

    >>> import numpy as np
    >>> pos = np.array([[0, 0, 0], [0, 0, 1.16], [0, 0, -1.16]])
    >>> round(axial_quadrupole(pos, [0.6652, -0.3326, -0.3326], np.array([12.0, 16.0, 16.0])), 2)
    -4.3
    """
    pos = np.asarray(positions, dtype=float)
    q = np.asarray(charges, dtype=float)
    m = np.asarray(masses, dtype=float)
    axis = _axis(pos, m)
    if axis is None:
        return None
    r = pos - m @ pos / m.sum()
    z = r @ axis
    theta = 0.5 * float(np.sum(q * (3 * z * z - np.sum(r * r, axis=1))))
    return theta * _DEBYE_PER_E_ANGSTROM


def quadrupole_charges(model, units) -> tuple[np.ndarray, list[str]]:
    """The cell model's charges, those of every unit with a measured quadrupole scaled to it.

    Returns the new charges (e) and one line of text per scaled unit formula (for the
    model's description).
    """
    charges = np.array(model.charges, dtype=float)
    done: dict[str, str] = {}
    for k, u in enumerate(units):
        formula = u.formula
        if formula not in MEASURED or len(u.atoms) < 2:
            continue
        idx = np.flatnonzero(model.unit_of == k)
        q = charges[idx]
        if abs(float(q.sum())) > 1e-3:
            continue  # a charged unit's quadrupole depends on the origin: left as it is
        theta = axial_quadrupole(model.positions[idx], q, model.masses[idx])
        target, _source = MEASURED[formula]
        if theta is None or abs(theta) < 1e-3 or theta * target < 0:
            continue
        factor = target / theta
        charges[idx] = q * factor
        done.setdefault(
            formula,
            f"tight-binding charges of {formula} x {factor:.3f}, to its measured quadrupole "
            f"{target:g} x 10^-26 esu cm^2 (tight-binding charges: {theta:.2f})",
        )
    return charges, list(done.values())

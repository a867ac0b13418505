"""Unit conversions of the lattice-dynamics model (CODATA 2018 values, rounded; common practice).

Internally energies are in eV, lengths in angstrom and masses in unified atomic mass units;
wavenumbers are in cm-1.
"""

from __future__ import annotations

#: 1 bohr in angstrom
BOHR = 0.529177210903
#: 1 hartree in eV
HARTREE = 27.211386245988
#: 1 kcal/mol in eV
KCAL_MOL = 0.0433641043
#: 1 kJ/mol in eV
KJ_MOL = 0.0103642688
#: Boltzmann constant in eV/K (an energy given as eps/k in kelvin)
KELVIN = 8.617333262e-5
#: Coulomb constant e^2 / (4 pi eps0) in eV angstrom
COULOMB = 14.3996454784
#: sqrt(eV / (angstrom^2 amu)) expressed as a wavenumber in cm-1
#: (omega = 9.82269e13 rad/s; divided by 2 pi c)
WAVENUMBER = 521.4709
#: eigenvalues below this (cm-1, magnitude) count as zero (acoustic or free rotations)
ZERO_CM1 = 1.0


def wavenumber(eigenvalue: float) -> float:
    """Wavenumber (cm-1) of a mass-weighted eigenvalue in eV/(angstrom^2 amu); negative when imaginary.

    Examples
    --------
    >>> round(wavenumber(1.0), 2), round(wavenumber(-4.0), 2)
    (521.47, -1042.94)
    """
    from math import copysign, sqrt

    return copysign(WAVENUMBER * sqrt(abs(eigenvalue)), eigenvalue)

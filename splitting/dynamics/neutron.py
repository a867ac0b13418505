"""Incoherent neutron scattering cross-sections and the neutron weight of a mode.

Bound incoherent cross-sections (barn) of the natural elements from V. F. Sears, Neutron
News 3 (3), 26 (1992); the values are from memory (rounded).  Hydrogen dominates every
organic or ammonium spectrum.
"""

from __future__ import annotations

import numpy as np

__all__ = ["INCOHERENT_BARN", "neutron_weight"]

#: bound incoherent scattering cross-sections (barn), Sears (1992), from memory
INCOHERENT_BARN: dict[str, float] = {
    "H": 80.26,
    "D": 2.05,
    "Li": 0.92,
    "B": 1.70,
    "C": 0.001,
    "N": 0.50,
    "O": 0.0008,
    "F": 0.0008,
    "Na": 1.62,
    "Mg": 0.08,
    "Al": 0.0082,
    "Si": 0.004,
    "P": 0.005,
    "S": 0.007,
    "Cl": 5.3,
    "K": 0.27,
    "Ca": 0.05,
    "Br": 0.10,
    "Rb": 0.5,
    "Sr": 0.06,
    "I": 0.31,
    "Cs": 0.21,
    "Ba": 0.15,
}


def neutron_weight(vectors: np.ndarray, symbols, masses: np.ndarray) -> float:
    """Incoherent neutron weight ``sum_i sigma_i |e_i|^2 / m_i`` (barn/amu) of a line.

    ``vectors`` are orthonormal mass-weighted eigenvectors (3n, d); the weight is summed
    over the d degenerate components.  Elements without a tabulated value count as 0.

    Examples
    --------
    >>> import numpy as np
    >>> round(neutron_weight(np.array([[1.0], [0], [0]]), ["H"], np.array([1.008])), 2)
    79.62
    """
    sigma = np.array([INCOHERENT_BARN.get(s, 0.0) for s in symbols])
    n = len(sigma)
    amp = np.sum(np.asarray(vectors).reshape(n, 3, -1) ** 2, axis=(1, 2))
    return float(np.sum(sigma * amp / np.asarray(masses)))

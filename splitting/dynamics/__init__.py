"""Model lattice dynamics: where each factor-group component and lattice mode lies (an estimate).

Free-unit Hessians from GFN2-xTB (``freeunit``), an exp-6 atom-atom potential with optional
point charges (``potential``, ``ewald``), the k = 0 dynamical matrix of the primitive cell
(``dynmat``), projection onto the factor-group species of the engine (``species``), labelled
results (``results``) and simulated IR, Raman and neutron spectra (``spectra``; drawn by
``splitting.plot.simulated``).
"""

from .estimate import EstimateOptions, estimate, estimate_atoms
from .results import BandEstimate, Estimate, Line

__all__ = ["BandEstimate", "Estimate", "EstimateOptions", "Line", "estimate", "estimate_atoms"]

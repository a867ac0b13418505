"""Model lattice dynamics: where each factor-group component and lattice mode lies (an estimate).

Free-unit Hessians from GFN2-xTB (``freeunit``), an exp-6 atom-atom potential with optional
point charges (``potential``; ``coulomb``: the Ewald sum of ``ewald`` or the damped
shifted-force pair sum; sparse pair blocks in ``pairs``), the k = 0 dynamical matrix of the primitive cell
(``dynmat``), projection onto the factor-group species of the engine (``species``), labelled
results (``results``) and simulated IR, Raman and neutron spectra (``spectra``; drawn by
``splitting.plot.simulated``).  ``memo`` keeps one estimate per distinct structure and
options, in the process and in the cache folder.
"""

from .estimate import EstimateOptions, estimate, estimate_atoms
from .memo import cached_estimate
from .results import BandEstimate, Estimate, Line

__all__ = ["BandEstimate", "Estimate", "EstimateOptions", "Line", "cached_estimate", "estimate", "estimate_atoms"]

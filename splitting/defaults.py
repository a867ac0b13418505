"""Default values of the user-facing options, importable without numpy, scipy or spglib.

The command line builds its parser from these at start-up; the modules that use a value
import it from here, so there is one number for each default.
"""

from __future__ import annotations

__all__ = [
    "DEFAULT_BOND_SCALE",
    "DEFAULT_CELL_TOLERANCE",
    "DEFAULT_CUTOFF",
    "DEFAULT_INPUT_MB",
    "DEFAULT_MAX_ATOMS",
    "DEFAULT_MAX_INDEX",
    "DEFAULT_SPECTRUM_WIDTH",
    "DEFAULT_TOLERANCE",
    "MAX_BOND_SCALE",
    "MAX_CELL_TOLERANCE",
    "MAX_CUTOFF",
    "MAX_UNIT_TOLERANCE",
    "MAX_WINDOW_CM1",
    "POTENTIAL_NAMES",
]

#: space-group distance tolerance of the symmetry search, angstrom
DEFAULT_CELL_TOLERANCE = 0.01
#: free-unit symmetry tolerance: largest displacement from a symmetric position, angstrom
DEFAULT_TOLERANCE = 0.25
#: two atoms are bonded when closer than this times the sum of their covalent radii
DEFAULT_BOND_SCALE = 1.2
#: cells of more atoms are refused before the symmetry search (``--max-atoms``): a cell of one element
#: with no symmetry takes about 1.5 minutes at 10,000 atoms and 4.6 at 20,000 (see crystal/limits.py)
DEFAULT_MAX_ATOMS = 12_000
#: largest subgroup index searched by ``lower``
DEFAULT_MAX_INDEX = 8
#: largest input file read, MiB (``--max-input-mb``)
DEFAULT_INPUT_MB = 256
#: lattice-sum cut-off of the model estimate, angstrom
DEFAULT_CUTOFF = 12.0
#: full width at half maximum of every line of the simulated spectra, cm-1 (a typical width of
#: lines of molecular crystals at low temperature; common practice)
DEFAULT_SPECTRUM_WIDTH = 3.0
#: names of the atom-atom parameter sets of the model estimate (splitting.dynamics.potential)
POTENTIAL_NAMES = ("williams", "gavezzotti", "epm2", "trappe")

# Upper bounds of the numeric options.  Beyond them an answer is either meaningless or
# costs minutes: a symmetry tolerance of 1e6 angstrom makes every molecule linear, a bond
# scale of 1e3 bonds every atom to every other.

#: largest space-group distance tolerance, angstrom (beyond it atoms of a cell merge)
MAX_CELL_TOLERANCE = 0.5
#: largest free-unit symmetry tolerance, angstrom (four times the default; beyond it any
#: molecule looks more symmetric than it is)
MAX_UNIT_TOLERANCE = 1.0
#: largest bond scale accepted: beyond it "bonds" reach past the second neighbours of most solids
MAX_BOND_SCALE = 2.5
#: largest distance between a measured line and a predicted band, cm-1
MAX_WINDOW_CM1 = 500.0
#: largest lattice-sum cut-off of the model estimate, angstrom (the sum grows as its cube)
MAX_CUTOFF = 50.0

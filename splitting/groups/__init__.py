"""Point-group engine: groups built from operations, characters, labels, correlations."""

from .catalogue import CRYSTALLOGRAPHIC, HERMANN_MAUGUIN, all_group_names, canonical_name
from .identify import OrientedGroup, identify, oriented
from .linear import LinearGroup, linear_group
from .pointgroup import ConjugacyClass, PointGroup, Species, point_group
from .representation import Representation

__all__ = [
    "CRYSTALLOGRAPHIC",
    "HERMANN_MAUGUIN",
    "ConjugacyClass",
    "LinearGroup",
    "OrientedGroup",
    "PointGroup",
    "Representation",
    "Species",
    "all_group_names",
    "canonical_name",
    "identify",
    "linear_group",
    "oriented",
    "point_group",
]

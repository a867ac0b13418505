"""Shortcuts of the group engine give what the general route gives, on every catalogue group.

The activity table projects only the species that occur in the vector or the quadratic
representation (multiplicities from the characters); a species that does not occur must
project to zero, so the general route (projecting every species) gives the same table.
"""

from __future__ import annotations

import numpy as np
import pytest

from splitting import activity
from splitting.groups import all_group_names, point_group

ALL = all_group_names()


@pytest.mark.parametrize("name", ALL)
def test_species_left_unprojected_project_to_zero(name: str) -> None:
    g = point_group(name)
    quad = activity._quadratic_matrices(g.operations)
    vector, quadratic = activity._carriers(g, g.operations, quad)
    for k in range(len(g.species)):
        for mats, carries in ((g.operations, vector[k]), (quad, quadratic[k])):
            size = np.abs(activity._projector(g, k, mats)).max()
            assert (size > 1e-8) == bool(carries), (g.species[k].label, size)

"""Screening many structures at once on a Dask cluster, with results in Parquet.

::

    inputs    folders, glob patterns, list files -> files, and the key of each structure
    work      one structure: the crystal pipeline -> a structure row and band rows
    sandbox   a child process per worker thread: time and memory limits per structure
    store     parts committed whole or not at all; final tables assembled from them
    runner    the Dask client loop: a local cluster or a scheduler's address, one code path
    api       screen() and read_screening(): pandas DataFrames

See ``docs/screening.md`` for the tables, screening queries and multi-machine clusters.
"""

from .api import Screening, read_screening, screen
from .runner import Limits, Progress

__all__ = ["Limits", "Progress", "Screening", "read_screening", "screen"]

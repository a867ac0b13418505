"""One exception tree for everything `splitting` reports to its users.

::

    SplittingError                 base class; the CLI prints ``error: <message>``
    ├── InputError                 a file or an argument the user gave is unusable
    ├── SymmetryError              a symmetry search or a group lookup has no answer
    │   └── BookkeepingError       two independent counts disagree (a bug, never hidden)
    └── DataError                  bundled or user-supplied reference data is inconsistent

Computations raise one of these instead of returning ``None``; the command line turns
them into one line on standard error and a non-zero exit status.
"""

from __future__ import annotations

__all__ = [
    "BookkeepingError",
    "DataError",
    "InputError",
    "SplittingError",
    "SymmetryError",
]


class SplittingError(Exception):
    """Base class of every error `splitting` raises on purpose."""

    exit_code = 1


class InputError(SplittingError):
    """A file or argument supplied by the user cannot be used as it is."""

    exit_code = 2


class SymmetryError(SplittingError):
    """A symmetry search, group identification or group lookup found no answer."""

    exit_code = 3


class BookkeepingError(SymmetryError):
    """Two independent routes to the same count disagree: an internal error."""

    exit_code = 4


class DataError(SplittingError):
    """Reference data (bundled or supplied) is missing or inconsistent."""

    exit_code = 5

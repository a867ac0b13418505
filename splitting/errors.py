"""One exception tree for everything `splitting` reports to its users.

::

    SplittingError                 base class; the CLI prints ``error: <message>``
    ├── InputError                 a file or an argument the user gave is unusable
    │   └── MemoryShortageError         reading it needed more memory than the process may have
    ├── OutputError                an output cannot be written (permissions, disk full, ...)
    ├── SymmetryError              a symmetry search or a group lookup has no answer
    │   └── BookkeepingError       two independent counts disagree (a bug, never hidden)
    └── DataError                  bundled or user-supplied reference data is inconsistent

Computations raise one of these instead of returning ``None``; the command line turns
them into one line on standard error and a non-zero exit status.  The exit status of each
class is its ``exit_code``; :data:`EXIT_CODES` is the whole table (docs/exit-codes.md).
"""

from __future__ import annotations

__all__ = [
    "EXIT_CODES",
    "BookkeepingError",
    "DataError",
    "InputError",
    "MemoryShortageError",
    "OutputError",
    "SplittingError",
    "SymmetryError",
]


class SplittingError(Exception):
    """Base class of every error `splitting` raises on purpose."""

    exit_code = 1


class InputError(SplittingError):
    """A file or argument supplied by the user cannot be used as it is."""

    exit_code = 2


class MemoryShortageError(InputError):
    """Reading an input needed more memory than the process may have.

    A damaged header can ask for gigabytes; so can a large, sound file read under a memory
    limit (a screening child's ``--memory``).  Batch screening records it as ``MemoryLimit``.
    """


class OutputError(SplittingError):
    """An output file, folder or stream cannot be written."""

    exit_code = 6


class SymmetryError(SplittingError):
    """A symmetry search, group identification or group lookup found no answer."""

    exit_code = 3


class BookkeepingError(SymmetryError):
    """Two independent routes to the same count disagree: an internal error."""

    exit_code = 4


class DataError(SplittingError):
    """Reference data (bundled or supplied) is missing or inconsistent."""

    exit_code = 5


#: every exit status of the ``splitting`` command and what it means (kept by every command)
EXIT_CODES: dict[int, str] = {
    0: "success",
    1: "other error reported by splitting",
    2: "bad input: a file, an option or an argument cannot be used as given",
    3: "no answer: a symmetry search or a group lookup found none for this input",
    4: "internal cross-check failed: two independent counts disagree (please report it)",
    5: "reference data (bundled or supplied) missing or inconsistent",
    6: "an output cannot be written (permissions, no space left, closed standard output)",
    70: "internal error (a bug; please report it with SPLITTING_DEBUG=1 output)",
    130: "interrupted",
}

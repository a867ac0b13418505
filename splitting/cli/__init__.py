"""Command line: a thin layer of argument parsing and formatting over the package.

Every command is one call into the package plus printing. Each module here holds the
parsers and handlers of a few commands (``groups``: group, molecule; ``crystal``:
predict; ``phases``: compare, lower; ``spectra``: explain; ``outputs``: draw, report,
demo; ``screen``; ``estimate``); ``_shared`` holds the options several commands take.
Modules import only the standard library at start-up and load the package's heavy parts
inside the handlers, so ``splitting --help`` is quick.

Errors of the ``SplittingError`` tree become one line on standard error and the exit
status of :data:`splitting.errors.EXIT_CODES`; set ``SPLITTING_DEBUG=1`` to see tracebacks.
"""

from __future__ import annotations

from ._main import build_parser, main

__all__ = ["build_parser", "main"]

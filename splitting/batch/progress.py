"""A one-line progress bar on standard error (the terminal), redrawn in place."""

from __future__ import annotations

import sys
import time
from typing import TextIO

from .runner import Progress

__all__ = ["ProgressBar"]


class ProgressBar:
    """Callable for :func:`splitting.batch.screen`'s ``progress``: draws ``[####....] done/total``.

    Redraws at most ten times a second (and always at the end); ``close()`` ends the line.

    Examples
    --------
    >>> import io
    >>> s = io.StringIO()
    >>> bar = ProgressBar(stream=s, width=10)
    >>> bar(Progress(done=5, total=10, failed=1, elapsed=2.0)); bar.close()
    >>> s.getvalue().strip()
    'screening [#####.....]  5/10  1 failed  150/min'
    """

    def __init__(self, *, stream: TextIO | None = None, width: int = 30) -> None:
        self.stream = stream if stream is not None else sys.stderr
        self.width = width
        self._last = 0.0
        self._drawn = False

    def __call__(self, p: Progress) -> None:
        now = time.monotonic()
        if p.done < p.total and now - self._last < 0.1:
            return
        self._last = now
        filled = self.width * p.done // max(p.total, 1)
        rate = 60 * p.done / p.elapsed if p.elapsed > 0 else 0.0
        digits = len(str(p.total))
        text = (
            f"screening [{'#' * filled}{'.' * (self.width - filled)}] {p.done:>{digits}}/{p.total}"
            f"  {p.failed} failed  {rate:.0f}/min"
        )
        self.stream.write("\r" + text)
        self.stream.flush()
        self._drawn = True

    def close(self) -> None:
        """End the bar's line (if anything was drawn)."""
        if self._drawn:
            self.stream.write("\n")
            self.stream.flush()
            self._drawn = False

"""The parser of the ``splitting`` command and its entry point."""

from __future__ import annotations

import argparse
import errno
import os
import sys
from collections.abc import Sequence

from ..errors import MemoryShortageError, OutputError, SplittingError
from . import crystal, estimate, groups, outputs, phases, screen, spectra
from ._parser import Parser, VersionAction, _silence

__all__ = ["build_parser", "main"]

#: modules that add commands, in the order the help lists them
_COMMAND_MODULES = (groups, crystal, phases, spectra, outputs, screen, estimate)


def build_parser() -> argparse.ArgumentParser:
    """The argument parser of the ``splitting`` command."""
    p = Parser(
        prog="splitting",
        description="How molecular bands split in crystals: site and factor-group analysis, lattice modes, "
        "IR/Raman activity, orientational order, and assignment of measured spectra.",
        epilog="Exit status: 0 success, 2 bad input, 3 no symmetry answer, 4 failed internal cross-check, "
        "5 bad reference data, 6 output not writable, 70 internal error (docs/exit-codes.md).",
    )
    p.add_argument("--version", action=VersionAction, help="print the version and exit")
    sub = p.add_subparsers(dest="command", metavar="COMMAND")
    sub.required = True
    for module in _COMMAND_MODULES:
        module.add_parsers(sub)
    return p


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the ``splitting`` command; returns the exit status."""
    parser = build_parser()
    args = parser.parse_args(argv)
    real_stdout = sys.stdout
    sys.stdout = guarded = _GuardedStdout(real_stdout)
    try:
        if getattr(args, "max_input_mb", None) is not None:
            from .._io import set_input_limit

            set_input_limit(args.max_input_mb)
        code = args.run(args)
        guarded.flush()
        return code
    except SplittingError as exc:
        print(f"error: {_one_line(exc)}", file=sys.stderr)
        return exc.exit_code
    except KeyboardInterrupt:  # pragma: no cover
        print("error: interrupted", file=sys.stderr)
        return 130
    except MemoryError:  # the machine, not the code: say so, as for an input too large
        print("error: ran out of memory; the input is too large for the memory this process may use", file=sys.stderr)
        return MemoryShortageError.exit_code
    except BrokenPipeError:  # the reader of a pipe stopped early (e.g. "| head"): not an error
        guarded.silence()
        return 0
    except Exception as exc:  # pragma: no cover - a bug; keep the one-line promise
        if os.environ.get("SPLITTING_DEBUG"):
            raise
        print(
            f"error: internal error ({type(exc).__name__}: {_one_line(exc)}); set SPLITTING_DEBUG=1 for details "
            "and please report it",
            file=sys.stderr,
        )
        return 70
    finally:
        sys.stdout = real_stdout
        if getattr(args, "max_input_mb", None) is not None:
            from .._io import set_input_limit

            set_input_limit(None)


def _one_line(exc: BaseException) -> str:
    """The message of ``exc`` on one line (a message is one line by contract; this keeps it so)."""
    return " ".join(str(exc).split())


class _GuardedStdout:
    """Standard output whose write failures (``/dev/full``, a closed stream) become an OutputError.

    Once a write has failed, the stream is pointed at ``os.devnull`` so the interpreter's
    final flush does not print a second message.
    """

    def __init__(self, stream):
        self._stream = stream

    def __getattr__(self, name: str):
        return getattr(self._stream, name)

    def write(self, text: str) -> int:
        if self._stream is None:  # started with standard output closed (``command >&-``)
            raise OutputError("cannot write to standard output: it is closed")
        try:
            return self._stream.write(text)
        except OSError as exc:
            raise self._failed(exc) from None

    def flush(self) -> None:
        if self._stream is None:
            return
        try:
            self._stream.flush()
        except OSError as exc:
            raise self._failed(exc) from None

    def _failed(self, exc: OSError) -> OSError | OutputError:
        self.silence()
        if isinstance(exc, BrokenPipeError) or exc.errno == errno.EPIPE:
            return BrokenPipeError(exc.errno, exc.strerror)
        from .._io import output_error

        return output_error("to standard output", exc)

    def silence(self) -> None:
        _silence(self._stream)  # a test's captured stream has no descriptor: nothing to do


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())

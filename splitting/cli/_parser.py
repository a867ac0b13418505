"""The argument parser class of the command line and the checked number types of its options.

Every usage error is one line ``error: ...`` on standard error and exit status 2 (the
``bad input`` row of :data:`splitting.errors.EXIT_CODES`); a number outside the range an
option allows is refused while the command line is read, before any file is opened.
"""

from __future__ import annotations

import argparse
import math
import re
import sys
from collections.abc import Callable
from typing import NoReturn

__all__ = ["Parser", "VersionAction", "number", "write_or_exit"]

#: a token such as ``-43m``, ``-3m`` or ``-1e6``: a value (a Hermann-Mauguin symbol, a
#: negative number), never an option, since no option of ours starts with a digit
_VALUE_LIKE = re.compile(r"^-[0-9.]")


class Parser(argparse.ArgumentParser):
    """An :class:`argparse.ArgumentParser` whose errors are one line and that reads ``-43m`` as a value."""

    def error(self, message: str) -> NoReturn:
        """Print ``error: <command>: <message> (see '<prog> --help')`` on one line and exit with status 2."""
        message = re.sub(r"^argument (\S+?)(/\S+)?: ", r"\1: ", message.strip())
        message = " ".join(message.split())
        command = self.prog.partition(" ")[2]
        where = f"{command}: " if command else ""
        sys.stderr.write(f"error: {where}{message} (see '{self.prog} --help')\n")
        self.exit(2)

    def parse_args(self, args=None, namespace=None):  # type: ignore[override]
        """As argparse, but arguments left over are reported by the command they were given to."""
        namespace, extras = self.parse_known_args(args, namespace)
        if extras:
            command = getattr(namespace, "command", None)
            for action in self._subparsers._group_actions if self._subparsers is not None else ():
                chosen = getattr(action, "choices", None) or {}
                if command in chosen:
                    chosen[command].error(f"unrecognized arguments: {' '.join(extras)}")
            self.error(f"unrecognized arguments: {' '.join(extras)}")
        return namespace

    def _parse_optional(self, arg_string):  # type: ignore[override]
        if _VALUE_LIKE.match(arg_string):
            return None  # a positional value, e.g. "group -43m" or "--tolerance -1e6"
        return super()._parse_optional(arg_string)

    def _print_message(self, message: str, file=None) -> None:  # type: ignore[override]
        """Write help or usage text; a standard output that cannot take it is an error (exit 6)."""
        if not message:
            return
        write_or_exit(file, message)  # argparse passes None for standard output when it is closed


def write_or_exit(stream, text: str) -> None:
    """Write ``text`` to ``stream`` and flush; if that fails, say so on one line and exit with status 6.

    Used where the parser prints (``--help``, ``--version``) before the command's own guard on
    standard output is in place.
    """
    try:
        if stream is None:
            raise OSError(9, "standard output is closed")
        stream.write(text)
        stream.flush()
    except BrokenPipeError:
        _silence(stream)
        raise SystemExit(0) from None
    except (OSError, ValueError) as exc:
        _silence(stream)
        reason = "no space left on the device" if getattr(exc, "errno", None) == 28 else "it is closed or not writable"
        sys.stderr.write(f"error: cannot write to standard output: {reason}\n")
        raise SystemExit(6) from None


def _silence(stream) -> None:
    """Point ``stream``'s file descriptor at the null device so the final flush stays quiet."""
    import os

    try:
        fd = stream.fileno()
    except (OSError, ValueError, AttributeError):
        return
    devnull = os.open(os.devnull, os.O_WRONLY)
    try:
        os.dup2(devnull, fd)
    finally:
        os.close(devnull)


class VersionAction(argparse.Action):
    """``--version``: print the installed version and exit (imports nothing heavy)."""

    def __init__(self, option_strings, dest=argparse.SUPPRESS, default=argparse.SUPPRESS, help=None):
        super().__init__(option_strings, dest=dest, default=default, nargs=0, help=help)

    def __call__(self, parser, namespace, values, option_string=None) -> NoReturn:
        import splitting

        write_or_exit(sys.stdout, f"splitting {splitting.__version__}\n")
        parser.exit(0)


def number(
    *,
    low: float,
    high: float,
    unit: str = "",
    integer: bool = False,
    low_inclusive: bool = False,
    what: str = "",
) -> Callable[[str], float]:
    """An argparse ``type=`` that takes a finite number in a range, with a message in the option's terms.

    Parameters
    ----------
    low, high : float
        The range; ``high`` is always allowed, ``low`` only when ``low_inclusive``.
    unit : str
        Unit named in the message (``"Å"``, ``"cm-1"``).
    integer : bool
        Take whole numbers only.
    low_inclusive : bool
        Whether ``low`` itself is allowed.
    what : str
        A few words said about ``low`` when it is allowed (e.g. ``"0 for none"``).

    Examples
    --------
    >>> tol = number(low=0, high=0.5, unit="Å")
    >>> tol("0.01")
    0.01
    >>> tol("inf")
    Traceback (most recent call last):
    ...
    argparse.ArgumentTypeError: inf is out of range: give a number above 0 and at most 0.5 Å
    """
    sfx = f" {unit}" if unit else ""
    kind = "a whole number" if integer else "a number"
    if low_inclusive:
        span = f"at least {_fmt(low)} and at most {_fmt(high)}{sfx}" + (f" ({what})" if what else "")
    else:
        span = f"above {_fmt(low)} and at most {_fmt(high)}{sfx}"

    def parse(text: str) -> float:
        try:
            value = float(text)
        except ValueError:
            raise argparse.ArgumentTypeError(f"{text!r} is not a number; give {kind} {span}") from None
        if integer:
            if not (math.isfinite(value) and value == int(value)):
                raise argparse.ArgumentTypeError(f"{text!r} is not a whole number; give {kind} {span}")
            value = int(value)
        ok = math.isfinite(value) and (low <= value if low_inclusive else low < value) and value <= high
        if not ok:
            raise argparse.ArgumentTypeError(f"{text} is out of range: give {kind} {span}")
        return value

    parse.__name__ = "whole number" if integer else "number"
    return parse


def _fmt(x: float) -> str:
    """A bound as a person writes it: 10000000, not 1e+07; 0.5, not 0.500000."""
    return str(int(x)) if float(x).is_integer() and abs(x) < 1e16 else f"{x:g}"

"""The parser of the ``splitting`` command and its entry point."""

from __future__ import annotations

import argparse
import os
import sys
from collections.abc import Sequence

from ..errors import SplittingError
from . import crystal, estimate, groups, outputs, phases, screen, spectra

__all__ = ["build_parser", "main"]

#: modules that add commands, in the order the help lists them
_COMMAND_MODULES = (groups, crystal, phases, spectra, outputs, screen, estimate)


def build_parser() -> argparse.ArgumentParser:
    """The argument parser of the ``splitting`` command."""
    p = argparse.ArgumentParser(
        prog="splitting",
        description="How molecular bands split in crystals: site and factor-group analysis, lattice modes, "
        "IR/Raman activity, orientational order, and assignment of measured spectra.",
    )
    sub = p.add_subparsers(dest="command", metavar="COMMAND")
    sub.required = True
    for module in _COMMAND_MODULES:
        module.add_parsers(sub)
    return p


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the ``splitting`` command; returns the exit status."""
    parser = build_parser()
    args = parser.parse_args(argv)
    for opt in ("tolerance", "unit_tolerance", "bond_scale", "window"):
        value = getattr(args, opt, None)
        if value is not None and not value > 0:
            print(f"error: --{opt.replace('_', '-')} must be positive", file=sys.stderr)
            return 2
    try:
        return args.run(args)
    except SplittingError as exc:
        print(f"error: {exc}", file=sys.stderr)
        return exc.exit_code
    except KeyboardInterrupt:  # pragma: no cover
        print("error: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:  # pragma: no cover
        return 0
    except Exception as exc:  # pragma: no cover - a bug; keep the one-line promise
        if os.environ.get("SPLITTING_DEBUG"):
            raise
        print(
            f"error: internal error ({type(exc).__name__}: {exc}); set SPLITTING_DEBUG=1 for details "
            "and please report it",
            file=sys.stderr,
        )
        return 70


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())

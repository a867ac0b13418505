"""Options several commands share, and how their values become package arguments."""

from __future__ import annotations

import argparse
import json
import os
from collections.abc import Callable

from ..defaults import DEFAULT_BOND_SCALE, DEFAULT_CELL_TOLERANCE, DEFAULT_MAX_ATOMS, DEFAULT_TOLERANCE
from ..errors import InputError

__all__ = [
    "crystal_options",
    "disorder_options",
    "emit",
    "json_option",
    "line_options",
    "options",
    "phase_predictions",
    "states",
]


def emit(args: argparse.Namespace, payload: dict, text: Callable[[], str]) -> int:
    """Print ``payload`` as JSON when ``--json`` was given, else ``text()``; exit status 0."""
    if getattr(args, "json", False):
        print(json.dumps(payload, indent=2, ensure_ascii=False))
    else:
        print(text())
    return 0


def json_option(p: argparse.ArgumentParser, what: str = "print JSON instead of text") -> None:
    p.add_argument("--json", action="store_true", help=what)


def crystal_options(p: argparse.ArgumentParser) -> None:
    """Options of every command that reads a crystal: tolerances, units, bonds, size limit."""
    p.add_argument(
        "--tolerance",
        type=float,
        default=DEFAULT_CELL_TOLERANCE,
        help=f"space-group distance tolerance, angstrom (default {DEFAULT_CELL_TOLERANCE})",
    )
    p.add_argument(
        "--unit-tolerance",
        type=float,
        default=DEFAULT_TOLERANCE,
        help=f"free-unit symmetry tolerance, angstrom (default {DEFAULT_TOLERANCE})",
    )
    p.add_argument(
        "--free-group",
        action="append",
        metavar="FORMULA=GROUP",
        help="use this point group for the free unit (a subgroup of what its shape allows), e.g. C6H6=D6h",
    )
    p.add_argument(
        "--units",
        nargs="+",
        metavar="FORMULA",
        help="treat only units with these formulas as molecules; split the rest into atoms",
    )
    p.add_argument(
        "--bond",
        action="append",
        metavar="A-B=DIST",
        help="largest A-B bond length in angstrom (0 forbids the bond); repeatable",
    )
    p.add_argument(
        "--bond-scale",
        type=float,
        default=DEFAULT_BOND_SCALE,
        help=f"bond when distance < scale x sum of covalent radii (default {DEFAULT_BOND_SCALE})",
    )
    p.add_argument(
        "--bond-metals", action="store_true", help="also draw bonds to alkali, alkaline-earth and lanthanide atoms"
    )
    p.add_argument(
        "--max-atoms",
        type=int,
        default=DEFAULT_MAX_ATOMS,
        help=f"refuse cells of more atoms than this, before the symmetry search (default {DEFAULT_MAX_ATOMS})",
    )


def options(args: argparse.Namespace):
    """The :class:`~splitting.crystal.predict.Options` of the crystal options given."""
    from ..crystal.predict import Options
    from ..crystal.units import parse_cutoffs

    free = []
    for item in args.free_group or []:
        if "=" not in item:
            raise InputError(f"--free-group {item!r} is not of the form FORMULA=GROUP (e.g. C60=Ih)")
        f, g = item.split("=", 1)
        free.append((f.strip(), g.strip()))
    return Options(
        tolerance=args.tolerance,
        unit_tolerance=args.unit_tolerance,
        free_groups=tuple(free),
        formulas=tuple(args.units or ()),
        cutoffs=tuple(parse_cutoffs(args.bond).items()),
        bond_scale=args.bond_scale,
        ionic_metals=not args.bond_metals,
        max_atoms=args.max_atoms,
    )


def disorder_options(p: argparse.ArgumentParser) -> None:
    p.add_argument(
        "--disorder",
        action="append",
        metavar="FORMULA=STATE",
        help="treat a unit as ordered, static or dynamic (rotor); repeatable",
    )
    p.add_argument("--rotor", action="append", metavar="FORMULA", help="declare a unit a free rotor (dynamic)")


def states(args: argparse.Namespace) -> dict[str, str]:
    """Disorder states from --disorder FORMULA=STATE and --rotor FORMULA."""
    out = {}
    for item in getattr(args, "disorder", None) or []:
        if "=" not in item:
            raise InputError(f"--disorder {item!r} is not of the form FORMULA=ordered|static|dynamic")
        f, s = item.split("=", 1)
        out[f.strip()] = s.strip()
    for f in getattr(args, "rotor", None) or []:
        out[f] = "dynamic"
    return out


def line_options(p: argparse.ArgumentParser, *, window: float, what: str) -> None:
    """Options about measured lines, shared by the commands that read peak lists."""
    p.add_argument("--modes", metavar="TOML", help="free-unit mode table (default: the bundled catalogue)")
    p.add_argument("--technique", choices=["ir", "raman"], help="what was measured (else read from the files)")
    p.add_argument(
        "--window",
        type=float,
        default=window,
        help=f"largest distance (cm-1) of a line {what} (default {window:g})",
    )


def phase_predictions(args: argparse.Namespace) -> list[tuple[str, object]]:
    """Ordered predictions for every file; a disordered file contributes its one-orientation model."""
    from ..phases.compare import load_phase

    labels = args.labels or [os.path.basename(f) for f in args.files]
    if len(labels) != len(args.files):
        raise InputError(f"{len(labels)} labels for {len(args.files)} files")
    opts = options(args)
    out = []
    for f, lab in zip(args.files, labels, strict=True):
        phase = load_phase(f, lab, opts)
        out.append((lab if phase.ordered else f"{lab} (one-orientation model)", phase.crystal))
    return out

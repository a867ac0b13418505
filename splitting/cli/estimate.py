"""``estimate``: the model lattice-dynamics estimate of where each line lies (splitting.dynamics)."""

from __future__ import annotations

import argparse
import os
import sys

from ..defaults import DEFAULT_CUTOFF, POTENTIAL_NAMES
from ..errors import InputError
from ._shared import crystal_options, emit, json_option, options


def run_estimate(args: argparse.Namespace) -> int:
    from ..dynamics import EstimateOptions, estimate
    from ..dynamics.text import estimate_text

    charges = []
    for item in args.charge or []:
        f, sep, q = item.partition("=")
        try:
            charges.append((f.strip(), int(q)))
        except ValueError:
            raise InputError(f"--charge {item!r} is not of the form FORMULA=Q (e.g. NH4=1)") from None
        if not sep:
            raise InputError(f"--charge {item!r} is not of the form FORMULA=Q (e.g. NH4=1)")
    if args.cache and not os.path.isdir(args.cache):
        raise InputError(f"--cache {args.cache}: no such folder")
    model = EstimateOptions(
        potential=args.potential,
        charges=args.charges,
        cutoff=args.cutoff,
        scale_to_measured=args.scale_to_measured,
        cache=args.cache,
        allow_imaginary=args.allow_imaginary,
        unit_charges=tuple(charges),
    )
    progress = (lambda msg: print(f"... {msg}", file=sys.stderr, flush=True)) if args.progress else None
    result = estimate(args.file, options(args), model, progress=progress)
    return emit(args, result.to_dict(), lambda: estimate_text(result, internal=not args.lattice_only))


def add_parsers(sub: argparse._SubParsersAction) -> None:
    es = sub.add_parser(
        "estimate",
        help="model estimate of where every line lies (lattice modes, site shifts, factor-group splittings), "
        "each with its species, activity and origin",
    )
    es.add_argument("file", help="crystal structure (CIF, POSCAR, or another format ase reads)")
    es.add_argument("--potential", choices=list(POTENTIAL_NAMES), default="williams", help="exp-6 parameter set")
    es.add_argument(
        "--charges",
        choices=["all", "auto", "none"],
        default="all",
        help="point charges: every atom's tight-binding charge (default), only charged units, or none",
    )
    es.add_argument("--charge", action="append", metavar="FORMULA=Q", help="total charge of a unit; repeatable")
    es.add_argument(
        "--cutoff", type=float, default=DEFAULT_CUTOFF, help=f"lattice-sum cut-off, angstrom (default {DEFAULT_CUTOFF})"
    )
    es.add_argument(
        "--scale-to-measured",
        action="store_true",
        help="scale every free fundamental to the gas-phase value of the bundled mode table",
    )
    es.add_argument("--cache", metavar="DIR", help="folder for cached free-unit Hessians (reused between runs)")
    es.add_argument(
        "--allow-imaginary", action="store_true", help="show imaginary lines instead of refusing the structure"
    )
    es.add_argument("--lattice-only", action="store_true", help="text output: lattice modes only")
    es.add_argument("--progress", action="store_true", help="report each step on standard error")
    crystal_options(es)
    json_option(es)
    es.set_defaults(run=run_estimate)

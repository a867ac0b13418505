"""``explain``: assign measured lines of one phase."""

from __future__ import annotations

import argparse

from ..errors import InputError
from ._shared import crystal_options, disorder_options, emit, json_option, line_options, options, states
from .estimate import estimate_options, estimates_for


def run_explain(args: argparse.Namespace) -> int:
    from ..plot.explain import explain_files
    from ..report.text import explanation_text

    if args.peaks is None and args.spectrum is None:
        raise InputError("give the measured lines with --peaks FILE or a raw spectrum with --spectrum FILE")
    estimates = estimates_for(args, [args.file])
    result = explain_files(
        args.file,
        args.peaks,
        spectrum=args.spectrum,
        modes=args.modes,
        technique=args.technique,
        figure=args.output,
        tolerance_cm1=args.window,
        options=options(args),
        states=states(args),
        estimate=estimates[0] if estimates else None,
    )
    code = emit(args, result.to_dict(), lambda: explanation_text(result))
    if args.output and not args.json:
        print(f"figure written to {args.output}")
    return code


def add_parsers(sub: argparse._SubParsersAction) -> None:
    ex = sub.add_parser(
        "explain",
        help="assign measured lines: components, lattice modes, overtones, isotopologues; list what nothing explains",
    )
    ex.add_argument("file", help="crystal structure of the phase measured")
    ex.add_argument("--peaks", metavar="CSV", help="peak list: position (cm-1), intensity[, width, polarisation]")
    ex.add_argument(
        "--spectrum",
        metavar="FILE",
        help="raw spectrum (two columns, CSV or JCAMP-DX); peaks are "
        "found in it when --peaks is not given, and it is drawn in the figure",
    )
    line_options(ex, window=40.0, what="from the band it is assigned to")
    disorder_options(ex)
    ex.add_argument("-o", "--output", metavar="FIGURE", help="write a figure (.svg, .pdf or .png)")
    estimate_options(ex, "rank closer matches to its lines higher")
    crystal_options(ex)
    json_option(ex)
    ex.set_defaults(run=run_explain)

"""``draw`` (figures), ``report`` (one HTML page) and ``demo`` (the bundled scenario)."""

from __future__ import annotations

import argparse
import json
import os

from ..errors import InputError, SplittingError
from ._shared import crystal_options, disorder_options, json_option, load_phases, phase_label, state_notes, warn
from .estimate import estimate_options, estimates_for


def run_draw(args: argparse.Namespace) -> int:
    from ..plot import correlation_diagram, line_pattern, phase_correlation_diagram, write_figure

    suffix = os.path.splitext(args.output)[1].lower()
    if suffix not in (".svg", ".pdf", ".png"):
        raise InputError(f"{args.output}: the figure type comes from the suffix: .svg, .pdf or .png")
    if args.estimate and args.kind != "lines":
        raise InputError("--estimate places the bars of the line pattern; give --kind lines with it")
    loaded = load_phases(args)
    warn(w for ph in loaded for w in (ph.disorder.warnings if ph.disorder else ()))
    phases = [(phase_label(ph), ph.crystal) for ph in loaded]
    estimates = estimates_for(args, args.files)
    unit = args.unit
    if unit is None:
        molecular = [u.formula for u in phases[0][1].units if u.correlation]
        if not molecular:
            raise InputError(f"{args.files[0]}: no molecular unit to draw")
        unit = molecular[0]
    else:
        from ..crystal.names import match_unit

        unit = match_unit(unit, [u.formula for u in phases[0][1].units], what="--unit", where=args.files[0])
    if args.kind == "lines":
        from ..spectra.catalogue import find_table

        try:
            modes = find_table(unit)
        except SplittingError:
            modes = None
        art = line_pattern(phases, unit, band=args.band, modes=modes, estimates=estimates)
    elif len(phases) > 1 or not loaded[0].ordered:
        # a disordered phase gets a titled panel, so the figure says its state
        art = phase_correlation_diagram(phases, unit, band=args.band)
    else:
        art = correlation_diagram(phases[0][1], unit, band=args.band)
    write_figure(art.figure, args.output)
    return _written(args, "figure", loaded)


def run_report(args: argparse.Namespace) -> int:
    from ..report.html import write_report

    if not args.output.lower().endswith((".html", ".htm")):
        raise InputError(f"{args.output}: the report is an HTML file; give a name ending in .html")
    loaded = load_phases(args)
    warn(w for ph in loaded for w in (ph.disorder.warnings if ph.disorder else ()))
    phases = [(phase_label(ph), ph.crystal) for ph in loaded]
    estimates = estimates_for(args, args.files) or ()
    write_report(
        args.output,
        phases,
        title=args.title,
        notes=[*(args.note or ()), *state_notes(loaded)],
        estimates=estimates,
        states=[ph.state for ph in loaded],
    )
    return _written(args, "report", loaded)


def _written(args: argparse.Namespace, what: str, loaded) -> int:
    """Say what was written (and each phase's state), as text or with --json as JSON."""
    notes = list(state_notes(loaded))
    if args.json:
        phases = [
            {"file": os.path.basename(f), "label": phase_label(ph), "state": ph.state}
            for f, ph in zip(args.files, loaded, strict=True)
        ]
        print(json.dumps({what: args.output, "phases": phases, "notes": notes}, indent=2, ensure_ascii=False))
        return 0
    print(f"{what} written to {args.output}")
    for line in notes:
        print(f"  {line}")
    return 0


def run_demo(args: argparse.Namespace) -> int:
    from ..demo import SCENARIO, run_demo

    result = run_demo(args.out)
    if args.json:
        print(json.dumps(result.to_dict(), indent=2))
        return 0
    print(SCENARIO)
    print(f"\nwrote {len(result.files)} files to {result.folder}:")
    for f in result.files:
        print(f"  {f.name}")
    print(f"\nopen {result.folder / 'report.html'} in a browser to read the report")
    return 0


def add_parsers(sub: argparse._SubParsersAction) -> None:
    dr = sub.add_parser(
        "draw",
        help="correlation diagram (one file), phases side by side (several files) or "
        "line pattern (--kind lines); SVG, PDF or PNG by suffix",
    )
    dr.add_argument("files", nargs="+", help="structure file(s), upper phase first")
    dr.add_argument("-o", "--output", required=True, metavar="FIGURE", help="output .svg, .pdf or .png")
    dr.add_argument(
        "--unit", metavar="UNIT", help="which unit, e.g. SO4^2- or its Hill formula (default: the first molecular unit)"
    )
    dr.add_argument("--band", metavar="SPECIES", help="one free-unit species only, e.g. T1u")
    dr.add_argument(
        "--kind",
        choices=["correlation", "lines"],
        default="correlation",
        help="correlation diagram (default) or the predicted line pattern of each phase",
    )
    dr.add_argument("--labels", nargs="+", metavar="LABEL", help="phase names, one per file")
    estimate_options(dr, "draw the line pattern at the estimated positions (--kind lines)")
    disorder_options(dr)
    crystal_options(dr)
    json_option(dr, "say what was written as JSON")
    dr.set_defaults(run=run_draw)

    rp = sub.add_parser("report", help="one self-contained HTML page with the whole prediction, tables and figures")
    rp.add_argument("files", nargs="+", help="structure file(s), upper phase first")
    rp.add_argument("-o", "--output", required=True, metavar="HTML", help="output .html file")
    rp.add_argument("--labels", nargs="+", metavar="LABEL", help="phase names, one per file")
    rp.add_argument("--title", help="title of the report")
    rp.add_argument("--note", action="append", metavar="TEXT", help="a note printed at the top; repeatable")
    disorder_options(rp)
    estimate_options(rp, "add a section with the model's positions")
    crystal_options(rp)
    json_option(rp, "say what was written as JSON")
    rp.set_defaults(run=run_report)

    de = sub.add_parser("demo", help="run the bundled scenario (a made-up lab's low-temperature run) end to end")
    de.add_argument("--out", default="demo-output", help="folder for the report, figures and tables")
    json_option(de, "print the list of files as JSON")
    de.set_defaults(run=run_demo)

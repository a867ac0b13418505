"""``compare`` (a sequence of phases) and ``lower`` (candidate lower-symmetry phases)."""

from __future__ import annotations

import argparse

from ..defaults import DEFAULT_MAX_INDEX
from ..errors import InputError
from ._parser import number
from ._shared import (
    crystal_options,
    disorder_options,
    emit,
    format_option,
    json_option,
    line_options,
    options,
    phase_states,
    print_table,
    states,
    warn,
)
from .estimate import estimate_options, estimates_for


def run_compare(args: argparse.Namespace) -> int:
    import os

    from ..phases.compare import compare_phases
    from ..report.text import sequence_text

    if args.format != "text" and (args.json or args.estimate):
        raise InputError(f"--format {args.format} writes the band table; leave out --json and --estimate")
    labels = args.labels or [os.path.basename(f) for f in args.files]
    if len(labels) != len(args.files):
        raise InputError(f"{len(labels)} labels for {len(args.files)} files")
    per = phase_states(args, list(args.files), list(labels))
    seq = compare_phases(args.files, labels, options(args), phase_states=per)
    warn(w for ph in seq.phases for w in (ph.disorder.warnings if ph.disorder else ()))
    if args.estimate and not all(ph.ordered for ph in seq.phases):
        raise InputError("--estimate needs ordered structures; a disordered phase has no model estimate")
    estimates = estimates_for(args, args.files)
    payload = seq.to_dict()
    if estimates is not None:
        payload["estimates"] = [e.to_dict() for e in estimates]
    if args.format != "text":
        from ..report.tables import CLI_FORMATS, sequence_table

        return print_table(sequence_table(seq, CLI_FORMATS[args.format]))
    return emit(args, payload, lambda: sequence_text(seq, estimates))


def run_lower(args: argparse.Namespace) -> int:
    from ..phases.disorder import ALL_UNITS
    from ..phases.lower import lower, parse_observed
    from ..report.text import lowering_text

    observed = parse_observed(args.observed)
    chosen = states(args)
    if set(chosen) - {ALL_UNITS}:
        raise InputError("lower: give the state of the parent phase as a whole (--state rotor), not per unit")
    modes = None
    if args.modes:
        from ..spectra.catalogue import load_mode_table

        modes = load_mode_table(args.modes)
    peaks = None
    if args.peaks:
        from ..spectra.measured import read_peaks

        peaks = read_peaks(args.peaks, technique=args.technique)
        if peaks.technique is None:
            raise InputError(
                f"{args.peaks}: say whether the lines are IR or Raman (--technique or a '# technique:' line)"
            )
    result = lower(
        args.file,
        options(args),
        max_index=args.max_index,
        observed=observed,
        peaks=peaks,
        modes=modes,
        window_cm1=args.window,
        state=chosen.get(ALL_UNITS, "ordered"),
    )
    if args.format != "text":
        from ..report.tables import CLI_FORMATS, lowering_table

        if args.json:
            raise InputError(f"--format {args.format} writes the table of candidates; leave out --json")

        return print_table(lowering_table(result, CLI_FORMATS[args.format]))
    return emit(args, result.to_dict(), lambda: lowering_text(result))


def add_parsers(sub: argparse._SubParsersAction) -> None:
    c = sub.add_parser("compare", help="a sequence of phases (e.g. on cooling): what each band does between them")
    c.add_argument("files", nargs="+", help="structure files, upper (e.g. warmest) phase first")
    c.add_argument("--labels", nargs="+", metavar="LABEL", help="phase names, e.g. '300 K' '90 K'")
    disorder_options(c)
    estimate_options(c, "add columns of model wavenumbers, one per phase")
    crystal_options(c)
    json_option(c)
    format_option(c, "the band table (components of each band, phase by phase)")
    c.set_defaults(run=run_compare)

    lo = sub.add_parser("lower", help="candidate lower-symmetry phases, ranked by observed line counts")
    lo.add_argument("file", help="ordered parent structure")
    lo.add_argument(
        "--max-index",
        type=number(low=2, high=10**6, integer=True, low_inclusive=True),
        default=DEFAULT_MAX_INDEX,
        help=f"largest subgroup index (default {DEFAULT_MAX_INDEX})",
    )
    lo.add_argument(
        "--observed",
        nargs="+",
        metavar="BAND:TECH=N",
        help="observed components, e.g. T1u:ir=3 Hg:raman=5 lattice:raman=5; BAND is a free species or a "
        "vibration of the mode table (nu3), optionally UNIT/BAND (SO4^2-/nu3:ir=3)",
    )
    lo.add_argument("--peaks", metavar="CSV", help="count the observed components from a peak list instead")
    line_options(lo, window=15.0, what="from its free band when counting")
    disorder_options(lo)
    crystal_options(lo)
    json_option(lo)
    format_option(lo, "the table of candidate phases")
    lo.set_defaults(run=run_lower)

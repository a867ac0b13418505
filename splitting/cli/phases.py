"""``compare`` (a sequence of phases) and ``lower`` (candidate lower-symmetry phases)."""

from __future__ import annotations

import argparse

from ..defaults import DEFAULT_MAX_INDEX
from ..errors import InputError
from ._shared import crystal_options, disorder_options, emit, json_option, line_options, options, states


def run_compare(args: argparse.Namespace) -> int:
    from ..phases.compare import compare_phases
    from ..report.text import sequence_text

    seq = compare_phases(args.files, args.labels, options(args), states=states(args))
    return emit(args, seq.to_dict(), lambda: sequence_text(seq))


def run_lower(args: argparse.Namespace) -> int:
    from ..phases.lower import lower, parse_observed
    from ..report.text import lowering_text

    observed = parse_observed(args.observed)
    if args.peaks:
        from ..crystal.predict import predict
        from ..spectra.bands import find_unit_table
        from ..spectra.catalogue import load_mode_table
        from ..spectra.counting import observed_counts
        from ..spectra.measured import read_peaks

        peaks = read_peaks(args.peaks, technique=args.technique)
        if peaks.technique is None:
            raise InputError(
                f"{args.peaks}: say whether the lines are IR or Raman (--technique or a '# technique:' line)"
            )
        parent = predict(args.file, options(args))
        units = [u.formula for u in parent.units if u.correlation]
        if not units:
            raise InputError(f"{args.file}: no molecular unit whose bands could be counted")
        table = load_mode_table(args.modes) if args.modes else find_unit_table(units[0])
        observed = observed + observed_counts(peaks, table, technique=peaks.technique, window_cm1=args.window)
    result = lower(args.file, options(args), max_index=args.max_index, observed=observed)
    return emit(args, result.to_dict(), lambda: lowering_text(result))


def add_parsers(sub: argparse._SubParsersAction) -> None:
    c = sub.add_parser("compare", help="a sequence of phases (e.g. on cooling): what each band does between them")
    c.add_argument("files", nargs="+", help="structure files, upper (e.g. warmest) phase first")
    c.add_argument("--labels", nargs="+", metavar="LABEL", help="phase names, e.g. '300 K' '90 K'")
    disorder_options(c)
    crystal_options(c)
    json_option(c)
    c.set_defaults(run=run_compare)

    lo = sub.add_parser("lower", help="candidate lower-symmetry phases, ranked by observed line counts")
    lo.add_argument("file", help="ordered parent structure")
    lo.add_argument(
        "--max-index", type=int, default=DEFAULT_MAX_INDEX, help=f"largest subgroup index (default {DEFAULT_MAX_INDEX})"
    )
    lo.add_argument(
        "--observed",
        nargs="+",
        metavar="BAND:TECH=N",
        help="observed components, e.g. T1u:ir=3 Hg:raman=5 lattice:raman=5 (optionally UNIT/BAND)",
    )
    lo.add_argument("--peaks", metavar="CSV", help="count the observed components from a peak list instead")
    line_options(lo, window=15.0, what="from its free band when counting")
    crystal_options(lo)
    json_option(lo)
    lo.set_defaults(run=run_lower)

"""``screen``: many structures on a Dask cluster (splitting.batch)."""

from __future__ import annotations

import argparse
import sys

from ._parser import number
from ._shared import crystal_options, emit, json_option, options


def run_screen(args: argparse.Namespace) -> int:
    from ..batch import screen
    from ..batch.progress import ProgressBar

    bar = ProgressBar() if not args.quiet and sys.stderr.isatty() else None
    try:
        result = screen(
            args.sources,
            args.out,
            options=options(args),
            scheduler=args.scheduler,
            workers=args.workers,
            timeout=args.timeout,
            memory=args.memory,
            part_size=args.part_size,
            progress=bar,
        )
    except KeyboardInterrupt:
        print(f"error: interrupted; the finished parts are kept in {args.out}: run again to go on", file=sys.stderr)
        return 130
    finally:
        if bar is not None:
            bar.close()
    return emit(args, result.to_dict(), result.summary)


def add_parsers(sub: argparse._SubParsersAction) -> None:
    sc = sub.add_parser("screen", help="many structures on a Dask cluster: one Parquet row per structure and per band")
    sc.add_argument("sources", nargs="+", help="folders, glob patterns ('db/**/*.cif'), list files (.txt) or files")
    sc.add_argument("-o", "--out", required=True, metavar="FOLDER", help="output folder (rerun to resume)")
    sc.add_argument("--scheduler", metavar="ADDRESS", help="a running Dask scheduler, e.g. tcp://host:8786")
    sc.add_argument(
        "--workers",
        type=number(low=1, high=1024, integer=True, low_inclusive=True),
        metavar="N",
        help="local worker processes (default: one per core)",
    )
    sc.add_argument(
        "--timeout",
        type=number(low=0, high=1e6, unit="s", low_inclusive=True, what="0 for none"),
        default=120.0,
        help="seconds per structure, 0 for none (default 120)",
    )
    sc.add_argument(
        "--memory",
        type=number(low=0, high=10**7, integer=True, low_inclusive=True, unit="MiB", what="0 for none"),
        default=4096,
        metavar="MIB",
        help="memory per structure (default 4096)",
    )
    sc.add_argument(
        "--part-size",
        type=number(low=1, high=10**6, integer=True, low_inclusive=True),
        default=32,
        metavar="N",
        help="structures per committed part",
    )
    sc.add_argument("--quiet", action="store_true", help="no progress bar")
    crystal_options(sc)
    json_option(sc, "print the summary as JSON")
    sc.set_defaults(run=run_screen)

"""Command line: a thin layer of argument parsing and formatting over the package.

Every command is one call into the package plus printing.  Errors of the
``SplittingError`` tree become one line on standard error and a non-zero exit status;
set ``SPLITTING_DEBUG=1`` to see tracebacks.
"""

from __future__ import annotations

import argparse
import json
import os
import sys
from collections.abc import Callable, Sequence

from .errors import InputError, SplittingError

__all__ = ["build_parser", "main"]

Handler = Callable[[argparse.Namespace], int]
_COMMANDS: dict[str, Handler] = {}


def _command(name: str) -> Callable[[Handler], Handler]:
    def register(fn: Handler) -> Handler:
        _COMMANDS[name] = fn
        return fn

    return register


def _emit(args: argparse.Namespace, payload: dict, text: Callable[[], str]) -> int:
    if getattr(args, "json", False):
        print(json.dumps(payload, indent=2, ensure_ascii=False))
    else:
        print(text())
    return 0


# ------------------------------------------------------------------ commands
@_command("group")
def _group(args: argparse.Namespace) -> int:
    from .activity import activity_table
    from .groups.catalogue import canonical_name
    from .groups.linear import linear_group
    from .groups.pointgroup import point_group
    from .report.text import embeddings_text, group_text

    try:
        name = canonical_name(args.symbol)
    except SplittingError as exc:
        raise InputError(str(exc)) from None
    if args.to:
        from .groups.subgroups import embeddings

        if "∞" in name:
            raise InputError("subgroup embeddings of linear groups are not enumerated; give a finite group")
        embs = embeddings(name, args.to)
        return _emit(
            args, {"group": name, "embeddings": [e.to_dict() for e in embs]}, lambda: embeddings_text(name, args.to)
        )
    grp = linear_group(name) if "∞" in name else point_group(name)
    payload = grp.to_dict()
    payload["selection_rules"] = [a.to_dict() for a in activity_table(name)]
    return _emit(args, payload, lambda: group_text(name))


@_command("molecule")
def _molecule(args: argparse.Namespace) -> int:
    from .molecule.analysis import analyse_unit
    from .readers import read_atoms
    from .report.text import molecule_text

    atoms = read_atoms(args.file)
    try:
        result = analyse_unit(
            atoms.numbers,
            atoms.positions,
            tolerance=args.tolerance,
            point_group=args.point_group,
            symbols=atoms.get_chemical_symbols(),
        )
    except InputError as exc:
        raise InputError(f"{args.file}: {exc}") from None
    return _emit(args, result.to_dict(), lambda: molecule_text(result))


def _options(args: argparse.Namespace):
    from .crystal.predict import Options
    from .crystal.units import parse_cutoffs

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


@_command("predict")
def _predict(args: argparse.Namespace) -> int:
    from .crystal.predict import predict
    from .report.text import prediction_text

    states = _states(args)
    if args.disordered or states:
        from .phases.disorder import predict_disordered
        from .report.text import disordered_text

        dis = predict_disordered(args.file, _options(args), states=states)
        return _emit(args, dis.to_dict(), lambda: disordered_text(dis))
    result = predict(args.file, _options(args))
    payload = result.to_dict()
    seen = [(g, result.seen_in(g)) for g in args.geometry or []]
    if seen:
        payload["geometries"] = [
            {"geometry": g, "species": [{"label": lab, "optical": n} for lab, n in sp]} for g, sp in seen
        ]

    def text() -> str:
        out = prediction_text(result)
        ax = result.factor_axes
        for g, sp in seen:
            shown = ", ".join(f"{lab} ({n})" for lab, n in sp) or "nothing (no allowed Raman component)"
            out += f"\n  Raman in {g} (x = {ax['x']}, y = {ax['y']}, z = {ax['z']}): {shown}"
        return out

    return _emit(args, payload, text)


def _states(args: argparse.Namespace) -> dict[str, str]:
    """Disorder states from --disorder FORMULA=STATE and --rotor FORMULA."""
    out = {}
    for item in args.disorder or []:
        if "=" not in item:
            raise InputError(f"--disorder {item!r} is not of the form FORMULA=ordered|static|dynamic")
        f, s = item.split("=", 1)
        out[f.strip()] = s.strip()
    for f in args.rotor or []:
        out[f] = "dynamic"
    return out


@_command("compare")
def _compare(args: argparse.Namespace) -> int:
    from .phases.compare import compare_phases
    from .report.text import sequence_text

    states = _states(args)
    seq = compare_phases(args.files, args.labels, _options(args), states=states)
    return _emit(args, seq.to_dict(), lambda: sequence_text(seq))


@_command("lower")
def _lower(args: argparse.Namespace) -> int:
    from .phases.lower import lower, parse_observed
    from .report.text import lowering_text

    observed = parse_observed(args.observed)
    if args.peaks:
        from .crystal.predict import predict
        from .spectra.bands import find_unit_table
        from .spectra.catalogue import load_mode_table
        from .spectra.counting import observed_counts
        from .spectra.measured import read_peaks

        peaks = read_peaks(args.peaks, technique=args.technique)
        if peaks.technique is None:
            raise InputError(
                f"{args.peaks}: say whether the lines are IR or Raman (--technique or a '# technique:' line)"
            )
        parent = predict(args.file, _options(args))
        units = [u.formula for u in parent.units if u.correlation]
        if not units:
            raise InputError(f"{args.file}: no molecular unit whose bands could be counted")
        table = load_mode_table(args.modes) if args.modes else find_unit_table(units[0])
        observed = observed + observed_counts(peaks, table, technique=peaks.technique, window_cm1=args.window)
    result = lower(args.file, _options(args), max_index=args.max_index, observed=observed)
    return _emit(args, result.to_dict(), lambda: lowering_text(result))


@_command("explain")
def _explain(args: argparse.Namespace) -> int:
    from .plot.explain import explain_files
    from .report.text import explanation_text

    if args.peaks is None and args.spectrum is None:
        raise InputError("give the measured lines with --peaks FILE or a raw spectrum with --spectrum FILE")
    result = explain_files(
        args.file,
        args.peaks,
        spectrum=args.spectrum,
        modes=args.modes,
        technique=args.technique,
        figure=args.output,
        tolerance_cm1=args.window,
        options=_options(args),
    )
    code = _emit(args, result.to_dict(), lambda: explanation_text(result))
    if args.output and not args.json:
        print(f"figure written to {args.output}")
    return code


def _phase_predictions(args: argparse.Namespace) -> list[tuple[str, object]]:
    """Ordered predictions for every file; a disordered file contributes its one-orientation model."""
    from .phases.compare import load_phase

    labels = args.labels or [os.path.basename(f) for f in args.files]
    if len(labels) != len(args.files):
        raise InputError(f"{len(labels)} labels for {len(args.files)} files")
    opts = _options(args)
    out = []
    for f, lab in zip(args.files, labels, strict=True):
        phase = load_phase(f, lab, opts)
        out.append((lab if phase.ordered else f"{lab} (one-orientation model)", phase.crystal))
    return out


@_command("draw")
def _draw(args: argparse.Namespace) -> int:
    from .plot import correlation_diagram, line_pattern, phase_correlation_diagram, write_figure

    suffix = os.path.splitext(args.output)[1].lower()
    if suffix not in (".svg", ".pdf", ".png"):
        raise InputError(f"{args.output}: the figure type comes from the suffix: .svg, .pdf or .png")
    phases = _phase_predictions(args)
    unit = args.unit
    if unit is None:
        molecular = [u.formula for u in phases[0][1].units if u.correlation]
        if not molecular:
            raise InputError(f"{args.files[0]}: no molecular unit to draw")
        unit = molecular[0]
    if args.kind == "lines":
        from .spectra.catalogue import find_table

        try:
            modes = find_table(unit)
        except SplittingError:
            modes = None
        art = line_pattern(phases, unit, band=args.band, modes=modes)
    elif len(phases) > 1:
        art = phase_correlation_diagram(phases, unit, band=args.band)
    else:
        art = correlation_diagram(phases[0][1], unit, band=args.band)
    write_figure(art.figure, args.output)
    print(f"figure written to {args.output}")
    return 0


@_command("report")
def _report(args: argparse.Namespace) -> int:
    from .report.html import write_report

    if not args.output.lower().endswith((".html", ".htm")):
        raise InputError(f"{args.output}: the report is an HTML file; give a name ending in .html")
    phases = _phase_predictions(args)
    write_report(args.output, phases, title=args.title, notes=args.note or ())
    print(f"report written to {args.output}")
    return 0


@_command("demo")
def _demo(args: argparse.Namespace) -> int:
    from .demo import SCENARIO, run_demo

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


@_command("screen")
def _screen(args: argparse.Namespace) -> int:
    from .batch import screen
    from .batch.progress import ProgressBar

    bar = ProgressBar() if not args.quiet and sys.stderr.isatty() else None
    try:
        result = screen(
            args.sources,
            args.out,
            options=_options(args),
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
    return _emit(args, result.to_dict(), result.summary)


def _screen_parser(sub: argparse._SubParsersAction) -> None:
    sc = sub.add_parser("screen", help="many structures on a Dask cluster: one Parquet row per structure and per band")
    sc.add_argument("sources", nargs="+", help="folders, glob patterns ('db/**/*.cif'), list files (.txt) or files")
    sc.add_argument("-o", "--out", required=True, metavar="FOLDER", help="output folder (rerun to resume)")
    sc.add_argument("--scheduler", metavar="ADDRESS", help="a running Dask scheduler, e.g. tcp://host:8786")
    sc.add_argument("--workers", type=int, metavar="N", help="local worker processes (default: one per core)")
    sc.add_argument("--timeout", type=float, default=120.0, help="seconds per structure, 0 for none (default 120)")
    sc.add_argument("--memory", type=int, default=4096, metavar="MIB", help="memory per structure (default 4096)")
    sc.add_argument("--part-size", type=int, default=32, metavar="N", help="structures per committed part")
    sc.add_argument("--quiet", action="store_true", help="no progress bar")
    _crystal_options(sc)
    sc.add_argument("--json", action="store_true", help="print the summary as JSON")


def _disorder_options(p: argparse.ArgumentParser) -> None:
    p.add_argument(
        "--disorder",
        action="append",
        metavar="FORMULA=STATE",
        help="treat a unit as ordered, static or dynamic (rotor); repeatable",
    )
    p.add_argument("--rotor", action="append", metavar="FORMULA", help="declare a unit a free rotor (dynamic)")


def _line_options(p: argparse.ArgumentParser, *, window: float, what: str) -> None:
    """Options about measured lines, shared by the commands that read peak lists."""
    p.add_argument("--modes", metavar="TOML", help="free-unit mode table (default: the bundled catalogue)")
    p.add_argument("--technique", choices=["ir", "raman"], help="what was measured (else read from the files)")
    p.add_argument(
        "--window",
        type=float,
        default=window,
        help=f"largest distance (cm-1) of a line {what} (default {window:g})",
    )


def _crystal_options(p: argparse.ArgumentParser) -> None:
    from .crystal.limits import DEFAULT_MAX_ATOMS
    from .crystal.spacegroup import DEFAULT_CELL_TOLERANCE
    from .crystal.units import DEFAULT_BOND_SCALE
    from .molecule.symmetry import DEFAULT_TOLERANCE

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


# -------------------------------------------------------------------- parser
def build_parser() -> argparse.ArgumentParser:
    """The argument parser of the ``splitting`` command."""
    from .molecule.symmetry import DEFAULT_TOLERANCE

    p = argparse.ArgumentParser(
        prog="splitting",
        description="How molecular bands split in crystals: site and factor-group analysis, lattice modes, "
        "IR/Raman activity, orientational order, and assignment of measured spectra.",
    )
    sub = p.add_subparsers(dest="command", metavar="COMMAND")
    sub.required = True

    g = sub.add_parser("group", help="character table and selection rules of a point group; --to for subgroups")
    g.add_argument("symbol", help="Schoenflies (D4h, C3i, D∞h or Dinfh) or Hermann-Mauguin (4/mmm) symbol")
    g.add_argument(
        "--to",
        metavar="SUBGROUP",
        help="every inequivalent way SUBGROUP sits in the group, with the correlation of every species",
    )
    g.add_argument("--json", action="store_true", help="print JSON instead of text")

    m = sub.add_parser("molecule", help="point group and vibrational species of a free molecule or ion")
    m.add_argument("file", help="structure file (XYZ, or any format ase reads)")
    m.add_argument(
        "--tolerance",
        type=float,
        default=DEFAULT_TOLERANCE,
        help=f"largest displacement of an atom from its symmetric position, angstrom (default {DEFAULT_TOLERANCE})",
    )
    m.add_argument("--point-group", metavar="NAME", help="use this subgroup of the detected group")
    m.add_argument("--json", action="store_true", help="print JSON instead of text")

    pr = sub.add_parser("predict", help="k = 0 prediction for a crystal: sites, correlation, lattice modes, activity")
    pr.add_argument("file", help="crystal structure (CIF, POSCAR, extended XYZ, or another format ase reads)")
    _crystal_options(pr)
    pr.add_argument(
        "--geometry",
        action="append",
        metavar="K(EE)K",
        help="Raman scattering geometry in Porto notation in the factor group's axes, e.g. 'z(xx)-z'; "
        "lists the species it sees; repeatable",
    )
    pr.add_argument(
        "--disordered",
        action="store_true",
        help="the file holds partly occupied orientations: predict one orientation at its site, "
        "the averaged site, and what the disorder removes",
    )
    _disorder_options(pr)
    pr.add_argument("--json", action="store_true", help="print JSON instead of text")

    c = sub.add_parser("compare", help="a sequence of phases (e.g. on cooling): what each band does between them")
    c.add_argument("files", nargs="+", help="structure files, upper (e.g. warmest) phase first")
    c.add_argument("--labels", nargs="+", metavar="LABEL", help="phase names, e.g. '300 K' '90 K'")
    _disorder_options(c)
    _crystal_options(c)
    c.add_argument("--json", action="store_true", help="print JSON instead of text")

    lo = sub.add_parser("lower", help="candidate lower-symmetry phases, ranked by observed line counts")
    lo.add_argument("file", help="ordered parent structure")
    lo.add_argument("--max-index", type=int, default=8, help="largest subgroup index (default 8)")
    lo.add_argument(
        "--observed",
        nargs="+",
        metavar="BAND:TECH=N",
        help="observed components, e.g. T1u:ir=3 Hg:raman=5 lattice:raman=5 (optionally UNIT/BAND)",
    )
    lo.add_argument("--peaks", metavar="CSV", help="count the observed components from a peak list instead")
    _line_options(lo, window=15.0, what="from its free band when counting")
    _crystal_options(lo)
    lo.add_argument("--json", action="store_true", help="print JSON instead of text")

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
    _line_options(ex, window=40.0, what="from the band it is assigned to")
    ex.add_argument("-o", "--output", metavar="FIGURE", help="write a figure (.svg, .pdf or .png)")
    _crystal_options(ex)
    ex.add_argument("--json", action="store_true", help="print JSON instead of text")

    dr = sub.add_parser(
        "draw",
        help="correlation diagram (one file), phases side by side (several files) or "
        "line pattern (--kind lines); SVG, PDF or PNG by suffix",
    )
    dr.add_argument("files", nargs="+", help="structure file(s), upper phase first")
    dr.add_argument("-o", "--output", required=True, metavar="FIGURE", help="output .svg, .pdf or .png")
    dr.add_argument("--unit", metavar="FORMULA", help="which unit (default: the first molecular unit)")
    dr.add_argument("--band", metavar="SPECIES", help="one free-unit species only, e.g. T1u")
    dr.add_argument(
        "--kind",
        choices=["correlation", "lines"],
        default="correlation",
        help="correlation diagram (default) or the predicted line pattern of each phase",
    )
    dr.add_argument("--labels", nargs="+", metavar="LABEL", help="phase names, one per file")
    _crystal_options(dr)

    rp = sub.add_parser("report", help="one self-contained HTML page with the whole prediction, tables and figures")
    rp.add_argument("files", nargs="+", help="structure file(s), upper phase first")
    rp.add_argument("-o", "--output", required=True, metavar="HTML", help="output .html file")
    rp.add_argument("--labels", nargs="+", metavar="LABEL", help="phase names, one per file")
    rp.add_argument("--title", help="title of the report")
    rp.add_argument("--note", action="append", metavar="TEXT", help="a note printed at the top; repeatable")
    _crystal_options(rp)

    de = sub.add_parser("demo", help="run the bundled scenario (a made-up lab's low-temperature run) end to end")
    de.add_argument("--out", default="demo-output", help="folder for the report, figures and tables")
    de.add_argument("--json", action="store_true", help="print the list of files as JSON")

    for extra in _EXTRA_PARSERS:
        extra(sub)
    return p


_EXTRA_PARSERS: list[Callable[[argparse._SubParsersAction], None]] = [_screen_parser]


# ------------------------------------------------- estimate: model lattice dynamics (splitting.dynamics)
@_command("estimate")
def _estimate(args: argparse.Namespace) -> int:
    from .dynamics import EstimateOptions, estimate
    from .dynamics.text import estimate_text

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
    result = estimate(args.file, _options(args), model, progress=progress)
    return _emit(args, result.to_dict(), lambda: estimate_text(result, internal=not args.lattice_only))


def _estimate_parser(sub: argparse._SubParsersAction) -> None:
    from .dynamics.potential import DEFAULT_CUTOFF, PARAMETER_SETS

    es = sub.add_parser(
        "estimate",
        help="model estimate of where every line lies (lattice modes, site shifts, factor-group splittings), "
        "each with its species, activity and origin",
    )
    es.add_argument("file", help="crystal structure (CIF, POSCAR, or another format ase reads)")
    es.add_argument("--potential", choices=list(PARAMETER_SETS), default="williams", help="exp-6 parameter set")
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
    _crystal_options(es)
    es.add_argument("--json", action="store_true", help="print JSON instead of text")


_EXTRA_PARSERS.append(_estimate_parser)


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
        return _COMMANDS[args.command](args)
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

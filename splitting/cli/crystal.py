"""``predict``: the k = 0 prediction for one crystal."""

from __future__ import annotations

import argparse

from ..errors import InputError
from ._shared import (
    crystal_options,
    disorder_options,
    emit,
    format_option,
    json_option,
    options,
    print_table,
    states,
    warn,
)
from .estimate import estimate_options, estimates_for


def run_predict(args: argparse.Namespace) -> int:
    from ..crystal.predict import predict
    from ..report.text import prediction_text

    chosen = states(args)
    if (args.disordered or chosen) and args.estimate:
        raise InputError("--estimate needs an ordered structure; it cannot be combined with --disordered or --state")
    if args.format != "text" and (args.disordered or chosen):
        raise InputError(f"--format {args.format} is for an ordered prediction; leave out --disordered and the states")
    if args.disordered or chosen:
        from ..phases.disorder import predict_disordered
        from ..report.text import disordered_text

        dis = predict_disordered(args.file, options(args), states=chosen)
        warn(dis.warnings)
        return emit(args, dis.to_dict(), lambda: disordered_text(dis))
    if args.format != "text" and (args.json or args.geometry or args.estimate):
        raise InputError(f"--format {args.format} writes the tables only; leave out --json, --geometry and --estimate")
    result = predict(args.file, options(args))
    if args.format != "text":
        from ..report.tables import CLI_FORMATS, prediction_tables

        return print_table(prediction_tables(result, CLI_FORMATS[args.format]))
    estimates = estimates_for(args, [args.file])
    est = estimates[0] if estimates else None
    payload = result.to_dict()
    if est is not None:
        payload["estimate"] = est.to_dict()
    seen = [(g, result.seen_in(g)) for g in args.geometry or []]
    if seen:
        payload["geometries"] = [
            {"geometry": g, "species": [{"label": lab, "optical": n} for lab, n in sp]} for g, sp in seen
        ]

    def text() -> str:
        out = prediction_text(result, est)
        ax = result.factor_axes
        for g, sp in seen:
            shown = ", ".join(f"{lab} ({n})" for lab, n in sp) or "nothing (no allowed Raman component)"
            out += f"\n  Raman in {g} (x = {ax['x']}, y = {ax['y']}, z = {ax['z']}): {shown}"
        return out

    return emit(args, payload, text)


def add_parsers(sub: argparse._SubParsersAction) -> None:
    pr = sub.add_parser("predict", help="k = 0 prediction for a crystal: sites, correlation, lattice modes, activity")
    pr.add_argument("file", help="crystal structure (CIF, POSCAR, extended XYZ, or another format ase reads)")
    crystal_options(pr)
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
        "the averaged site, and what the disorder removes (static disorder unless --state says otherwise, "
        "with a warning giving what each state predicts)",
    )
    disorder_options(pr)
    estimate_options(pr, "add a column of model wavenumbers to the tables")
    json_option(pr)
    format_option(pr, "the species and correlation tables")
    pr.set_defaults(run=run_predict)

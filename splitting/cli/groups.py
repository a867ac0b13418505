"""``group`` (character tables, subgroup embeddings) and ``molecule`` (a free unit)."""

from __future__ import annotations

import argparse

from ..defaults import DEFAULT_TOLERANCE, MAX_UNIT_TOLERANCE
from ..errors import BookkeepingError, InputError, SplittingError, SymmetryError
from ._parser import number
from ._shared import emit, format_option, input_limit_option, json_option, print_table


def run_group(args: argparse.Namespace) -> int:
    from ..activity import activity_table
    from ..groups.catalogue import canonical_name
    from ..groups.linear import linear_group
    from ..groups.pointgroup import point_group
    from ..report.text import embeddings_text, group_text

    try:
        name = canonical_name(args.symbol)
    except SplittingError as exc:
        raise InputError(str(exc)) from None
    if args.format != "text":
        from ..report.tables import CLI_FORMATS, character_table

        if args.json or args.to or "∞" in name:
            raise InputError(
                f"--format {args.format} writes the character table of a finite group; leave out --json and --to"
            )
        return print_table(character_table(name, CLI_FORMATS[args.format]))
    if args.to:
        from ..groups.subgroups import embeddings

        if "∞" in name:
            raise InputError("subgroup embeddings of linear groups are not enumerated; give a finite group")
        try:
            embs = embeddings(name, args.to)
        except BookkeepingError:
            raise
        except SymmetryError as exc:  # an unknown or non-subgroup --to is an input mistake
            raise InputError(f"--to {args.to}: {exc}") from None
        return emit(
            args, {"group": name, "embeddings": [e.to_dict() for e in embs]}, lambda: embeddings_text(name, args.to)
        )
    grp = linear_group(name) if "∞" in name else point_group(name)
    payload = grp.to_dict()
    payload["selection_rules"] = [a.to_dict() for a in activity_table(name)]
    return emit(args, payload, lambda: group_text(name))


def _one_molecule(atoms, source: str):
    """Positions of the one molecule in ``atoms``; a periodic cell of several units is refused.

    A periodic file holding a single unit (a molecule in a box) gives that unit, made whole
    across the cell faces; a crystal of several units is a job for ``predict``, never one
    "molecule" made of the whole cell.
    """
    import numpy as np

    if not bool(np.any(atoms.pbc)) or abs(float(np.linalg.det(atoms.cell[:]))) < 1e-9:
        return atoms.positions
    from ..crystal.names import unit_name
    from ..crystal.units import find_units

    units = find_units(atoms.cell[:], atoms.get_scaled_positions(wrap=True), atoms.numbers)
    if len(units) == 1 and len(units[0].atoms) == len(atoms):
        order = np.argsort(units[0].atoms)
        return np.asarray(units[0].positions)[order]
    counts: dict[str, int] = {}
    for u in units:
        counts[u.formula] = counts.get(u.formula, 0) + 1
    listing = ", ".join(f"{unit_name(f)} x{n}" for f, n in counts.items())
    raise InputError(
        f"{source} is a periodic structure holding {len(units)} units ({listing}): run "
        f"'splitting predict {source}' for the crystal (each unit's free group is in its output), "
        "or give one molecule (e.g. an XYZ file)"
    )


def run_molecule(args: argparse.Namespace) -> int:
    from ..molecule.analysis import analyse_unit
    from ..readers import read_atoms
    from ..report.text import molecule_text

    atoms = read_atoms(args.file)
    positions = _one_molecule(atoms, args.file)
    try:
        result = analyse_unit(
            atoms.numbers,
            positions,
            tolerance=args.tolerance,
            point_group=args.point_group,
            symbols=atoms.get_chemical_symbols(),
        )
    except InputError as exc:
        raise InputError(f"{args.file}: {exc}") from None
    return emit(args, result.to_dict(), lambda: molecule_text(result))


def add_parsers(sub: argparse._SubParsersAction) -> None:
    g = sub.add_parser("group", help="character table and selection rules of a point group; --to for subgroups")
    g.add_argument("symbol", help="Schoenflies (D4h, C3i, D∞h or Dinfh) or Hermann-Mauguin (4/mmm) symbol")
    g.add_argument(
        "--to",
        metavar="SUBGROUP",
        help="every inequivalent way SUBGROUP sits in the group, with the correlation of every species",
    )
    json_option(g)
    format_option(g, "the character table")
    g.set_defaults(run=run_group)

    m = sub.add_parser("molecule", help="point group and vibrational species of a free molecule or ion")
    m.add_argument("file", help="structure file (XYZ, or any format ase reads)")
    m.add_argument(
        "--tolerance",
        type=number(low=0, high=MAX_UNIT_TOLERANCE, unit="Å"),
        default=DEFAULT_TOLERANCE,
        help=f"largest displacement of an atom from its symmetric position, Å (default {DEFAULT_TOLERANCE})",
    )
    m.add_argument("--point-group", metavar="NAME", help="use this subgroup of the detected group")
    input_limit_option(m)
    json_option(m)
    m.set_defaults(run=run_molecule)

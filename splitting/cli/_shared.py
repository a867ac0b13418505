"""Options several commands share, and how their values become package arguments."""

from __future__ import annotations

import argparse
import json
import os
from collections.abc import Callable

from ..defaults import (
    DEFAULT_BOND_SCALE,
    DEFAULT_CELL_TOLERANCE,
    DEFAULT_INPUT_MB,
    DEFAULT_MAX_ATOMS,
    DEFAULT_TOLERANCE,
    MAX_BOND_SCALE,
    MAX_CELL_TOLERANCE,
    MAX_UNIT_TOLERANCE,
    MAX_WINDOW_CM1,
)
from ..errors import InputError
from ._parser import number

__all__ = [
    "crystal_options",
    "disorder_options",
    "emit",
    "input_limit_option",
    "json_option",
    "line_options",
    "load_phases",
    "options",
    "phase_label",
    "phase_predictions",
    "phase_states",
    "state_notes",
    "states",
    "warn",
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


def input_limit_option(p: argparse.ArgumentParser) -> None:
    """``--max-input-mb``: the cap on what is read from one input file."""
    p.add_argument(
        "--max-input-mb",
        type=number(low=0, high=1e6, unit="MB"),
        metavar="MB",
        help=f"read at most this much of one input file, decompressed (default {DEFAULT_INPUT_MB}, "
        "or SPLITTING_MAX_INPUT_MB)",
    )


def format_option(p: argparse.ArgumentParser, what: str) -> None:
    """``--format text|csv|md|tex``: the readable text (default) or ``what`` as a table for a document."""
    p.add_argument(
        "--format",
        choices=["text", "csv", "md", "tex"],
        default="text",
        help=f"text (default), or {what} as CSV, Markdown or LaTeX (booktabs)",
    )


def print_table(text: str) -> int:
    """Print a table written for ``--format`` (ending in one newline); exit status 0."""
    print(text, end="" if text.endswith("\n") else "\n")
    return 0


def crystal_options(p: argparse.ArgumentParser) -> None:
    """Options of every command that reads a crystal: tolerances, units, bonds, size limit."""
    p.add_argument(
        "--tolerance",
        type=number(low=0, high=MAX_CELL_TOLERANCE, unit="Å"),
        default=DEFAULT_CELL_TOLERANCE,
        help=f"space-group distance tolerance, Å (default {DEFAULT_CELL_TOLERANCE})",
    )
    p.add_argument(
        "--unit-tolerance",
        type=number(low=0, high=MAX_UNIT_TOLERANCE, unit="Å"),
        default=DEFAULT_TOLERANCE,
        help=f"free-unit symmetry tolerance, Å (default {DEFAULT_TOLERANCE})",
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
        help="largest A-B bond length in Å (0 forbids the bond); repeatable",
    )
    p.add_argument(
        "--bond-scale",
        type=number(low=0, high=MAX_BOND_SCALE),
        default=DEFAULT_BOND_SCALE,
        help=f"bond when distance < scale x sum of covalent radii (default {DEFAULT_BOND_SCALE})",
    )
    p.add_argument(
        "--bond-metals", action="store_true", help="also draw bonds to alkali, alkaline-earth and lanthanide atoms"
    )
    p.add_argument(
        "--max-atoms",
        type=number(low=1, high=10_000_000, integer=True, low_inclusive=True),
        default=DEFAULT_MAX_ATOMS,
        help=f"refuse cells of more atoms than this, before the symmetry search (default {DEFAULT_MAX_ATOMS})",
    )
    input_limit_option(p)
    p.add_argument(
        "--standard-axes",
        action="store_true",
        help="label species, IR components and Raman tensors in the axes of the standard setting "
        "(International Tables) instead of the file's own axes",
    )


def options(args: argparse.Namespace):
    """The :class:`~splitting.crystal.predict.Options` of the crystal options given."""
    from ..crystal.names import hill_of
    from ..crystal.predict import Options
    from ..crystal.units import parse_cutoffs

    free = []
    for item in args.free_group or []:
        if "=" not in item:
            raise InputError(f"--free-group {item!r} is not of the form UNIT=GROUP (e.g. C60=Ih, SO4^2-=Td)")
        f, g = item.rsplit("=", 1)
        try:
            hill_of(f)
        except InputError as exc:
            raise InputError(f"--free-group: {exc}") from None
        free.append((f.strip(), g.strip()))
    for f in args.units or []:
        try:
            hill_of(f)
        except InputError as exc:
            raise InputError(f"--units: {exc}") from None
    return Options(
        tolerance=args.tolerance,
        unit_tolerance=args.unit_tolerance,
        free_groups=tuple(free),
        formulas=tuple(args.units or ()),
        cutoffs=tuple(parse_cutoffs(args.bond).items()),
        bond_scale=args.bond_scale,
        ionic_metals=not args.bond_metals,
        max_atoms=args.max_atoms,
        standard_axes=getattr(args, "standard_axes", False),
    )


STATE_HELP = (
    "state of a phase or of one unit: ordered, static (frozen orientations) or rotor (dynamic, "
    "plastic). PHASE is a file as given, its name, its label or its number (1 = first); "
    "'--state PHASE=rotor' sets every unit of that phase, '--state PHASE:UNIT=static' one unit, "
    "'--state UNIT=rotor' that unit in every phase, '--state rotor' the only phase; repeatable"
)


def disorder_options(p: argparse.ArgumentParser) -> None:
    """``--state``, ``--disorder`` and ``--rotor``: the state of each phase or unit."""
    p.add_argument("--state", action="append", metavar="[PHASE[:UNIT]=]STATE", help=STATE_HELP)
    p.add_argument(
        "--disorder",
        action="append",
        metavar="[PHASE:]UNIT=STATE",
        help="state of one unit (SO4^2-, NH4+, C60 or a Hill formula): ordered, static or rotor; repeatable",
    )
    p.add_argument(
        "--rotor", action="append", metavar="[PHASE:]UNIT", help="declare a unit a rotor (dynamic disorder); repeatable"
    )


def _phase_index(key: str, files: list[str], labels: list[str]) -> int | None:
    """Which phase ``key`` names (file as given, its base name, its label, or 1-based number)."""
    key = key.strip()
    for k, (f, lab) in enumerate(zip(files, labels, strict=True)):
        if key in (f, os.path.basename(f), lab):
            return k
    if key.isdigit() and 1 <= int(key) <= len(files):
        return int(key) - 1
    return None


def phase_states(args: argparse.Namespace, files: list[str], labels: list[str] | None = None) -> list[dict[str, str]]:
    """One ``{unit or '*': state}`` mapping per file, from --state, --disorder and --rotor.

    Unit names are checked against the structures later (by the prediction); phase names,
    state words and the form of each item here.
    """
    from ..phases.disorder import ALL_UNITS, normalise_state

    labels = labels or [os.path.basename(f) for f in files]
    out: list[dict[str, str]] = [{} for _ in files]
    phases = ", ".join(f"{k + 1} = {lab}" for k, lab in enumerate(labels))

    def phase_of(key: str, option: str, item: str) -> int:
        k = _phase_index(key, files, labels)
        if k is None:
            raise InputError(f"{option} {item!r}: {key!r} names no phase; phases: {phases}")
        return k

    def put(where: int | None, unit: str, state: str) -> None:
        for k in range(len(files)) if where is None else [where]:
            out[k][unit] = state

    def unit_part(text: str, option: str, item: str) -> str:
        from ..crystal.names import hill_of

        if not text.strip():
            raise InputError(f"{option} {item!r}: no unit named")
        try:
            hill_of(text)
        except InputError as exc:
            raise InputError(f"{option} {item!r}: {exc}") from None
        return text.strip()

    for item in getattr(args, "state", None) or []:
        left, eq, word = item.rpartition("=")
        state = normalise_state(word, where=f"--state {item!r}")
        if not eq:
            if len(files) != 1:
                raise InputError(
                    f"--state {item!r}: say which phase, e.g. --state {labels[0]}={word}; phases: {phases}"
                )
            put(0, ALL_UNITS, state)
        elif ":" in left:
            ph, _, unit = left.rpartition(":")
            put(phase_of(ph, "--state", item), unit_part(unit, "--state", item), state)
        else:
            k = _phase_index(left, files, labels)
            if k is not None:
                put(k, ALL_UNITS, state)
            else:
                try:
                    put(None, unit_part(left, "--state", item), state)
                except InputError:
                    raise InputError(
                        f"--state {item!r}: {left!r} names no phase and no unit; phases: {phases}"
                    ) from None
    for item in getattr(args, "disorder", None) or []:
        left, eq, word = item.rpartition("=")
        if not eq:
            raise InputError(f"--disorder {item!r} is not of the form [PHASE:]UNIT=ordered|static|rotor")
        state = normalise_state(word, where=f"--disorder {item!r}")
        ph, colon, unit = left.rpartition(":")
        put(phase_of(ph, "--disorder", item) if colon else None, unit_part(unit, "--disorder", item), state)
    for item in getattr(args, "rotor", None) or []:
        ph, colon, unit = item.rpartition(":")
        put(phase_of(ph, "--rotor", item) if colon else None, unit_part(unit, "--rotor", item), "dynamic")
    return out


def states(args: argparse.Namespace) -> dict[str, str]:
    """States of the only phase of a one-file command (``args.file``)."""
    return phase_states(args, [args.file])[0]


def line_options(p: argparse.ArgumentParser, *, window: float, what: str) -> None:
    """Options about measured lines, shared by the commands that read peak lists."""
    p.add_argument("--modes", metavar="TOML", help="free-unit mode table (default: the bundled catalogue)")
    p.add_argument("--technique", choices=["ir", "raman"], help="what was measured (else read from the files)")
    p.add_argument(
        "--window",
        type=number(low=0, high=MAX_WINDOW_CM1, unit="cm-1"),
        default=window,
        help=f"largest distance (cm-1) of a line {what} (default {window:g})",
    )


def load_phases(args: argparse.Namespace) -> list:
    """:class:`~splitting.phases.compare.Phase` of every file, each in its own state."""
    from ..phases.compare import load_phase

    labels = args.labels or [os.path.basename(f) for f in args.files]
    if len(labels) != len(args.files):
        raise InputError(f"{len(labels)} labels for {len(args.files)} files")
    per = phase_states(args, list(args.files), list(labels))
    opts = options(args)
    return [load_phase(f, lab, opts, states=st) for f, lab, st in zip(args.files, labels, per, strict=True)]


def phase_label(phase) -> str:
    """Label of a phase with its state, e.g. ``"300 K (rotor phase; drawn: one-orientation model)"``."""
    if phase.ordered:
        return f"{phase.label} (ordered)"
    word = {"static": "static disorder", "dynamic": "rotor phase"}.get(phase.state, "mixed states")
    return f"{phase.label} ({word}; drawn: one-orientation model)"


def state_notes(phases) -> list[str]:
    """One line per phase: its state and what it implies for the lines; then its warnings."""
    from ..phases.disorder import STATE_MEANING

    out = []
    for ph in phases:
        if ph.ordered:
            out.append(f"{ph.label}: {STATE_MEANING['ordered']}.")
            continue
        for u in ph.disorder.units:
            counts = "; ".join(f"{st}: {ir} IR / {ra} Raman internal lines" for st, ir, ra in u.readings)
            out.append(f"{ph.label}: {u.name} {STATE_MEANING[u.state]}. Under each state: {counts}.")
        out += [f"{ph.label}: warning: {w}" for w in ph.disorder.warnings]
    return out


def warn(messages) -> None:
    """Print each warning on stderr as one line starting with ``warning:``."""
    import sys

    for m in messages:
        print(f"warning: {m}", file=sys.stderr)


def phase_predictions(args: argparse.Namespace) -> list[tuple[str, object]]:
    """Ordered predictions for every file, labelled with the phase's state.

    A disordered phase contributes its one-orientation model (the label says so).
    """
    return [(phase_label(ph), ph.crystal) for ph in load_phases(args)]

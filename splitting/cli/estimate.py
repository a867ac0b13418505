"""``estimate``: the model lattice-dynamics estimate of where each line lies (splitting.dynamics)."""

from __future__ import annotations

import argparse
import os
import sys

from ..defaults import DEFAULT_CUTOFF, DEFAULT_SPECTRUM_WIDTH, MAX_CUTOFF, POTENTIAL_NAMES
from ..errors import InputError
from ._parser import number
from ._shared import crystal_options, emit, json_option, options


def run_estimate(args: argparse.Namespace) -> int:
    from ..dynamics.memo import cached_estimate
    from ..dynamics.text import estimate_text

    spectra_kind = None
    if args.spectra:
        spectra_kind = os.path.splitext(args.spectra)[1].lower()
        if spectra_kind not in (".svg", ".pdf", ".png", ".json"):
            raise InputError(f"--spectra {args.spectra}: give a figure (.svg, .pdf, .png) or a data file (.json)")
    if args.width is not None and not args.spectra:
        raise InputError("--width is the line width of the simulated spectra; give --spectra FILE with it")
    width = DEFAULT_SPECTRUM_WIDTH if args.width is None else args.width
    if not (width > 0 and width < 1000):
        raise InputError(f"--width {width:g}: the line width must be above 0 and below 1000 cm-1")
    if args.lattice_only and args.json:
        raise InputError("--lattice-only shortens the text table; the JSON always holds every line (leave one out)")
    model, progress = model_from(args)
    result = cached_estimate(args.file, options(args), model, progress=progress)
    if spectra_kind:
        _write_spectra(result, args.spectra, spectra_kind, width)
    return emit(args, result.to_dict(), lambda: estimate_text(result, internal=not args.lattice_only))


def _write_spectra(result, target: str, kind: str, width: float) -> None:
    import json

    from .._io import atomic_write_text
    from ..dynamics.spectra import simulate_all

    spectra = simulate_all(result, width_cm1=width)
    if kind == ".json":
        data = {"source": result.source, "spectra": [s.to_dict() for s in spectra]}
        atomic_write_text(target, json.dumps(data, indent=1, ensure_ascii=False) + "\n")
    else:
        from ..plot.lines import write_figure
        from ..plot.simulated import spectra_figure

        art = spectra_figure(spectra, title=f"{os.path.basename(result.source)}: simulated spectra")
        write_figure(art.figure, target)
    print(f"simulated spectra written to {target}", file=sys.stderr)


#: attributes of the model options (``model_options``) and their defaults
_MODEL_DEFAULTS = {
    "potential": "williams",
    "charges": "all",
    "charge": None,
    "coulomb": "ewald",
    "cutoff": DEFAULT_CUTOFF,
    "scale_to_measured": False,
    "allow_imaginary": False,
    "progress": False,
    "relax": False,
    "relax_cell": False,
}


def model_options(p: argparse.ArgumentParser, prefix: str = "") -> None:
    """The choices of the model estimate, the same for ``estimate`` and every command with ``--estimate``.

    Defaults are None (filled in by :func:`model_from`), so a command can tell a choice
    given without ``--estimate`` and refuse it.
    """
    p.add_argument(
        "--potential",
        choices=list(POTENTIAL_NAMES),
        help=f"{prefix}atom-atom parameter set (default williams, exp-6; gavezzotti exp-6 for C and H; epm2 and "
        "trappe Lennard-Jones for CO2 only)",
    )
    p.add_argument(
        "--charges",
        choices=["all", "auto", "none", "quadrupole", "distributed", "set"],
        help=f"{prefix}point charges: every atom's tight-binding charge (default), only charged units, none, "
        "quadrupole (tight-binding charges, those of a unit with a bundled measured quadrupole moment, e.g. CO2, "
        "scaled to reproduce it), distributed (tight-binding charges, a unit with a bundled distributed-charge "
        "model, e.g. CO2, given charges on its atoms and bond centres fitted to its quadrupole and hexadecapole) "
        "or set (the charges published with the --potential set, e.g. epm2)",
    )
    p.add_argument("--charge", action="append", metavar="FORMULA=Q", help=f"{prefix}total charge of a unit; repeatable")
    p.add_argument(
        "--coulomb",
        choices=["ewald", "dsf"],
        help=f"{prefix}how the point charges are summed: ewald (the full lattice sum, default) or dsf (damped "
        "shifted-force pairs within the cut-off: cost linear in atoms, for large cells)",
    )
    p.add_argument(
        "--cutoff",
        type=number(low=0, high=MAX_CUTOFF, unit="Å (the lattice-sum cut-off)"),
        help=f"{prefix}lattice-sum cut-off, Å (default {DEFAULT_CUTOFF})",
    )
    p.add_argument(
        "--scale-to-measured",
        action="store_true",
        default=None,
        help=f"{prefix}scale every free fundamental to the gas-phase value of the bundled mode table",
    )
    p.add_argument(
        "--allow-imaginary",
        action="store_true",
        default=None,
        help=f"{prefix}show imaginary lines instead of refusing the structure",
    )
    p.add_argument(
        "--progress",
        action="store_true",
        default=None,
        help=f"{prefix}report each step of the estimate on standard error",
    )
    p.add_argument(
        "--relax",
        action="store_true",
        default=None,
        help=f"{prefix}first move the units (rigid, on their sites) to the model's minimum within the space group",
    )
    p.add_argument(
        "--relax-cell",
        action="store_true",
        default=None,
        help=f"{prefix}as --relax, and relax the cell parameters too (within the lattice system)",
    )


def model_from(args: argparse.Namespace):
    """``(EstimateOptions, progress callback or None)`` from the model options and ``--cache``."""
    from ..dynamics import EstimateOptions

    got = {k: (_MODEL_DEFAULTS[k] if getattr(args, k, None) is None else getattr(args, k)) for k in _MODEL_DEFAULTS}
    charges = []
    for item in got["charge"] or []:
        f, sep, q = item.partition("=")
        try:
            charges.append((f.strip(), int(q)))
        except ValueError:
            raise InputError(f"--charge {item!r} is not of the form FORMULA=Q (e.g. NH4=1)") from None
        if not sep:
            raise InputError(f"--charge {item!r} is not of the form FORMULA=Q (e.g. NH4=1)")
    cache = getattr(args, "cache", None)
    if cache and not os.path.isdir(cache):
        raise InputError(f"--cache {cache}: no such folder")
    model = EstimateOptions(
        potential=got["potential"],
        charges=got["charges"],
        cutoff=got["cutoff"],
        scale_to_measured=got["scale_to_measured"],
        cache=cache,
        allow_imaginary=got["allow_imaginary"],
        unit_charges=tuple(charges),
        coulomb=got["coulomb"],
        relax=got["relax"],
        relax_cell=got["relax_cell"],
    )
    progress = (lambda msg: print(f"... {msg}", file=sys.stderr, flush=True)) if got["progress"] else None
    return model, progress


def estimate_options(p: argparse.ArgumentParser, what: str) -> None:
    """``--estimate`` (run the model estimate for every structure), ``--cache DIR`` and the model's choices."""
    p.add_argument(
        "--estimate",
        action="store_true",
        help=f"also run the model estimate of where each line lies (as the estimate command) and {what}",
    )
    p.add_argument(
        "--cache",
        metavar="DIR",
        help="with --estimate: folder for cached free-unit Hessians and estimates (reused between runs)",
    )
    model_options(p, "with --estimate: ")


def estimates_for(args: argparse.Namespace, files) -> list | None:
    """One model estimate per structure file when ``--estimate`` was given, else None.

    A file given twice (or a copy of it) is estimated once; with ``--cache`` the result
    is kept there for later runs (:mod:`splitting.dynamics.memo`).  A model option given
    without ``--estimate`` is refused, never ignored.
    """
    if not getattr(args, "estimate", False):
        if getattr(args, "cache", None):
            raise InputError("--cache is the folder of the model estimate; give --estimate with it")
        for key in _MODEL_DEFAULTS:
            if getattr(args, key, None) is not None:
                flag = "--" + key.replace("_", "-")
                raise InputError(f"{flag} is a choice of the model estimate; give --estimate with it")
        return None
    from ..dynamics.memo import cached_estimate

    model, progress = model_from(args)
    opts = options(args)
    return [cached_estimate(f, opts, model, progress=progress) for f in files]


def add_parsers(sub: argparse._SubParsersAction) -> None:
    es = sub.add_parser(
        "estimate",
        help="model estimate of where every line lies (lattice modes, site shifts, factor-group splittings), "
        "each with its species, activity and origin",
    )
    es.add_argument("file", help="crystal structure (CIF, POSCAR, or another format ase reads)")
    model_options(es)
    es.add_argument(
        "--cache", metavar="DIR", help="folder for cached free-unit Hessians and estimates (reused between runs)"
    )
    es.add_argument(
        "--spectra",
        metavar="FILE",
        help="also write simulated IR, Raman and neutron spectra: a figure (.svg, .pdf, .png) or the data (.json)",
    )
    es.add_argument(
        "--width",
        type=number(low=0, high=999.999, unit="cm-1"),
        metavar="CM1",
        help=f"full width at half maximum of the Lorentzian of every simulated line, cm-1 "
        f"(default {DEFAULT_SPECTRUM_WIDTH:g})",
    )
    es.add_argument("--lattice-only", action="store_true", help="text output: lattice modes only")
    crystal_options(es)
    json_option(es)
    es.set_defaults(run=run_estimate)

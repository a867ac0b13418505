"""The estimate: structure -> crystal pipeline -> free-unit Hessians -> dynamical matrix -> labelled lines.

``estimate(path)`` runs the engine's crystal pipeline (space group, units, orbits, factor
group and the whole-cell count), builds the harmonic k = 0 model of the primitive cell at
the structure as given and returns every line with its factor-group species, activity and
origin.  By default the structure is used as given; ``relax`` (and ``relax_cell``) first move
it to the model's minimum within its space group (:mod:`splitting.dynamics.relax`).  A
structure far from a minimum of the model shows imaginary modes and is refused.
"""

from __future__ import annotations

import os
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from ..errors import BookkeepingError, InputError
from .constants import ZERO_CM1
from .coulomb import COULOMB_METHODS
from .dynmat import build_cell_model, dynamical_matrix
from .freeunit import METHOD
from .neutron import neutron_weight
from .potential import DEFAULT_CUTOFF, PARAMETER_SETS, sets_covering
from .results import BandEstimate, Estimate, Line
from .species import atom_permutations, origin_weights, species_bases, split_by_species

__all__ = ["EstimateOptions", "estimate", "estimate_atoms"]

Progress = Callable[[str], None]

#: rule of thumb when only one parameter set covers the elements: atom-atom potentials
#: give lattice frequencies of molecular crystals to within about 20 % (common practice;
#: cf. G. S. Pawley, Phys. Status Solidi 20, 347 (1967), from memory)
LATTICE_RULE = 0.20
#: the crystal-field part of an internal line (its distance from the free value) is
#: uncertain by about half its size (common practice)
INTERNAL_RULE = 0.5
#: the point-charge choices (``EstimateOptions.charges``)
CHARGE_CHOICES = ("all", "auto", "none", "quadrupole", "distributed", "set")
#: imaginary lines larger than this (cm-1) refuse the structure
IMAGINARY_LIMIT = 3.0
#: how the model text names each Coulomb sum
_COULOMB_TEXT = {"ewald": "; point charges (Ewald)", "dsf": "; point charges (damped shifted-force sum)"}


@dataclass(frozen=True)
class EstimateOptions:
    """Choices of the model.

    Attributes
    ----------
    potential : str
        Name of the atom-atom parameter set (see ``PARAMETER_SETS``).
    charges : str
        ``"all"`` (tight-binding partial charges of every atom, Ewald sum; the default, as
        Williams and Cox fitted their N and O parameters with charges), ``"auto"`` (only
        when a unit carries a net charge), ``"none"``, or ``"quadrupole"`` (as ``"all"``, with
        the charges of every unit whose measured quadrupole moment is bundled scaled to
        reproduce it; :mod:`splitting.dynamics.quadrupole`), or ``"distributed"`` (as ``"all"``,
        with a unit that has a bundled distributed-charge model, so far CO2, given charges on
        its atoms and on sites off them fitted to its quadrupole and hexadecapole;
        :mod:`splitting.dynamics.sites`), or ``"set"`` (the charges published with the
        parameter set, on the atoms of the units it was fitted to; only for a set that has them).
    cutoff : float
        Lattice-sum cut-off (angstrom).
    scale_to_measured : bool
        Scale every free fundamental to the gas-phase value of the bundled mode table.
    cache : str or None
        Folder for cached free-unit Hessians.
    allow_imaginary : bool
        Return imaginary lines instead of refusing the structure.
    unit_charges : tuple of (str, int)
        Charges of units given by the user.
    coulomb : str
        How the point charges are summed: ``"ewald"`` (the full lattice sum, the default)
        or ``"dsf"`` (the damped shifted-force pair sum, cost linear in atoms; see
        :mod:`splitting.dynamics.coulomb`).
    relax : bool
        Move the units (rigid) to the model's minimum within the space group first.
    relax_cell : bool
        Relax the cell parameters too (within the lattice system); implies ``relax``.
    """

    potential: str = "williams"
    charges: str = "all"
    cutoff: float = DEFAULT_CUTOFF
    scale_to_measured: bool = False
    cache: str | None = None
    allow_imaginary: bool = False
    unit_charges: tuple[tuple[str, int], ...] = ()
    coulomb: str = "ewald"
    relax: bool = False
    relax_cell: bool = False


def estimate(
    path: str | os.PathLike[str],
    options=None,
    model: EstimateOptions | None = None,
    *,
    progress: Progress | None = None,
    format: str | None = None,
) -> Estimate:
    """Estimate where every k = 0 line of a crystal lies, with its species and origin.

    Parameters
    ----------
    path : path
        Crystal structure file.
    options : splitting.crystal.predict.Options, optional
        Options of the crystal pipeline (tolerances, units, bonds).
    model : EstimateOptions, optional
    progress : callable, optional
        Called with one line of text per step.
    """
    from ..crystal.read import load_structure

    atoms = load_structure(path, format=format)
    return estimate_atoms(atoms, options, model, source=os.fspath(path), progress=progress)


def estimate_atoms(
    atoms,
    options=None,
    model: EstimateOptions | None = None,
    *,
    source: str = "structure",
    progress: Progress | None = None,
) -> Estimate:
    """As :func:`estimate`, for an ``ase.Atoms`` object with a periodic cell."""
    from ..correlation import FactorGroup
    from ..crystal.predict import Options, _orbits, _predict, units_of
    from ..crystal.spacegroup import analyse_cell

    opts = options or Options()
    mo = model or EstimateOptions()
    if mo.potential not in PARAMETER_SETS:
        raise InputError(f"no atom-atom parameter set {mo.potential!r}; sets: {', '.join(PARAMETER_SETS)}")
    if mo.charges not in CHARGE_CHOICES:
        raise InputError(
            f"charges must be {', '.join(CHARGE_CHOICES[:-1])} or {CHARGE_CHOICES[-1]}, not {mo.charges!r}"
        )
    if mo.coulomb not in COULOMB_METHODS:
        raise InputError(f"the Coulomb sum must be {' or '.join(COULOMB_METHODS)}, not {mo.coulomb!r}")
    if not mo.cutoff > 0:
        raise InputError("the lattice-sum cut-off must be positive")
    params = PARAMETER_SETS[mo.potential]
    if mo.charges == "set" and not params.charges:
        with_charges = [name for name, ps in PARAMETER_SETS.items() if ps.charges]
        raise InputError(
            f"the {params.label} has no charges of its own; --charges set needs a set that has them "
            f"({', '.join(with_charges)}) or another --charges"
        )
    cell = analyse_cell(
        atoms.cell[:],
        atoms.get_scaled_positions(wrap=True),
        atoms.numbers,
        tolerance=opts.tolerance,
        standard_axes=opts.standard_axes,
    )
    units = units_of(cell, opts)
    prediction = _predict(cell, units, opts, source)
    orbits = _orbits(cell, units)
    _check_coverage(params, units)
    if progress:
        progress(f"{source}: {prediction.space_group.symbol}, {len(cell.numbers)} atoms, {len(units)} units")
    cm = build_cell_model(
        cell,
        units,
        orbits,
        unit_tolerance=opts.unit_tolerance,
        charges_given=dict(mo.unit_charges),
        cache=mo.cache,
        scale_to_measured=mo.scale_to_measured,
        progress=progress,
    )
    total_charge = float(np.sum(cm.charges))
    if abs(total_charge) > 1e-3:
        net: dict[str, list[float]] = {}
        for k, u in enumerate(units):
            net.setdefault(u.formula, []).append(float(np.sum(cm.charges[cm.unit_of == k])))
        named = ", ".join(f"{f} {round(q[0]):+d} (x{len(q)})" for f, q in net.items() if abs(q[0]) > 0.5)
        raise InputError(
            f"the charges of the units add up to {total_charge:+.2f} e per cell, not 0"
            + (f" (units {named})" if named else "")
            + "; give the charge of each ion with --charge FORMULA=Q"
        )
    charged = any(abs(float(np.sum(cm.charges[cm.unit_of == k]))) > 0.5 for k in range(len(units)))
    use_charges = mo.charges in ("all", "quadrupole", "distributed", "set") or (mo.charges == "auto" and charged)
    cm, scaled_charges = _with_charge_model(cm, units, mo.charges, params)
    relaxation = None
    if mo.relax or mo.relax_cell:
        from .relax import relax_structure

        cell, units, turns, relaxation = relax_structure(
            cell,
            units,
            orbits,
            cm,
            params,
            cutoff=mo.cutoff,
            use_charges=use_charges,
            with_cell=mo.relax_cell,
            progress=progress,
        )
        cm = build_cell_model(
            cell,
            units,
            orbits,
            unit_tolerance=opts.unit_tolerance,
            charges_given=dict(mo.unit_charges),
            cache=mo.cache,
            scale_to_measured=mo.scale_to_measured,
            turns=turns,
        )
        cm, scaled_charges = _with_charge_model(cm, units, mo.charges, params)
    factor = FactorGroup.from_rotations(cell.rotations, cell.reference_axes)
    perms = atom_permutations(cell, cm.positions)
    bases = species_bases(cell, factor, perms, prediction.gamma_3n)

    def solve(ps):
        if progress:
            progress(f"dynamical matrix with the {ps.label}")
        own = _set_charges(cm, units, ps)[0] if mo.charges == "set" else cm
        dmat, energy = dynamical_matrix(own, ps, cutoff=mo.cutoff, use_charges=use_charges, coulomb=mo.coulomb)
        return split_by_species(dmat, cell, factor, perms, prediction.gamma_3n, bases), energy

    blocks, energy = solve(params)
    # the spread: every other set that covers these elements and units (with --charges set, its own charges)
    elements = {e for u in units for e in u.symbols}
    formulas = {u.formula for u in units}
    others = [
        ps
        for ps in PARAMETER_SETS.values()
        if ps.name != params.name and ps.covers(elements, formulas) and (mo.charges != "set" or ps.charges)
    ]
    alt = [solve(ps)[0] for ps in others]
    lines = _lines(cm, blocks, alt, prediction, units)
    acoustic = [line for line in lines if line.origin == "acoustic"]
    if len(acoustic) != prediction.acoustic.multiplicity:
        raise BookkeepingError(f"{len(acoustic)} acoustic lines found, {prediction.acoustic.multiplicity} expected")
    acoustic_max = max((abs(line.wavenumber_cm1) for line in acoustic), default=0.0)
    if acoustic_max > ZERO_CM1:
        raise BookkeepingError(f"an acoustic mode is at {acoustic_max:.2f} cm-1, not at zero")
    bad = [line for line in lines if line.origin != "acoustic" and line.wavenumber_cm1 < -IMAGINARY_LIMIT]
    if bad and not mo.allow_imaginary:
        worst = min(bad, key=lambda line: line.wavenumber_cm1)
        raise InputError(
            f"unit {worst.unit}: the model has {len(bad)} imaginary line(s), down to {-worst.wavenumber_cm1:.0f}i "
            f"cm-1 ({worst.origin}, {worst.species}): the structure is far from a minimum of the "
            f"{params.label}; check the structure or try another --potential or --charges"
            + ("" if relaxation else ", or relax it first (--relax, --relax-cell)")
            + " (--allow-imaginary shows the lines anyway)"
        )
    warnings = list(prediction.warnings)
    if relaxation is not None:
        from .relax import warnings_of

        warnings += warnings_of(relaxation)
    warnings += _fitted_sets_note(params, formulas)
    if bad:
        warnings.append(f"{len(bad)} imaginary line(s): the structure is not at a minimum of the model")
    slight = [ln for ln in lines if ln.origin != "acoustic" and -IMAGINARY_LIMIT <= ln.wavenumber_cm1 < -ZERO_CM1]
    if slight:
        warnings.append(
            f"{len(slight)} slightly imaginary line(s), down to {-min(ln.wavenumber_cm1 for ln in slight):.1f}i cm-1 "
            "(shown as negative wavenumbers): the structure is close to, but not at, a minimum of the model"
        )
    bands = _bands(cm, lines, units, orbits)
    rule = (
        "half the largest difference from the other parameter set(s) "
        + ", ".join(repr(p.name) for p in others)
        + f", and at least the rule of thumb ({LATTICE_RULE:.0%} of lattice lines, {INTERNAL_RULE:.0%} of an "
        "internal line's distance from the free value)"
        if others
        else f"rule of thumb: {LATTICE_RULE:.0%} of lattice lines (atom-atom potentials, common practice), "
        f"{INTERNAL_RULE:.0%} of an internal line's distance from the free value"
    )
    model_text = (
        f"model: harmonic k = 0 lattice dynamics; free units {METHOD} (tblite)"
        + (" scaled to measured gas-phase fundamentals" if mo.scale_to_measured else "")
        + f"; {params.label}, {mo.cutoff:g} Å cut-off"
        + (_COULOMB_TEXT[mo.coulomb] if use_charges else "")
        + "".join(f"; {text}" for text in scaled_charges)
        + (
            "; structure as given (not relaxed)"
            if relaxation is None
            else "; units and cell relaxed within the space group"
            if relaxation.cell
            else "; units relaxed within the space group (cell as given)"
        )
    )
    return Estimate(
        source=source,
        factor_group=prediction.factor_group,
        model=model_text,
        parameter_set=params.name,
        parameter_source=params.source,
        cutoff_angstrom=float(mo.cutoff),
        charges=use_charges,
        scaled_to_measured=mo.scale_to_measured,
        lines=tuple(lines),
        bands=tuple(bands),
        acoustic_max_cm1=acoustic_max,
        uncertainty_rule=rule,
        lattice_energy_ev=energy,
        warnings=tuple(warnings),
        relaxation=relaxation,
    )


def _check_coverage(params, units) -> None:
    """Refuse a unit the set was not fitted to or has no parameters for, naming the sets that cover the crystal."""
    elements = {e for u in units for e in u.symbols}
    formulas = {u.formula for u in units}
    for u in units:
        missing = sorted(set(u.symbols) - set(params.like))
        fitted = not params.units or u.formula in params.units
        if not missing and fitted:
            continue
        covering = sets_covering(elements, formulas)
        instead = (
            f"sets that cover this crystal: {', '.join(covering)} (--potential)"
            if covering
            else "no estimate can be made for this crystal (the symmetry analysis needs no potential: "
            "predict, compare or explain without --estimate)"
        )
        if not fitted:
            raise InputError(
                f"unit {u.formula}: the {params.label} was fitted to {', '.join(params.units)} only; {instead}"
            )
        raise InputError(
            f"unit {u.formula}: element {missing[0]} is not covered by the {params.label} "
            f"(it covers {', '.join(sorted(params.like))}); {instead}"
        )


def _fitted_sets_note(params, formulas: set[str]) -> list[str]:
    """A note when a general set is used on units that have sets fitted to them (so far CO2; docs/estimate.md)."""
    if params.units:
        return []
    fitted = [ps.name for ps in PARAMETER_SETS.values() if ps.units and formulas <= set(ps.units)]
    if not fitted:
        return []
    return [
        f"{', '.join(sorted(formulas))}: sets fitted to it come closer to measured lattice modes "
        f"(--potential {' or '.join(fitted)})"
    ]


def _set_charges(cm, units, params):
    """The cell model with the charges published with the set on the atoms of its units, and the text naming them."""
    import dataclasses

    charges = np.array(cm.charges, dtype=float)
    done: dict[str, str] = {}
    for k, u in enumerate(units):
        own = params.charges.get(u.formula)
        if own is None:
            continue
        idx = np.flatnonzero(cm.unit_of == k)
        charges[idx] = [own[cm.symbols[a]] for a in idx]
        shown = ", ".join(f"{e} {q:+g}" for e, q in own.items())
        done.setdefault(u.formula, f"charges of the set {params.name!r} on {u.formula} ({shown} e)")
    return dataclasses.replace(cm, charges=charges), list(done.values())


def _with_charge_model(cm, units, choice: str, params):
    """The cell model with the charges of the choice (see .quadrupole and .sites) and the text naming them."""
    import dataclasses

    if choice == "set":
        return _set_charges(cm, units, params)
    if choice == "quadrupole":
        from .quadrupole import quadrupole_charges

        charges, texts = quadrupole_charges(cm, units)
        return dataclasses.replace(cm, charges=charges), texts
    if choice == "distributed":
        from .sites import distributed_sites

        sites, texts = distributed_sites(cm, units)
        return (dataclasses.replace(cm, sites=sites), texts) if texts else (cm, texts)
    return cm, []


def _lines(cm, blocks, alt, prediction, units) -> list[Line]:
    alt_by = [{b.label: b for b in blocks_alt} for blocks_alt in alt]
    lines = []
    for block in blocks:
        sp = prediction.species_by_label(block.label)
        for k, (wn, vec) in enumerate(zip(block.wavenumbers, block.vectors, strict=True)):
            w = origin_weights(cm, vec)
            unit = units[next(u for u in range(len(units)) if cm.orbit_of_unit[u] == w["orbit"])].formula
            band = free_species = None
            free_wn = None
            if w["acoustic"] > 0.5:
                origin = "acoustic"
            elif w["internal"] >= max(w["translational"], w["librational"]):
                origin = "internal"
                if w["band"] is not None:
                    o, mode, _ = w["band"]
                    unit = units[next(u for u in range(len(units)) if cm.orbit_of_unit[u] == o)].formula
                    band, free_species, free_wn = mode.name, mode.species, mode.wavenumber_cm1
            elif w["translational"] >= w["librational"]:
                origin = "translational"
            else:
                origin = "librational"
            spread = max((abs(a[block.label].wavenumbers[k] - wn) / 2 for a in alt_by), default=0.0)
            if origin == "internal" and free_wn is not None:
                rule = INTERNAL_RULE * abs(wn - free_wn)
            elif origin == "acoustic":
                rule = 0.0
            else:
                rule = LATTICE_RULE * abs(wn)
            lines.append(
                Line(
                    wavenumber_cm1=float(wn),
                    uncertainty_cm1=float(max(spread, rule)),
                    species=block.label,
                    dimension=block.dimension,
                    activity=sp.activity,
                    origin=origin,
                    unit=unit,
                    band=band,
                    free_species=free_species,
                    weights=tuple((key, float(w[key])) for key in ("translational", "librational", "internal")),
                    neutron_weight=neutron_weight(vec, cm.symbols, cm.masses),
                )
            )
    return sorted(lines, key=lambda line: line.wavenumber_cm1)


def _bands(cm, lines, units, orbits) -> list[BandEstimate]:
    out = []
    for o, modes in cm.modes.items():
        formula = units[orbits[o][0][0]].formula
        for mode in modes:
            comps = [
                (line.species, line.wavenumber_cm1, line.dimension)
                for line in lines
                if line.origin == "internal" and line.band == mode.name and line.unit == formula
            ]
            if not comps:
                continue
            dims = sum(c[2] for c in comps)
            centre = sum(c[1] * c[2] for c in comps) / dims
            wn = [c[1] for c in comps]
            out.append(
                BandEstimate(
                    unit=formula,
                    band=mode.name,
                    free_species=mode.species,
                    free_cm1=mode.wavenumber_cm1,
                    measured_free_cm1=mode.measured_cm1,
                    components=tuple((c[0], c[1]) for c in sorted(comps, key=lambda c: c[1])),
                    site_shift_cm1=centre - mode.wavenumber_cm1,
                    splitting_cm1=max(wn) - min(wn),
                )
            )
    return sorted(out, key=lambda b: (b.unit, b.free_cm1))

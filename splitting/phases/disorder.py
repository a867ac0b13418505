"""Orientationally disordered phases: one orientation, the averaged site, and what is lost.

A unit whose atoms are partly occupied (several orientations superposed) is statically
disordered; the user may instead declare it a rotor (dynamic disorder) or force it to be
treated as ordered.  Following common practice (see the method notes):

* static disorder: long-range orientational order is lost, so factor-group (Davydov)
  coupling is not a good quantum number; predict the site-group pattern of one orientation
  (the averaged site group intersected with the free group in that orientation) with
  broadened lines, and report the averaged crystallographic site;
* dynamic disorder: internal modes follow free-unit rules, weakly perturbed by the
  averaged site; librations are not sharp.

One orientation is found without disorder-group labels: the averaged site group's
subgroups of index equal to the number of orientations are tried, and a union of the
partly occupied atoms' orbits that has the right number of atoms, no clashing atoms and
one bonded unit is one orientation.
"""

from __future__ import annotations

import itertools
import os
from dataclasses import dataclass, replace

import numpy as np

from ..activity import activity_table
from ..correlation import FactorGroup, induce
from ..crystal.freeunits import FreeUnitCache
from ..crystal.origin import canonical_names
from ..crystal.predict import Options, predict_atoms
from ..crystal.read import load_structure
from ..crystal.results import CrystalPrediction
from ..crystal.spacegroup import SpaceGroupInfo, analyse_cell
from ..crystal.units import Unit, find_units
from ..errors import InputError
from ..groups import OrientedGroup, Representation
from ..groups.identify import crystal_preference, identify
from ..groups.subgroups import subgroup_classes

__all__ = [
    "ALL_UNITS",
    "DEFAULT_OPEN_STATE",
    "STATES",
    "STATE_MEANING",
    "DisorderedPrediction",
    "DisorderedUnit",
    "normalise_state",
    "occupancies",
    "predict_disordered",
]

#: The three states of a unit: one orientation everywhere, several frozen orientations, rotating.
STATES = ("ordered", "static", "dynamic")
#: Other words accepted for the states (a rotor phase and a plastic phase are dynamically disordered).
STATE_WORDS = {
    "ordered": "ordered",
    "static": "static",
    "frozen": "static",
    "dynamic": "dynamic",
    "rotor": "dynamic",
    "plastic": "dynamic",
}
#: Key of a ``states`` mapping that sets the state of every molecular unit of the phase.
ALL_UNITS = "*"
#: State taken for a partly occupied unit whose state is not given (with a warning).
DEFAULT_OPEN_STATE = "static"
#: What each state implies for the lines (one sentence each; common practice, method notes).
STATE_MEANING = {
    "ordered": "ordered: factor-group (Davydov) components with the k = 0 selection rules; sharp librations",
    "static": "static disorder (frozen orientations): the site-group pattern of one orientation as broadened "
    "lines, no Davydov splitting, no sharp librations, weak disorder-activated modes",
    "dynamic": "dynamic disorder (rotor / plastic phase): the free-unit lines, weakly perturbed by the averaged "
    "site; no Davydov splitting; no sharp librations",
}


def normalise_state(word: str, *, where: str = "state") -> str:
    """``"ordered"``, ``"static"`` or ``"dynamic"`` for a state word (``rotor``, ``plastic``, ``frozen`` too).

    Raises
    ------
    InputError
        For any other word, naming the accepted ones.
    """
    key = str(word).strip().lower()
    if key not in STATE_WORDS:
        raise InputError(f"{where}: {word!r} is not a state; use one of {', '.join(STATE_WORDS)}")
    return STATE_WORDS[key]


def occupancies(atoms) -> np.ndarray:
    """Occupancy of every atom (1 where the file gives none)."""
    occ = np.ones(len(atoms))
    table = atoms.info.get("occupancy") or {}
    kinds = atoms.arrays.get("spacegroup_kinds")
    if kinds is None or not table:
        return occ
    symbols = atoms.get_chemical_symbols()
    for i, (k, s) in enumerate(zip(kinds, symbols, strict=True)):
        occ[i] = float(table.get(str(int(k)), {}).get(s, 1.0))
    return occ


@dataclass(frozen=True)
class SitePattern:
    """Components of one free species at the site of one orientation (no factor-group coupling)."""

    free: str
    modes: int
    site: Representation

    def to_dict(self) -> dict[str, object]:
        """JSON-ready form."""
        return {
            "free": self.free,
            "modes": self.modes,
            "site": [{"label": lab, "count": n} for lab, n in self.site],
            "site_text": str(self.site),
        }


@dataclass(frozen=True)
class DisorderedUnit:
    """A unit of a disordered phase.

    Attributes
    ----------
    formula : str
        Formula of one orientation.
    state : str
        ``"static"`` (partial occupancy), ``"dynamic"`` (declared rotor) or ``"ordered"``.
    orientations : int
        Number of superposed orientations in the file (1 for ordered units and rotors).
    averaged_site_group : str
        Site group of the unit's centre in the averaged structure.
    averaged_wyckoff : str
    free_group : str or None
    orientation_site_group : str or None
        Site group of one orientation (averaged site group intersected with the free group).
    pattern : tuple of SitePattern
        Free species -> components at the site of one orientation (static), or in the
        free group itself (dynamic).
    statement : str
        Plain statement of what the disorder removes.
    state_given : bool
        True when the user gave the state; False when it was taken by default.
    readings : tuple of (str, int, int)
        ``(state, IR lines, Raman lines)`` of the internal modes of this unit under each
        state (static and dynamic; ordered when the one-orientation model has the unit),
        counted as distinct frequencies: what each reading of the file predicts.
    """

    formula: str
    state: str
    orientations: int
    averaged_site_group: str
    averaged_wyckoff: str
    free_group: str | None
    orientation_site_group: str | None
    pattern: tuple[SitePattern, ...]
    statement: str
    state_given: bool = True
    readings: tuple[tuple[str, int, int], ...] = ()

    @property
    def name(self) -> str:
        """The unit as spectroscopists write it (:mod:`splitting.crystal.names`)."""
        from ..crystal.names import unit_name

        return unit_name(self.formula)

    def to_dict(self) -> dict[str, object]:
        """JSON-ready form."""
        return {
            "name": self.name,
            "formula": self.formula,
            "state": self.state,
            "state_given": self.state_given,
            "state_meaning": STATE_MEANING[self.state],
            "readings": [{"state": st, "ir": ir, "raman": ra} for st, ir, ra in self.readings],
            "orientations": self.orientations,
            "averaged_site_group": self.averaged_site_group,
            "averaged_wyckoff": self.averaged_wyckoff,
            "free_group": self.free_group,
            "orientation_site_group": self.orientation_site_group,
            "pattern": [p.to_dict() for p in self.pattern],
            "statement": self.statement,
        }


@dataclass(frozen=True)
class DisorderedPrediction:
    """Prediction for a phase with orientational disorder.

    Attributes
    ----------
    source : str
    space_group : SpaceGroupInfo
        Space group of the averaged structure.
    factor_group : str
        Factor group of the averaged structure.
    units : tuple of DisorderedUnit
        Disordered (or declared) units; ordered units are in ``ordered_model``.
    ordered_model : CrystalPrediction
        Prediction for the one-orientation ordered model (every unit in one orientation),
        used for the ordered units.
    translations : Representation
        Optical translational lattice modes of the averaged structure (acoustic removed).
    activity : tuple of (str, bool, bool)
        (label, IR active, Raman active) of the averaged factor group's species.
    volume : float
        Primitive-cell volume of the averaged structure (cubic angstrom).
    """

    source: str
    space_group: SpaceGroupInfo
    factor_group: str
    units: tuple[DisorderedUnit, ...]
    ordered_model: CrystalPrediction
    translations: Representation
    activity: tuple[tuple[str, bool, bool], ...]
    volume: float
    warnings: tuple[str, ...] = ()

    def unit(self, formula: str) -> DisorderedUnit:
        """The disordered unit with this formula (Hill formula or written name)."""
        from ..crystal.names import find_unit

        return find_unit(self.units, formula)

    @property
    def symbol(self) -> str:
        """Short Hermann-Mauguin symbol of the averaged structure (standard setting)."""
        return self.space_group.symbol

    @property
    def state(self) -> str:
        """State of the phase: ``"ordered"``, ``"static"``, ``"dynamic"`` or ``"mixed"`` (units differ)."""
        found = {u.state for u in self.units} or {"ordered"}
        return found.pop() if len(found) == 1 else "mixed"

    def to_dict(self) -> dict[str, object]:
        """JSON-ready form."""
        return {
            "source": self.source,
            "space_group": self.space_group.to_dict(),
            "factor_group": self.factor_group,
            "state": self.state,
            "units": [u.to_dict() for u in self.units],
            "optical_translations": str(self.translations),
            "ordered_model": self.ordered_model.to_dict(),
            "warnings": list(self.warnings),
        }


# ---------------------------------------------------------------------------------------------
def _type_codes(numbers: np.ndarray, occ: np.ndarray) -> np.ndarray:
    return numbers * 1000 + np.round(occ * 100).astype(int)


def _clash(pos: np.ndarray, numbers: np.ndarray) -> bool:
    from ase.data import covalent_radii

    d = np.linalg.norm(pos[:, None] - pos[None], axis=2)
    r = covalent_radii[numbers]
    limit = 0.6 * (r[:, None] + r[None])
    np.fill_diagonal(d, np.inf)
    return bool(np.any(d < limit))


def _connected(pos: np.ndarray, numbers: np.ndarray, scale: float) -> bool:
    from ase.data import covalent_radii

    if len(pos) == 1:
        return True
    d = np.linalg.norm(pos[:, None] - pos[None], axis=2)
    r = covalent_radii[numbers]
    adj = d < scale * (r[:, None] + r[None])
    seen, stack = {0}, [0]
    while stack:
        i = stack.pop()
        for j in np.flatnonzero(adj[i]):
            if int(j) not in seen:
                seen.add(int(j))
                stack.append(int(j))
    return len(seen) == len(pos)


def _one_orientation(blob: Unit, occ: np.ndarray, site: OrientedGroup, scale: float) -> tuple[np.ndarray, int]:
    """Indices (into the blob) of one orientation, and the number of orientations."""
    centre = blob.centre
    rel = blob.positions - centre
    partial = np.flatnonzero(occ < 0.999)
    full = np.flatnonzero(occ >= 0.999)
    n_orient = max(1, round(1 / float(np.min(occ[partial]))))
    target = float(np.sum(occ[partial]))
    if abs(target - round(target)) > 0.05 or (round(target) == 0 and len(full) == 0):
        raise InputError(
            f"partial occupancy of {blob.formula} does not add up to whole atoms "
            f"({target:g}); there is no ordered model of one orientation"
        )
    target = round(target)
    subgroups = []
    for members in subgroup_classes(site.name):
        ops = site.operations[sorted(members)]
        subgroups.append(ops)
    # try index n_orient first, then the others from large to small subgroups
    order = sorted(subgroups, key=lambda ops: (len(site.operations) // len(ops) != n_orient, -len(ops)))
    for ops in order:
        orbits: list[list[int]] = []
        seen: set[int] = set()
        for i in partial:
            if int(i) in seen:
                continue
            images = rel[i] @ ops.transpose(0, 2, 1)
            d = np.linalg.norm(images[:, None, :] - rel[None, partial, :], axis=2)
            orbit = sorted({int(partial[j]) for j in np.argmin(d, axis=1)})
            seen.update(orbit)
            orbits.append(orbit)
        sizes = [len(o) for o in orbits]
        for r in range(1, len(orbits) + 1):
            for combo in itertools.combinations(range(len(orbits)), r):
                if sum(sizes[c] for c in combo) != target:
                    continue
                chosen = np.array(sorted(list(full) + [a for c in combo for a in orbits[c]]))
                pos = blob.positions[chosen]
                nums = blob.numbers[chosen]
                if _clash(pos, nums) or not _connected(pos, nums, scale):
                    continue
                return chosen, n_orient
    raise InputError(
        f"no single orientation of the disordered unit {blob.formula} could be separated; give an ordered model"
    )


def _statement(formula: str, state: str, site_one: str | None, site_avg: str) -> str:
    if state == "dynamic":
        return (
            f"{formula} rotates (dynamic disorder): internal modes follow the free-unit selection rules, "
            f"weakly perturbed by the averaged site {site_avg}; no factor-group (Davydov) splitting; "
            "librations give no sharp lines."
        )
    return (
        f"{formula} sits in several orientations (static disorder): orientations of neighbouring units are "
        "not correlated, so factor-group (Davydov) coupling and the k = 0 selection rule are lost for it; "
        f"expect the components of one orientation at its site ({site_one}) as broadened lines, "
        "librations without sharp lines, and weak disorder-activated modes."
    )


def predict_disordered(
    path: str | os.PathLike[str] | None = None,
    options: Options | None = None,
    *,
    atoms=None,
    states: dict[str, str] | None = None,
    free_cache: FreeUnitCache | None = None,
) -> DisorderedPrediction:
    """Predict a phase that may contain orientational disorder.

    Parameters
    ----------
    path : path-like, optional
        Structure file (CIF with partial occupancies); or pass ``atoms``.
    options : Options
        Crystal-pipeline options.
    states : dict, optional
        ``{unit: state}`` per unit: the unit by its written name (``SO4^2-``, ``C60``) or its
        Hill formula (of one orientation, or of a fully occupied unit to declare it a rotor);
        the key :data:`ALL_UNITS` (``"*"``) sets every molecular unit of the phase. States:
        ``"ordered"``, ``"static"``, ``"dynamic"`` (also ``"rotor"``, ``"plastic"``,
        ``"frozen"``). A partly occupied unit with no state given is taken as
        :data:`DEFAULT_OPEN_STATE` and the result carries a warning that says what each
        state predicts.

    Raises
    ------
    InputError
        A state word not known, a unit name matching no unit of the structure.
    """
    opts = options or Options()
    states = {k: normalise_state(v, where=f"state of {k}") for k, v in (states or {}).items()}
    if atoms is None:
        if path is None:
            raise InputError("give a structure file or atoms")
        atoms = load_structure(path, allow_partial=True)
    source = os.fspath(path) if path is not None else "structure"
    occ_all = occupancies(atoms)
    codes = _type_codes(atoms.numbers, occ_all)
    cell = analyse_cell(
        atoms.cell[:],
        atoms.get_scaled_positions(wrap=True),
        codes,
        tolerance=opts.tolerance,
        scan=False,
        standard_axes=opts.standard_axes,
    )
    prim_numbers = cell.numbers // 1000
    prim_occ = (cell.numbers % 1000) / 100.0
    blobs = find_units(
        cell.lattice,
        cell.frac,
        prim_numbers,
        scale=opts.bond_scale,
        ionic_metals=opts.ionic_metals,
        cutoffs=dict(opts.cutoffs),
    )
    cache = free_cache or FreeUnitCache(opts.unit_tolerance, dict(opts.free_groups))
    reference = cell.reference_axes
    from ..crystal.predict import _orbits, _site_ops  # the same searches as the ordered pipeline

    kept: list[np.ndarray] = []  # Cartesian positions and numbers of the ordered model
    kept_num: list[int] = []
    found: list[tuple[Unit, bool, int, OrientedGroup, np.ndarray]] = []
    for blob in blobs:
        occ = prim_occ[list(blob.atoms)]
        disordered = bool(np.any(occ < 0.999))
        site_idx = _site_ops(cell, blob.centre)
        site_avg = identify(
            cell.rotations[site_idx], prefer=crystal_preference(reference), reference=reference, tol=1e-3
        )
        if disordered:
            try:
                chosen, n_orient = _one_orientation(blob, occ, site_avg, opts.bond_scale)
            except InputError as exc:
                raise InputError(f"{source}: {exc}") from None
        else:
            chosen, n_orient = np.arange(len(blob.atoms)), 1
        unit = Unit(
            tuple(blob.atoms[i] for i in chosen),
            blob.positions[chosen],
            blob.numbers[chosen],
            "molecule" if len(chosen) > 1 else "atom",
        )
        kept.extend(unit.positions)
        kept_num.extend(int(z) for z in unit.numbers)
        found.append((unit, disordered, n_orient, site_avg, blob.centre))
    states = _resolve_states(states, [u for u, *_ in found], source)
    done: dict[str, DisorderedUnit] = {}
    warnings: list[str] = []
    for unit, disordered, n_orient, site_avg, centre in found:
        given = unit.formula in states or (ALL_UNITS in states and unit.kind == "molecule")
        state = states.get(unit.formula, states.get(ALL_UNITS, DEFAULT_OPEN_STATE if disordered else "ordered"))
        if unit.formula in done or unit.kind != "molecule" or (state == "ordered" and not disordered):
            continue
        free = cache.get(unit)
        inside = [op for op in site_avg.operations if free.group.contains(op)]
        one = identify(np.array(inside), prefer=crystal_preference(reference), reference=reference, tol=1e-3)
        dynamic = tuple(SitePattern(lab, n, free.group.group.representation({lab: 1})) for lab, n in free.vibrations)
        static = tuple(
            SitePattern(
                lab,
                n,
                one.reduce_at(
                    np.array([free.group.character(lab, op) for op in one.operations]),
                    what=f"{lab} at the site of one orientation",
                ),
            )
            for lab, n in free.vibrations
        )
        readings = (("static", *_line_counts(static, one.name)), ("dynamic", *_line_counts(dynamic, free.group.name)))
        if state == "ordered":
            continue
        pattern, one_name = (dynamic, None) if state == "dynamic" else (static, one.name)
        named = cell.wyckoff_of([centre], tolerance=opts.tolerance)
        wyck = canonical_names(cell, [centre], [(-len(unit.atoms), unit.formula)], named)[0][0][0]
        done[unit.formula] = DisorderedUnit(
            unit.formula,
            state,
            n_orient if disordered else 1,
            site_avg.name,
            wyck,
            free.group.name,
            one_name,
            pattern,
            _statement(_written(unit.formula), state, one_name, site_avg.name),
            given,
            readings,
        )
    from ase import Atoms

    model = Atoms(numbers=kept_num, positions=np.array(kept), cell=cell.lattice, pbc=True)
    model.wrap()
    ordered = predict_atoms(model, opts, source=f"{source} (one-orientation model)", free_cache=cache, scan=False)
    # the model sits in the primitive cell; the cell a reader checks is the file's
    ordered = replace(ordered, cell_parameters=tuple(float(v) for v in atoms.cell.cellpar()))
    for f, d in list(done.items()):
        orbit = next((o for o in ordered.units if o.formula == f and o.correlation), None)
        if orbit is not None:
            ir_ra = _ordered_counts(ordered, orbit)
            done[f] = replace(d, readings=(("ordered", *ir_ra), *d.readings))
    for d in done.values():
        if not d.state_given:
            warnings.append(
                f"{d.name}: the file has partial occupancies but does not say whether the orientations are "
                f"frozen or the units rotate; {DEFAULT_OPEN_STATE} disorder taken (default). Internal lines "
                "IR/Raman under each state: "
                + ", ".join(f"{st} {ir}/{ra}" for st, ir, ra in d.readings)
                + "; give the state (e.g. --state FILE=rotor) to choose"
            )
    factor = FactorGroup.from_rotations(cell.rotations, reference)
    trans = factor.oriented.group.representation({})
    for orbit in _orbits(cell, blobs):
        idx = _site_ops(cell, blobs[orbit[0][0]].centre)
        trans = trans + induce(factor, idx, np.trace(cell.rotations[idx], axis1=1, axis2=2), what="translations")
    trans = trans - factor.oriented.group.vector
    act = tuple((a.label, bool(a.ir), bool(a.raman)) for a in activity_table(factor.name))
    return DisorderedPrediction(
        source,
        cell.info,
        factor.name,
        tuple(done.values()),
        ordered,
        trans,
        act,
        float(abs(np.linalg.det(cell.lattice))),
        tuple(warnings),
    )


def _written(formula: str) -> str:
    from ..crystal.names import unit_name

    return unit_name(formula)


def _resolve_states(states: dict[str, str], units: list[Unit], source: str) -> dict[str, str]:
    """Unit names of ``states`` turned into Hill formulas; a name matching no unit is an error."""
    from ..crystal.names import match_unit

    formulas = sorted({u.formula for u in units if u.kind == "molecule"})
    out = {}
    for key, value in states.items():
        if key == ALL_UNITS:
            out[key] = value
            continue
        out[match_unit(key, formulas, what="state given for", where=source)] = value
    return out


def _line_counts(pattern: tuple[SitePattern, ...], group: str) -> tuple[int, int]:
    """IR and Raman internal lines (distinct frequencies) of a pattern in ``group``."""
    act = {a.label: a for a in activity_table(group)}
    ir = sum(p.modes * n for p in pattern for lab, n in p.site if act[lab].ir)
    raman = sum(p.modes * n for p in pattern for lab, n in p.site if act[lab].raman)
    return ir, raman


def _ordered_counts(pred: CrystalPrediction, orbit) -> tuple[int, int]:
    """IR and Raman internal lines of one unit orbit in an ordered prediction."""
    ir = sum(c.modes * n for c in orbit.correlation for lab, n in c.factor if pred.species_by_label(lab).ir)
    raman = sum(c.modes * n for c in orbit.correlation for lab, n in c.factor if pred.species_by_label(lab).raman)
    return ir, raman

"""A sequence of phases (e.g. on cooling): what each band does from one phase to the next."""

from __future__ import annotations

import itertools
import os
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from .._display import Summarised
from ..activity import activity_table
from ..crystal.freeunits import FreeUnitCache
from ..crystal.predict import Options, predict_atoms
from ..crystal.read import load_structure
from ..crystal.results import CrystalPrediction
from ..errors import InputError, SymmetryError
from .disorder import STATE_MEANING, DisorderedPrediction, occupancies, predict_disordered

__all__ = [
    "BandChange",
    "BandState",
    "Component",
    "Phase",
    "PhaseSequence",
    "PhaseStep",
    "compare_phases",
    "load_phase",
]


@dataclass(frozen=True)
class Component:
    """One predicted component of a band: a species with its count and activity."""

    label: str
    dimension: int
    count: int
    ir: bool
    raman: bool

    def to_dict(self) -> dict[str, object]:
        """JSON-ready form."""
        return {
            "label": self.label,
            "dimension": self.dimension,
            "count": self.count,
            "ir": self.ir,
            "raman": self.raman,
        }


@dataclass(frozen=True)
class BandState:
    """A free-unit band in one phase.

    Attributes
    ----------
    unit : str
    band : str
        Species of the free unit.
    modes : int
        Fundamentals of that species in the free unit.
    group : str
        Group whose species the components are (factor group, site of one orientation, or free group).
    coupling : str
        ``"factor group"`` (ordered), ``"one-orientation site"`` (static disorder) or ``"free unit"`` (rotor).
    components : tuple of Component
        Components for one fundamental.
    """

    unit: str
    band: str
    modes: int
    group: str
    coupling: str
    components: tuple[Component, ...]

    @property
    def ir(self) -> int:
        """IR-active components (distinct frequencies) per fundamental."""
        return sum(c.count for c in self.components if c.ir)

    @property
    def raman(self) -> int:
        """Raman-active components per fundamental."""
        return sum(c.count for c in self.components if c.raman)

    @property
    def total(self) -> int:
        """All components per fundamental (what inelastic neutron scattering can see)."""
        return sum(c.count for c in self.components)

    def text(self) -> str:
        """e.g. ``"Au + Eu + 3Tu"``."""
        return " + ".join(f"{c.count}{c.label}" if c.count > 1 else c.label for c in self.components) or "0"

    def to_dict(self) -> dict[str, object]:
        """JSON-ready form."""
        return {
            "unit": self.unit,
            "band": self.band,
            "modes": self.modes,
            "group": self.group,
            "coupling": self.coupling,
            "components": [c.to_dict() for c in self.components],
            "ir": self.ir,
            "raman": self.raman,
            "total": self.total,
            "text": self.text(),
        }


@dataclass(frozen=True)
class Phase:
    """One phase of a sequence: an ordered prediction, or a disordered one."""

    label: str
    source: str
    prediction: CrystalPrediction | None
    disorder: DisorderedPrediction | None

    @property
    def ordered(self) -> bool:
        """True when no unit is disordered."""
        return self.disorder is None or not self.disorder.units

    @property
    def state(self) -> str:
        """``"ordered"``, ``"static"``, ``"dynamic"`` or ``"mixed"`` (units in different states)."""
        return "ordered" if self.ordered else self.disorder.state

    @property
    def warnings(self) -> tuple[str, ...]:
        """Warnings of the prediction (a state taken by default, ...)."""
        own = self.disorder.warnings if self.disorder is not None else ()
        return tuple(own) + tuple(self.crystal.warnings)

    @property
    def space_group(self):
        """Space group (of the averaged structure for a disordered phase)."""
        return self.prediction.space_group if self.prediction is not None else self.disorder.space_group

    @property
    def symbol(self) -> str:
        """Short Hermann-Mauguin symbol in the setting the phase's labels refer to."""
        return self.prediction.symbol if self.prediction is not None else self.disorder.symbol

    @property
    def factor_group(self) -> str:
        """Factor group (of the averaged structure for a disordered phase)."""
        return self.prediction.factor_group if self.prediction is not None else self.disorder.factor_group

    @property
    def crystal(self) -> CrystalPrediction:
        """The ordered prediction, or the one-orientation model of a disordered phase."""
        return self.prediction if self.prediction is not None else self.disorder.ordered_model

    def units_per_cell(self, formula: str) -> int:
        """Units of this formula in the primitive cell."""
        return sum(u.count for u in self.crystal.units if u.formula == formula)

    def primitive_volume(self) -> float:
        """Primitive-cell volume (cubic angstrom); averaged structure for disordered phases."""
        if self.disorder is not None:
            return self.disorder.volume
        return self.crystal.cell_volume

    def bands(self) -> list[BandState]:
        """Every band of every molecular unit in this phase."""
        out: list[BandState] = []
        disordered = {u.formula: u for u in (self.disorder.units if self.disorder else ())}
        seen: set[str] = set()
        for orbit in self.crystal.units:
            if orbit.formula in seen or not orbit.correlation:
                continue
            seen.add(orbit.formula)
            d = disordered.get(orbit.formula)
            if d is None:
                act = {s.label: s for s in self.crystal.species}
                for c in orbit.correlation:
                    comps = tuple(
                        Component(lab, _dim(self.crystal.factor_group, lab), n, bool(act[lab].ir), bool(act[lab].raman))
                        for lab, n in c.factor
                    )
                    out.append(
                        BandState(orbit.formula, c.free, c.modes, self.crystal.factor_group, "factor group", comps)
                    )
                continue
            group = d.orientation_site_group if d.state == "static" else d.free_group
            act = {a.label: a for a in activity_table(group)}
            for p in d.pattern:
                comps = tuple(
                    Component(lab, _dim(group, lab), n, bool(act[lab].ir), bool(act[lab].raman)) for lab, n in p.site
                )
                out.append(
                    BandState(
                        d.formula,
                        p.free,
                        p.modes,
                        group,
                        "one-orientation site" if d.state == "static" else "free unit",
                        comps,
                    )
                )
        return out

    def lattice(self) -> dict[str, object]:
        """Optical lattice modes: translational and librational IR / Raman counts."""
        if self.ordered:
            c = self.crystal
            tr_ir = sum(s.translational for s in c.species if s.ir)
            tr_r = sum(s.translational for s in c.species if s.raman)
            li_ir = sum(s.librational for s in c.species if s.ir)
            li_r = sum(s.librational for s in c.species if s.raman)
            return {
                "translational_ir": tr_ir,
                "translational_raman": tr_r,
                "librational_ir": li_ir,
                "librational_raman": li_r,
                "librations_sharp": True,
                "text": f"{tr_ir} IR + {tr_r} Raman translational, {li_ir} IR + {li_r} Raman librational",
            }
        d = self.disorder
        act = {lab: (ir, raman) for lab, ir, raman in d.activity}
        tr_ir = sum(n for lab, n in d.translations if act[lab][0])
        tr_r = sum(n for lab, n in d.translations if act[lab][1])
        return {
            "translational_ir": tr_ir,
            "translational_raman": tr_r,
            "librational_ir": 0,
            "librational_raman": 0,
            "librations_sharp": False,
            "text": f"{tr_ir} IR + {tr_r} Raman translational; librations of the disordered units are not sharp",
        }

    def to_dict(self) -> dict[str, object]:
        """JSON-ready form."""
        return {
            "label": self.label,
            "source": self.source,
            "ordered": self.ordered,
            "state": self.state,
            "state_meaning": STATE_MEANING.get(self.state, "units in different states (see disorder)"),
            "warnings": list(self.warnings),
            "space_group": self.space_group.to_dict(),
            "factor_group": self.factor_group,
            "bands": [b.to_dict() for b in self.bands()],
            "lattice": self.lattice(),
            "disorder": [u.to_dict() for u in self.disorder.units] if self.disorder else [],
        }


def _dim(group: str, label: str) -> int:
    from ..groups.catalogue import canonical_name
    from ..groups.linear import linear_group
    from ..groups.pointgroup import point_group

    canon = canonical_name(group)
    g = linear_group(canon) if "∞" in canon else point_group(canon)
    return g.get_species(label).dimension


@dataclass(frozen=True)
class PhaseStep:
    """How one phase relates to the next.

    Attributes
    ----------
    upper, lower : str
        Phase labels.
    subgroup : bool
        True when the lower factor group is (isomorphic to) a subgroup of the upper one.
    point_index : int
        |F_upper| / |F_lower|.
    cell_multiple : float
        Ratio of units per primitive cell (lower / upper).
    volume_ratio : float
        Ratio of primitive-cell volumes per unit (lower / upper).
    kind : str
        ``"t"`` (point group lowered, same cell), ``"k"`` (same point group, larger cell),
        ``"t+k"``, ``"same"`` or ``"not group-subgroup"``.
    """

    upper: str
    lower: str
    subgroup: bool
    point_index: int
    cell_multiple: float
    volume_ratio: float
    kind: str

    def to_dict(self) -> dict[str, object]:
        """JSON-ready form."""
        return {
            "upper": self.upper,
            "lower": self.lower,
            "factor_subgroup": self.subgroup,
            "point_group_index": self.point_index,
            "cell_multiple": round(self.cell_multiple, 4),
            "volume_ratio_per_unit": round(self.volume_ratio, 4),
            "kind": self.kind,
        }


@dataclass(frozen=True)
class BandChange:
    """One band followed through the phases, with remarks on what changes."""

    unit: str
    band: str
    states: tuple[BandState, ...]
    remarks: tuple[str, ...]

    def to_dict(self) -> dict[str, object]:
        """JSON-ready form."""
        return {
            "unit": self.unit,
            "band": self.band,
            "phases": [
                {
                    "components": s.text(),
                    "group": s.group,
                    "coupling": s.coupling,
                    "ir": s.ir,
                    "raman": s.raman,
                    "total": s.total,
                }
                for s in self.states
            ],
            "remarks": list(self.remarks),
        }


@dataclass(frozen=True, repr=False)
class PhaseSequence(Summarised):
    """Predictions for an ordered sequence of phases and the changes between them."""

    phases: tuple[Phase, ...]
    steps: tuple[PhaseStep, ...]
    bands: tuple[BandChange, ...]
    lattice_remarks: tuple[str, ...]

    def to_dict(self) -> dict[str, object]:
        """JSON-ready form."""
        return {
            "phases": [p.to_dict() for p in self.phases],
            "steps": [s.to_dict() for s in self.steps],
            "bands": [b.to_dict() for b in self.bands],
            "lattice_remarks": list(self.lattice_remarks),
        }


def load_phase(
    path: str | os.PathLike[str],
    label: str,
    options: Options | None = None,
    *,
    states: dict[str, str] | None = None,
    cache: FreeUnitCache | None = None,
) -> Phase:
    """Predict one phase from a file; partial occupancies or declared rotors make it a disordered phase."""
    opts = options or Options()
    atoms = load_structure(path, allow_partial=True)
    partial = bool(np.any(occupancies(atoms) < 0.999))
    from .disorder import normalise_state

    declared = {f: s for f, s in (states or {}).items() if normalise_state(s, where=f"state of {f}") != "ordered"}
    if partial or declared:
        d = predict_disordered(path, opts, atoms=atoms, states=states, free_cache=cache)
        return Phase(label, os.fspath(path), None, d)
    from ..crystal.read import check_overlaps

    check_overlaps(atoms)
    pred = predict_atoms(atoms, opts, source=os.fspath(path), free_cache=cache)
    return Phase(label, os.fspath(path), pred, None)


def _relation(a: Phase, b: Phase) -> PhaseStep:
    from ..groups.pointgroup import point_group
    from ..groups.subgroups import embeddings

    fa, fb = a.factor_group, b.factor_group
    try:
        sub = fa == fb or bool(embeddings(fa, fb))
    except SymmetryError:
        sub = False
    index = point_group(fa).order // point_group(fb).order if sub else 0
    formulas = [u.formula for u in a.crystal.units if u.correlation]
    key = formulas[0] if formulas else a.crystal.units[0].formula
    za, zb = a.units_per_cell(key), b.units_per_cell(key)
    mult = zb / za if za else float("nan")
    va = a.primitive_volume() / max(za, 1)
    vb = b.primitive_volume() / max(zb, 1)
    if not sub or mult < 1 - 1e-6:
        kind = "not group-subgroup"
    elif index == 1 and abs(mult - 1) < 1e-6:
        kind = "same"
    elif abs(mult - 1) < 1e-6:
        kind = "t"
    elif index == 1:
        kind = "k"
    else:
        kind = "t+k"
    return PhaseStep(a.label, b.label, sub, index, mult, vb / va if va else float("nan"), kind)


def _remarks(states: list[BandState], labels: list[str]) -> list[str]:
    out = []
    for (s0, l0), (s1, l1) in itertools.pairwise(zip(states, labels, strict=True)):
        for what, n0, n1 in (("IR", s0.ir, s1.ir), ("Raman", s0.raman, s1.raman)):
            if n0 == n1:
                continue
            if n0 == 0:
                out.append(f"{l0} -> {l1}: becomes {what} active ({n1} component{'s' if n1 > 1 else ''})")
            elif n1 == 0:
                out.append(f"{l0} -> {l1}: becomes {what} inactive")
            elif n1 > n0:
                out.append(f"{l0} -> {l1}: {what} splits from {n0} to {n1} components")
            else:
                out.append(f"{l0} -> {l1}: {what} components merge from {n0} to {n1}")
    return out


def compare_phases(
    paths: Sequence[str | os.PathLike[str]],
    labels: Sequence[str] | None = None,
    options: Options | None = None,
    *,
    states: dict[str, str] | None = None,
    phase_states: Sequence[dict[str, str] | None] | None = None,
) -> PhaseSequence:
    """Predict every phase of a sequence (upper first) and say what changes between them.

    Parameters
    ----------
    paths : sequence of path-like
        Structure files, in the order of the sequence (e.g. on cooling).
    labels : sequence of str, optional
        Names such as temperatures ("300 K", "90 K"); default the file names.
    options : Options
    states : dict, optional
        States per unit for every phase (see :func:`predict_disordered`).
    phase_states : sequence of dict, optional
        One mapping per path, ``{unit or "*": state}``, for that phase only (over ``states``),
        e.g. ``[{"*": "rotor"}, {}]`` for a rotor phase above an ordered one.
    """
    if len(paths) < 2:
        raise InputError("compare needs at least two structure files")
    labels = list(labels) if labels else [os.path.basename(os.fspath(p)) for p in paths]
    if len(labels) != len(paths):
        raise InputError(f"{len(labels)} labels for {len(paths)} files")
    opts = options or Options()
    cache = FreeUnitCache(opts.unit_tolerance, dict(opts.free_groups))
    per = list(phase_states) if phase_states is not None else [None] * len(paths)
    if len(per) != len(paths):
        raise InputError(f"{len(per)} sets of states for {len(paths)} files")
    phases = [
        load_phase(p, lab, opts, states={**(states or {}), **(own or {})}, cache=cache)
        for p, lab, own in zip(paths, labels, per, strict=True)
    ]
    steps = tuple(_relation(a, b) for a, b in itertools.pairwise(phases))
    by_band: dict[tuple[str, str], list[BandState | None]] = {}
    for k, ph in enumerate(phases):
        for b in ph.bands():
            by_band.setdefault((b.unit, b.band), [None] * len(phases))[k] = b
    bands = []
    for (unit, band), states_ in by_band.items():
        if any(s is None for s in states_):
            continue
        bands.append(BandChange(unit, band, tuple(states_), tuple(_remarks(states_, labels))))
    lattice = [ph.lattice() for ph in phases]
    lrem = []
    for (a, la), (b, lb) in itertools.pairwise(zip(lattice, labels, strict=True)):
        if b["librational_raman"] and not a["librational_raman"]:
            lrem.append(f"{la} -> {lb}: {b['librational_raman']} Raman-active librational lines appear")
        if b["librational_ir"] and not a["librational_ir"]:
            lrem.append(f"{la} -> {lb}: {b['librational_ir']} IR-active librational lines appear")
        for what in ("translational_ir", "translational_raman"):
            if b[what] != a[what]:
                lrem.append(f"{la} -> {lb}: {what.replace('_', ' ')} lines {a[what]} -> {b[what]}")
    return PhaseSequence(tuple(phases), steps, tuple(bands), tuple(lrem))

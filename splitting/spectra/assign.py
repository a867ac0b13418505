"""Explain a measured spectrum: which predicted mode can each observed line be?

:func:`explain` takes a crystal prediction, a peak list and the free-unit mode table(s)
and gives, for every measured line, a ranked list of candidate explanations, each with a
short reason; lines with no candidate are reported as unexplained. It also counts the
observed lines band by band and compares them with the numbers of components predicted
for the given crystal and for any alternative predictions (candidate phases).

Candidates
----------
For a line at ``x`` (cm-1) and a free fundamental at ``nu0`` with ``d = |x - nu0|``,
within the tolerance ``tol`` (default :data:`DEFAULT_TOLERANCE_CM1`, the largest
solid-state shift of an internal mode from its free value that is considered):

``fundamental``
    the band has factor-group components active in the technique, and the free mode is
    active too: the line is one of those components.
``site_activated``
    the free mode is inactive in the technique, but the lower symmetry of the site makes
    factor-group components active.
``disorder_activated``
    no factor-group component is active, but a site-group component is active under the
    site group's own rules: the line needs loss of translational order (orientational
    disorder, defects), where the site-group picture applies.
``lattice``
    ``x`` is below ``lattice_max_cm1`` (default :data:`LATTICE_MAX_CM1` = 250 cm-1, where
    the translational and librational modes of molecular crystals usually lie; common
    practice) and the prediction has lattice modes active in the technique. No position
    is predicted for lattice modes, so the score does not depend on ``x``.
``overtone`` / ``combination``
    ``2 nu_i`` or ``nu_i + nu_j`` of the unit's fundamentals
    (:mod:`splitting.spectra.combinations`), allowed in the technique in the crystal's
    factor group, within ``tol`` below the harmonic sum and at most
    ``ABOVE_HARMONIC_FRACTION * tol`` above it (anharmonicity lowers them).
``isotopologue``
    a weaker line below a stronger line ``y`` that is a component of a band, at
    ``y + shift`` within ``max(1 cm-1, |shift| / 2)``, for an isotopomer that makes up at
    least :data:`MIN_ISOTOPOMER_SHARE` of the units. The shift is the mode table's
    ``isotope_shift`` for that isotope if given, otherwise the symmetry-only estimate of
    :mod:`splitting.spectra.isotopologues` times ``y``.
``lo_to``
    a weaker line at most :data:`LO_TO_WINDOW_CM1` (150 cm-1) above a line that is a
    component of a band with polar factor-group species: every IR-active species, in any
    crystal, splits into a transverse (TO) and a longitudinal (LO) component with the LO
    one higher (M. Born and K. Huang, *Dynamical Theory of Crystal Lattices*, Oxford
    1954). The pair shows in IR reflectance; in Raman only for species that are Raman
    active too (non-centrosymmetric crystals), so a Raman spectrum of a centrosymmetric
    crystal never gets this candidate. ``d`` is the distance from the stronger line.
``second_phase``
    an alternative prediction (``alternatives``) has more active components in this band
    than the given one, so the line could come from that phase.

Scoring (transparent and deterministic)
---------------------------------------
``score = prior(kind) * (1 - 0.5 * d / tol)`` with the priors in :data:`PRIORS`
(fundamental 1.0, lattice 0.7, site-activated 0.6, LO/TO 0.5, second phase 0.5, isotopologue 0.45,
disorder-activated 0.35, overtone and combination 0.3), so a candidate inside its window
keeps between half and all of its prior. For isotopologues ``d`` and ``tol`` are the
deviation from ``y + shift`` and the satellite window; lattice candidates take the
prior. One extra rule: a band cannot show more lines than it has predicted components.
If more lines fall in its window than the prediction allows, the strongest keep the
``fundamental`` (or ``site_activated``) score and the weaker surplus lines have it
multiplied by :data:`SURPLUS_FACTOR` (0.4), which lets satellites, combinations or
activated modes win there. Candidates are ranked by score, then by the order of
:data:`PRIORS`, then by name; at most :data:`MAX_CANDIDATES` are kept per line.

Band counts
-----------
:func:`count_components` assigns each line to the nearest free fundamental within the
window and counts lines per band; :func:`compare_counts` sets these counts against the
number of factor-group components active in the technique (and, for a disordered phase,
against the site-group count). The total absolute difference ranks candidate phases.
"""

from __future__ import annotations

import math
import os
from collections.abc import Sequence
from typing import Any

from ..errors import InputError
from .bands import _Band, _peaks, _resolve, _UnitBands, find_unit_table
from .catalogue import ModeTable
from .counting import _comparison, compare_counts, count_components, observed_counts
from .explanation import BandCount, Candidate, Explanation, LineExplanation, PhaseComparison
from .measured import PeakList, normalise_technique
from .satellites import isotopologue_candidates
from .scoring import (
    _KIND_ORDER,
    ABOVE_HARMONIC_FRACTION,
    DEFAULT_TOLERANCE_CM1,
    LATTICE_MAX_CM1,
    LO_TO_WINDOW_CM1,
    MAX_CANDIDATES,
    MIN_ISOTOPOMER_SHARE,
    PRIORS,
    SURPLUS_FACTOR,
    _active,
    _closeness,
    _technique_word,
)

__all__ = [
    "DEFAULT_TOLERANCE_CM1",
    "LATTICE_MAX_CM1",
    "LO_TO_WINDOW_CM1",
    "MAX_CANDIDATES",
    "MIN_ISOTOPOMER_SHARE",
    "PRIORS",
    "SURPLUS_FACTOR",
    "BandCount",
    "Candidate",
    "Explanation",
    "LineExplanation",
    "PhaseComparison",
    "compare_counts",
    "count_components",
    "explain",
    "find_unit_table",
    "observed_counts",
]


def _fundamental_candidates(x: float, ub: _UnitBands, tol: float, tech: str | None, phase: str) -> list[Candidate]:
    out = []
    word = _technique_word(tech)
    for b in ub.bands:
        m = b.mode
        d = abs(x - m.wavenumber_cm1)
        if d > tol:
            continue
        where = f"{m.name} ({m.species}, {m.wavenumber_cm1:g} cm-1 free), {x - m.wavenumber_cm1:+.1f} cm-1"
        if b.factor_count:
            kind = "fundamental" if b.free_active else "site_activated"
            species = b.factor_labels
            what = {"dynamic": "free-unit line(s) (rotor)", "static": "component(s) of one orientation's site"}.get(
                ub.state, "factor-group component(s)"
            )
            why = f"{where}: {b.factor_count} {word}-active {what} {'/'.join(species)} predicted"
            if kind == "site_activated":
                why += f"; inactive in the free unit, made active by the {ub.orbit.site_group} site"
        elif b.site_count:
            kind = "disorder_activated"
            species = b.site_labels
            why = (
                f"{where}: no active factor-group component; site-group component(s) "
                f"{'/'.join(species)} of {ub.orbit.site_group} are active if translational order is lost"
            )
        else:
            continue
        out.append(
            Candidate(
                kind,
                ub.orbit.formula,
                m.name,
                species,
                m.wavenumber_cm1,
                round(PRIORS[kind] * _closeness(d, tol), 4),
                why,
                phase,
            )
        )
    return out


def _combination_candidates(
    x: float, ub: _UnitBands, combos: Sequence[Any], tol: float, tech: str | None, phase: str
) -> list[Candidate]:
    out = []
    for c in combos:
        d = abs(x - c.wavenumber_cm1)
        # anharmonicity puts overtones and combinations below the harmonic sum: above it only
        # a small allowance (shifts of the fundamentals in the solid, reading error)
        above = x - c.wavenumber_cm1 > tol * ABOVE_HARMONIC_FRACTION
        if d > tol or above or not c.active(tech):
            continue
        rep = c.crystal_species if c.crystal_species is not None else c.species
        why = (
            f"{c.name}: harmonic sum {c.wavenumber_cm1:g} cm-1 ({x - c.wavenumber_cm1:+.1f}); "
            f"symmetry {c.species} free, {rep} in {rep.group}, allowed in {_technique_word(tech)}"
        )
        out.append(
            Candidate(
                c.kind,
                ub.orbit.formula,
                c.name,
                tuple(rep.labels),
                c.wavenumber_cm1,
                round(PRIORS[c.kind] * _closeness(d, tol), 4),
                why,
                phase,
            )
        )
    return out


def _isotopomer_lists(units: Sequence[_UnitBands], notes: list[str]) -> dict[str, tuple[Any, ...]]:
    from ..errors import SplittingError
    from .isotopologues import isotopomers

    out: dict[str, tuple[Any, ...]] = {}
    for ub in units:
        orbit = ub.orbit
        if not orbit.symbols or len(orbit.geometry) != len(orbit.symbols):
            continue
        try:
            found = isotopomers(orbit.symbols, orbit.geometry)
        except SplittingError as exc:
            notes.append(f"isotopomers of {orbit.formula} not considered: {exc}")
            continue
        out[orbit.formula] = tuple(i for i in found if not i.parent and i.abundance >= MIN_ISOTOPOMER_SHARE)
    return out


#: Kinds whose species are factor-group species of the phase explained (the ones a
#: polarisation restricts and that give a line its factor-group species).
_FACTOR_KINDS = ("fundamental", "site_activated", "lo_to", "lattice", "overtone", "combination")


def _geometry_species(prediction: Any, text: str, tech: str | None, where: str) -> tuple[str, frozenset[str]] | None:
    """Factor-group species a polarisation / geometry label lets through, or ``None`` if it says nothing.

    Raman: a scattering geometry in the notation of Damen, Porto and Tell (``z(xx)-z``) or a
    bare tensor element (``xx``, ``yz``): the species whose Raman tensor has that element
    (:meth:`~splitting.crystal.results.CrystalPrediction.seen_in`). IR: an electric-field
    direction ``x``, ``y`` or ``z`` (also ``E||z``, ``E//z``): the species with that IR
    component. Other labels (``p``, ``dp``, ``unpolarised``) restrict nothing.
    """
    import re

    t = text.strip().lower().replace(" ", "")
    ir = re.fullmatch(r"(?:e(?:\|\||//|∥))?([xyz])", t)
    if ir:
        if tech == "raman":
            raise InputError(f"{where}: polarisation {text!r} is an IR field direction, but the lines are Raman")
        k = ir.group(1)
        return "ir", frozenset(s.label for s in prediction.species if k in "".join(s.ir))
    pair = re.fullmatch(r"([xyz])([xyz])", t)
    if pair:
        i, j = pair.groups()
        k = next(c for c in "zyx" if c not in (i, j))
        t = f"{k}({i}{j})-{k}"
    if "(" in t:
        if tech == "ir":
            raise InputError(f"{where}: polarisation {text!r} is a Raman geometry, but the lines are IR")
        try:
            seen = prediction.seen_in(t)
        except InputError as exc:
            raise InputError(f"{where}: {exc}") from None
        return "raman", frozenset(lab for lab, _ in seen)
    return None


def _restrict(cands: list[Candidate], seen: frozenset[str], phase: str, ordered: set[str]) -> list[Candidate]:
    """Keep, of each factor-group candidate of the phase, the species the geometry sees; drop it if none."""
    out = []
    for c in cands:
        if c.phase != phase or c.kind not in _FACTOR_KINDS or (c.unit and c.unit not in ordered):
            out.append(c)
            continue
        kept = tuple(lab for lab in c.species if lab in seen)
        if not kept:
            continue
        if kept != c.species:
            c = Candidate(
                c.kind,
                c.unit,
                c.band,
                kept,
                c.predicted_cm1,
                c.score,
                c.reason + f"; the geometry sees {'/'.join(kept)}",
                c.phase,
            )
        out.append(c)
    return out


def _polar_species(prediction: Any, ub: _UnitBands, labels: Sequence[str], tech: str | None) -> tuple[str, ...]:
    """Polar species among ``labels`` whose TO/LO pair the technique can see.

    Factor-group species in an ordered phase; for a disordered unit, the species of the
    group its lines are counted in (site of one orientation, or the free unit for a rotor).
    """
    from ..activity import activity_table

    if ub.state != "ordered":
        group = ub.orbit.free_group if ub.state == "dynamic" else ub.orbit.site_group
        act = {a.label: a for a in activity_table(group)}
        return tuple(lab for lab in labels if act[lab].ir_active and (tech != "raman" or act[lab].raman_active))
    out = []
    for lab in labels:
        s = prediction.species_by_label(lab)
        if s.polar and (tech != "raman" or s.raman):
            out.append(lab)
    return tuple(out)


def _lo_to_candidates(
    prediction: Any,
    units: Sequence[_UnitBands],
    members: dict[tuple[str, str], list[int]],
    lines: Sequence[Any],
    found: list[list[Candidate]],
    tech: str | None,
    phase: str,
) -> None:
    """Offer each weaker line just above a component of a polar band as its LO partner."""
    import bisect

    order = sorted(range(len(lines)), key=lambda i: lines[i].position_cm1)
    xs = [lines[i].position_cm1 for i in order]
    for ub in units:
        for b in ub.bands:
            idx = members.get((ub.orbit.formula, b.mode.name), [])
            polar = _polar_species(prediction, ub, b.factor_labels, tech)
            if not idx or not polar:
                continue
            for y_i in idx:
                y = lines[y_i]
                lo = bisect.bisect_right(xs, y.position_cm1)
                hi = bisect.bisect_right(xs, y.position_cm1 + LO_TO_WINDOW_CM1)
                for k in range(lo, hi):
                    i = order[k]
                    p = lines[i]
                    d = p.position_cm1 - y.position_cm1
                    if i == y_i or d <= 0 or not p.intensity < y.intensity:
                        continue
                    found[i].append(
                        Candidate(
                            "lo_to",
                            ub.orbit.formula,
                            b.mode.name,
                            polar,
                            round(y.position_cm1, 3),
                            round(PRIORS["lo_to"] * _closeness(d, LO_TO_WINDOW_CM1), 4),
                            f"LO partner of the {b.mode.name} line at {y.position_cm1:.1f} cm-1 ({d:+.1f} cm-1): "
                            f"{'/'.join(polar)} polar, split into TO and LO (Born and Huang 1954)",
                            phase,
                        )
                    )


def explain(
    prediction: Any,
    peaks: PeakList,
    *,
    modes: ModeTable | str | os.PathLike[str] | None = None,
    unit: str | None = None,
    technique: str | None = None,
    tolerance_cm1: float = DEFAULT_TOLERANCE_CM1,
    alternatives: Sequence[Any] = (),
    lattice_max_cm1: float = LATTICE_MAX_CM1,
    states: dict[str, str] | None = None,
    estimate: Any = None,
) -> Explanation:
    """Rank candidate explanations for every measured line (method in the module docstring).

    Parameters
    ----------
    prediction : CrystalPrediction
        Prediction for the crystal the spectrum was measured on.
    peaks : PeakList
        Measured lines (:func:`~splitting.spectra.measured.read_peaks` or
        :func:`~splitting.spectra.peaks.find_peaks`).
    modes : ModeTable, path or None
        Free-unit fundamentals; ``None``: the bundled table of every molecular unit
        (matched by element counts, so ``H4N`` finds ``NH4``).
    unit : str or None
        Formula of the unit to use when the crystal holds several.
    technique : {"ir", "raman"} or None
        Selection rules; ``None``: the technique of ``peaks``; if that is unknown too, a
        component counts as active when it is IR or Raman active.
    tolerance_cm1 : float
        Window half width, cm-1 (:data:`DEFAULT_TOLERANCE_CM1`).
    alternatives : sequence of CrystalPrediction
        Other phases (a second phase, candidate low-symmetry structures); they feed
        ``second_phase`` candidates and the band-count comparisons.
    lattice_max_cm1 : float
        Upper end of the lattice region, cm-1.
    states : dict, optional
        State of each unit (Hill formula, or ``"*"`` for all): ``"ordered"`` (default;
        factor-group components), ``"static"`` (the site-group components of one
        orientation) or ``"dynamic"`` (a rotor: the free unit's own lines). For a
        disordered phase pass the one-orientation model as ``prediction``.
    estimate : splitting.dynamics.Estimate, optional
        Model estimate of the same crystal: closer matches to its components and lattice
        lines rank higher (:mod:`splitting.spectra.estimated`).

    Returns
    -------
    Explanation

    Raises
    ------
    InputError
        Conflicting techniques, a mode table that fits no unit or whose point group
        differs from the unit's, a bad tolerance, peaks that are not a PeakList.
    """
    from .combinations import overtones_and_combinations

    peak_list = _peaks(peaks)
    tech = normalise_technique(technique)
    if tech is not None and peak_list.technique is not None and tech != peak_list.technique:
        raise InputError(
            f"{peak_list.source or 'peaks'}: the lines were measured by {peak_list.technique} "
            f"but technique={technique!r} was passed"
        )
    tech = tech or peak_list.technique
    for name, value in (("tolerance_cm1", tolerance_cm1), ("lattice_max_cm1", lattice_max_cm1)):
        if not (isinstance(value, (int, float)) and not isinstance(value, bool) and value > 0 and math.isfinite(value)):
            raise InputError(f"{name} must be a positive number of cm-1, got {value!r}")
    tol = float(tolerance_cm1)
    from ..phases.disorder import ALL_UNITS, normalise_state

    given = {k: normalise_state(v, where=f"state of {k}") for k, v in (states or {}).items()}
    unit_states = {
        u.formula: given.get(u.formula, given.get(ALL_UNITS, "ordered")) for u in prediction.units if u.correlation
    }
    units, notes = _resolve(prediction, modes, unit, tech, unit_states)
    for f, st in unit_states.items():
        if st != "ordered":
            notes.append(
                f"{f} taken as {'a rotor (free-unit lines)' if st == 'dynamic' else 'statically disordered'}: "
                + ("components counted in the free unit" if st == "dynamic" else "site components of one orientation")
                + "; librations give no sharp lines"
            )
    if tech is None:
        notes.append("technique unknown: a component counts as active if it is IR or Raman active")
    if not units:
        notes.append("no unit with a mode table: only lattice modes can be assigned")
    phase = prediction.source
    word = _technique_word(tech)

    lattice = [
        (s.label, s.translational, s.librational)
        for s in prediction.species
        if (s.translational or s.librational) and _active(bool(s.ir), bool(s.raman), tech)
    ]
    lattice_count = sum(t + lib for _, t, lib in lattice)
    lattice_text = ", ".join(f"{lab} ({t} transl., {lib} libr.)" for lab, t, lib in lattice)

    combos = {
        ub.orbit.formula: overtones_and_combinations(
            ub.table.point_group,
            [(b.mode.name, b.mode.species, b.mode.wavenumber_cm1) for b in ub.bands],
            crystal={c.free: c.factor for c in ub.orbit.correlation},
        )
        for ub in units
    }
    iso = _isotopomer_lists(units, notes)

    alt_bands: list[tuple[Any, dict[tuple[str, str], _Band]]] = []
    for alt in alternatives:
        try:
            alt_units, _ = _resolve(alt, modes, unit, tech)
        except InputError as exc:
            notes.append(f"alternative {alt.source} not used: {exc}")
            continue
        alt_bands.append((alt, {(ub.orbit.formula, b.mode.name): b for ub in alt_units for b in ub.bands}))
    main_bands = {(ub.orbit.formula, b.mode.name): b for ub in units for b in ub.bands}

    lines = list(peak_list.peaks)
    found: list[list[Candidate]] = [[] for _ in lines]
    for i, p in enumerate(lines):
        x = p.position_cm1
        for ub in units:
            found[i] += _fundamental_candidates(x, ub, tol, tech, phase)
            found[i] += _combination_candidates(x, ub, combos[ub.orbit.formula], tol, tech, phase)
        if x < lattice_max_cm1 and lattice:
            found[i].append(
                Candidate(
                    "lattice",
                    "",
                    "lattice",
                    tuple(lab for lab, _, _ in lattice),
                    None,
                    PRIORS["lattice"],
                    f"below {lattice_max_cm1:g} cm-1: {lattice_count} {word}-active lattice frequencies "
                    f"predicted: {lattice_text}",
                    phase,
                )
            )
        for alt, bands in alt_bands:
            for (formula, name), b in bands.items():
                here = main_bands.get((formula, name))
                d = abs(x - b.mode.wavenumber_cm1)
                if d > tol or b.factor_count <= (here.factor_count if here else 0):
                    continue
                found[i].append(
                    Candidate(
                        "second_phase",
                        formula,
                        name,
                        b.factor_labels,
                        b.mode.wavenumber_cm1,
                        round(PRIORS["second_phase"] * _closeness(d, tol), 4),
                        f"{name} has {b.factor_count} {word}-active components in {alt.source} "
                        f"({alt.factor_group}) against {here.factor_count if here else 0} here",
                        alt.source,
                    )
                )

    # members of a band: lines whose best fundamental-type candidate is that band (before
    # the surplus rule); they are the parents of satellites and are counted by the surplus rule
    members: dict[tuple[str, str], list[int]] = {}
    for i, cands in enumerate(found):
        own = [c for c in cands if c.kind in ("fundamental", "site_activated") and c.phase == phase]
        if own:
            top = max(own, key=lambda c: (c.score, -_KIND_ORDER[c.kind]))
            members.setdefault((top.unit, top.band), []).append(i)

    # satellites of band members: sorted positions, best candidate per line and band (linear in lines)
    for i, cands in isotopologue_candidates(lines, units, members, iso, phase).items():
        found[i] += cands

    _lo_to_candidates(prediction, units, members, lines, found, tech, phase)

    # surplus rule: a band shows at most its predicted number of components
    for ub in units:
        for b in ub.bands:
            idx = members.get((ub.orbit.formula, b.mode.name), [])
            if len(idx) <= b.factor_count:
                continue
            ranked = sorted(idx, key=lambda i: (-lines[i].intensity, lines[i].position_cm1))
            for i in ranked[b.factor_count :]:
                found[i] = [
                    Candidate(
                        c.kind,
                        c.unit,
                        c.band,
                        c.species,
                        c.predicted_cm1,
                        round(c.score * SURPLUS_FACTOR, 4),
                        c.reason + f"; surplus: more lines than the {b.factor_count} predicted",
                        c.phase,
                    )
                    if (c.unit, c.band, c.phase) == (ub.orbit.formula, b.mode.name, phase)
                    and c.kind in ("fundamental", "site_activated")
                    else c
                    for c in found[i]
                ]

    if estimate is not None:
        from .estimated import rescore

        found = [
            rescore(p.position_cm1, cands, estimate, tolerance_cm1=tol, technique=tech, phase=phase)
            for p, cands in zip(lines, found, strict=True)
        ]
        notes.append(f"ranked with a model estimate ({estimate.model.removeprefix('model: ')})")
    # a polarisation / geometry column restricts each line to the species that geometry sees
    ordered_units = {f for f, st in unit_states.items() if st == "ordered"}
    used = 0
    for i, p in enumerate(lines):
        if not p.polarisation:
            continue
        g = _geometry_species(prediction, p.polarisation, tech, f"line at {p.position_cm1:g} cm-1")
        if g is None:
            continue
        used += 1
        found[i] = _restrict(found[i], g[1], phase, ordered_units)
    if used:
        notes.append(f"{used} line(s) restricted to the species their polarisation / geometry sees")

    explained = []
    for p, cands in zip(lines, found, strict=True):
        unique: dict[tuple[str, str, str, str], Candidate] = {}
        for c in cands:
            key = (c.kind, c.unit, c.band, c.phase)
            if key not in unique or c.score > unique[key].score:
                unique[key] = c
        ranked = sorted(unique.values(), key=lambda c: (-c.score, _KIND_ORDER[c.kind], c.unit, c.band, c.phase))
        explained.append(LineExplanation(p, tuple(ranked[:MAX_CANDIDATES])))

    comparisons: list[PhaseComparison] = []
    # only bands that can show lines in some phase compete for the lines in count_components
    can_show = {key for key, b in main_bands.items() if b.factor_count or b.site_count}
    for _, bands in alt_bands:
        can_show |= {key for key, b in bands.items() if b.factor_count or b.site_count}
    observed_by_unit = {
        ub.orbit.formula: count_components(
            peak_list, [b.mode for b in ub.bands if (ub.orbit.formula, b.mode.name) in can_show], tol
        )
        for ub in units
    }
    xs = [p.position_cm1 for p in peak_list.peaks]
    measured = (min(xs), max(xs)) if xs else None
    for ub in units:
        comparisons.append(_comparison(prediction, ub, observed_by_unit[ub.orbit.formula], measured, tol))
    for alt, _ in alt_bands:
        for ub in _resolve(alt, modes, unit, tech)[0]:
            comparisons.append(_comparison(alt, ub, observed_by_unit.get(ub.orbit.formula, {}), measured, tol))

    return Explanation(
        phase=phase,
        peaks_source=peak_list.source,
        technique=tech,
        tolerance_cm1=tol,
        lattice_max_cm1=float(lattice_max_cm1),
        units=tuple(f"{ub.orbit.formula}: {ub.table.name} ({ub.table.point_group}, {ub.table.phase})" for ub in units),
        lines=tuple(explained),
        comparisons=tuple(comparisons),
        lattice_predicted=lattice_count,
        notes=tuple(notes),
        states=tuple(sorted(unit_states.items())),
    )

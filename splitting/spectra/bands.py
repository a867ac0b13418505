"""The free-unit bands of a prediction: each mode-table band with its active components.

For every molecular unit of a crystal prediction, its mode table (given, or the bundled
one found by element counts by :func:`find_unit_table`) and, for every band, the
factor-group and site-group components active in the technique. Counting
(:mod:`splitting.spectra.counting`) and assignment (:mod:`splitting.spectra.assign`)
both start from here.
"""

from __future__ import annotations

import os
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

from ..errors import DataError, InputError
from .catalogue import FreeMode, ModeTable, bundled_tables, formula_counts, load_mode_table
from .measured import Peak, PeakList
from .scoring import _active

__all__ = ["find_unit_table"]


def find_unit_table(formula: str) -> ModeTable:
    """The bundled mode table whose formula has the same element counts as ``formula``.

    ``"H4N"`` (as a crystal prediction writes the ammonium ion) finds the ``NH4`` table.

    Raises
    ------
    DataError
        If no bundled table, or more than one, matches.

    Examples
    --------
    >>> find_unit_table("H4N").name
    'ammonium'
    """
    wanted = formula_counts(formula)
    matches = [t for t in bundled_tables().values() if formula_counts(t.formula) == wanted]
    if len(matches) != 1:
        what = "no bundled mode table" if not matches else "several bundled mode tables"
        raise DataError(f"{what} for unit {formula}; pass a mode table (modes=...)")
    return matches[0]


@dataclass(frozen=True)
class _Band:
    mode: FreeMode
    free_active: bool
    factor_labels: tuple[str, ...]
    factor_count: int
    site_labels: tuple[str, ...]
    site_count: int


@dataclass(frozen=True)
class _UnitBands:
    orbit: Any  # UnitOrbit
    table: ModeTable
    bands: tuple[_Band, ...]
    state: str = "ordered"


def _unit_bands(
    prediction: Any, orbit: Any, table: ModeTable, technique: str | None, state: str = "ordered"
) -> _UnitBands:
    """Bands of one unit; ``state`` ``"static"`` counts the site-group components of one
    orientation, ``"dynamic"`` (rotor) the free unit's own (one per active fundamental)."""
    from ..activity import activity_table

    if orbit.free_group != table.point_group:
        raise InputError(
            f"mode table {table.name!r} is for point group {table.point_group}, but unit {orbit.formula} "
            f"of {prediction.source} has free group {orbit.free_group}"
        )
    free_rules = {a.label: a for a in activity_table(table.point_group)}
    site_rules = {a.label: a for a in activity_table(orbit.site_group)}
    corr = {c.free: c for c in orbit.correlation}
    bands = []
    for mode in table.modes:
        if mode.species not in corr:
            raise InputError(
                f"mode table {table.name!r}: species {mode.species} of {mode.name} is not a vibrational "
                f"species of unit {orbit.formula} in {prediction.source}"
            )
        c = corr[mode.species]
        rule = free_rules[mode.species]
        ir = rule.ir_active if mode.ir is None else mode.ir
        raman = rule.raman_active if mode.raman is None else mode.raman
        fl, fc, sl, sc = [], 0, [], 0
        for lab, n in c.factor:
            s = prediction.species_by_label(lab)
            if _active(bool(s.ir), bool(s.raman), technique):
                fl.append(lab)
                fc += n
        for lab, n in c.site:
            a = site_rules[lab]
            if _active(a.ir_active, a.raman_active, technique):
                sl.append(lab)
                sc += n
        free_active = _active(ir, raman, technique)
        if state == "dynamic":
            fl, fc = ([mode.species], 1) if free_active else ([], 0)
            sl, sc = list(fl), fc
        elif state == "static":
            fl, fc = list(sl), sc
        bands.append(_Band(mode, free_active, tuple(fl), fc, tuple(sl), sc))
    return _UnitBands(orbit, table, tuple(bands), state)


def _resolve(
    prediction: Any,
    modes: ModeTable | str | os.PathLike[str] | None,
    unit: str | None,
    technique: str | None,
    states: dict[str, str] | None = None,
) -> tuple[list[_UnitBands], list[str]]:
    states = states or {}
    notes: list[str] = []
    molecules = [u for u in prediction.units if u.kind == "molecule"]
    if isinstance(modes, (str, os.PathLike)):
        modes = load_mode_table(modes)
    if unit is not None:
        try:
            wanted = formula_counts(unit)
        except InputError as exc:
            raise InputError(f"unit: {exc}") from None
        chosen = [u for u in molecules if formula_counts(u.formula) == wanted]
        if not chosen:
            names = ", ".join(u.formula for u in molecules) or "none"
            raise InputError(f"unit {unit!r} is not a molecular unit of {prediction.source} (units: {names})")
        molecules = chosen[:1]
    out: list[_UnitBands] = []
    if modes is not None:
        wanted = formula_counts(modes.formula)
        chosen = [u for u in molecules if formula_counts(u.formula) == wanted]
        if not chosen:
            names = ", ".join(u.formula for u in molecules) or "none"
            raise InputError(
                f"mode table {modes.name!r} ({modes.formula}) matches no molecular unit of "
                f"{prediction.source} (units: {names})"
            )
        out.append(_unit_bands(prediction, chosen[0], modes, technique, states.get(chosen[0].formula, "ordered")))
        return out, notes
    for orbit in molecules:
        try:
            table = find_unit_table(orbit.formula)
        except DataError as exc:
            notes.append(str(exc))
            continue
        if table.point_group != orbit.free_group:
            notes.append(
                f"bundled table {table.name!r} is for {table.point_group}, unit {orbit.formula} "
                f"is {orbit.free_group} here; pass a matching mode table"
            )
            continue
        out.append(_unit_bands(prediction, orbit, table, technique, states.get(orbit.formula, "ordered")))
    return out, notes


def _peaks(peaks: Any) -> PeakList:
    if isinstance(peaks, PeakList):
        return peaks
    raise InputError(
        f"peaks must be a PeakList (see splitting.spectra.measured.read_peaks), got {type(peaks).__name__}"
    )


def _positions(peaks: PeakList | Sequence[Peak] | Sequence[float]) -> list[float]:
    out = []
    for p in peaks:
        out.append(float(p.position_cm1) if isinstance(p, Peak) else float(p))
    return out

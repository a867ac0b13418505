"""The work done for one structure: the crystal pipeline, flattened into table rows.

:func:`screen_one` calls :func:`splitting.crystal.predict.predict` on a file and turns
its ``to_dict()`` into one row for the structure table and one row per unit and band
for the band table.  Every :class:`~splitting.errors.SplittingError` becomes a failure
row carrying its message; nothing here prints or keeps its own symmetry code.

Rows are plain dictionaries (``None`` for missing values) so that they cross process
boundaries cheaply; :mod:`splitting.batch.store` gives them their Parquet schema.
"""

from __future__ import annotations

import os
import re
import time
from functools import lru_cache
from typing import Any

from ..errors import DataError, MemoryShortageError, SplittingError

__all__ = [
    "Row",
    "failure_row",
    "prediction_rows",
    "screen_one",
    "unit_names",
]

Row = dict[str, Any]

# failure kinds that are not SplittingError classes (set by the sandbox and the runner)
TIMEOUT = "Timeout"
MEMORY = "MemoryLimit"
CRASH = "Crash"
INTERNAL = "InternalError"
LOST = "WorkerLost"

_TERM = re.compile(r"^(\d*)(.+)$")


def _parse_rep(text: str) -> list[tuple[str, int]]:
    """``"A2g + 2Eg"`` -> ``[("A2g", 1), ("Eg", 2)]`` (the text form of a representation).

    >>> _parse_rep("A2g + 2Eg"), _parse_rep("0")
    ([('A2g', 1), ('Eg', 2)], [])
    """
    out = []
    for term in text.split("+"):
        term = term.strip()
        if not term or term == "0":
            continue
        m = _TERM.match(term)
        assert m is not None
        out.append((m.group(2), int(m.group(1) or 1)))
    return out


@lru_cache(maxsize=256)
def _order(group: str | None) -> int | None:
    """Order of a finite point group (``None`` for linear groups and single atoms)."""
    if group is None or "∞" in group:
        return None
    from ..groups import point_group

    return point_group(group).order


@lru_cache(maxsize=1024)
def unit_names(formula: str) -> tuple[str, str | None]:
    """The unit as the trade writes it, and its common name, from the bundled mode tables.

    Units with no bundled table keep their Hill formula and have no common name.

    Examples
    --------
    >>> unit_names("H4N"), unit_names("O4S"), unit_names("C10H8")
    (('NH4+', 'ammonium'), ('SO4^2-', 'sulfate'), ('C10H8', None))
    """
    from ..spectra.assign import find_unit_table

    try:
        table = find_unit_table(formula)
    except (DataError, SplittingError):
        return formula, None
    q = table.charge
    charge = "" if q == 0 else ("+" if q == 1 else "-" if q == -1 else f"^{abs(q)}{'+' if q > 0 else '-'}")
    return table.formula + charge, table.name


def failure_row(path: str, key: str, kind: str, message: str, *, seconds: float = 0.0) -> Row:
    """Structure-table row of a structure that could not be screened."""
    return {
        "path": path,
        "name": os.path.basename(path),
        "key": key,
        "ok": False,
        "error_kind": kind,
        "error": message,
        "seconds": seconds,
    }


def _counts(components: list[tuple[str, int]], activity: dict[str, tuple[bool, bool]]) -> dict[str, int]:
    ir = sum(n for lab, n in components if activity[lab][0])
    raman = sum(n for lab, n in components if activity[lab][1])
    silent = sum(n for lab, n in components if not any(activity[lab]))
    # inelastic neutron scattering has no k = 0 selection rule: every component counts (common practice)
    return {"ir": ir, "raman": raman, "silent": silent, "ins": sum(n for _, n in components)}


def prediction_rows(d: dict[str, Any], *, path: str, key: str, seconds: float) -> tuple[Row, list[Row]]:
    """Structure row and band rows from ``CrystalPrediction.to_dict()``.

    Band rows: one per free-unit species of every molecular unit (``band_kind`` =
    ``"internal"``, counts per fundamental), and one ``"translation"`` and one
    ``"libration"`` row per unit (all external modes of the orbit, acoustic modes included).
    """
    activity = {s["label"]: (bool(s["ir"]), bool(s["raman"])) for s in d["species"]}
    sg = d["space_group"]
    base = {"path": path, "name": os.path.basename(path), "key": key}
    bands: list[Row] = []
    names, sites, wyckoffs, molecular_orders = [], [], [], []
    for index, u in enumerate(d["units"]):
        unit, common = unit_names(u["formula"])
        site_order = _order(u["site_group"])
        names.append(unit)
        sites.append(u["site_group"])
        wyckoffs.append(u["wyckoff"])
        if u["kind"] == "molecule" and site_order is not None:
            molecular_orders.append(site_order)
        unit_cols = {
            **base,
            "unit_index": index,
            "unit": unit,
            "unit_formula": u["formula"],
            "unit_common_name": common,
            "unit_kind": u["kind"],
            "count": u["count"],
            "wyckoff": u["wyckoff"],
            "site_symmetry": u["site_symmetry"],
            "site_group": u["site_group"],
            "site_order": site_order,
            "free_group": u["free_group"],
            "free_order": _order(u["free_group"]),
            "factor_group": d["factor_group"],
        }
        for c in u["correlation"]:
            comps = [(x["label"], x["count"]) for x in c["factor"]]
            bands.append(
                {
                    **unit_cols,
                    "band_kind": "internal",
                    "band": c["free"],
                    "band_dimension": c["free_dimension"],
                    "modes": c["modes"],
                    "site_components": c["site_text"],
                    "factor_components": c["factor_text"],
                    **_counts(comps, activity),
                }
            )
        for kind, field in (("translation", "translations"), ("libration", "librations")):
            comps = _parse_rep(u[field])
            if not comps:
                continue
            bands.append(
                {
                    **unit_cols,
                    "band_kind": kind,
                    "band": None,
                    "band_dimension": None,
                    "modes": None,
                    "site_components": None,
                    "factor_components": u[field],
                    **_counts(comps, activity),
                }
            )
    totals = d["totals"]
    row = {
        **base,
        "ok": True,
        "error_kind": None,
        "error": None,
        "formula": d["formula"],
        "space_group": sg["symbol"],
        "space_group_number": sg["number"],
        "factor_group": d["factor_group"],
        "centrosymmetric": d["centrosymmetric"],
        "atoms_input": d["atoms_input"],
        "atoms_primitive": d["atoms_primitive"],
        "units": len(d["units"]),
        "unit_names": names,
        "site_groups": sites,
        "wyckoffs": wyckoffs,
        "lowest_molecular_site_order": min(molecular_orders) if molecular_orders else None,
        "ir": totals["ir"],
        "raman": totals["raman"],
        "silent": totals["silent"],
        "ins": totals["optical"],
        "polar": totals["polar"],
        "optical": totals["optical"],
        "warnings": list(d["warnings"]),
        "seconds": seconds,
    }
    return row, bands


def _tuples(value: Any) -> Any:
    """Lists (as options come back from JSON) -> tuples, as ``Options`` holds them.

    >>> _tuples([[["C", "H"], 1.2]])
    ((('C', 'H'), 1.2),)
    """
    return tuple(_tuples(v) for v in value) if isinstance(value, list | tuple) else value


def screen_one(path: str, key: str, file: str, options: dict[str, Any]) -> tuple[Row, list[Row]]:
    """Screen the structure in ``file`` (a local copy of ``path``); failures become a failure row.

    ``options`` are the keyword fields of :class:`splitting.crystal.predict.Options`.
    Messages naming the local copy name ``path`` instead.
    """
    from ..crystal.predict import Options, predict

    start = time.perf_counter()
    try:
        result = predict(file, Options(**{k: _tuples(v) for k, v in options.items()}))
        return prediction_rows(result.to_dict(), path=path, key=key, seconds=time.perf_counter() - start)
    except MemoryShortageError as exc:  # the reader ran out of memory: the limit, not the file, may be at fault
        kind, message = MEMORY, str(exc)
    except SplittingError as exc:
        kind, message = type(exc).__name__, str(exc)
    except MemoryError:
        kind, message = MEMORY, f"{path}: ran out of memory"
    except RecursionError:
        kind, message = INTERNAL, "internal error (RecursionError); please report it"
    except Exception as exc:  # a bug in the pipeline: record it, keep going
        kind, message = INTERNAL, f"internal error ({type(exc).__name__}: {exc}); please report it"
    message = message.replace(file, path)
    return failure_row(path, key, kind, message, seconds=time.perf_counter() - start), []

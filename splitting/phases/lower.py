"""Candidate lower-symmetry phases of a structure, generated from its own operations.

No table of subgroups is used.  For every subgroup ``H`` of the factor group (up to
conjugacy) and every sublattice ``L'`` of the primitive lattice that ``H`` keeps (index
``m``, enumerated as Hermite normal forms), each operation keeps its rotation and gets one
of the ``m`` translation cosets; a choice is kept when the operations close modulo ``L'``.
``m = 1`` gives the translationengleiche (t) subgroups, ``H = F`` the klassengleiche (k)
ones, and the rest are t+k subgroups (International Tables for Crystallography, Vol. A1,
describes the same two kinds of maximal subgroups).  Each candidate is realised as a
structure: the parent (in the supercell ``L'``) with a small random displacement averaged
over the candidate's operations.  When no other operation of the parent's group maps it onto
itself, its space group is the candidate's exactly and one spglib search of a small skeleton
names it (:func:`~splitting.crystal.spacegroup.cell_of_known_group`); otherwise spglib searches
all its atoms.  The usual pipeline then predicts its spectrum.  The subgroup search itself is in
:mod:`splitting.phases.sublattice`.
"""

from __future__ import annotations

import os
from collections.abc import Mapping
from dataclasses import dataclass, field, replace
from pathlib import Path

import numpy as np

from .._display import Summarised
from ..correlation import FactorGroup
from ..crystal.freeunits import FreeUnitCache
from ..crystal.predict import Options, predict_with_cell
from ..crystal.read import load_structure
from ..crystal.results import CrystalPrediction
from ..crystal.spacegroup import CellSymmetry
from ..defaults import DEFAULT_MAX_INDEX
from ..errors import InputError
from ..groups.pointgroup import point_group
from ..groups.subgroups import generators_of, subgroup_classes
from .compare import BandState, Phase
from .sublattice import (
    canonical_key,
    close_operations,
    closing_choices,
    coset_vectors,
    hermite_normal_form,
    kept_lattices,
    sublattices,
)

__all__ = [
    "DEFAULT_MAX_INDEX",
    "Candidate",
    "Lowering",
    "hermite_normal_form",
    "lower",
    "parse_observed",
    "sublattices",
]

#: largest index accepted: |Oh| = 48 reaches every t-subgroup of a cubic parent; beyond it the search runs for minutes
MAX_INDEX_LIMIT = 48
#: displacement (angstrom) used to realise a candidate as a structure
DISPLACEMENT = 0.05

_OWN_SUBLATTICES = sublattices


@dataclass(frozen=True, eq=False)
class Candidate:
    """A candidate lower-symmetry phase.

    Attributes
    ----------
    kind : str
        ``"t"``, ``"k"`` or ``"t+k"``.
    index : int
        Index in the parent space group (point-group index x cell multiple).
    point_group : str
        Its factor group (a subgroup of the parent's).
    cell_multiple : int
    supercell : tuple of tuple of int
        Rows: the candidate's primitive cell vectors in the parent's primitive basis.
    space_group : tuple of (int, str)
        Number and symbol that spglib gives for the realised structure.
    prediction : CrystalPrediction
    score : float or None
        Disagreement with observed counts (lower is better); None when nothing was observed.
    reasons : tuple of str
        Where the candidate disagrees with the observations.
    realised : bool
        False when no displacement of the atoms shows this subgroup (the atoms sit where the
        parent symmetry cannot be broken by moving them); the prediction then comes from the
        candidate's operations and Wyckoff letters are not known.
    variants : int
        Number of subgroups, not conjugate in the parent group, that give this same candidate
        (same space group, sites and line counts: e.g. two settings related by the parent's normaliser).
    """

    kind: str
    index: int
    point_group: str
    cell_multiple: int
    supercell: tuple[tuple[int, ...], ...]
    space_group: tuple[int, str]
    prediction: CrystalPrediction = field(repr=False)
    score: float | None = None
    reasons: tuple[str, ...] = ()
    variants: int = 1
    realised: bool = True

    @property
    def symbol(self) -> str:
        """Short symbol in the setting its labels use: the file's axes where the candidate's cell is
        a multiple of the file's cell (``"P2_1cn"`` below a Pmcn file), else its standard setting."""
        return self.prediction.symbol

    @property
    def name(self) -> str:
        """``"P2_1cn (33, Pna2_1)"``: the symbol in the labels' setting, the number, the standard symbol."""
        number, standard = self.space_group
        return f"{self.symbol} ({number})" if self.symbol == standard else f"{self.symbol} ({number}, {standard})"

    def bands(self) -> list[BandState]:
        """Every band in this candidate."""
        return self._phase().bands()

    def lattice(self) -> dict[str, object]:
        """Optical lattice-mode counts of this candidate."""
        return self._phase().lattice()

    def _phase(self) -> Phase:
        return Phase(self.space_group[1], self.prediction.source, self.prediction, None)

    def to_dict(self) -> dict[str, object]:
        """JSON-ready form."""
        return {
            "space_group": {"number": self.space_group[0], "symbol": self.space_group[1]},
            "label_symbol": self.symbol,
            "kind": self.kind,
            "index": self.index,
            "factor_group": self.point_group,
            "cell_multiple": self.cell_multiple,
            "supercell": [list(r) for r in self.supercell],
            "units": [
                {"formula": u.formula, "site_group": u.site_group, "wyckoff": u.wyckoff, "count": u.count}
                for u in self.prediction.units
            ],
            "bands": [
                {"unit": b.unit, "band": b.band, "components": b.text(), "ir": b.ir, "raman": b.raman}
                for b in self.bands()
            ],
            "score": self.score,
            "reasons": list(self.reasons),
            "variants": self.variants,
            "realised_by_displacements": self.realised,
        }


@dataclass(frozen=True, repr=False)
class Lowering(Summarised):
    """All candidates found for a parent structure, best first when observations were given."""

    parent: CrystalPrediction
    max_index: int
    candidates: tuple[Candidate, ...]
    observed: tuple[tuple[str, str, int], ...] = ()
    parent_state: str = "ordered"
    notes: tuple[str, ...] = ()

    def to_dict(self) -> dict[str, object]:
        """JSON-ready form."""
        from .disorder import STATE_MEANING

        return {
            "parent": {
                "space_group": self.parent.space_group.to_dict(),
                "factor_group": self.parent.factor_group,
                "source": self.parent.source,
                "state": self.parent_state,
                "state_meaning": STATE_MEANING[self.parent_state],
            },
            "candidates_state": "ordered",
            "max_index": self.max_index,
            "observed": [{"band": b, "technique": t, "count": n} for b, t, n in self.observed],
            "notes": list(self.notes),
            "candidates": [c.to_dict() for c in self.candidates],
        }


def _realise(cell: CellSymmetry, m: np.ndarray, ops: list[tuple[np.ndarray, np.ndarray]], seed: int):
    """Supercell of the parent with a displacement pattern averaged over the candidate's operations."""
    from ase import Atoms

    lat = m @ cell.lattice
    cosets = coset_vectors(m)
    cart = np.concatenate([(cell.frac + u) @ cell.lattice for u in cosets])
    numbers = np.tile(cell.numbers, len(cosets))
    inv = np.linalg.inv(lat)
    frac = cart @ inv
    frac -= np.floor(frac + 1e-9)
    rng = np.random.default_rng(seed)
    disp = rng.normal(size=cart.shape)
    sym = np.zeros_like(disp)
    plat = cell.lattice
    from scipy.spatial import cKDTree

    tree = cKDTree(frac % 1.0, boxsize=1.0 + 1e-12)
    fixed = np.zeros(len(cart), dtype=bool)  # atoms that some operation other than the identity keeps
    for w, t in ops:
        r = plat.T @ w @ np.linalg.inv(plat.T)
        img = ((cart @ r.T + t @ plat) @ inv) % 1.0
        _, perm = tree.query(img)
        sym += disp[perm] @ r  # R^-1 d_{pi(i)} written for row vectors
        if not (np.array_equal(w, np.eye(3)) and np.allclose(t, 0.0)):
            fixed |= perm == np.arange(len(perm))
    sym /= len(ops)
    norm = np.max(np.linalg.norm(sym, axis=1))
    if norm > 1e-9:
        sym *= DISPLACEMENT / norm
    atoms = Atoms(numbers=numbers, positions=cart + sym, cell=lat, pbc=True)
    atoms.wrap()
    return atoms, fixed, sym.mean(axis=0)


#: a parent operation that moves no atom of a realised candidate farther than this (angstrom) may be a
#: symmetry of it at the candidates' tolerance: its space group is then searched atom by atom
_EXTRA_SYMMETRY_MARGIN = 5e-3


def _shows_only(cell: CellSymmetry, m: np.ndarray, ops, atoms, shift: np.ndarray) -> bool:
    """True when no operation of the parent's group (modulo the sublattice) outside ``ops`` maps the
    realised candidate onto itself, even within :data:`_EXTRA_SYMMETRY_MARGIN`: its space group is then
    exactly ``ops``.  One operation per coset of the candidate's group is tried.

    The mean displacement ``shift`` (a uniform move, allowed along a polar axis) is taken off first:
    it moves the origin of every symmetry of the displaced atoms, not their number."""
    from scipy.spatial import cKDTree

    minv = np.linalg.inv(m.T.astype(float))
    lat = np.asarray(atoms.cell[:], dtype=float)
    frac = (atoms.positions - shift) @ np.linalg.inv(lat)
    frac -= np.floor(frac)
    numbers = atoms.numbers

    def key(w: np.ndarray, t: np.ndarray) -> tuple[bytes, bytes]:
        f = np.round((t - np.floor(t + 1e-8)) * 1e6).astype(np.int64) % 1_000_000
        return np.rint(w).astype(np.int64).tobytes(), f.tobytes()

    sub = [(minv @ w @ m.T, minv @ t) for w, t in ops]
    covered = set()
    reps = []
    for wg, tg in zip(cell.frac_rotations, cell.frac_translations, strict=True):
        ws = minv @ wg @ m.T
        if np.abs(ws - np.rint(ws)).max() > 1e-8:  # does not keep the sublattice
            continue
        for u in coset_vectors(m):
            ts = minv @ (tg + u)
            if key(ws, ts) in covered:
                continue
            reps.append((ws, ts))
            covered.update(key(ws @ wh, ws @ th + ts) for wh, th in sub)
    own = {key(w, t) for w, t in sub}
    tree = cKDTree(frac % 1.0, boxsize=1.0 + 1e-12)
    for ws, ts in (r for r in reps if key(*r) not in own):  # one per coset other than the group itself
        img = (frac @ ws.T + ts) % 1.0
        _, near = tree.query(img)
        if not np.array_equal(numbers[near], numbers):
            continue
        d = img - frac[near]
        d -= np.round(d)
        if np.linalg.norm(d @ lat, axis=1).max() < _EXTRA_SYMMETRY_MARGIN:
            return False
    return True


def parse_observed(items: list[str] | None) -> tuple[tuple[str, str, int], ...]:
    """Parse ``["T1u:ir=3", "Hg:raman=5"]`` into ``(("T1u", "ir", 3), ("Hg", "raman", 5))``.

    A unit may be named: ``"C60/T1u:ir=3"``; ``"lattice:raman=5"`` counts the optical lattice lines.

    Examples
    --------
    >>> parse_observed(["T1u:ir=3", "lattice:raman=5"])
    (('T1u', 'ir', 3), ('lattice', 'raman', 5))
    """
    out = []
    for item in items or []:
        try:
            band, rest = item.split(":")
            tech, n = rest.split("=")
            tech = tech.strip().lower()
            if tech not in ("ir", "raman", "total") or (band.strip() == "lattice" and tech == "total"):
                raise ValueError
            count = int(n)
        except ValueError:
            raise InputError(f"observed count {item!r} is not of the form BAND:ir=N or BAND:raman=N") from None
        if count < 0:
            raise InputError(f"observed count {item!r}: a number of lines cannot be negative")
        out.append((band.strip(), tech, count))
    return tuple(out)


def _resolve_observed(
    observed: tuple[tuple[str, str, int], ...], parent: CrystalPrediction, modes=None
) -> tuple[tuple[tuple[str, str, int], ...], list[str]]:
    """Observed counts with every band as a free species (``HILL/SPECIES`` when a unit is named).

    A band may be a species (``T1u``) or the name of a vibration in the unit's mode table
    (``nu3``, the bundled table or ``modes``), with or without ``UNIT/`` (written name or
    Hill formula). A name that matches nothing is an error listing what there is.
    """
    from ..crystal.names import match_unit

    molecular = [u for u in parent.units if u.correlation]
    formulas = [u.formula for u in molecular]
    tables = {}
    for u in molecular:
        if modes is not None and _same_unit(modes.formula, u.formula):
            tables[u.formula] = modes
            continue
        try:
            from ..spectra.bands import find_unit_table

            tables[u.formula] = find_unit_table(u.formula)
        except Exception:
            continue
    out, notes = [], []
    for band, tech, n in observed:
        if band == "lattice":
            out.append((band, tech, n))
            continue
        unit_text, slash, name = band.rpartition("/")
        units = [match_unit(unit_text, formulas, what="--observed unit", where=parent.source)] if slash else formulas
        hits = []
        for f in units:
            orbit = next(u for u in molecular if u.formula == f)
            if name in {c.free for c in orbit.correlation}:
                hits.append((f, name, None))
                continue
            table = tables.get(f)
            mode = next((m for m in table.modes if m.name == name), None) if table is not None else None
            if mode is not None:
                hits.append((f, mode.species, table.name))
        if not hits:
            known = []
            for f in units:
                orbit = next(u for u in molecular if u.formula == f)
                names = [c.free for c in orbit.correlation]
                if f in tables:
                    names += [m.name for m in tables[f].modes]
                known.append(f"{orbit.name}: {', '.join(names)}")
            raise InputError(
                f"--observed {band!r}: no band or vibration of that name; there are "
                + ("; ".join(known) if known else "no molecular units")
                + "; and 'lattice'"
            )
        f, species, table_name = hits[0]
        key = f"{f}/{species}" if slash or len(formulas) > 1 else species
        if table_name is not None:
            notes.append(f"{band} read as {key} ({name} of the mode table {table_name!r})")
        out.append((key, tech, n))
    return tuple(out), notes


def _same_unit(a: str, b: str) -> bool:
    from ..crystal.names import hill_of

    try:
        return hill_of(a) == hill_of(b)
    except InputError:
        return False


#: cost of a predicted component that was not observed (weak or unresolved lines are common),
#: against 1 for an observed line that the candidate cannot produce (common practice: the
#: predicted number is an upper bound of what a spectrum shows)
MISSING_COST = 0.25


def _misfit(pred: int, n: int) -> float:
    return float(n - pred) if n > pred else MISSING_COST * (pred - n)


def _score(
    bands: list[BandState], observed: tuple[tuple[str, str, int], ...], lattice: dict[str, object]
) -> tuple[float, tuple[str, ...]]:
    score, reasons = 0.0, []
    for band, tech, n in observed:
        if band == "lattice":
            pred = sum(int(lattice[f"{kind}_{tech}"]) for kind in ("translational", "librational"))
            if pred != n:
                score += _misfit(pred, n)
                reasons.append(f"lattice: predicts {pred} {tech} lattice line{'s' if pred != 1 else ''}, {n} observed")
            continue
        unit, _, name = band.rpartition("/")
        matches = [b for b in bands if b.band == name and (not unit or b.unit == unit)]
        if not matches:
            score += n
            reasons.append(f"{band}: not a band of any unit")
            continue
        b = matches[0]
        pred = {"ir": b.ir, "raman": b.raman, "total": b.total}[tech]
        if pred != n:
            score += _misfit(pred, n)
            reasons.append(
                f"{band}: predicts {pred} {tech.upper() if tech == 'ir' else tech} "
                f"component{'s' if pred != 1 else ''}, {n} observed"
            )
    return score, tuple(reasons)


def lower(
    path: str | os.PathLike[str] | None = None,
    options: Options | None = None,
    *,
    atoms=None,
    max_index: int = DEFAULT_MAX_INDEX,
    observed: tuple[tuple[str, str, int], ...] = (),
    seed: int = 1,
    peaks=None,
    modes=None,
    window_cm1: float = 15.0,
    state: str = "ordered",
) -> Lowering:
    """Candidate lower-symmetry phases of an ordered structure, ranked by observed line counts.

    Parameters
    ----------
    path : path-like, optional
        Ordered parent structure (or pass ``atoms``).
    max_index : int
        Largest index (point-group index x cell multiple) to enumerate.
    observed : tuple of (band, technique, count)
        Observed numbers of components, e.g. ``(("T1u", "ir", 3),)``; see :func:`parse_observed`.
        The misfit of a candidate adds 1 for every observed line it cannot produce and
        ``MISSING_COST`` for every predicted component not observed. A band is a free
        species or a vibration name of the unit's mode table (``"SO4/nu3"``).
    peaks : PeakList, optional
        Measured lines (IR or Raman, said by the list): counted band by band
        (:func:`~splitting.spectra.counting.observed_counts`, window ``window_cm1``) only
        against the bands that are active in that technique in some candidate, and added to
        ``observed``.
    modes : ModeTable, optional
        Free-unit mode table for ``peaks`` and for vibration names (default: bundled).
    state : str
        State of the parent phase (``ordered``, ``static``, ``rotor``), stated in the
        result; the candidates are ordered phases.
    """
    from .disorder import normalise_state

    state = normalise_state(state, where="state of the parent")
    if not 2 <= max_index <= MAX_INDEX_LIMIT:
        raise InputError(
            f"the largest index {max_index} is out of range: it must be at least 2 and at most {MAX_INDEX_LIMIT} "
            "(the number of candidate subgroups grows steeply with the index)"
        )
    opts = options or Options()
    if atoms is None:
        if path is None:
            raise InputError("give a structure file or atoms")
        atoms = load_structure(path)
    source = os.fspath(path) if path is not None else "structure"
    cache = FreeUnitCache(opts.unit_tolerance, dict(opts.free_groups))
    parent, cell = predict_with_cell(atoms, opts, source=source, free_cache=cache)  # one symmetry search
    factor = FactorGroup.from_rotations(cell.rotations, cell.reference_axes)
    cand_opts = Options(
        tolerance=1e-3,
        unit_tolerance=opts.unit_tolerance,
        free_groups=opts.free_groups,
        formulas=opts.formulas,
        cutoffs=opts.cutoffs,
        bond_scale=opts.bond_scale,
        ionic_metals=opts.ionic_metals,
        standard_axes=opts.standard_axes,
    )
    found = [
        _candidate(cell, m, ops, mult, i, cand_opts, cache, source, seed)
        for m, ops, mult, i in subgroups_of(cell, factor, max_index)
    ]
    merged: dict[tuple, list[Candidate]] = {}
    for c in found:
        sig = (
            c.space_group[0],
            c.index,
            tuple(sorted((u.formula, u.site_group, u.wyckoff, u.count) for u in c.prediction.units)),
            tuple((b.unit, b.band, b.text()) for b in c.bands()),
        )
        merged.setdefault(sig, []).append(c)
    cands = [replace(group[0], variants=len(group)) for group in merged.values()]
    observed, notes = _resolve_observed(tuple(observed), parent, modes)
    if peaks is not None:
        counted, more = _count_peaks(peaks, parent, cands, modes, window_cm1)
        observed, notes = observed + counted, notes + more
    if observed:
        scored = []
        for c in cands:
            s, reasons = _score(c.bands(), observed, c.lattice())
            scored.append(replace(c, score=s, reasons=reasons))
        cands = sorted(scored, key=lambda c: (c.score, c.index, -c.space_group[0]))
    else:
        cands.sort(key=lambda c: (c.index, -c.space_group[0]))
    return Lowering(parent, max_index, tuple(cands), tuple(observed), state, tuple(notes))


#: subgroups found, per parent space group (its operations as the cell lists them) and largest index
_SUBGROUPS: dict[tuple, tuple] = {}


def subgroups_of(
    cell: CellSymmetry, factor: FactorGroup, max_index: int, folder: str | os.PathLike[str] | None = None
) -> tuple:
    """One representative of every class of subgroups of the cell's space group up to ``max_index``.

    Each is ``(m, ops, multiple, point_index)``: the sublattice (rows in the primitive basis),
    the operations ``(W, t)`` in the primitive cell's fractional coordinates, the cell multiple
    and the point-group index.  The search depends only on the space group's operations (as
    the cell lists them) and the largest index, so it is done once per space group and
    setting in a process and reused for every structure of that group.  With a ``folder`` (or
    the folder named by the environment variable ``SPLITTING_SUBGROUP_CACHE``) the result is
    also kept there as JSON and read back by later runs; an unreadable entry is searched again.
    Candidates past :data:`MAX_CANDIDATES` or :data:`MAX_CANDIDATE_ATOMS` are refused with an
    InputError naming the largest index within them (the search stops there).
    """
    g = factor.oriented.group
    rot = np.rint(cell.frac_rotations).astype(np.int64)
    tra = np.round((np.asarray(cell.frac_translations) % 1.0) * 1e6).astype(np.int64) % 1_000_000
    key = (g.name, int(max_index), rot.tobytes(), tra.tobytes(), np.asarray(factor.index, dtype=np.int64).tobytes())
    found = _SUBGROUPS.get((*key, sublattices))  # the enumeration of sublattices in use is part of the key
    if found is None:
        folder = folder if folder is not None else os.environ.get(SUBGROUP_CACHE_ENV) or None
        if sublattices is not _OWN_SUBLATTICES:
            folder = None
        found = _read_subgroups(folder, key) if folder else None
        if found is None:
            found = _within_limits(_search_subgroups(cell, factor, max_index), len(cell.numbers), max_index)
            if folder:
                _write_subgroups(folder, key, found)
            _SUBGROUPS[(*key, sublattices)] = found
            return found
        _SUBGROUPS[(*key, sublattices)] = found
    # kept from an earlier search (maybe of a structure with fewer atoms): the same limits
    _within_limits(((0, sub) for sub in sorted(found, key=lambda sub: sub[2] * sub[3])), len(cell.numbers), max_index)
    return found


#: environment variable naming a folder where the subgroups of each space group are kept between runs
SUBGROUP_CACHE_ENV = "SPLITTING_SUBGROUP_CACHE"
#: format of the files in that folder
_SUBGROUP_FORMAT = 1


def _subgroup_file(folder: str | os.PathLike[str], key: tuple) -> Path:
    import hashlib

    h = hashlib.sha256(f"{_SUBGROUP_FORMAT}/{key[0]}/{key[1]}".encode())
    for part in key[2:]:
        h.update(b"\0" + part)
    return Path(folder) / f"subgroups-{h.hexdigest()[:32]}.json"


def _read_subgroups(folder: str | os.PathLike[str], key: tuple) -> tuple | None:
    """The stored subgroups for ``key``, or None when there is no readable entry."""
    import json

    try:
        rows = json.loads(_subgroup_file(folder, key).read_text(encoding="utf-8"))
        return tuple(
            (
                np.array(m, dtype=np.int64).reshape(3, 3),
                [(np.array(w, dtype=np.int64).reshape(3, 3), np.array(t, dtype=float)) for w, t in ops],
                int(mult),
                int(i),
            )
            for m, ops, mult, i in rows
        )
    except (OSError, ValueError, TypeError, KeyError):
        return None


def _write_subgroups(folder: str | os.PathLike[str], key: tuple, found: tuple) -> None:
    """Store the subgroups for ``key`` (quietly skipped when the folder cannot be written)."""
    import json

    rows = [
        [m.astype(int).ravel().tolist(), [[w.astype(int).ravel().tolist(), t.tolist()] for w, t in ops], mult, i]
        for m, ops, mult, i in found
    ]
    target = _subgroup_file(folder, key)
    tmp = target.with_suffix(f".{os.getpid()}.tmp")
    try:
        tmp.write_text(json.dumps(rows), encoding="utf-8")
        os.replace(tmp, target)
    except OSError:
        tmp.unlink(missing_ok=True)


def _search_subgroups(cell: CellSymmetry, factor: FactorGroup, max_index: int):
    """The search behind :func:`subgroups_of` (uncached), by ascending index.

    Yields ``(place, (m, ops, multiple, point_index))``: ``place`` (class, multiple, lattice,
    choice) puts the subgroups back in the order of the class-by-class search.  Conjugate
    subgroups share their point-group class and cell multiple, so the representative kept for
    each class does not depend on the order.
    """
    g = factor.oriented.group
    by_std = {int(s): k for k, s in enumerate(factor.index)}
    seen: set[tuple] = set()
    parent_ops = [
        (np.rint(w).astype(np.int64), t) for w, t in zip(cell.frac_rotations, cell.frac_translations, strict=True)
    ]
    classes = []
    for number, members in enumerate(subgroup_classes(g.name)):
        i = g.order // len(members)
        if i <= max_index:
            gens = [
                (np.rint(cell.frac_rotations[by_std[s]]).astype(int), cell.frac_translations[by_std[s]])
                for s in generators_of(g.table, members)
            ]
            classes.append((number, i, len(members), gens))
    lattices: dict[int, np.ndarray] = {}
    for index in range(2, max_index + 1):
        for number, i, order, gens in classes:
            if index % i:
                continue
            mult = index // i
            if mult not in lattices:
                lattices[mult] = np.array(sublattices(mult), dtype=np.int64).reshape(-1, 3, 3)
            stack = lattices[mult]
            kept = np.flatnonzero(kept_lattices(stack, [w for w, _ in gens]))
            for place in kept:
                m = stack[place]
                cosets = coset_vectors(m)
                for q, choice in enumerate(closing_choices(gens, m, cosets)):
                    trial = [(w, t + cosets[k]) for (w, t), k in zip(gens, choice, strict=True)]
                    ops = close_operations(trial, m, order)
                    if ops is None or len(ops) != order:  # pragma: no cover - closing_choices said it closes
                        continue
                    key = canonical_key(m, ops, parent_ops)
                    if key not in seen:
                        seen.add(key)
                        yield (number, mult, int(place), q), (m, ops, mult, i)


#: most candidate subgroups ``lower`` predicts, and most atoms in all their cells (about a minute of work)
MAX_CANDIDATES = 600
MAX_CANDIDATE_ATOMS = 200_000


def _within_limits(found, atoms: int, max_index: int) -> tuple:
    """The subgroups in the order of the class-by-class search; InputError once the work grows too large.

    ``found`` yields ``(place, subgroup)`` by ascending index; the search stops at the first
    subgroup past :data:`MAX_CANDIDATES` or :data:`MAX_CANDIDATE_ATOMS` (a candidate's cell holds
    ``multiple x atoms`` atoms) and the message names the largest index that stays within both.
    """
    kept, count, total = [], 0, 0
    for place, sub in found:
        count += 1
        total += sub[2] * atoms
        if count > MAX_CANDIDATES or total > MAX_CANDIDATE_ATOMS:
            index = sub[2] * sub[3]
            what = (
                f"more than {MAX_CANDIDATES} candidate subgroups by index {index}"
                if count > MAX_CANDIDATES
                else f"candidate cells of more than {MAX_CANDIDATE_ATOMS} atoms in all by index {index} "
                f"({atoms} atoms in the primitive cell)"
            )
            fix = f"give --max-index {index - 1} or less" if index > 2 else "give a smaller cell"
            raise InputError(f"lower to index {max_index} is too large: {what}; {fix}")
        kept.append((place, sub))
    kept.sort(key=lambda row: row[0])
    return tuple(sub for _, sub in kept)


def _count_peaks(peaks, parent: CrystalPrediction, cands, modes, window_cm1: float):
    """Observed counts from a peak list, against the bands some candidate makes active in its technique."""
    from ..spectra.bands import find_unit_table
    from ..spectra.catalogue import ModeTable
    from ..spectra.counting import observed_counts

    tech = peaks.technique
    if tech is None:
        raise InputError(f"{peaks.source or 'peaks'}: say whether the lines are IR or Raman")
    units = [u for u in parent.units if u.correlation]
    if not units:
        raise InputError(f"{parent.source}: no molecular unit whose bands could be counted")
    if modes is not None:
        chosen = [u for u in units if _same_unit(modes.formula, u.formula)]
        if not chosen:
            names = ", ".join(u.name for u in units)
            raise InputError(
                f"mode table {modes.name!r} ({modes.formula}) matches no unit of {parent.source} ({names})"
            )
        unit, table = chosen[0], modes
    else:
        unit, table = units[0], find_unit_table(units[0].formula)
    active = set()
    for c in cands:
        for b in c.bands():
            if b.unit == unit.formula and (b.ir if tech == "ir" else b.raman):
                active.add(b.band)
    kept = tuple(m for m in table.modes if m.species in active)
    dropped = [m.name for m in table.modes if m.species not in active]
    notes = []
    if dropped:
        notes.append(
            f"{tech} lines counted only against bands active in {tech} in some candidate; not counted against "
            + ", ".join(dropped)
        )
    if not kept:
        return (), [*notes, f"no band of {unit.name} is {tech}-active in any candidate: no line counted"]
    fields = {f: getattr(table, f) for f in table.__dataclass_fields__}
    restricted = ModeTable(**{**fields, "modes": kept, "complete": False})
    counts = [c for c in observed_counts(peaks, restricted, technique=tech, window_cm1=window_cm1) if c[0] != "lattice"]
    # the lattice region ends below the lowest fundamental of the whole table
    lattice = [c for c in observed_counts(peaks, table, technique=tech, window_cm1=window_cm1) if c[0] == "lattice"]
    return tuple(counts + lattice), notes


def _candidate(
    cell: CellSymmetry,
    m: np.ndarray,
    ops,
    mult: int,
    point_index: int,
    opts: Options,
    cache: FreeUnitCache,
    source: str,
    seed: int,
) -> Candidate:
    m = _along_file_axes(cell, m)
    label = _label_cell(cell, m)
    atoms, fixed, shift = _realise(cell, m, ops, seed)
    kind = "t" if mult == 1 else ("k" if point_index == 1 else "t+k")
    supercell = tuple(tuple(int(x) for x in r) for r in m)
    pred = _predict_known(cell, m, ops, atoms, fixed, shift, opts, cache, f"{source} (candidate)", label)
    if pred is None:
        pred, _ = predict_with_cell(atoms, opts, source=f"{source} (candidate)", free_cache=cache, label_cell=label)
    realised = point_group(pred.factor_group).order * pred.atoms_primitive == len(ops) * len(atoms)
    if not realised:
        # the atoms cannot show this subgroup (they sit where no displacement breaks the parent
        # symmetry): predict from the candidate's own operations on the undisplaced supercell
        pred = _predict_from_operations(cell, m, ops, opts, cache, source, label)
    sg = pred.space_group
    return Candidate(
        kind, point_index * mult, pred.factor_group, mult, supercell, (sg.number, sg.symbol), pred, realised=realised
    )


def _label_cell(cell: CellSymmetry, m: np.ndarray) -> np.ndarray | None:
    """Rows n_a a, n_b b, n_c c: the smallest multiples of the file's axes that are lattice vectors of
    the supercell ``m`` (rows in the parent's primitive basis); None with ``--standard-axes``, for a
    parent without a file cell, or when an axis has no multiple in the supercell's lattice.

    The candidate's labels, components and site symbols are written in this cell.  For a
    t-subgroup (every translation kept) it is the file's own cell, also where the candidate is
    built on the parent's primitive cell (a centred parent: Fmmm below Fm-3 is labelled in the cube).
    """
    if cell.given_lattice is None or cell.standard_axes:
        return None
    from fractions import Fraction
    from math import lcm

    inv = np.linalg.inv(m @ cell.lattice)
    steps = []
    for axis in np.asarray(cell.given_lattice, dtype=float):
        den = 1
        for x in axis @ inv:  # the file's axis in the supercell's basis
            f = Fraction(float(x)).limit_denominator(64)
            if abs(float(f) - x) > 1e-6:
                return None
            den = lcm(den, f.denominator)
        steps.append(den)
    return np.array(steps, dtype=float)[:, None] * np.asarray(cell.given_lattice, dtype=float)


def _along_file_axes(cell: CellSymmetry, m: np.ndarray) -> np.ndarray:
    """Another basis of the supercell ``m`` (rows in the parent's primitive basis) whose vectors run
    along the file's a, b, c (multiples of them), when the supercell has one; else ``m`` itself.

    The candidate is then built in the axes of the file; a supercell that is no multiple of the
    file's cell (half of a centred cell, a rotated cell) is built on ``m`` and only labelled in
    the axes of the file (:func:`_label_cell`).
    """
    label = _label_cell(cell, m)
    if label is None:
        return m
    t = label @ np.linalg.inv(m @ cell.lattice)
    if abs(abs(np.linalg.det(t)) - 1) > 1e-6 or np.abs(t - np.rint(t)).max() > 1e-6:
        return m  # the multiples of the file's axes span a smaller lattice than the supercell
    return np.rint(t).astype(int) @ np.asarray(m, dtype=int)


def _predict_known(
    cell: CellSymmetry,
    m: np.ndarray,
    ops,
    atoms,
    fixed: np.ndarray,
    shift: np.ndarray,
    opts: Options,
    cache: FreeUnitCache,
    source: str,
    label: np.ndarray | None = None,
) -> CrystalPrediction | None:
    """The prediction of a realised candidate whose space group is exactly its operations, without a
    search of all its atoms (:func:`~splitting.crystal.spacegroup.cell_of_known_group`); None when that
    cannot be shown (the caller then predicts the atoms as any structure)."""
    from ..crystal.limits import check_atom_count
    from ..crystal.predict import _predict, units_of
    from ..crystal.spacegroup import cell_of_known_group
    from ..errors import BookkeepingError

    check_atom_count(len(atoms), opts.max_atoms)
    if 2 * (3 * len(ops) + int(fixed.sum())) > len(atoms):  # a skeleton no smaller than the atoms: search them
        return None
    if not _shows_only(cell, m, ops, atoms, shift):
        return None
    minv = np.linalg.inv(m.T.astype(float))
    rots = np.array([np.rint(minv @ w @ m.T) for w, _ in ops])
    trans = np.array([minv @ t for _, t in ops])
    known = cell_of_known_group(
        atoms.cell[:],
        atoms.get_scaled_positions(wrap=True),
        atoms.numbers,
        rots,
        trans,
        fixed,
        tolerance=opts.tolerance,
        standard_axes=opts.standard_axes,
    )
    if known is None:
        return None
    if label is not None:
        known = known.labelled_on(np.rint(label @ np.linalg.inv(atoms.cell[:])))
    try:
        pred = _predict(known, units_of(known, opts), opts, source, cache)
    except BookkeepingError:
        return None
    return replace(pred, cell_parameters=tuple(float(v) for v in atoms.cell.cellpar()))


def _predict_from_operations(
    cell: CellSymmetry,
    m: np.ndarray,
    ops,
    opts: Options,
    cache: FreeUnitCache,
    source: str,
    label: np.ndarray | None = None,
) -> CrystalPrediction:
    from ..crystal.predict import _predict, units_of
    from ..crystal.spacegroup import cell_from_operations

    cosets = coset_vectors(m)
    lat = m @ cell.lattice
    cart = np.concatenate([(cell.frac + u) @ cell.lattice for u in cosets])
    frac = cart @ np.linalg.inv(lat)
    frac -= np.floor(frac + 1e-9)
    to_super = np.linalg.inv(m.T)  # primitive fractional -> supercell fractional (column vectors)
    rots = np.array([to_super @ w @ m.T for w, _ in ops])
    trans = np.array([to_super @ t for _, t in ops])
    sub = cell_from_operations(
        lat,
        frac,
        np.tile(cell.numbers, len(cosets)),
        rots,
        trans,
        cell.conventional,
        given_lattice=cell.given_lattice if label is None else label,
        standard_axes=cell.standard_axes,
    )
    return _predict(sub, units_of(sub, opts), opts, f"{source} (candidate, from its operations)", cache)


def observed_from_mapping(counts: Mapping[str, Mapping[str, int]]) -> tuple[tuple[str, str, int], ...]:
    """``{"T1u": {"ir": 3}}`` -> ``(("T1u", "ir", 3),)``."""
    return tuple((band, tech, int(n)) for band, d in counts.items() for tech, n in d.items())

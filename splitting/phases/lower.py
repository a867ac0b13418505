"""Candidate lower-symmetry phases of a structure, generated from its own operations.

No table of subgroups is used.  For every subgroup ``H`` of the factor group (up to
conjugacy) and every sublattice ``L'`` of the primitive lattice that ``H`` keeps (index
``m``, enumerated as Hermite normal forms), each operation keeps its rotation and gets one
of the ``m`` translation cosets; a choice is kept when the operations close modulo ``L'``.
``m = 1`` gives the translationengleiche (t) subgroups, ``H = F`` the klassengleiche (k)
ones, and the rest are t+k subgroups (International Tables for Crystallography, Vol. A1,
describes the same two kinds of maximal subgroups).  Each candidate is realised as a
structure: the parent (in the supercell ``L'``) with a small random displacement averaged
over the candidate's operations, whose space group spglib then confirms, and the usual
pipeline predicts its spectrum.
"""

from __future__ import annotations

import functools
import itertools
import os
from collections.abc import Mapping
from dataclasses import dataclass, field, replace
from pathlib import Path

import numpy as np

from .._display import Summarised
from ..correlation import FactorGroup
from ..crystal.freeunits import FreeUnitCache
from ..crystal.predict import Options, predict_atoms, predict_with_cell
from ..crystal.read import load_structure
from ..crystal.results import CrystalPrediction
from ..crystal.spacegroup import CellSymmetry
from ..defaults import DEFAULT_MAX_INDEX
from ..errors import InputError
from ..groups.pointgroup import point_group
from ..groups.subgroups import generators_of, subgroup_classes
from .compare import BandState, Phase

__all__ = ["DEFAULT_MAX_INDEX", "Candidate", "Lowering", "lower", "parse_observed", "sublattices"]

#: largest index accepted: |Oh| = 48 reaches every t-subgroup of a cubic parent; beyond it the search runs for minutes
MAX_INDEX_LIMIT = 48
#: displacement (angstrom) used to realise a candidate as a structure
DISPLACEMENT = 0.05


def sublattices(index: int) -> list[np.ndarray]:
    """Every sublattice of Z^3 of the given index, as lower-triangular Hermite normal forms.

    Rows are the new basis vectors in the old basis.

    Examples
    --------
    >>> len(sublattices(2)), len(sublattices(4))
    (7, 35)
    """
    out = []
    for a in range(1, index + 1):
        if index % a:
            continue
        for c in range(1, index // a + 1):
            if (index // a) % c:
                continue
            f = index // (a * c)
            for b, d, e in itertools.product(range(a), range(a), range(c)):
                out.append(np.array([[a, 0, 0], [b, c, 0], [d, e, f]]))
    return out


_OWN_SUBLATTICES = sublattices


def hermite_normal_form(basis: np.ndarray) -> np.ndarray:
    """Lower-triangular Hermite normal form of an integer lattice basis given as rows.

    Examples
    --------
    >>> hermite_normal_form(np.array([[0, 1, 1], [1, 0, 1], [1, 1, 0]])).tolist()
    [[2, 0, 0], [1, 1, 0], [1, 0, 1]]
    """
    h = np.array(basis, dtype=np.int64)
    for col, row in ((2, 2), (1, 1), (0, 0)):
        # bring the gcd of h[:row+1, col] into h[row, col] and zero the rows above
        while True:
            nz = [r for r in range(row + 1) if h[r, col] != 0]
            if len(nz) <= 1:
                break
            piv = min(nz, key=lambda r: abs(h[r, col]))
            for r in nz:
                if r != piv:
                    h[r] -= (h[r, col] // h[piv, col]) * h[piv]
        nz = [r for r in range(row + 1) if h[r, col] != 0]
        if not nz:
            raise InputError("lattice basis is singular")
        h[[row, nz[0]]] = h[[nz[0], row]]
        if h[row, col] < 0:
            h[row] = -h[row]
    for r, c in ((1, 0), (2, 1), (2, 0)):
        h[r] -= (h[r, c] // h[c, c]) * h[c]
    return h


def _canonical(
    m: np.ndarray, ops: list[tuple[np.ndarray, np.ndarray]], parent: list[tuple[np.ndarray, np.ndarray]]
) -> tuple:
    """A key shared by all subgroups conjugate under the parent space group (rotations and lattice).

    Each conjugate (by a parent operation and a lattice translation of the parent) is written as
    one row of integers: its sublattice in Hermite normal form, its rotations (coded and sorted;
    a subgroup holds each rotation once modulo the sublattice) and their translations in the
    sublattice's fractional coordinates (in millionths, in the order of the rotations); the key
    is the smallest row.  All translations of one parent operation are done at once.
    """
    ws = np.array([w for w, _ in ops], dtype=np.int64)
    ts = np.array([t for _, t in ops], dtype=float)
    digits = 16 ** np.arange(9, dtype=np.int64)
    rows = []
    for wg, tg in parent:
        winv = np.rint(np.linalg.inv(wg)).astype(np.int64)
        m2 = _hnf_cached(wg @ m.T)
        w2 = np.einsum("ij,njk,kl->nil", wg, ws, winv)
        code = (w2.reshape(len(w2), 9) + 8) @ digits  # entries of integer rotations are small (|w| < 8)
        order = np.argsort(code, kind="stable")
        minv = np.linalg.inv(m2.T)
        a, c, f = int(m2[0, 0]), int(m2[1, 1]), int(m2[2, 2])
        shifts = tg + np.array(list(itertools.product(range(a), range(c), range(f))), dtype=float)  # (k, 3)
        # t2 = W_g t + s - W2 s for every shift s
        t2 = (ts @ wg.T)[None] + shifts[:, None, :] - np.einsum("nij,kj->kni", w2, shifts)
        frac = t2[:, order] @ minv.T
        frac = np.round((frac - np.floor(frac + 1e-8)) * 1e6).astype(np.int64) % 1_000_000
        head = np.concatenate([m2.reshape(9), code[order]])
        rows.append(np.hstack([np.broadcast_to(head, (len(frac), len(head))), frac.reshape(len(frac), -1)]))
    table = np.vstack(rows)
    best = table[np.lexsort(table.T[::-1])[0]]
    return (len(ops), best.tobytes())


@functools.lru_cache(maxsize=4096)
def _hnf_bytes(data: bytes) -> bytes:
    return hermite_normal_form(np.frombuffer(data, dtype=np.int64).reshape(3, 3)).astype(np.int64).tobytes()


def _hnf_cached(basis_t: np.ndarray) -> np.ndarray:
    """Hermite normal form of the rows of ``basis_t.T`` (kept for repeated bases)."""
    data = np.ascontiguousarray(np.rint(basis_t.T).astype(np.int64)).tobytes()
    return np.frombuffer(_hnf_bytes(data), dtype=np.int64).reshape(3, 3)


def _keeps(m: np.ndarray, rotations: np.ndarray) -> bool:
    """True when every fractional rotation maps the sublattice (rows of m) onto itself."""
    inv = np.linalg.inv(m.T)
    for w in rotations:
        c = inv @ w @ m.T
        if not np.allclose(c, np.round(c), atol=1e-8):
            return False
    return True


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


def _close_ops(
    gens: list[tuple[np.ndarray, np.ndarray]], m: np.ndarray, order: int
) -> list[tuple[np.ndarray, np.ndarray]] | None:
    """Close (W, t) pairs modulo the sublattice m; None if some rotation gets two translations."""
    minv = np.linalg.inv(m.T)

    def key(w: np.ndarray, t: np.ndarray) -> tuple[bytes, bytes]:
        f = minv @ t
        f = np.round((f - np.floor(f + 1e-8)) * 1e6).astype(np.int64) % 1_000_000
        return w.astype(np.int64).tobytes(), f.tobytes()

    ident = (np.eye(3, dtype=int), np.zeros(3))
    found = {key(*ident)[0]: ident}
    tkeys = {key(*ident)[0]: key(*ident)[1]}
    frontier = [ident]
    while frontier:
        new = []
        for w1, t1 in frontier:
            for w2, t2 in gens:
                w, t = w1 @ w2, w1 @ t2 + t1
                kw, kt = key(w, t)
                if kw in tkeys:
                    if tkeys[kw] != kt:
                        return None
                    continue
                tkeys[kw] = kt
                found[kw] = (w, t)
                new.append((w, t))
        frontier = new
        if len(found) > order:
            return None
    return list(found.values())


def _realise(cell: CellSymmetry, m: np.ndarray, ops: list[tuple[np.ndarray, np.ndarray]], seed: int):
    """Supercell of the parent with a displacement pattern averaged over the candidate's operations."""
    from ase import Atoms

    lat = m @ cell.lattice
    a, c, f = int(m[0, 0]), int(m[1, 1]), int(m[2, 2])
    cosets = [np.array(u) for u in itertools.product(range(a), range(c), range(f))]
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
    for w, t in ops:
        r = plat.T @ w @ np.linalg.inv(plat.T)
        img = ((cart @ r.T + t @ plat) @ inv) % 1.0
        _, perm = tree.query(img)
        sym += disp[perm] @ r  # R^-1 d_{pi(i)} written for row vectors
    sym /= len(ops)
    norm = np.max(np.linalg.norm(sym, axis=1))
    if norm > 1e-9:
        sym *= DISPLACEMENT / norm
    atoms = Atoms(numbers=numbers, positions=cart + sym, cell=lat, pbc=True)
    atoms.wrap()
    return atoms


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
            found = tuple(_search_subgroups(cell, factor, max_index))
            if folder:
                _write_subgroups(folder, key, found)
        _SUBGROUPS[(*key, sublattices)] = found
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
    """The search behind :func:`subgroups_of` (uncached)."""
    g = factor.oriented.group
    by_std = {int(s): k for k, s in enumerate(factor.index)}
    seen: set[tuple] = set()
    parent_ops = [
        (np.rint(w).astype(np.int64), t) for w, t in zip(cell.frac_rotations, cell.frac_translations, strict=True)
    ]
    lattices = {m: sublattices(m) for m in range(1, max_index + 1)}
    for members in subgroup_classes(g.name):
        i = g.order // len(members)
        if i > max_index:
            continue
        cell_ops = [by_std[s] for s in sorted(members)]
        w_frac = np.rint(cell.frac_rotations[cell_ops]).astype(int)
        gens_std = generators_of(g.table, members)
        gens = [
            (np.rint(cell.frac_rotations[by_std[s]]).astype(int), cell.frac_translations[by_std[s]]) for s in gens_std
        ]
        for mult in range(1, max_index // i + 1):
            if i == 1 and mult == 1:
                continue
            for m in lattices[mult]:
                if not _keeps(m, w_frac):
                    continue
                a, c, f = int(m[0, 0]), int(m[1, 1]), int(m[2, 2])
                cosets = [np.array(u, dtype=float) for u in itertools.product(range(a), range(c), range(f))]
                for choice in itertools.product(range(len(cosets)), repeat=len(gens)):
                    trial = [(w, t + cosets[k]) for (w, t), k in zip(gens, choice, strict=True)]
                    ops = _close_ops(trial, m, len(members))
                    if ops is None or len(ops) != len(members):
                        continue
                    key = _canonical(m, ops, parent_ops)
                    if key not in seen:
                        seen.add(key)
                        yield m, ops, mult, i


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
    atoms = _realise(cell, m, ops, seed)
    kind = "t" if mult == 1 else ("k" if point_index == 1 else "t+k")
    supercell = tuple(tuple(int(x) for x in r) for r in m)
    pred = predict_atoms(atoms, opts, source=f"{source} (candidate)", free_cache=cache, scan=False)
    realised = point_group(pred.factor_group).order * pred.atoms_primitive == len(ops) * len(atoms)
    if not realised:
        # the atoms cannot show this subgroup (they sit where no displacement breaks the parent
        # symmetry): predict from the candidate's own operations on the undisplaced supercell
        pred = _predict_from_operations(cell, m, ops, opts, cache, source)
    sg = pred.space_group
    return Candidate(
        kind, point_index * mult, pred.factor_group, mult, supercell, (sg.number, sg.symbol), pred, realised=realised
    )


def _predict_from_operations(
    cell: CellSymmetry, m: np.ndarray, ops, opts: Options, cache: FreeUnitCache, source: str
) -> CrystalPrediction:
    from ..crystal.predict import _predict, units_of
    from ..crystal.spacegroup import cell_from_operations

    a, c, f = int(m[0, 0]), int(m[1, 1]), int(m[2, 2])
    cosets = [np.array(u) for u in itertools.product(range(a), range(c), range(f))]
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
        given_lattice=cell.given_lattice,
        standard_axes=cell.standard_axes,
    )
    return _predict(sub, units_of(sub, opts), opts, f"{source} (candidate, from its operations)", cache)


def observed_from_mapping(counts: Mapping[str, Mapping[str, int]]) -> tuple[tuple[str, str, int], ...]:
    """``{"T1u": {"ir": 3}}`` -> ``(("T1u", "ir", 3),)``."""
    return tuple((band, tech, int(n)) for band, d in counts.items() for tech, n in d.items())

"""One Wyckoff description of a crystal whatever origin the file uses.

Moving the origin of the standard setting by a translation ``t`` that maps the space group
onto itself (a translation of its Euclidean normaliser, International Tables for
Crystallography Vol. A, Part 15) gives another, equally valid standard description: the
operations are the same, but a point's Wyckoff letter can change (naphthalene's molecules on
2a or 2d of P2_1/c, C60 on 4a or 4b of Pa-3, NH4+ and Cl- on 1a and 1b of P-43m, or the
other way round).  spglib's choice among these follows the input.  This module lists every
description and keeps the one ranked first by :func:`description_key` (the rule is stated in
docs/conventions.md), so the letters depend on the crystal only.

A group pays for this only when its normaliser adds translations that are not centring
translations (modulo the directions of a polar axis, along which every origin is standard):
one spglib search of a skeleton (three random general orbits and one orbit per site on a
special position, of the conventional standard cell) per description.
"""

from __future__ import annotations

import functools
import itertools
import operator

import numpy as np

__all__ = ["canonical_names", "description_key", "origin_shifts", "wyckoff_names"]

#: shifts (fractions of the conventional cell) tried, on every axis
_GRID = np.arange(8) / 8.0


def _database(hall: int) -> tuple[np.ndarray, np.ndarray]:
    from .spacegroup import _database as database

    return database(hall)


@functools.lru_cache(maxsize=256)
def _parts(hall: int) -> tuple[np.ndarray, np.ndarray, np.ndarray, list[int]]:
    """Operations of the standard setting ``hall``, its centring translations and polar axes."""
    w, t = _database(hall)
    centring = _centring(w, t)
    centring.setflags(write=False)
    return w, t, centring, _free_axes(w)


def _centring(w: np.ndarray, t: np.ndarray) -> np.ndarray:
    """Centring translations (including 0) of a conventional setting's operations."""
    c = np.mod(t[np.all(w.reshape(len(w), 9) == np.eye(3).reshape(9), axis=1)], 1.0)
    return _unique_rows(np.round(c, 9) % 1.0)


def _unique_rows(a: np.ndarray) -> np.ndarray:
    """``np.unique(a, axis=0)`` of a few rows of three numbers (distinct rows in increasing order)."""
    return np.array(sorted(set(map(tuple, a.tolist()))), dtype=float).reshape(-1, 3)


def _free_axes(w: np.ndarray) -> list[int]:
    """Axes along which every operation leaves a point's coordinate alone (a polar axis)."""
    return [i for i in range(3) if np.all(w[:, :, i] == np.eye(3)[i])]


def _reduce(shifts: np.ndarray, centring: np.ndarray, free: list[int]) -> np.ndarray:
    """One representative per shift modulo the lattice, the centring and the polar directions."""
    s = np.array(shifts, dtype=float).reshape(-1, 3)
    s[:, free] = 0.0
    cands = np.mod(s[:, None, :] + centring[None], 1.0)  # (shifts, centrings, 3)
    cands = np.round(cands * 8) / 8 % 1.0
    keys = cands @ np.array([64.0, 8.0, 1.0]) * 8
    return cands[np.arange(len(s)), np.argmin(keys, axis=1)]


@functools.lru_cache(maxsize=256)
def origin_shifts(hall: int) -> np.ndarray:
    """Origin shifts of the standard setting ``hall`` that map its group onto itself, other than 0.

    A shift ``t`` (fractions of the conventional cell) qualifies when ``(W - I) t`` is a lattice or
    centring translation for every rotation part W, so that every operation (W, w) becomes
    (W, w + (W - I) t), again an operation.  Shifts that differ by a centring translation or
    along a polar axis give the same letters and are listed once.

    Examples
    --------
    >>> origin_shifts(1).tolist()  # P1: every origin is standard, none gives other letters
    []
    >>> origin_shifts(501).tolist()  # Pa-3: 4a and 4b exchanged
    [[0.5, 0.5, 0.5]]
    """
    w, _, centring, free = _parts(hall)
    # the grid with 0 along polar axes, rows in increasing order
    axes = [np.zeros(1) if i in free else _GRID for i in range(3)]
    grid = np.stack(np.meshgrid(*axes, indexing="ij"), axis=-1).reshape(-1, 3)

    def fits(shifts: np.ndarray, ops: np.ndarray) -> np.ndarray:
        moved = np.einsum("nij,gj->gni", ops - np.eye(3), shifts)  # (shifts, operations, 3)
        gap = moved[:, :, None, :] - centring[None, None]  # must be integer for some centring
        return np.all(np.any(np.all(np.abs(gap - np.round(gap)) < 1e-9, axis=3), axis=2), axis=1)

    # a few operations rule out most of the grid; the rest are checked on what is left
    ok = np.flatnonzero(fits(grid, w[:4]))
    ok = ok[fits(grid[ok], w[4:])]
    found = _unique_rows(_reduce(grid[ok], centring, free))
    found = found[np.any(found != 0, axis=1)]
    found.setflags(write=False)
    return found


def _pick(items, keys: list) -> tuple:
    """``tuple(items[k] for k in keys)`` (one call for many keys)."""
    if len(keys) < 2:
        return tuple(items[k] for k in keys)
    return operator.itemgetter(*keys)(items)


def _rank(letter: str) -> int:
    """Order of a Wyckoff letter: a, b, ... z, then spglib's A for the 27th."""
    return ord(letter) - ord("a") if letter.islower() else 26 + ord(letter) - ord("A")


def description_key(point_letters, point_keys, atom_letters, atom_numbers) -> tuple:
    """Rank of one description (smaller first): see docs/conventions.md, "Wyckoff letters".

    First the unit orbits' letters, sorted; then the same letters taken unit by unit in the
    order of ``point_keys`` (decreasing number of atoms, then formula, in the pipeline); then the
    primitive-cell atoms' letters, heaviest element first.

    >>> description_key(["b", "a"], [(-5, "H4N"), (-1, "Cl")], [], [])
    ((0, 1), ((-5, 'H4N', 1), (-1, 'Cl', 0)), ())
    """
    ranks = [_rank(x) for x in point_letters]
    units = tuple(sorted((*k, r) for k, r in zip(point_keys, ranks, strict=True)))
    if len(atom_letters) != len(atom_numbers):
        raise ValueError("one letter per atom is needed")
    # the atoms' pairs (-Z, rank) sorted: heaviest first, then by letter (one sort of arrays)
    rank_of = {x: _rank(x) for x in set(atom_letters)}
    z = -np.asarray(atom_numbers, dtype=np.int64).reshape(-1)
    r = np.array(_pick(rank_of, atom_letters), dtype=np.int64)
    order = np.lexsort((r, z))
    atoms = tuple(zip(z[order].tolist(), r[order].tolist(), strict=True))
    return tuple(sorted(ranks)), units, atoms


def _orbit(w: np.ndarray, t: np.ndarray, x: np.ndarray) -> np.ndarray:
    """Distinct images (fractions of the conventional cell, in [0, 1)) of one point."""
    f = np.mod(x @ np.transpose(w, (0, 2, 1)) + t, 1.0)
    d = f[:, None] - f[None]
    same = np.all(np.abs(d - np.round(d)) < 1e-6, axis=2)
    return f[~np.any(np.tril(same, -1), axis=1)]


def _stabiliser(w: np.ndarray, t: np.ndarray, x: np.ndarray) -> np.ndarray:
    """Rotation parts of the operations that leave the point x in place (modulo the lattice)."""
    d = x @ np.transpose(w, (0, 2, 1)) + t - x
    return w[np.all(np.abs(d - np.round(d)) < 1e-6, axis=1)]


#: lattice vectors tried when a moved point is brought onto the fixed subspace of a site
_STEPS = np.array(list(itertools.product(range(-2, 3), repeat=3)), dtype=float)


def _same_orbit(orbit: np.ndarray, x: np.ndarray) -> bool:
    d = orbit - x
    return bool(np.any(np.all(np.abs(d - np.round(d)) < 1e-6, axis=1)))


def canonical_names(cell, points, point_keys, names):
    """The names of ``points`` in the first-ranked standard description, and its origin shift.

    ``names`` are the points' (Wyckoff position, site symbol) in the description spglib chose
    (from :meth:`CellSymmetry.wyckoff_of`); ``point_keys`` order the points for the tie-break of
    :func:`description_key`.  Returns the names and the shift ``s`` (fractions of the conventional
    cell) to add to the standard coordinates (x_s = P x + p + s); ``s`` is 0 and the names are
    returned as given when the group's normaliser adds no translation, or when the descriptions
    cannot all be named (they are then left as spglib chose them).
    """
    zero = np.zeros(3)
    if not cell.sites_named or cell.origin_shift is None or not len(points):
        return names, zero
    shifts = origin_shifts(cell.info.hall_number)
    if not len(shifts):
        return names, zero
    found = _all_descriptions(cell, np.asarray(points, dtype=float).reshape(-1, 3), shifts)
    best = _first_description(cell, found, point_keys)
    if best is None:
        return names, zero
    letters, shift = best
    return _renamed(names, letters), shift


def wyckoff_names(cell, points, point_keys) -> tuple[list[tuple[str, str]], np.ndarray]:
    """``canonical_names(cell, points, point_keys, cell.wyckoff_of(points))``, with one spglib search
    fewer where points hold no atom.

    The search that names every description (:func:`_all_descriptions`) then holds the points as
    they are, so it also gives their site symbols (the same in every description: the shifts map
    the group onto itself); their letters are those of the first-ranked description.  Where that
    search is not made, or does not name every description, the names are those of
    :meth:`CellSymmetry.wyckoff_of` (its own search of a skeleton) as in the general route.
    """
    zero = np.zeros(3)
    pts = np.asarray(points, dtype=float).reshape(-1, 3)
    if not cell.sites_named or not len(pts):
        return cell.wyckoff_of(pts), zero
    sizes, on_atom = cell._orbit_sizes(pts), cell._atom_at(pts)
    known = cell._known_names(sizes, on_atom)
    shifts = origin_shifts(cell.info.hall_number) if cell.origin_shift is not None else np.zeros((0, 3))
    if not len(shifts):
        return _general_names(cell, pts, known, sizes, on_atom), zero
    extra: dict = {}
    found = _all_descriptions(cell, pts, shifts, sizes=sizes, on_atom=on_atom, extra=extra)
    best = _first_description(cell, found, point_keys)
    if best is None:
        return _general_names(cell, pts, known, sizes, on_atom), zero
    symbols = extra.get("symbols", {})
    point_site = extra["point_site"]
    if any(name is None and symbols.get(point_site[n]) is None for n, name in enumerate(known)):  # pragma: no cover
        return _renamed(_general_names(cell, pts, known, sizes, on_atom), best[0]), best[1]
    named = [("", symbols[point_site[n]]) if name is None else name for n, name in enumerate(known)]
    multiplicity = cell._multiplicities(sizes)
    return [(f"{m}{new}", site) for m, new, (_, site) in zip(multiplicity, best[0], named, strict=True)], best[1]


def _general_names(cell, pts: np.ndarray, known: list, sizes: list[int], on_atom: np.ndarray) -> list:
    """:meth:`CellSymmetry.wyckoff_of` of the points, from their ``known`` names where none is missing."""
    if any(name is None for name in known):
        return cell.wyckoff_of(pts)
    return [(f"{m}{w}", site) for m, (w, site) in zip(cell._multiplicities(sizes), known, strict=True)]


def _renamed(names: list[tuple[str, str]], letters) -> list[tuple[str, str]]:
    """``names`` with their Wyckoff letters replaced (the multiplicities and site symbols kept)."""
    out = []
    for (w, site), new in zip(names, letters, strict=True):
        old = w.lstrip("0123456789")
        out.append((w[: len(w) - len(old)] + new, site))
    return out


def _first_description(cell, found: dict | None, point_keys) -> tuple[tuple[str, ...], np.ndarray] | None:
    """The points' letters in the first-ranked description of ``found`` and its shift; None when
    there is none to choose (or the description of shift 0 does not name the atoms as the cell does)."""
    if found is None:
        return None
    # the atoms' letters came from the search of the cell as given, whose origin is shift 0
    unshifted = found.get((0.0, 0.0, 0.0))
    if unshifted is None or unshifted[1] != tuple(cell.wyckoffs):  # pragma: no cover - a frame mix-up
        return None
    numbers = np.asarray(cell.numbers)

    def rank(item):
        s, (pl, al) = item
        return description_key(pl, point_keys, al, numbers), s

    best, (letters, _) = min(found.items(), key=rank)
    return letters, np.array(best)


def _all_descriptions(
    cell, points: np.ndarray, shifts: np.ndarray, *, sizes=None, on_atom=None, extra: dict | None = None
) -> dict | None:
    """Letters of the points and of the primitive-cell atoms in every standard description.

    Keys are the origin shifts, one per class of shifts giving the same letters (reduced as in
    :func:`origin_shifts`, the smallest of its class); values are (letters of the points, letters
    of the atoms).  None when no shift changes a letter, when a search does not keep exactly the
    group in the standard setting as given, or when some description stays unnamed.  ``sizes`` and
    ``on_atom`` are the points' :meth:`CellSymmetry._orbit_sizes` and :meth:`CellSymmetry._atom_at`
    when known; ``extra``, if given, receives the site of each point (``"point_site"``: an index,
    or None for the general position) and the site symbols a search found (``"symbols"``).
    """
    w, t, centring, free = _parts(cell.info.hall_number)
    conv = np.asarray(cell.conventional, dtype=float)
    to_std = np.linalg.inv(conv)

    def std(cart: np.ndarray) -> np.ndarray:
        return cart @ to_std + cell.origin_shift

    general = {k for k, sym in enumerate(cell.site_symbols) if sym.replace(".", "") == "1"}
    general_letter = cell.wyckoffs[min(general)] if general else None
    # sites: one representative per orbit of the special atoms and of the points on no atom
    sites: list[tuple[np.ndarray, int]] = []  # (standard position, kind)
    orbits: list[np.ndarray] = []
    atom_site = np.full(len(cell.numbers), -1)
    atoms_std = std(cell.cartesian)
    for i in range(len(cell.numbers)):
        if i in general:
            continue
        k = next((j for j, o in enumerate(orbits) if _same_orbit(o, atoms_std[i])), None)
        if k is None:
            orbits.append(_orbit(w, t, atoms_std[i]))
            sites.append((atoms_std[i], int(cell.numbers[i])))
            k = len(sites) - 1
        atom_site[i] = k
    atom_index = (atom_site + 1).tolist()  # the general position first, then the sites
    on_atom = cell._atom_at(points) if on_atom is None else on_atom
    sizes = cell._orbit_sizes(points) if sizes is None else sizes
    point_site: list[int | None] = []  # a site, or None: the general position
    top = int(np.max(cell.numbers)) + 1000
    for n, p in enumerate(points):
        if on_atom[n] >= 0:
            point_site.append(None if on_atom[n] in general else int(atom_site[on_atom[n]]))
            continue
        if general_letter is not None and sizes[n] == len(cell.rotations):
            point_site.append(None)
            continue
        x = std(p)
        k = next((j for j, o in enumerate(orbits) if _same_orbit(o, x)), None)
        if k is None:
            orbits.append(_orbit(w, t, x))
            sites.append((x, top + 10 + len(sites)))
            k = len(sites) - 1
        point_site.append(k)
    if extra is not None:
        extra["point_site"] = point_site
    if general_letter is None and any(s is None for s in point_site):  # pragma: no cover
        return None
    # shifts that carry every site into its own Wyckoff position change no letter: they form a
    # subgroup, and a description is needed for one shift per coset of it only
    moves = np.vstack([np.zeros(3), shifts])  # shift 0, then the others
    # where each site lands when moved by each shift: the first site whose Wyckoff position holds it
    landing = _landing(w, t, [x for x, _ in sites], moves)
    steady = [np.zeros(3)] + [u for i, u in enumerate(shifts) if np.all(landing[:, i + 1] == np.arange(len(sites)))]
    steady_r = _reduce(np.vstack(steady), centring, free)
    cosets = dict(zip((u.tobytes() for u in moves), _cosets(moves, steady_r, centring, free), strict=True))

    def coset(u: np.ndarray) -> tuple:
        key = np.asarray(u, dtype=float).tobytes()
        if key not in cosets:
            cosets[key] = _cosets(np.asarray(u, dtype=float)[None], steady_r, centring, free)[0]
        return cosets[key]

    wanted = {coset(u) for u in (np.zeros(3), *shifts)}
    if len(wanted) == 1:  # no shift changes a letter
        return None
    found: dict[tuple, tuple] = {}
    if all(kind <= top for _, kind in sites):  # every site is an atom's, named in the cell as given
        letters = [cell.wyckoffs[int(np.flatnonzero(atom_site == k)[0])] for k in range(len(sites))]
        for i, u in enumerate(moves):  # where each moved site lands on a site, its letter is known
            moved = landing[:, i].tolist()
            if coset(u) in found or any(j < 0 for j in moved):
                continue
            now = [letters[j] for j in moved]
            found[coset(u)] = (
                tuple(general_letter if k is None else now[k] for k in point_site),
                _pick([general_letter, *now], atom_index),
            )
    if wanted <= set(found):
        return found
    symbols: dict[int, str] = {}
    if extra is not None:
        extra["symbols"] = symbols
    zero_coset = coset(np.zeros(3))

    def record(s_found: np.ndarray, letters: list[str], site_symbols: list[str]) -> None:
        c = coset(s_found)
        if c == zero_coset:
            for k, sym in enumerate(site_symbols):
                symbols.setdefault(k, sym)
        found.setdefault(
            c,
            (
                tuple(general_letter if k is None else letters[k] for k in point_site),
                _pick([general_letter, *letters], atom_index),
            ),
        )

    site_x, site_kinds, state = [x for x, _ in sites], [k for _, k in sites], {}
    # all missing descriptions from one search, the sites moved by one shift per description
    # placed side by side (each copy its own kinds), unless moved sites would coincide
    reps = {}
    for u in (np.zeros(3), *shifts):
        reps.setdefault(coset(u), u)
    reps = [u for c, u in reps.items() if c not in found]
    together = _search(cell, site_x, site_kinds, reps, top, state) if len(reps) > 1 else "overlap"
    if together is None:
        return None
    if together != "overlap":
        moved = [np.asarray(s_found, dtype=float) for s_found, _, _ in together]
        for u, c in zip(moved, _cosets(np.array(moved), steady_r, centring, free), strict=True):
            cosets.setdefault(u.tobytes(), c)  # the classes of all found shifts at once
        for s_found, letters, site_symbols in together:
            record(s_found, letters, site_symbols)
        return {k: found[k] for k in wanted} if wanted <= set(found) else None
    # else one search per missing description; spglib may name another description than the one
    # asked for (its origin moves by some delta), so the next shift asked for allows for that
    targets = [u for u in (np.zeros(3), *shifts) if coset(u) not in found]
    delta = np.zeros(3)
    for _ in range(2 * len(wanted) + 2):
        missing = [u for u in targets if coset(u) not in found]
        if not missing:
            break
        u = missing[0] - delta
        one = _search(cell, site_x, site_kinds, [u], top, state)
        if one is None or one == "overlap":
            return None
        s_found, letters, site_symbols = one[0]
        delta = s_found - u
        record(s_found, letters, site_symbols)
    return {k: found[k] for k in wanted} if wanted <= set(found) else None


def _landing(w: np.ndarray, t: np.ndarray, sites: list[np.ndarray], moves: np.ndarray) -> np.ndarray:
    """For each site (standard coordinates) and each move u: the first site j whose Wyckoff position
    holds the site moved by u, or -1 (array of shape (sites, moves)).

    A point y lies in the Wyckoff position of x when its site group has the order of x's and some
    image of y differs from x by a vector every site rotation of x leaves alone, so that it has the
    very site group of x (International Tables, Vol. A: a Wyckoff position is the set of points
    whose site groups are conjugate).
    """
    out = np.full((len(sites), len(moves)), -1, dtype=int)
    tests = []
    for x in sites:
        site = _stabiliser(w, t, x)
        a = (np.eye(3)[None] - site).reshape(-1, 3)
        _, sv, vt = np.linalg.svd(a)
        rank = int(np.sum(sv > 1e-9))
        tests.append((len(site), vt[:rank] if rank else None))
    for k, x in enumerate(sites):
        y = x + moves  # (moves, 3)
        images = np.einsum("uj,nij->uni", y, w) + t  # (moves, operations, 3)
        d = images - y[:, None]
        size = np.count_nonzero(np.all(np.abs(d - np.round(d)) < 1e-6, axis=2), axis=1)
        todo = np.ones(len(moves), dtype=bool)
        for j, (order, normal) in enumerate(tests):
            hit = todo & (size == order)
            if normal is not None and hit.any():
                idx = np.flatnonzero(hit)
                cands = np.mod(images[idx] - sites[j], 1.0)[:, :, None, :] + _STEPS[None, None]
                hit[idx] = np.any(np.all(np.abs(cands @ normal.T) < 1e-6, axis=3), axis=(1, 2))
            out[k, hit] = j
            todo &= ~hit
            if not todo.any():
                break
    return out


def _cosets(us: np.ndarray, steady: np.ndarray, centring: np.ndarray, free: list[int]) -> list[tuple]:
    """The class of each shift u modulo the shifts ``steady`` (reduced), the lattice, the centring and
    the polar directions: the smallest reduced u + s (first coordinate first), as a tuple."""
    us = np.asarray(us, dtype=float).reshape(-1, 3)
    reps = _reduce((us[:, None, :] + steady[None]).reshape(-1, 3), centring, free).reshape(len(us), len(steady), 3)
    keys = np.rint(reps * 8) @ np.array([64.0, 8.0, 1.0])  # reduced shifts are multiples of 1/8
    return [tuple(r) for r in reps[np.arange(len(us)), np.argmin(keys, axis=1)].tolist()]


#: kind offset between the copies of the sites searched together
_COPY = 100_000


def _search(cell, sites: list[np.ndarray], kinds: list[int], us: list[np.ndarray], top: int, state: dict):
    """For the sites moved by each shift u: the shift s of the description spglib names, and the
    sites' letters in it.

    One search of three random general orbits and the orbits of every site (standard
    coordinates) moved by each u (a copy of its own kinds per shift), on the cell's primitive
    basis; where spglib turns that basis into the standard one otherwise than the cell does, on
    the conventional standard cell instead (remembered in ``state``).  spglib gives standard
    coordinates x' = P f + p'; with P as the cell's, the sites moved by u carry the letters of
    the description shifted by s = u + p' - p (p the origin shift of the basis searched).
    Returns a list of (s, letters, site symbols), ``"overlap"`` when moved sites of two copies coincide, None
    when the search does not keep exactly the cell's group.
    """
    if not state.get("conventional"):
        plat = np.asarray(cell.lattice, dtype=float)
        to_prim = np.asarray(cell.conventional, dtype=float) @ np.linalg.inv(plat)  # standard -> primitive
        origin = np.asarray(cell.origin_shift, dtype=float)
        prim = (plat, cell.frac_rotations, cell.frac_translations, to_prim, origin)
        found = _search_on(prim, sites, kinds, us, top, cell.info.hall_number)
        if found != "basis":
            return found
        state["conventional"] = True
    w, t = _database(cell.info.hall_number)
    conv = (np.asarray(cell.conventional, dtype=float), w, t, np.eye(3), np.zeros(3))
    found = _search_on(conv, sites, kinds, us, top, cell.info.hall_number)
    return None if found == "basis" else found


def _search_on(basis, sites, kinds, us: list[np.ndarray], top: int, hall: int):
    """:func:`_search` on one basis; ``"basis"`` when spglib's P is not the cell's."""
    from .spacegroup import _EXACT, _general_orbits, spglib_dataset

    lattice, w, t, to_basis, p = basis
    p_ref = np.linalg.inv(to_basis).T  # x_s = P f + p
    copies = [[_orbit(w, t, (x + u - p) @ to_basis) for x in sites] for u in us]
    points = np.vstack([o for c in copies for o in c])
    if len(us) > 1:
        d = points[:, None] - points[None]
        d -= np.round(d)
        if (np.linalg.norm(d @ lattice, axis=2) + np.eye(len(points))).min() < 0.01:
            return "overlap"
    # searched at spglib's tightest tolerance, so the points need only be told apart
    skeleton = _general_orbits(lattice, w, t, points, seed=0, apart=0.05)
    if skeleton is None:  # pragma: no cover - a cell crowded with special positions
        return None
    ops = len(w)
    species = np.concatenate(
        [np.full(len(o), top + k) for k, o in enumerate(skeleton)]
        + [
            np.full(len(o), kind + _COPY * c)
            for c, orbits in enumerate(copies)
            for o, kind in zip(orbits, kinds, strict=True)
        ]
    ).astype(int)
    ds = spglib_dataset(lattice, np.vstack([*skeleton, points]), species, _EXACT)
    if int(ds.hall_number) != hall or len(ds.rotations) != ops:
        return None
    gap = np.abs(np.asarray(ds.transformation_matrix, dtype=float) - p_ref)
    if not np.all(gap <= 1e-6 + 1e-5 * np.abs(p_ref)):  # np.allclose(..., atol=1e-6), finite numbers
        return "basis"
    moved = np.asarray(ds.origin_shift, dtype=float) - p
    out, at = [], 3 * ops
    for u, orbits in zip(us, copies, strict=True):
        letters, symbols = [], []
        for o in orbits:
            letters.append(str(ds.wyckoffs[at]))
            symbols.append(str(ds.site_symmetry_symbols[at]))
            at += len(o)
        out.append((u + moved, letters, symbols))
    return out

"""Space group, primitive cell, operations and Wyckoff letters through spglib.

Conventions follow International Tables for Crystallography, Vol. A, as spglib
implements them (A. Togo et al., Sci. Technol. Adv. Mater. Meth. 4, 2384822 (2024)).
"""

from __future__ import annotations

import contextlib
import functools
from collections.abc import Iterator
from dataclasses import dataclass, field, replace

import numpy as np

from ..defaults import DEFAULT_CELL_TOLERANCE
from ..errors import BookkeepingError, InputError, SymmetryError

__all__ = [
    "DEFAULT_CELL_TOLERANCE",
    "CellSymmetry",
    "SpaceGroupInfo",
    "analyse_cell",
    "cell_of_known_group",
    "crystal_system",
    "spglib_dataset",
]


#: tolerance (angstrom) for look-ups on an idealised cell, whose symmetry is exact
_EXACT = 1e-5


@contextlib.contextmanager
def _quiet_spglib() -> Iterator[None]:
    import spglib

    err = getattr(spglib, "error", None)
    old = getattr(err, "OLD_ERROR_HANDLING", None)
    if old is not None:
        err.OLD_ERROR_HANDLING = False
    try:
        yield
    finally:
        if old is not None:
            err.OLD_ERROR_HANDLING = old


#: up to this many (point, atom) pairs, :meth:`CellSymmetry._atom_at` compares every pair (no tree)
_FEW_PAIRS = 20_000


def spglib_dataset(lattice: np.ndarray, frac: np.ndarray, numbers: np.ndarray, tolerance: float):
    """spglib's symmetry dataset, or SymmetryError with spglib's reason."""
    import spglib

    with _quiet_spglib():
        try:
            ds = spglib.get_symmetry_dataset((lattice, frac, numbers), symprec=tolerance)
        except MemoryError:  # the machine's limit, not a cell without symmetry
            raise
        except Exception as exc:
            close = "too close" in str(exc)
            raise SymmetryError(
                f"the symmetry search found no space group at the tolerance {tolerance:g} Å"
                + ("; atoms lie closer together than the tolerance" if close else "")
                + "; check the cell and the coordinates, or give another --tolerance"
            ) from None
    if ds is None:  # pragma: no cover - old error handling
        raise SymmetryError(f"the symmetry search found no space group at the tolerance {tolerance:g} Å")
    return ds


@functools.lru_cache(maxsize=256)
def _database(hall: int) -> tuple[np.ndarray, np.ndarray]:
    """Rotation parts (float, whole numbers) and translations of the operations of one Hall
    setting, from spglib's tables (read once per setting and process; read-only)."""
    import spglib

    with _quiet_spglib():
        db = spglib.get_symmetry_from_database(int(hall))
    w = np.rint(np.asarray(db["rotations"], dtype=float))
    t = np.asarray(db["translations"], dtype=float)
    for a in (w, t):
        a.setflags(write=False)
    return w, t


def crystal_system(number: int) -> str:
    """Crystal system of a space-group number (International Tables, Vol. A)."""
    for upper, name in (
        (2, "triclinic"),
        (15, "monoclinic"),
        (74, "orthorhombic"),
        (142, "tetragonal"),
        (167, "trigonal"),
        (194, "hexagonal"),
        (230, "cubic"),
    ):
        if number <= upper:
            return name
    raise SymmetryError(f"space group number {number} out of range")  # pragma: no cover


@dataclass(frozen=True)
class SpaceGroupInfo:
    """The space group of a crystal.

    Attributes
    ----------
    number : int
        International Tables number (1-230).
    symbol : str
        Short Hermann-Mauguin symbol, e.g. ``"P2_1/c"``.
    schoenflies : str
        Schoenflies symbol with its superscript number, e.g. ``"C2h^5"``.
    hall_number : int
        spglib's Hall number (the setting).
    point_group : str
        Hermann-Mauguin symbol of the crystal class.
    crystal_system : str
    tolerance : float
        Distance tolerance used (angstrom).
    other_tolerances : tuple of (float, int, str)
        Looser and tighter tolerances tried, with the space group each gives (empty unless
        a scan was asked for).
    largest_shift : float
        Largest distance (angstrom) an atom moved when the cell was idealised to this
        space group.
    """

    number: int
    symbol: str
    schoenflies: str
    hall_number: int
    point_group: str
    crystal_system: str
    tolerance: float
    other_tolerances: tuple[tuple[float, int, str], ...] = ()
    largest_shift: float = 0.0

    @property
    def tolerance_sensitive(self) -> bool:
        """True when another tolerance changes the space group."""
        return any(n != self.number for _, n, _ in self.other_tolerances)

    def to_dict(self) -> dict[str, object]:
        """JSON-ready form."""
        return {
            "number": self.number,
            "symbol": self.symbol,
            "schoenflies": self.schoenflies,
            "hall_number": self.hall_number,
            "point_group": self.point_group,
            "crystal_system": self.crystal_system,
            "tolerance_angstrom": self.tolerance,
            "largest_shift_angstrom": round(self.largest_shift, 6),
            "other_tolerances": [
                {"tolerance_angstrom": t, "number": n, "symbol": s} for t, n, s in self.other_tolerances
            ],
        }


@dataclass(frozen=True, eq=False)
class CellSymmetry:
    """Symmetry of a crystal reduced to its primitive cell, in the input's Cartesian frame.

    Attributes
    ----------
    info : SpaceGroupInfo
    lattice : numpy.ndarray, shape (3, 3)
        Primitive lattice vectors as rows (angstrom).
    frac : numpy.ndarray, shape (n, 3)
        Fractional positions in the primitive cell.
    numbers : numpy.ndarray, shape (n,)
        Atomic numbers.
    rotations : numpy.ndarray, shape (m, 3, 3)
        Cartesian rotation parts of the space-group operations, one per coset of the
        lattice translations (the factor group).
    translations : numpy.ndarray, shape (m, 3)
        Cartesian translation parts (angstrom).
    conventional : numpy.ndarray, shape (3, 3)
        Conventional lattice vectors (rows, angstrom) of the ITA standard setting, in the input frame.
    wyckoffs : tuple of str
        Wyckoff letter of every primitive-cell atom.
    site_symbols : tuple of str
        Oriented site-symmetry symbol of every primitive-cell atom (ITA).
    input_atoms : int
        Number of atoms in the cell as given.
    sites_named : bool
        False for a cell built from operations alone (a candidate phase whose atoms do not
        show its lower symmetry): Wyckoff letters are then unknown.
    given_lattice : numpy.ndarray, shape (3, 3) or None
        The cell as given (rows a, b, c, angstrom), idealised to the space group found.
    transformation : numpy.ndarray, shape (3, 3) or None
        spglib's transformation matrix P: (a_s b_s c_s) = (a b c) P^-1, where a_s, b_s, c_s
        are the standard (ITA) setting's basis.
    origin_shift : numpy.ndarray, shape (3,) or None
        spglib's origin shift p: x_s = P x + p.
    standard_axes : bool
        Label in the axes of the standard setting instead of the file's (see :attr:`label_basis`).
    skeleton : tuple of numpy.ndarray or None
        Fractional positions and species of a few atoms with exactly this space group (see
        :func:`cell_of_known_group`), searched in place of all atoms to name Wyckoff positions.
    """

    info: SpaceGroupInfo
    lattice: np.ndarray = field(repr=False)
    frac: np.ndarray = field(repr=False)
    numbers: np.ndarray = field(repr=False)
    rotations: np.ndarray = field(repr=False)
    translations: np.ndarray = field(repr=False)
    frac_rotations: np.ndarray = field(repr=False)
    frac_translations: np.ndarray = field(repr=False)
    conventional: np.ndarray = field(repr=False)
    wyckoffs: tuple[str, ...] = field(repr=False)
    site_symbols: tuple[str, ...] = field(repr=False)
    input_atoms: int = 0
    sites_named: bool = True
    given_lattice: np.ndarray | None = field(default=None, repr=False)
    transformation: np.ndarray | None = field(default=None, repr=False)
    origin_shift: np.ndarray | None = field(default=None, repr=False)
    standard_axes: bool = False
    skeleton: tuple[np.ndarray, np.ndarray] | None = field(default=None, repr=False)

    @property
    def cartesian(self) -> np.ndarray:
        """Cartesian positions of the primitive-cell atoms (angstrom)."""
        return self.frac @ self.lattice

    @property
    def label_basis(self) -> np.ndarray:
        """Rows a, b, c of the cell the labels refer to: the file's cell, or the standard setting's.

        The file's cell is used unless ``standard_axes`` is set or the cell was built from
        operations alone.
        """
        if self.standard_axes or self.given_lattice is None:
            return self.conventional
        return self.given_lattice

    @functools.cached_property
    def reference_axes(self) -> np.ndarray:
        """Columns x_ref, y_ref, z_ref: the crystal axes the group frames should follow.

        Mulliken's conventions (R. S. Mulliken, J. Chem. Phys. 23, 1997 (1955)) applied to the
        axes of :attr:`label_basis`: z along the unique or principal axis (the four-, three- or
        six-fold axis; the two-fold axis or mirror normal of a monoclinic crystal; the two-fold
        axis of an mm2 crystal), x along the next axis of the cell in the cyclic order a, b, c,
        y completing a right-handed set; orthorhombic 222 and mmm crystals, cubic and
        triclinic ones have x, y, z along a, b, c.  Where the cell has no axis along the
        principal axis (rhombohedral axes, a primitive cell of a centred lattice), z is the
        principal axis and x the standard setting's a (c for monoclinic); where an
        orthorhombic or cubic cell's axes are not the two-fold axes, the standard setting's
        axes are used.
        """
        basis = np.array([v / np.linalg.norm(v) for v in self.label_basis])
        std = np.array([v / np.linalg.norm(v) for v in self.conventional])
        system = self.info.crystal_system
        unique = None
        if system in ("tetragonal", "trigonal", "hexagonal"):
            unique, std_x = std[2], std[0]
        elif system == "monoclinic":
            unique, std_x = std[1], std[2]
        elif self.info.point_group == "mm2":
            unique, std_x = self._two_fold_axis(), None
        if unique is not None:
            along = [k for k in range(3) if abs(abs(float(basis[k] @ unique)) - 1) < 1e-6]
            if along:
                k = along[0]
                z, x = basis[k], basis[(k + 1) % 3]
            else:
                z = unique
                x = std_x if std_x is not None else std[(int(np.argmax(np.abs(std @ unique))) + 1) % 3]
        else:
            parallel = all(np.max(np.abs(std @ v)) > 1 - 1e-6 for v in basis)
            use = basis if (parallel or system == "triclinic") else std
            z, x = use[2], use[0]
        x = x - np.dot(x, z) * z
        x /= np.linalg.norm(x)
        axes = np.column_stack([x, np.cross(z, x), z])
        axes.setflags(write=False)  # computed once per cell, shared by every caller
        return axes

    def _two_fold_axis(self) -> np.ndarray:
        """Direction of the proper two-fold axis (point group mm2)."""
        for r in self.rotations:
            if np.linalg.det(r) > 0 and abs(np.trace(r) + 1) < 1e-6:
                w = r + np.eye(3)
                col = w[:, int(np.argmax(np.linalg.norm(w, axis=0)))]
                return col / np.linalg.norm(col)
        raise SymmetryError("an mm2 crystal without a two-fold axis")  # pragma: no cover

    def direction_text(self, v: np.ndarray) -> str:
        """A Cartesian direction as crystal-axis text: ``"a"``, ``"c"``, ``"[1,1,0]"`` (of :attr:`label_basis`)."""
        return self.direction_texts([v])[0]

    def direction_texts(self, vs) -> list[str]:
        """:meth:`direction_text` of several directions at once (one array operation for all)."""
        vs = np.asarray(vs, dtype=float).reshape(-1, 3)
        inv, rn, oblique = _label_frame(np.ascontiguousarray(self.label_basis, dtype=float).tobytes())
        cosang = (vs @ inv) / (np.linalg.norm(vs, axis=1)[:, None] * rn[None])  # along a*, b*, c*
        star = (np.abs(np.abs(cosang) - 1) < 1e-6) & oblique[None]
        uvw = vs @ inv
        unit = uvw / np.max(np.abs(uvw), axis=1)[:, None]
        scaled = unit[:, None, :] * np.array([1.0, 2.0, 3.0, 4.0, 6.0])[None, :, None]
        whole = np.max(np.abs(scaled - np.round(scaled)), axis=2) <= 2e-3  # (directions, scales)
        out = []
        for n in range(len(vs)):
            if star[n].any():
                k = int(np.argmax(star[n]))
                out.append(("-" if cosang[n, k] < 0 else "") + "abc"[k] + "*")
            elif whole[n].any():
                ints = [round(x) for x in scaled[n, int(np.argmax(whole[n]))]]
                if sorted(np.abs(ints)) == [0, 0, 1]:
                    k = int(np.argmax(np.abs(ints)))
                    out.append(("-" if ints[k] < 0 else "") + "abc"[k])
                else:
                    out.append("[" + ",".join(str(i) for i in ints) + "]")
            else:
                out.append("[" + ",".join(f"{x:.3f}" for x in unit[n]) + "]")
        return out

    def orbit_of(self, point: np.ndarray) -> np.ndarray:
        """Distinct images (Cartesian, inside the primitive cell) of a point under the space group."""
        inv = np.linalg.inv(self.lattice)
        f = (np.asarray(point, dtype=float) @ np.transpose(self.rotations, (0, 2, 1)) + self.translations) @ inv
        f -= np.floor(f + 1e-9)
        d = f[:, None] - f[None]
        d -= np.round(d)
        same = np.linalg.norm(d @ self.lattice, axis=2) < 1e-2  # as :meth:`same_point`
        kept: list[int] = []
        for k in range(len(f)):
            if not same[k, kept].any():
                kept.append(k)
        return f[kept] @ self.lattice

    def wyckoff_of(
        self, points: list[np.ndarray], *, tolerance: float = DEFAULT_CELL_TOLERANCE
    ) -> list[tuple[str, str]]:
        """Wyckoff position (multiplicity and letter, e.g. ``"4a"``) and oriented site symbol of points.

        A point on an atom (within 0.05 angstrom) or on the general position (when some atom is
        there) takes that atom's names.  For the others, a dummy atom of a new kind is placed on
        the orbit of each, and spglib's tables are read once for all of them from a search of a
        skeleton of the same space group (:func:`_skeleton_names`), on the idealised cell (exact
        symmetry, so this makes no tolerance decision; the ``tolerance`` argument is kept for
        callers).
        """
        if not self.sites_named:
            return [("?", "?") for _ in points]
        pts = np.asarray(points, dtype=float).reshape(-1, 3)
        sizes = self._orbit_sizes(pts)
        on_atom = self._atom_at(pts)
        names = self._known_names(sizes, on_atom)
        missing = [n for n, name in enumerate(names) if name is None]
        if missing:  # one search names the missing points and, from the same search, the atoms
            atom_names, found = _skeleton_names(self, pts[missing])
            names = [atom_names[int(on_atom[n])] if on_atom[n] >= 0 else name for n, name in enumerate(names)]
            for n, name in zip(missing, found, strict=True):
                names[n] = name
        return [(f"{m}{w}", site) for m, (w, site) in zip(self._multiplicities(sizes), names, strict=True)]

    def _known_names(self, sizes: list[int], on_atom: np.ndarray) -> list[tuple[str, str] | None]:
        """(Wyckoff letter, site symbol) of points on an atom or, when some atom is there, on the
        general position (of :meth:`_orbit_sizes` ``sizes`` and :meth:`_atom_at` ``on_atom``);
        None for the points that need a search."""
        # an atom on the general position names every point on it (no look-up needed)
        general = next((k for k, sym in enumerate(self.site_symbols) if sym.replace(".", "") == "1"), None)
        names: list[tuple[str, str] | None] = []
        for n in range(len(sizes)):
            i = int(on_atom[n])
            if i < 0 and general is not None and sizes[n] == len(self.rotations):
                i = general
            names.append((self.wyckoffs[i], self.site_symbols[i]) if i >= 0 else None)
        return names

    def _multiplicities(self, sizes: list[int]) -> list[int]:
        """Multiplicities in the conventional cell of orbits of ``sizes`` points in the primitive cell."""
        ratio = abs(np.linalg.det(self.conventional) / np.linalg.det(self.lattice))
        return [round(size * ratio) for size in sizes]

    def _orbit_sizes(self, pts: np.ndarray) -> list[int]:
        """Number of distinct images of each point, as :meth:`orbit_of` counts them (many points at once)."""
        inv = np.linalg.inv(self.lattice)
        m = len(self.rotations)
        out: list[int] = []
        step = max(1, 200_000 // (m * m))
        for lo in range(0, len(pts), step):
            f = (np.einsum("nj,kij->nki", pts[lo : lo + step], self.rotations) + self.translations[None]) @ inv
            f -= np.floor(f + 1e-9)
            d = f[:, :, None] - f[:, None]
            d -= np.round(d)
            same = np.linalg.norm(d @ self.lattice, axis=3) < 1e-2  # (points, ops, ops)
            # an image is kept unless an earlier kept one is the same point: where every image the same
            # as some earlier one is the same as an earlier first-of-its-kind, those are the kept ones
            earlier = np.tril(same, -1)
            kept = ~np.any(earlier, axis=2)
            if not np.all(kept | np.any(earlier & kept[:, None, :], axis=2)):  # pragma: no cover - not transitive
                kept = np.zeros((len(f), m), dtype=bool)
                for k in range(m):
                    kept[:, k] = ~np.any(same[:, k] & kept, axis=1)
            out.extend(kept.sum(axis=1).tolist())
        return out

    def _atom_at(self, pts: np.ndarray, *, tol: float = 0.05) -> np.ndarray:
        """Index of the primitive-cell atom within ``tol`` angstrom of each point (modulo the lattice), or -1
        (the nearest, the first of equals)."""
        from scipy.spatial import cKDTree

        inv = np.linalg.inv(self.lattice)
        out = np.full(len(pts), -1, dtype=int)
        if not len(pts) or not len(self.frac):
            return out
        if len(pts) * len(self.frac) <= _FEW_PAIRS:  # few pairs: every atom, no tree
            for n in range(len(pts)):
                d = self.frac - pts[n] @ inv
                d -= np.round(d)
                dist = np.linalg.norm(d @ self.lattice, axis=1)
                k = int(np.argmin(dist))
                if dist[k] < tol:
                    out[n] = k
            return out

        def box(f: np.ndarray) -> np.ndarray:
            f = np.mod(f, 1.0)
            f[f >= 1.0] = 0.0
            return f

        # a Cartesian distance below tol is a fractional one below tol * |inv| (spectral norm)
        reach = tol * float(np.linalg.norm(inv, 2)) * (1 + 1e-9)
        tree = cKDTree(box(np.array(self.frac, dtype=float)), boxsize=1.0)
        for n, near in enumerate(tree.query_ball_point(box(pts @ inv), reach)):
            if not near:
                continue
            near = np.sort(np.asarray(near, dtype=int))
            d = self.frac[near] - pts[n] @ inv
            d -= np.round(d)
            dist = np.linalg.norm(d @ self.lattice, axis=1)
            if dist.min() < tol:
                out[n] = near[int(np.argmin(dist))]
        return out

    def labelled_on(self, multiple: np.ndarray) -> CellSymmetry:
        """This cell with its labels referring to another cell of its lattice, the origin kept.

        ``multiple`` (integer, 3 x 3) gives the rows of that cell in the basis of the cell as given
        (``multiple @ given_lattice``).  Only the cell the labels refer to changes: the given
        cell and spglib's transformation P to the standard setting, (a_s b_s c_s) = (a b c) P^-1;
        the origin shift p stays.  With ``standard_axes``, or without a cell as given, nothing changes.
        """
        if self.given_lattice is None or self.standard_axes:
            return self
        given = np.asarray(multiple, dtype=float) @ np.asarray(self.given_lattice, dtype=float)
        p = None if self.transformation is None else np.linalg.inv(np.asarray(self.conventional).T) @ given.T
        for arr in (given, p):
            if arr is not None:
                arr.setflags(write=False)
        return replace(self, given_lattice=given, transformation=p)

    def apply(self, k: int, cart: np.ndarray) -> np.ndarray:
        """Operation k applied to Cartesian points (angstrom)."""
        return np.asarray(cart) @ self.rotations[k].T + self.translations[k]

    def same_point(self, p: np.ndarray, q: np.ndarray, *, tol: float = 1e-2) -> bool:
        """True when two Cartesian points differ by a lattice vector (within ``tol`` angstrom)."""
        d = (np.asarray(p) - np.asarray(q)) @ np.linalg.inv(self.lattice)
        d -= np.round(d)
        return bool(np.linalg.norm(d @ self.lattice) < tol)


@functools.lru_cache(maxsize=64)
def _label_frame(basis: bytes) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """For the rows a, b, c of a cell: the inverse, the lengths of a*, b*, c* and which of them
    are not along a, b, c (what :meth:`CellSymmetry.direction_text` needs, kept per cell)."""
    cell = np.frombuffer(basis, dtype=float).reshape(3, 3)
    inv = np.linalg.inv(cell)
    recip = inv.T
    rn = np.linalg.norm(recip, axis=1)
    oblique = np.abs(np.abs(np.einsum("ij,ij->i", cell, recip)) / (np.linalg.norm(cell, axis=1) * rn) - 1) > 1e-6
    for a in (inv, rn, oblique):
        a.setflags(write=False)
    return inv, rn, oblique


def _first_of_each(mapping: np.ndarray, n: int) -> np.ndarray:
    """Index of the first entry of ``mapping`` equal to each of 0 .. n - 1 (one sort, not n scans).

    >>> _first_of_each(np.array([1, 0, 1, 2, 0]), 3).tolist()
    [1, 0, 3]
    """
    values, first = np.unique(mapping, return_index=True)
    if len(values) != n or not np.array_equal(values, np.arange(n)):  # pragma: no cover - spglib maps onto 0 .. n - 1
        raise BookkeepingError("spglib's mapping to the primitive cell misses a primitive atom")
    return first


def _info(ds, tolerance: float, others, largest_shift: float = 0.0) -> SpaceGroupInfo:
    import spglib

    with _quiet_spglib():
        t = spglib.get_spacegroup_type(ds.hall_number)
    return _info_of_type(t, tolerance, others, largest_shift)


def _info_of_type(t, tolerance: float, others=(), largest_shift: float = 0.0) -> SpaceGroupInfo:
    return SpaceGroupInfo(
        int(t.number),
        t.international_short,
        t.schoenflies,
        int(t.hall_number),
        t.pointgroup_international,
        crystal_system(int(t.number)),
        tolerance,
        tuple(others),
        largest_shift,
    )


def cell_from_operations(
    lattice: np.ndarray,
    frac: np.ndarray,
    numbers: np.ndarray,
    rotations: np.ndarray,
    translations: np.ndarray,
    conventional: np.ndarray,
    *,
    given_lattice: np.ndarray | None = None,
    standard_axes: bool = False,
) -> CellSymmetry:
    """A cell whose space group is given as operations (fractional, in this lattice's basis).

    Used for candidate phases whose atoms alone do not show the lower symmetry; the type is
    named from the operations (spglib), Wyckoff letters are left unknown.  ``given_lattice``
    (the parent's file cell) keeps the labels in the axes of the parent's file.
    """
    import spglib

    w = np.rint(rotations).astype(np.intc)
    t = np.asarray(translations, dtype=float)
    with _quiet_spglib():
        sg_type = spglib.get_spacegroup_type_from_symmetry(w, t, lattice=lattice, symprec=1e-5)
    if sg_type is None:
        raise SymmetryError("the operations are not a space group")
    lat = np.asarray(lattice, dtype=float)
    rots = np.einsum("ji,njk,kl->nil", lat, w.astype(float), np.linalg.inv(lat).T)
    n = len(numbers)
    return CellSymmetry(
        info=_info_of_type(sg_type, 0.0),
        lattice=lat,
        frac=np.asarray(frac, dtype=float),
        numbers=np.asarray(numbers),
        rotations=rots,
        translations=t @ lat,
        frac_rotations=w.astype(float),
        frac_translations=t,
        conventional=np.asarray(conventional, dtype=float),
        wyckoffs=("?",) * n,
        site_symbols=("?",) * n,
        input_atoms=n,
        sites_named=False,
        given_lattice=None if given_lattice is None else np.asarray(given_lattice, dtype=float),
        standard_axes=standard_axes,
    )


def _general_orbits(
    lattice: np.ndarray, w: np.ndarray, t: np.ndarray, fixed: np.ndarray, seed: int = 0, apart: float = 0.5
) -> list[np.ndarray] | None:
    """Three orbits of random general points (fractional, operations ``w``, ``t`` in the basis
    ``lattice``), each point at least ``apart`` angstrom from every other and from ``fixed`` (the
    points of ``fixed`` may lie closer to one another); None if 30 trials do not find them."""
    rng = np.random.default_rng(seed)
    wt = np.transpose(w, (0, 2, 1))
    draws = rng.random((30, 3))  # the numbers 30 draws of 3 would give, in the same order

    def orbit_of(k: int) -> np.ndarray:
        orbit = draws[k] @ wt + t
        orbit -= np.floor(orbit)
        return orbit

    def apart_from(orbit: np.ndarray, others: np.ndarray) -> np.ndarray:
        """Distances of the orbit's points to others, the orbit's own points first (self-pairs large)."""
        d = orbit[:, None] - others[None]
        d -= np.round(d)
        return np.linalg.norm(d @ lattice, axis=2) + np.eye(len(orbit), len(others)) * 1e3

    # the first three draws at once: where all three are apart, each is taken as in the loop below
    first = [orbit_of(k) for k in range(3)]
    n = len(first[0])
    dist = apart_from(np.vstack(first), np.vstack([*first, fixed]))
    # draw k against itself, the draws before it and the fixed points
    rows = [dist[k * n : (k + 1) * n] for k in range(3)]
    if all(min(r[:, : (k + 1) * n].min(), r[:, 3 * n :].min(initial=np.inf)) > apart for k, r in enumerate(rows)):
        return first
    points: list[np.ndarray] = []
    for k in range(30):
        if len(points) == 3:
            break
        orbit = orbit_of(k)
        if apart_from(orbit, np.vstack([orbit, *points, fixed])).min() > apart:
            points.append(orbit)
    return points if len(points) == 3 else None


def _skeleton_names(cell: CellSymmetry, pts: np.ndarray) -> tuple[list[tuple[str, str]], list[tuple[str, str]]]:
    """Wyckoff letters and site symbols of the primitive-cell atoms and of points that hold no atom.

    spglib searches a skeleton of the cell's space group on the cell's lattice basis: three
    orbits of random general points, the atoms on special positions and the orbit of every
    point, each orbit its own kind.  Its operations on that basis are those of the cell, so
    spglib names the standard setting, the origin and the letters as a search of every atom
    with the points would (at a cost that does not grow with the atoms on general positions).
    """
    inv = np.linalg.inv(cell.lattice)
    special = [i for i, sym in enumerate(cell.site_symbols) if sym.replace(".", "") != "1"]
    orbits = [cell.orbit_of(p) @ inv for p in pts]
    fixed = np.vstack([cell.frac[special], *orbits])
    w, t = cell.frac_rotations, cell.frac_translations
    general = None
    for seed in range(3):  # a skeleton with more symmetry than the cell (never seen) tries again
        found = _general_orbits(cell.lattice, w, t, fixed, seed)
        if found is None:
            continue
        top = int(np.max(cell.numbers)) + 1000
        kinds = [np.full(len(o), top + k) for k, o in enumerate(found)]
        kinds += [cell.numbers[special]] + [np.full(len(o), top + 3 + k) for k, o in enumerate(orbits)]
        frac = np.vstack([*found, fixed])
        ds = spglib_dataset(cell.lattice, frac, np.concatenate(kinds), _EXACT)
        exact = len(ds.rotations) == len(w) and len(set(np.asarray(ds.mapping_to_primitive).tolist())) == len(frac)
        if int(ds.number) == cell.info.number and exact:
            general = 3 * len(w)
            break
    if general is None:  # pragma: no cover - the orbits of a space group keep its symmetry
        raise BookkeepingError(
            f"unit centres placed on the idealised cell do not keep space group No. {cell.info.number}"
        )
    names = [(str(ds.wyckoffs[i]), str(ds.site_symmetry_symbols[i])) for i in range(len(frac))]
    atoms = [names[0]] * len(cell.numbers)  # general atoms: the letter of the general position
    for k, i in enumerate(special):
        atoms[i] = names[general + k]
    out, at = [], general + len(special)
    for o in orbits:
        out.append(names[at])
        at += len(o)
    return atoms, out


def cell_of_known_group(
    lattice: np.ndarray,
    frac: np.ndarray,
    numbers: np.ndarray,
    rotations: np.ndarray,
    translations: np.ndarray,
    special: np.ndarray,
    *,
    tolerance: float,
    standard_axes: bool = False,
    seed: int = 0,
) -> CellSymmetry | None:
    """The cell of atoms whose space group is known to be exactly the given operations.

    ``rotations`` and ``translations`` (fractional, in the basis ``lattice``, which is primitive
    for them) are the whole group modulo the lattice, checked by the caller; ``special`` marks
    the atoms on special positions.  spglib then searches a skeleton instead of every atom:
    three orbits of random general points (of new kinds) and the atoms on special positions.
    Its one dataset gives the type, the standard setting and the Wyckoff letters as a search of
    all atoms would (the same operations on the same lattice basis); the atoms keep their
    positions, which already have the symmetry exactly.  Returns None when the skeleton does not
    show exactly this group (the caller then searches all atoms).
    """
    lattice = np.asarray(lattice, dtype=float)
    w = np.asarray(rotations, dtype=float)
    t = np.asarray(translations, dtype=float)
    frac = np.asarray(frac, dtype=float)
    numbers = np.array(numbers, dtype=int)
    special = np.flatnonzero(np.asarray(special, dtype=bool))
    points = _general_orbits(lattice, w, t, frac[special], seed)
    if points is None:
        return None
    skeleton = np.vstack([*points, frac[special]])
    top = int(numbers.max()) if len(numbers) else 0
    kinds = np.concatenate([np.full(len(p), top + 1 + k) for k, p in enumerate(points)] + [numbers[special]])
    ds = spglib_dataset(lattice, skeleton, kinds, tolerance)
    in_map = np.asarray(ds.mapping_to_primitive)
    if len(ds.rotations) != len(w) or len(set(in_map.tolist())) != len(kinds):  # more symmetry than given
        return None
    cell = _cell_of_dataset(ds, lattice, skeleton, kinds, tolerance, (), standard_axes)
    general = next((i for i in range(len(kinds)) if str(ds.site_symmetry_symbols[i]).replace(".", "") == "1"), None)
    if general is None:  # pragma: no cover - the random points are general
        return None
    wyck = [str(ds.wyckoffs[general])] * len(numbers)
    sites = [str(ds.site_symmetry_symbols[general])] * len(numbers)
    for k, i in enumerate(special):
        wyck[i] = str(ds.wyckoffs[len(kinds) - len(special) + k])
        sites[i] = str(ds.site_symmetry_symbols[len(kinds) - len(special) + k])
    pfrac = (frac @ lattice) @ np.linalg.inv(cell.lattice)
    pfrac -= np.floor(pfrac + 1e-9)
    for arr in (pfrac, numbers):
        arr.setflags(write=False)
    return replace(
        cell,
        frac=pfrac,
        numbers=numbers,
        wyckoffs=tuple(wyck),
        site_symbols=tuple(sites),
        input_atoms=len(numbers),
        skeleton=(cell.frac, cell.numbers),
    )


def analyse_cell(
    lattice,
    frac,
    numbers,
    *,
    tolerance: float = DEFAULT_CELL_TOLERANCE,
    scan: bool = False,
    standard_axes: bool = False,
) -> CellSymmetry:
    """Space group of a periodic structure and its idealised primitive cell with operations.

    One spglib search at ``tolerance`` decides the space group; everything else (the
    primitive cell, the operations, the sites, the Wyckoff letters) follows from that one
    dataset.  The cell is idealised to that decision: lattice metric and positions are
    spglib's symmetrised standard cell, rotated back into the input frame, so that every
    later step sees exact symmetry and no later step makes a tolerance decision of its own.

    Parameters
    ----------
    lattice : array_like, shape (3, 3)
        Lattice vectors as rows (angstrom).
    frac : array_like, shape (n, 3)
        Fractional coordinates.
    numbers : array_like of int
        Atomic numbers (or any integer species labels).
    tolerance : float
        spglib distance tolerance (angstrom).
    scan : bool
        Also search at tolerance / 10 and tolerance * 10 and report their space groups
        (two more searches; off by default).
    standard_axes : bool
        Label in the standard setting's axes instead of the file's.
    """
    if not tolerance > 0:
        raise InputError("the symmetry tolerance must be positive")
    lattice = np.asarray(lattice, dtype=float)
    frac = np.asarray(frac, dtype=float)
    numbers = np.asarray(numbers, dtype=int)
    ds = spglib_dataset(lattice, frac, numbers, tolerance)
    others = []
    if scan:
        for t in (tolerance / 10, tolerance * 10):
            try:
                o = spglib_dataset(lattice, frac, numbers, t)
                others.append((t, int(o.number), str(o.international)))
            except SymmetryError:
                others.append((t, 0, "none"))
    return _cell_of_dataset(ds, lattice, frac, numbers, tolerance, others, standard_axes)


def _cell_of_dataset(ds, lattice, frac, numbers, tolerance: float, others, standard_axes: bool) -> CellSymmetry:
    """The idealised primitive cell and factor-group operations of one spglib dataset."""
    p_mat = np.asarray(ds.transformation_matrix, dtype=float)
    shift = np.asarray(ds.origin_shift, dtype=float)
    turn = np.asarray(ds.std_rotation_matrix, dtype=float)
    # idealised conventional (standard-setting) basis in the input frame: rows a_s, b_s, c_s
    conv = (turn.T @ np.asarray(ds.std_lattice, dtype=float).T).T
    # (a_s b_s c_s) = (a b c) P^-1, so the idealised input basis is (a_s b_s c_s) P
    given = (conv.T @ p_mat).T
    raw_conv = (lattice.T @ np.linalg.inv(p_mat)).T
    m = np.asarray(ds.primitive_lattice, dtype=float) @ np.linalg.inv(raw_conv)
    m_round = np.round(m * 12) / 12
    if np.abs(m - m_round).max() > 1e-3:  # pragma: no cover - spglib's primitive is a sublattice
        raise BookkeepingError("spglib's primitive cell is not a sublattice of its conventional cell")
    plat = m_round @ conv
    inv_plat = np.linalg.inv(plat)
    # primitive atoms: spglib's symmetrised standard positions, back in the input frame
    std_map = np.asarray(ds.std_mapping_to_primitive)
    in_map = np.asarray(ds.mapping_to_primitive)
    n_prim = int(in_map.max()) + 1
    first_std = _first_of_each(std_map, n_prim)
    first_in = _first_of_each(in_map, n_prim)
    cart = (np.asarray(ds.std_positions, dtype=float)[first_std] - shift) @ conv
    pfrac = cart @ inv_plat
    pfrac -= np.floor(pfrac + 1e-9)
    pnum = np.asarray(ds.std_types)[first_std].astype(int)
    if not np.array_equal(pnum, numbers[first_in]):  # pragma: no cover - spglib keeps the species
        raise BookkeepingError("spglib's standard cell does not keep the species of the input")
    # how far the decision moved the atoms (modulo the primitive lattice)
    d = (frac @ lattice - pfrac[in_map] @ plat) @ inv_plat
    d -= np.round(d)
    largest_shift = float(np.linalg.norm(d @ plat, axis=1).max()) if len(d) else 0.0
    # operations: the exact ones of the standard setting (one per rotation part) in the input frame
    w_std, t_std = _database(int(ds.hall_number))
    keep: dict[bytes, int] = {}
    for k, w in enumerate(np.rint(w_std).astype(int)):
        keep.setdefault(w.tobytes(), k)
    idx = sorted(keep.values())
    w_std, t_std = w_std[idx], t_std[idx]
    rots = np.einsum("ji,njk,kl->nil", conv, w_std, np.linalg.inv(conv).T)  # C^T W C^-T
    trans = (np.einsum("nij,j->ni", w_std, shift) + t_std - shift) @ conv
    rot_frac = np.einsum("ij,njk,lk->nil", inv_plat.T, rots, plat)  # Lp^-T R Lp^T
    if np.abs(rot_frac - np.rint(rot_frac)).max() > 1e-6:  # pragma: no cover
        raise BookkeepingError("an operation of the space group is not a symmetry of the primitive lattice")
    rot_frac = np.rint(rot_frac)
    trans_frac = trans @ inv_plat
    info = _info(ds, tolerance, others, largest_shift)
    wyckoffs = tuple(str(ds.wyckoffs[i]) for i in first_in)
    sites = tuple(str(ds.site_symmetry_symbols[i]) for i in first_in)
    for arr in (plat, pfrac, pnum, rots, trans, rot_frac, trans_frac, conv, given):
        arr.setflags(write=False)
    return CellSymmetry(
        info=info,
        lattice=plat,
        frac=pfrac,
        numbers=pnum,
        rotations=rots,
        translations=trans,
        frac_rotations=rot_frac,
        frac_translations=trans_frac,
        conventional=conv,
        wyckoffs=wyckoffs,
        site_symbols=sites,
        input_atoms=len(numbers),
        given_lattice=given,
        transformation=p_mat.copy(),
        origin_shift=shift.copy(),
        standard_axes=standard_axes,
    )

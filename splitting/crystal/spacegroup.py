"""Space group, primitive cell, operations and Wyckoff letters through spglib.

Conventions follow International Tables for Crystallography, Vol. A, as spglib
implements them (A. Togo et al., Sci. Technol. Adv. Mater. Meth. 4, 2384822 (2024)).
"""

from __future__ import annotations

import contextlib
from collections.abc import Iterator
from dataclasses import dataclass, field

import numpy as np

from ..defaults import DEFAULT_CELL_TOLERANCE
from ..errors import InputError, SymmetryError

__all__ = [
    "DEFAULT_CELL_TOLERANCE",
    "CellSymmetry",
    "SpaceGroupInfo",
    "analyse_cell",
    "crystal_system",
    "spglib_dataset",
]


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


def spglib_dataset(lattice: np.ndarray, frac: np.ndarray, numbers: np.ndarray, tolerance: float):
    """spglib's symmetry dataset, or SymmetryError with spglib's reason."""
    import spglib

    with _quiet_spglib():
        try:
            ds = spglib.get_symmetry_dataset((lattice, frac, numbers), symprec=tolerance)
        except Exception as exc:
            raise SymmetryError(f"spglib found no space group: {exc}") from None
    if ds is None:  # pragma: no cover - old error handling
        raise SymmetryError("spglib found no space group (atoms too close for the tolerance?)")
    return ds


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
        Looser and tighter tolerances tried, with the space group each gives.
    """

    number: int
    symbol: str
    schoenflies: str
    hall_number: int
    point_group: str
    crystal_system: str
    tolerance: float
    other_tolerances: tuple[tuple[float, int, str], ...] = ()

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

    @property
    def cartesian(self) -> np.ndarray:
        """Cartesian positions of the primitive-cell atoms (angstrom)."""
        return self.frac @ self.lattice

    @property
    def reference_axes(self) -> np.ndarray:
        """Columns x_ref, y_ref, z_ref: the crystal axes the group frames should follow.

        z along c (along the unique axis b for monoclinic crystals), x along a
        (along c for monoclinic), y completing a right-handed set; common practice.
        """
        a, b, c = (v / np.linalg.norm(v) for v in self.conventional)
        if self.info.crystal_system == "monoclinic":
            z, x = b, c
        else:
            z, x = c, a
        x = x - np.dot(x, z) * z
        x /= np.linalg.norm(x)
        return np.column_stack([x, np.cross(z, x), z])

    def direction_text(self, v: np.ndarray) -> str:
        """A Cartesian direction as crystal-axis text: ``"a"``, ``"c"``, ``"[1,1,0]"`` (conventional cell)."""
        v = np.asarray(v, dtype=float)
        recip = np.linalg.inv(self.conventional).T  # rows: a*, b*, c* (without 2 pi)
        for k, r in enumerate(recip):
            cosang = float(v @ r) / (np.linalg.norm(v) * np.linalg.norm(r))
            axis = self.conventional[k] / np.linalg.norm(self.conventional[k])
            if abs(abs(cosang) - 1) < 1e-6 and abs(abs(float(axis @ r) / np.linalg.norm(r)) - 1) > 1e-6:
                return ("-" if cosang < 0 else "") + "abc"[k] + "*"
        uvw = v @ np.linalg.inv(self.conventional)
        m = np.max(np.abs(uvw))
        for scale in (1, 2, 3, 4, 6):
            w = uvw / m * scale
            if np.allclose(w, np.round(w), atol=2e-3):
                ints = [round(x) for x in w]
                if sorted(np.abs(ints)) == [0, 0, 1]:
                    k = int(np.argmax(np.abs(ints)))
                    return ("-" if ints[k] < 0 else "") + "abc"[k]
                return "[" + ",".join(str(i) for i in ints) + "]"
        return "[" + ",".join(f"{x:.3f}" for x in uvw / m) + "]"

    def orbit_of(self, point: np.ndarray) -> np.ndarray:
        """Distinct images (Cartesian, inside the primitive cell) of a point under the space group."""
        inv = np.linalg.inv(self.lattice)
        out: list[np.ndarray] = []
        for k in range(len(self.rotations)):
            f = self.apply(k, point) @ inv
            f -= np.floor(f + 1e-9)
            if not any(self.same_point(f @ self.lattice, q) for q in out):
                out.append(f @ self.lattice)
        return np.array(out)

    def wyckoff_of(
        self, points: list[np.ndarray], *, tolerance: float = DEFAULT_CELL_TOLERANCE
    ) -> list[tuple[str, str]]:
        """Wyckoff position (multiplicity and letter, e.g. ``"4a"``) and oriented site symbol of points.

        Where no atom sits at a point, a dummy atom of a new kind is placed on its orbit and
        spglib is asked once for all points.
        """
        inv = np.linalg.inv(self.lattice)
        ratio = abs(np.linalg.det(self.conventional) / np.linalg.det(self.lattice))
        if not self.sites_named:
            return [("?", "?") for _ in points]
        frac, numbers, slot, sizes = [self.frac], [self.numbers], [], []
        count = len(self.numbers)
        kind = int(np.max(self.numbers)) + 1000
        for n, p in enumerate(points):
            orbit = self.orbit_of(p)
            sizes.append(len(orbit))
            d = self.frac - p @ inv
            d -= np.round(d)
            dist = np.linalg.norm(d @ self.lattice, axis=1)
            if dist.min() < 0.05:
                slot.append(int(np.argmin(dist)))
                continue
            slot.append(count)
            f = orbit @ inv
            frac.append(f)
            numbers.append(np.full(len(f), kind + n))
            count += len(f)
        if count > len(self.numbers):
            ds = spglib_dataset(self.lattice, np.vstack(frac), np.concatenate(numbers), tolerance)
            wyck, sites = list(ds.wyckoffs), list(ds.site_symmetry_symbols)
        else:
            wyck, sites = list(self.wyckoffs), list(self.site_symbols)
        return [(f"{round(size * ratio)}{wyck[i]}", sites[i]) for i, size in zip(slot, sizes, strict=True)]

    def apply(self, k: int, cart: np.ndarray) -> np.ndarray:
        """Operation k applied to Cartesian points (angstrom)."""
        return np.asarray(cart) @ self.rotations[k].T + self.translations[k]

    def same_point(self, p: np.ndarray, q: np.ndarray, *, tol: float = 1e-2) -> bool:
        """True when two Cartesian points differ by a lattice vector (within ``tol`` angstrom)."""
        d = (np.asarray(p) - np.asarray(q)) @ np.linalg.inv(self.lattice)
        d -= np.round(d)
        return bool(np.linalg.norm(d @ self.lattice) < tol)


def _info(ds, tolerance: float, others) -> SpaceGroupInfo:
    import spglib

    with _quiet_spglib():
        t = spglib.get_spacegroup_type(ds.hall_number)
    return _info_of_type(t, tolerance, others)


def _info_of_type(t, tolerance: float, others=()) -> SpaceGroupInfo:
    return SpaceGroupInfo(
        int(t.number),
        t.international_short,
        t.schoenflies,
        int(t.hall_number),
        t.pointgroup_international,
        crystal_system(int(t.number)),
        tolerance,
        tuple(others),
    )


def cell_from_operations(
    lattice: np.ndarray,
    frac: np.ndarray,
    numbers: np.ndarray,
    rotations: np.ndarray,
    translations: np.ndarray,
    conventional: np.ndarray,
) -> CellSymmetry:
    """A cell whose space group is given as operations (fractional, in this lattice's basis).

    Used for candidate phases whose atoms alone do not show the lower symmetry; the type is
    named from the operations (spglib), Wyckoff letters are left unknown.
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
    )


def analyse_cell(
    lattice, frac, numbers, *, tolerance: float = DEFAULT_CELL_TOLERANCE, scan: bool = True
) -> CellSymmetry:
    """Space group of a periodic structure and its primitive cell with operations.

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
        Also try tolerance / 10 and tolerance * 10 and report their space groups.
    """
    if tolerance <= 0:
        raise InputError("the symmetry tolerance must be positive")
    lattice = np.asarray(lattice, dtype=float)
    frac = np.asarray(frac, dtype=float)
    numbers = np.asarray(numbers, dtype=int)
    ds = spglib_dataset(lattice, frac, numbers, tolerance)
    # primitive cell in the input frame
    plat = np.asarray(ds.primitive_lattice, dtype=float)
    mapping = np.asarray(ds.mapping_to_primitive)
    n_prim = int(mapping.max()) + 1
    first = np.array([int(np.flatnonzero(mapping == k)[0]) for k in range(n_prim)])
    cart = frac[first] @ lattice
    pfrac = cart @ np.linalg.inv(plat)
    pfrac -= np.floor(pfrac + 1e-9)
    pnum = numbers[first]
    if n_prim == len(numbers) and np.allclose(plat, lattice, atol=1e-8):
        pds = ds  # the input is already primitive
    else:
        pds = spglib_dataset(plat, pfrac, pnum, tolerance)
    if len(pds.rotations) != len({r.tobytes() for r in np.asarray(pds.rotations)}):
        raise SymmetryError("the primitive cell found by spglib still has pure translations")  # pragma: no cover
    inv_plat = np.linalg.inv(plat)
    rot_frac = np.asarray(pds.rotations, dtype=float)
    rots = np.einsum("ji,njk,kl->nil", plat, rot_frac, inv_plat.T)  # L^T W L^-T
    trans = np.asarray(pds.translations, dtype=float) @ plat
    # conventional cell in the input frame: (a_s b_s c_s) = (a b c) P^-1
    conv_cols = lattice.T @ np.linalg.inv(np.asarray(ds.transformation_matrix, dtype=float))
    others = []
    if scan:
        for t in (tolerance / 10, tolerance * 10):
            try:
                o = spglib_dataset(plat, pfrac, pnum, t)
                others.append((t, int(o.number), str(o.international)))
            except SymmetryError:
                others.append((t, 0, "none"))
    info = _info(ds, tolerance, others)
    for arr in (plat, pfrac, pnum, rots, trans, conv_cols):
        arr.setflags(write=False)
    return CellSymmetry(
        info=info,
        lattice=plat,
        frac=pfrac,
        numbers=pnum,
        rotations=rots,
        translations=trans,
        frac_rotations=rot_frac,
        frac_translations=np.asarray(pds.translations, dtype=float),
        conventional=conv_cols.T.copy(),
        wyckoffs=tuple(pds.wyckoffs),
        site_symbols=tuple(pds.site_symmetry_symbols),
        input_atoms=len(numbers),
    )

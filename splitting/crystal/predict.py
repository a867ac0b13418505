"""The crystal pipeline: structure -> space group -> units -> correlation -> activity.

``predict(path)`` is the main job of the package.  Each orbit of equivalent units is
carried free group -> site group -> factor group; translations and librations are
induced from the site; the acoustic modes are removed; and the whole-cell count
Gamma_3N, computed independently from the atoms, must equal the sum species by species
(any mismatch raises :class:`~splitting.errors.BookkeepingError`).
"""

from __future__ import annotations

import os
import re
from dataclasses import dataclass, replace

import numpy as np

from ..activity import activity_table
from ..correlation import FactorGroup, induce
from ..errors import BookkeepingError, SymmetryError
from ..groups import OrientedGroup, Representation
from ..groups.identify import identify_in_crystal
from ..molecule.analysis import hill_formula
from ..molecule.symmetry import DEFAULT_TOLERANCE
from .freeunits import FreeUnitCache
from .limits import DEFAULT_MAX_ATOMS, check_atom_count
from .origin import wyckoff_names
from .read import load_structure
from .results import Correlation, CrystalPrediction, FactorSpecies, UnitOrbit
from .spacegroup import DEFAULT_CELL_TOLERANCE, CellSymmetry, analyse_cell
from .units import DEFAULT_BOND_SCALE, Unit, find_units

__all__ = ["RETRY_TOLERANCES", "Options", "predict", "predict_atoms", "predict_with_cell"]


@dataclass(frozen=True)
class Options:
    """Choices of the crystal pipeline (one name per idea, shared by the CLI).

    Attributes
    ----------
    tolerance : float
        spglib distance tolerance for the space group (angstrom).
    unit_tolerance : float
        Tolerance for the free-unit point group (angstrom).
    free_groups : tuple of (str, str)
        ``(formula, group)`` pairs overriding the detected free group of a unit.
    formulas : tuple of str
        If given, only units with these formulas are molecules; others are split into atoms.
    cutoffs : tuple of ((str, str), float)
        Explicit bond cut-offs per element pair (angstrom).
    bond_scale : float
        Bond when distance < bond_scale * (sum of covalent radii).
    ionic_metals : bool
        Keep alkali, alkaline-earth and lanthanide atoms as separate ions.
    max_atoms : int
        Refuse a cell of more atoms than this (as given), before the symmetry search.
    standard_axes : bool
        Label species, components and tensors in the axes of the standard setting instead
        of those of the file (see docs/conventions.md).
    """

    tolerance: float = DEFAULT_CELL_TOLERANCE
    unit_tolerance: float = DEFAULT_TOLERANCE
    free_groups: tuple[tuple[str, str], ...] = ()
    formulas: tuple[str, ...] = ()
    cutoffs: tuple[tuple[tuple[str, str], float], ...] = ()
    bond_scale: float = DEFAULT_BOND_SCALE
    ionic_metals: bool = True
    max_atoms: int = DEFAULT_MAX_ATOMS
    standard_axes: bool = False

    def __post_init__(self) -> None:
        # units may be named as written (SO4^2-, NH4+) or by Hill formula; keep Hill formulas
        from .names import hill_of

        object.__setattr__(self, "free_groups", tuple((hill_of(f), g) for f, g in self.free_groups))
        object.__setattr__(self, "formulas", tuple(hill_of(f) for f in self.formulas))


def predict(
    path: str | os.PathLike[str], options: Options | None = None, *, format: str | None = None
) -> CrystalPrediction:
    """Predict the k = 0 modes of the crystal in a structure file.

    Examples
    --------
    >>> from pathlib import Path
    >>> p = predict(Path(__file__).parents[2] / "structures" / "calcite.cif")
    >>> p.factor_group, p.unit("CO3").site_group, p.unit("CO3").count
    ('D3d', 'D3', 2)
    """
    atoms = load_structure(path, format=format)
    return predict_atoms(atoms, options, source=os.fspath(path))


def predict_atoms(
    atoms,
    options: Options | None = None,
    *,
    source: str = "structure",
    free_cache: FreeUnitCache | None = None,
    scan: bool = False,
) -> CrystalPrediction:
    """As :func:`predict`, for an ``ase.Atoms`` object with a periodic cell.

    One spglib search at ``options.tolerance`` decides the space group, and that one
    decision governs the header, the factor group and every site.  ``free_cache`` shares
    free-unit analyses between calls (related phases, candidates); ``scan`` also reports
    the space groups at a tenth and ten times the tolerance (two more searches).  A result
    that fails its own cross-checks raises :class:`~splitting.errors.BookkeepingError`
    naming the tolerances (of :data:`RETRY_TOLERANCES`) at which the checks pass.
    """
    return predict_with_cell(atoms, options, source=source, free_cache=free_cache, scan=scan)[0]


def predict_with_cell(
    atoms,
    options: Options | None = None,
    *,
    source: str = "structure",
    free_cache: FreeUnitCache | None = None,
    scan: bool = False,
    label_cell: np.ndarray | None = None,
) -> tuple[CrystalPrediction, CellSymmetry]:
    """As :func:`predict_atoms`, also returning the cell of the one symmetry search (for callers
    that go on from it, such as the search for lower-symmetry candidates).  ``label_cell`` (rows,
    angstrom: lattice vectors of ``atoms``) is the cell the labels refer to instead of the atoms'
    own (see :meth:`~splitting.crystal.spacegroup.CellSymmetry.labelled_on`)."""
    opts = options or Options()
    check_atom_count(len(atoms), opts.max_atoms)
    lattice, frac, numbers = atoms.cell[:], atoms.get_scaled_positions(wrap=True), atoms.numbers
    cell = analyse_cell(lattice, frac, numbers, tolerance=opts.tolerance, scan=scan, standard_axes=opts.standard_axes)
    if label_cell is not None:
        cell = cell.labelled_on(np.rint(np.asarray(label_cell, dtype=float) @ np.linalg.inv(lattice)))
    try:
        pred = _predict(cell, units_of(cell, opts), opts, source, free_cache)
    except BookkeepingError as exc:
        raise BookkeepingError(f"{exc}; {_tolerances_that_pass(atoms, opts)}") from None
    return replace(pred, cell_parameters=tuple(float(v) for v in atoms.cell.cellpar())), cell


#: tolerances (angstrom) tried when a prediction fails its own cross-checks
RETRY_TOLERANCES = (1e-3, 3e-3, 1e-2, 3e-2, 0.1)


def _tolerances_that_pass(atoms, opts: Options) -> str:
    """Which of a few other space-group tolerances give a prediction that passes its checks."""
    lattice, frac, numbers = atoms.cell[:], atoms.get_scaled_positions(wrap=True), atoms.numbers
    passing = []
    for t in RETRY_TOLERANCES:
        if abs(t - opts.tolerance) < 1e-12:
            continue
        try:
            cell = analyse_cell(lattice, frac, numbers, tolerance=t, standard_axes=opts.standard_axes)
            trial = replace(opts, tolerance=t)
            _predict(cell, units_of(cell, trial), trial, "trial")
        except SymmetryError:
            continue
        passing.append(f"--tolerance {t:g} ({cell.info.symbol})")
    if not passing:
        return "no tolerance of " + ", ".join(f"{t:g}" for t in RETRY_TOLERANCES) + " A passes either"
    return "the checks pass at " + ", ".join(passing)


def units_of(cell: CellSymmetry, opts: Options) -> tuple[Unit, ...]:
    """The units of a cell with the bond options of ``opts``."""
    return find_units(
        cell.lattice,
        cell.frac,
        cell.numbers,
        scale=opts.bond_scale,
        ionic_metals=opts.ionic_metals,
        cutoffs=dict(opts.cutoffs),
        formulas=list(opts.formulas) or None,
    )


# ----------------------------------------------------------------------------- pipeline
def _orbits(cell: CellSymmetry, units: tuple[Unit, ...]) -> list[list[tuple[int, int]]]:
    """Orbits of units as lists of (unit index, cell operation carrying the first unit onto it)."""
    centres = np.array([u.centre for u in units])
    formulas = [u.formula for u in units]
    inv = np.linalg.inv(cell.lattice)
    cf = centres @ inv
    seen: set[int] = set()
    orbits = []
    for u0 in range(len(units)):
        if u0 in seen:
            continue
        # every operation at once: image of the unit's centre, nearest centre (modulo the lattice)
        img = (centres[u0] @ np.transpose(cell.rotations, (0, 2, 1)) + cell.translations) @ inv  # (ops, 3)
        d = cf[None] - img[:, None]
        d -= np.round(d)
        dist = np.linalg.norm(d @ cell.lattice, axis=2)  # (ops, units)
        near = np.argmin(dist, axis=1)
        orbit = {u0: 0}
        for k, v in enumerate(near.tolist()):
            if dist[k, v] > 0.05 or formulas[v] != formulas[u0]:
                raise SymmetryError(f"operation {k} maps unit {formulas[u0]} onto no unit; try a different --tolerance")
            orbit.setdefault(v, k)
        seen.update(orbit)
        orbits.append(sorted(orbit.items()))
    return orbits


def _site_ops(cell: CellSymmetry, centre: np.ndarray) -> list[int]:
    return [k for k in range(len(cell.rotations)) if cell.same_point(cell.apply(k, centre), centre, tol=0.05)]


def _site_ops_all(cell: CellSymmetry, centres: list[np.ndarray]) -> list[list[int]]:
    """:func:`_site_ops` for many centres at once (one array operation per cell operation)."""
    if not centres:
        return []
    pts = np.asarray(centres, dtype=float)
    inv = np.linalg.inv(cell.lattice)
    fixed = np.zeros((len(pts), len(cell.rotations)), dtype=bool)
    for k in range(len(cell.rotations)):
        d = (cell.apply(k, pts) - pts) @ inv
        d -= np.round(d)
        fixed[:, k] = np.linalg.norm(d @ cell.lattice, axis=1) < 0.05
    return [np.flatnonzero(row).tolist() for row in fixed]


class _AxesText:
    """:func:`_axes_text` remembered per frame (groups of one orientation share it)."""

    def __init__(self, cell: CellSymmetry) -> None:
        self.cell = cell
        self.known: dict[bytes, dict[str, str]] = {}

    def __call__(self, og: OrientedGroup) -> dict[str, str]:
        key = np.asarray(og.frame, dtype=float).round(9).tobytes()
        found = self.known.get(key)
        if found is None:
            found = self.known[key] = _axes_text(self.cell, og)
        return found


@dataclass(frozen=True, eq=False)
class _Site:
    """What depends on the site group only (shared by every orbit on the same cell operations)."""

    group: OrientedGroup
    cell_ops: list[int]
    axes: dict[str, str]
    translations: Representation
    librations: Representation
    site_to_factor: tuple
    restrictions: dict[str, Representation]

    @classmethod
    def of(cls, cell: CellSymmetry, factor: FactorGroup, site_idx: list[int], formula: str, axes_text) -> _Site:
        """The site of the cell operations ``site_idx``."""
        site = identify_in_crystal(cell.rotations[site_idx], cell.reference_axes, tol=1e-3)
        # site-group element order -> cell operations (the nearest, the first of equals)
        gap = np.abs(cell.rotations[site_idx][None] - np.asarray(site.operations)[:, None]).max(axis=(2, 3))
        cell_ops = [site_idx[int(k)] for k in np.argmin(gap, axis=1)]
        vec = np.trace(site.operations, axis1=1, axis2=2)
        trans = induce(factor, cell_ops, vec, what=f"translations of {formula}")
        lib_chars = np.linalg.det(site.operations) * vec
        lib = induce(factor, cell_ops, lib_chars, what=f"librations of {formula}")
        chars = site.group.characters_at_operations()
        to_factor = tuple(
            (sp.label, induce(factor, cell_ops, chars[k], what=f"{sp.label} of site {site.name}"))
            for k, sp in enumerate(site.group.species)
        )
        return cls(site, cell_ops, axes_text(site), trans, lib, to_factor, {})


def _classes_in(free: OrientedGroup, ops: np.ndarray) -> np.ndarray | bool | None:
    """Classes of the free group holding each site operation; True for a linear group; None if one is missing."""
    if "∞" in free.name:
        return True if all(free.contains(op) for op in ops) else None
    try:
        idx = free.locate_all(ops)
    except SymmetryError:
        return None
    return free.group.class_of[idx]


def _axes_text(cell: CellSymmetry, og: OrientedGroup) -> dict[str, str]:
    axes = og.axes()
    return dict(zip(axes, cell.direction_texts(list(axes.values())), strict=True))


def _warnings(cell: CellSymmetry, units: tuple[Unit, ...]) -> list[str]:
    out = []
    info = cell.info
    if info.tolerance_sensitive:
        alts = ", ".join(f"{s} (No. {n}) at {t:g} Å" for t, n, s in info.other_tolerances if n != info.number)
        out.append(
            f"the space group depends on the tolerance: {info.symbol} (No. {info.number}) at "
            f"{info.tolerance:g} Å, but {alts}"
        )
    symbols = {s for u in units for s in u.symbols}
    if "H" not in symbols:
        suspicious = [u.formula for u in units if u.kind == "molecule" and _undercoordinated_carbon(u)]
        lone_n = [u.formula for u in units if u.kind == "atom" and u.symbols == ["N"]]
        if suspicious or lone_n:
            out.append(
                "no hydrogen atoms in the structure, but units "
                + ", ".join(sorted(set(suspicious + lone_n)))
                + " look like they need some; X-ray structures often omit H, which changes the free group"
            )
    return out


def _multiplicity(wyckoff: str, count: int) -> int:
    """Multiplicity from a Wyckoff position such as "8A" (spglib writes the 27th letter as A); else ``count``."""
    m = re.match(r"\d+", wyckoff)
    return int(m.group()) if m else count


def _undercoordinated_carbon(unit: Unit) -> bool:
    """True when a non-linear unit has carbon atoms with fewer than three bonded neighbours (common practice)."""
    from ase.data import covalent_radii

    if sum(s == "C" for s in unit.symbols) < 2:
        return False
    pos = unit.positions
    centred = pos - pos.mean(axis=0)
    if np.linalg.svd(centred, compute_uv=False)[1] < 0.1:  # linear units (C2, C3O2 ...) are fine
        return False
    d = np.linalg.norm(pos[:, None] - pos[None], axis=2)
    r = covalent_radii[unit.numbers]
    bonded = (d < 1.2 * (r[:, None] + r[None])) & (d > 0)
    carbon = np.array([s == "C" for s in unit.symbols])
    return bool(np.any(bonded[carbon].sum(axis=1) < 3))


def _given_free_groups(opts: Options, units: tuple[Unit, ...]) -> dict[str, str]:
    """Free groups given by the user, keyed by Hill formula; a name matching no unit is an error."""
    from .names import match_unit

    found = sorted({u.formula for u in units if u.kind == "molecule"})
    return {match_unit(f, found, what="--free-group"): g for f, g in opts.free_groups}


def _predict(
    cell: CellSymmetry, units: tuple[Unit, ...], opts: Options, source: str, free_cache: FreeUnitCache | None = None
) -> CrystalPrediction:
    factor = FactorGroup.from_rotations(cell.rotations, cell.reference_axes)
    fg = factor.oriented
    orbits = _orbits(cell, units)
    centres = [units[orbit[0][0]].centre for orbit in orbits]
    # letters of the first-ranked standard description (the same whatever origin the file uses)
    ranked_by = [(-len(units[orbit[0][0]].atoms), units[orbit[0][0]].formula) for orbit in orbits]
    wyckoffs, origin = wyckoff_names(cell, centres, ranked_by)
    given = _given_free_groups(opts, units)
    if free_cache is None:
        free_cache = FreeUnitCache(opts.unit_tolerance, given)
    zero = fg.group.representation({})
    orbit_results: list[UnitOrbit] = []
    sites: dict[tuple[int, ...], _Site] = {}
    species_done: dict[tuple, tuple[Representation, Representation]] = {}
    orbits_done: dict[tuple, tuple[list[Correlation], Representation]] = {}
    axes_text = _AxesText(cell)
    site_ops_of = _site_ops_all(cell, centres)
    setting = _setting(cell, origin)
    if setting is not None:  # oriented site symbols in the axes the labels use
        wyckoffs = [(w, setting.site_symbol(symbol)) for w, symbol in wyckoffs]
    for orbit, (wyck, site_symbol), site_idx in zip(orbits, wyckoffs, site_ops_of, strict=True):
        u0 = units[orbit[0][0]]
        centre = u0.centre
        if len(site_idx) * len(orbit) != len(cell.rotations):
            raise BookkeepingError(
                f"{u0.formula}: |S| x Z = {len(site_idx)} x {len(orbit)} is not |F| = {len(cell.rotations)}"
            )
        key = tuple(site_idx)
        st = sites.get(key)
        if st is None:
            st = sites[key] = _Site.of(cell, factor, site_idx, u0.formula, axes_text)
        site, site_cell = st.group, st.cell_ops
        trans = st.translations
        lib = zero
        internal = zero
        correlation: list[Correlation] = []
        free_name = None
        free_source = "atom"
        free_axes: dict[str, str] = {}
        deviation = 0.0
        free_vib = None
        if len(u0.atoms) > 1:
            info = free_cache.get(u0)
            free = info.group
            free_name, free_source = free.name, info.source
            free_axes = axes_text(free)
            deviation = info.deviation
            free_vib = info.vibrations
            classes = _classes_in(free, site.operations)
            if classes is None:
                raise SymmetryError(
                    f"unit {u0.formula}: the site group {site.name} is not a subgroup of the free group "
                    f"{free.name} as found (unit tolerance {opts.unit_tolerance} Å); "
                    "increase --unit-tolerance or name the free group"
                )
            if info.linear:
                axis = free.frame[:, 2]
                lib_chars = np.array([np.linalg.det(r) * (np.trace(r) - axis @ r @ axis) for r in site.operations])
                lib = induce(factor, site_cell, lib_chars, what=f"librations of {u0.formula}")
            else:
                lib = st.librations
            orbit_key = tuple(h for _, h in orbit)
            vib_key = tuple(info.vibrations)
            # the correlation of an orbit follows from the site, the orbit's operations, the free group
            # and where the site operations fall in it: orbits alike in all four share it
            memo_key = None if classes is True else (key, orbit_key, free.name, classes.tobytes(), vib_key)
            memo = orbits_done.get(memo_key) if memo_key is not None else None
            if memo is not None:
                correlation, internal = memo
            pairs = None
            for label, n in info.vibrations if memo is None else ():
                if classes is True:
                    chars = np.array([free.character(label, op) for op in site.operations])
                else:
                    chars = np.asarray(free.group.get_species(label).characters, dtype=float)[classes]
                done_key = (key, orbit_key, label, free.name, chars.round(9).tobytes())
                done = species_done.get(done_key)
                if done is None:
                    site_rep = site.reduce_at(chars, what=f"{label} of {free.name} in site {site.name}")
                    fac = induce(factor, site_cell, chars, what=f"{label} of {u0.formula}")
                    if pairs is None:
                        pairs = _fixed_pairs(cell, orbit, centre)
                    _check_geometric(cell, factor, orbit, centre, free, label, fac, u0.formula, pairs)
                    _check_frobenius(factor, site, site_rep, fac, label, st.restrictions)
                    done = species_done[done_key] = (site_rep, fac)
                site_rep, fac = done
                dim = free.group.get_species(label).dimension
                correlation.append(Correlation(label, dim, n, site_rep, fac))
                internal = internal + fac * n
            if memo is None and memo_key is not None:
                orbits_done[memo_key] = (correlation, internal)
        site_to_factor = st.site_to_factor
        orbit_results.append(
            UnitOrbit(
                formula=u0.formula,
                kind=u0.kind,
                atoms_per_unit=len(u0.atoms),
                count=len(orbit),
                count_conventional=_multiplicity(wyck, len(orbit)),
                wyckoff=wyck,
                site_symmetry=site_symbol,
                site_group=site.name,
                site_axes=st.axes,
                free_group=free_name,
                free_group_source=free_source,
                free_axes=free_axes,
                max_deviation=deviation,
                centre=tuple(float(x) for x in (centre @ np.linalg.inv(cell.lattice))),
                free_vibrations=free_vib,
                correlation=tuple(correlation),
                internal=internal,
                translations=trans,
                librations=lib,
                symbols=tuple(u0.symbols),
                geometry=tuple(map(tuple, (u0.positions - centre).tolist())),
                site_to_factor=site_to_factor,
            )
        )
    gamma = _gamma_3n(cell, factor)
    acoustic = fg.group.vector
    total = zero
    for o in orbit_results:
        total = total + o.internal + o.translations + o.librations
    if total.counts != gamma.counts:
        raise BookkeepingError(f"whole-cell count Γ3N = {gamma} but units give {total}")
    act = {a.label: a for a in activity_table(fg.name)}
    species = []
    for (label, _), dim in zip(gamma.counts, gamma.dimensions, strict=True):
        tr = sum(o.translations[label] for o in orbit_results) - acoustic[label]
        a = act[label]
        species.append(
            FactorSpecies(
                label=label,
                dimension=dim,
                acoustic=acoustic[label],
                translational=tr,
                librational=sum(o.librations[label] for o in orbit_results),
                internal=sum(o.internal[label] for o in orbit_results),
                ir=a.ir,
                raman=a.raman,
                raman_tensor=a.raman_tensor,
                polar=bool(a.ir),
            )
        )
    from ase.data import chemical_symbols

    return CrystalPrediction(
        source=source,
        formula=hill_formula([chemical_symbols[z] for z in cell.numbers]),
        space_group=cell.info,
        factor_group=fg.name,
        factor_axes=_axes_text(cell, fg),
        centrosymmetric=fg.group.centrosymmetric,
        atoms_primitive=len(cell.numbers),
        atoms_input=cell.input_atoms,
        units=tuple(orbit_results),
        species=tuple(species),
        gamma_3n=gamma,
        acoustic=acoustic,
        warnings=tuple(_warnings(cell, units)),
        cell_volume=float(abs(np.linalg.det(cell.lattice))),
        setting=setting,
    )


def _setting(cell: CellSymmetry, origin: np.ndarray | None = None):
    """The file's setting and the transformation to the standard one (None for a cell from operations).

    ``origin`` is the shift of the standard origin chosen for the Wyckoff letters (see
    :func:`~splitting.crystal.origin.canonical_names`), added to spglib's origin shift.
    """
    if cell.transformation is None or cell.origin_shift is None:
        return None
    from .setting import setting_of

    shift = cell.origin_shift
    if origin is not None and np.any(origin != 0):
        shift = np.mod(shift + origin, 1.0)
    return setting_of(cell.info.hall_number, cell.transformation, shift, standard_axes=cell.standard_axes)


def _gamma_3n(cell: CellSymmetry, factor: FactorGroup) -> Representation:
    """Whole-cell count: chi(g) = U(g) tr(R), U = atoms left in place modulo the lattice."""
    pos = cell.cartesian
    inv = np.linalg.inv(cell.lattice)
    chars = np.zeros(len(cell.rotations))
    for k in range(len(cell.rotations)):
        d = (cell.apply(k, pos) - pos) @ inv
        d -= np.round(d)
        fixed = int(np.sum(np.linalg.norm(d @ cell.lattice, axis=1) < 0.05))
        chars[k] = fixed * np.trace(cell.rotations[k])
    return factor.reduce_cell(chars, what="Γ3N")


def _check_geometric(
    cell: CellSymmetry,
    factor: FactorGroup,
    orbit,
    centre: np.ndarray,
    free: OrientedGroup,
    label: str,
    expected: Representation,
    formula: str,
    pairs: tuple[np.ndarray, np.ndarray] | None = None,
) -> None:
    """Method-notes route: sum, over the units that g leaves in place, of chi(g) in each unit's orientation.

    ``pairs`` (from :func:`_fixed_pairs`) may be passed to share the search between species.
    """
    g_idx, conj = pairs if pairs is not None else _fixed_pairs(cell, orbit, centre)
    if "∞" in free.name:
        values = np.array([free.character(label, op) for op in conj])
    else:
        classes = free.group.class_of[free.locate_all(conj)] if len(conj) else np.zeros(0, dtype=int)
        values = np.asarray(free.group.get_species(label).characters, dtype=float)[classes]
    chars = np.bincount(g_idx, weights=values, minlength=len(cell.rotations)).astype(float)
    got = factor.reduce_cell(chars, what=f"{label} of {formula} (unit by unit)")
    if got.counts != expected.counts:
        raise BookkeepingError(f"{formula} {label}: coset route gives {expected}, unit-by-unit route gives {got}")


def _fixed_pairs(cell: CellSymmetry, orbit, centre: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """For every cell operation g and unit h(u0) of the orbit that g leaves in place: g's index and
    g seen from the first unit's frame (R_h^T R_g R_h), all operations at once."""
    hs = np.array([h for _, h in orbit], dtype=int)
    cj = centre @ cell.rotations[hs].transpose(0, 2, 1) + cell.translations[hs]  # (n, 3)
    imgs = np.einsum("gij,nj->gni", cell.rotations, cj) + cell.translations[:, None, :]
    d = (imgs - cj[None]) @ np.linalg.inv(cell.lattice)
    d -= np.round(d)
    fixed = np.linalg.norm(d @ cell.lattice, axis=2) < 0.05
    g_idx, n_idx = np.nonzero(fixed)
    rh = cell.rotations[hs[n_idx]]
    conj = np.einsum("nji,njk,nkl->nil", rh, cell.rotations[g_idx], rh)
    return g_idx, conj


def _check_frobenius(
    factor: FactorGroup,
    site: OrientedGroup,
    site_rep: Representation,
    fac: Representation,
    label: str,
    memo: dict[str, Representation] | None = None,
) -> None:
    """Frobenius reciprocity, counted with the number of complex irreps in each physical species.

    ``memo`` keeps the restrictions of factor-group species to this site group between calls.
    """
    fg = factor.oriented
    memo = {} if memo is None else memo
    for phi, n in fac.counts:
        res = memo.get(phi)
        if res is None:
            res = memo[phi] = fg.restrict(phi, site)
        lhs = n * len(fg.group.get_species(phi).irreps)
        rhs = sum(site_rep[lab] * k * len(site.group.get_species(lab).irreps) for lab, k in res)
        if lhs != rhs:
            raise BookkeepingError(f"Frobenius reciprocity fails for {label} -> {phi}: {lhs} vs {rhs}")

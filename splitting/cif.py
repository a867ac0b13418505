"""Reading crystal structures from CIF through gemmi, with every number checked.

gemmi parses the file (fast, in C++); the atom-site table, the cell and the symmetry
operations are then taken from the parsed block and checked here, so that a value the
file does not really give (``?``, text, NaN, a negative length) is reported instead of
being replaced by a default.  The symmetry expansion is vectorised: the time grows
linearly with the number of sites.

Sites that the symmetry maps onto themselves (special positions) are merged; two
*different* sites that coincide are an error unless both are partly occupied (a mixed or
disordered site), in which case they are kept as one atom with both occupancies, as the
CIF convention for substitutional disorder has it.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from .errors import InputError

__all__ = ["CifSite", "cif_number", "read_cif"]

#: two images closer than this (fractional, per axis) are the same position; the value ase uses
SYMPREC = 1e-3
#: smallest occupancy read as an orientation or a species of a site
MIN_OCCUPANCY = 0.01

_NUMBER = re.compile(r"^([+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)(?:\((\d+)\))?$")
_ELEMENT = re.compile(r"^([A-Za-z]{1,2})")


def cif_number(text: str) -> float | None:
    """The value of a CIF number, with any standard uncertainty in parentheses dropped.

    Returns ``None`` for the CIF place holders ``?`` (unknown) and ``.`` (inapplicable).

    Raises
    ------
    ValueError
        Anything else that is not a number (text, ``nan``, ``inf``).

    Examples
    --------
    >>> cif_number("4.1234(5)"), cif_number("-1e-3"), cif_number("?")
    (4.1234, -0.001, None)
    """
    if text in ("?", "."):
        return None
    m = _NUMBER.match(text.strip())
    if not m:
        raise ValueError(text)
    return float(m.group(1))


@dataclass(frozen=True)
class CifSite:
    """One row of the atom-site table: label, element, fractional position, occupancy."""

    label: str
    symbol: str
    number: int
    fract: tuple[float, float, float]
    occupancy: float
    disorder_group: str


def _element(text: str):
    """(symbol, atomic number) from a type symbol or a label ('Cl1', 'O2-', 'FE'), or None."""
    import gemmi

    m = _ELEMENT.match(text)
    if not m:
        return None
    letters = m.group(1)
    for cand in (letters, letters[:1]):
        name = cand[:1].upper() + cand[1:].lower()
        if name == "D":  # deuterium counts as hydrogen for symmetry
            return "H", 1
        el = gemmi.Element(name)
        if el.atomic_number > 0 and el.name == name:
            return name, el.atomic_number
    return None


def _text(raw: str) -> str:
    """A CIF value without its quotes; the place holders ``?`` and ``.`` stay as they are."""
    import gemmi

    return raw if raw in ("?", ".") else gemmi.cif.as_string(raw)


def _value(block, tag: str, where: str, *, required: bool = True) -> float | None:
    raw = block.find_value(tag)
    if raw is None:
        if required:
            raise InputError(f"{where}: no {tag}; the file gives no complete unit cell (a crystal structure is needed)")
        return None
    text = _text(raw)
    try:
        value = cif_number(text)
    except ValueError:
        raise InputError(f"{where}: {tag} is {text!r}, not a number") from None
    if value is None:
        raise InputError(f"{where}: {tag} is not given ({text!r})")
    if not math.isfinite(value):
        raise InputError(f"{where}: {tag} is {text!r}, not a finite number")
    return value


def _cell(block, where: str) -> tuple[float, ...]:
    from .readers import check_cell_parameters

    tags = ("a", "b", "c", "alpha", "beta", "gamma")
    values = []
    for t in tags:
        prefix = "_cell_length_" if len(t) == 1 else "_cell_angle_"
        v = _value(block, prefix + t, where, required=len(t) == 1)
        values.append(90.0 if v is None else v)
    check_cell_parameters(values, where)
    return tuple(values)


def _operations(block, where: str) -> tuple[np.ndarray, np.ndarray, str]:
    """Rotations (n, 3, 3) and translations (n, 3) of the file's space group, and its name."""
    import gemmi

    def first(*tags: str) -> str | None:
        for t in tags:
            raw = block.find_value(t)
            if raw is not None and gemmi.cif.as_string(raw) not in ("?", "."):
                return gemmi.cif.as_string(raw).strip()
        return None

    name = first("_space_group_name_H-M_alt", "_symmetry_space_group_name_H-M") or ""
    ops = None
    for tag in ("_space_group_symop_operation_xyz", "_symmetry_equiv_pos_as_xyz"):
        col = block.find_values(tag)
        if len(col):
            triplets = [gemmi.cif.as_string(v) for v in col]
            ops = []
            for t in triplets:
                try:
                    ops.append(gemmi.Op(t))
                except (RuntimeError, ValueError):
                    raise InputError(
                        f"{where}: {tag}: the symmetry operation {t!r} cannot be read; write it as x,y,z triplets "
                        "such as '-x+1/2,y,-z'"
                    ) from None
            break
    if ops is None:
        hall = first("_space_group_name_Hall", "_symmetry_space_group_name_Hall")
        number = first("_space_group_IT_number", "_symmetry_Int_Tables_number")
        try:
            if hall:
                ops = list(gemmi.symops_from_hall(hall))
            elif name:
                sg = gemmi.find_spacegroup_by_name(name)
                if sg is None:
                    raise InputError(f"{where}: unknown space-group name {name!r}")
                ops = list(sg.operations())
            elif number:
                sg = gemmi.find_spacegroup_by_number(int(cif_number(number) or 0))
                if sg is None:
                    raise InputError(f"{where}: unknown space-group number {number!r}")
                ops = list(sg.operations())
        except (RuntimeError, ValueError):
            raise InputError(
                f"{where}: the space group cannot be read from its name {name!r} or number {number!r}; "
                "give the symmetry operations (_space_group_symop_operation_xyz)"
            ) from None
    if not ops:
        ops = [gemmi.Op("x,y,z")]  # no symmetry given: the sites are the whole cell (P1)
    rot = np.array([op.rot for op in ops], dtype=float) / gemmi.Op.DEN
    tran = np.array([op.tran for op in ops], dtype=float) / gemmi.Op.DEN
    return rot, tran, name


def _sites(block, where: str) -> list[CifSite]:

    table = block.find(
        "_atom_site_",
        ["label", "?type_symbol", "fract_x", "fract_y", "fract_z", "?occupancy", "?disorder_group", "?calc_flag"],
    )
    if len(table) == 0:
        if len(block.find_values("_atom_site_Cartn_x")):
            if block.find_value("_cell_length_a") is None:
                raise InputError(
                    f"{where}: no three-dimensional periodic cell; give a crystal structure "
                    "(CIF, POSCAR, extended XYZ with a Lattice)"
                )
            raise InputError(f"{where}: atom positions are given only as Cartesian coordinates; give fractional ones")
        raise InputError(f"{where}: no atom-site table with fractional coordinates (_atom_site_fract_x)")
    sites = []
    for row in table:
        label = _text(row[0])
        if row.has(7) and _text(row[7]).lower() == "dum":
            continue  # dummy atoms mark positions, not atoms
        type_symbol = _text(row[1]) if row.has(1) else ""
        element = _element(type_symbol) if type_symbol not in ("", "?", ".") else _element(label)
        if element is None:
            raise InputError(f"{where}: atom site {label!r}: no element in {type_symbol or label!r}")
        fract = []
        for k, axis in zip((2, 3, 4), "xyz", strict=True):
            text = _text(row[k])
            try:
                v = cif_number(text)
            except ValueError:
                v = None
            if v is None or not math.isfinite(v) or abs(v) > 1e3:
                raise InputError(f"{where}: atom site {label!r}: fract_{axis} is {text!r}, not a coordinate")
            fract.append(v)
        occ = 1.0
        if row.has(5):
            text = _text(row[5])
            try:
                value = cif_number(text) if text != "." else 1.0
            except ValueError:
                raise InputError(f"{where}: atom site {label!r}: occupancy {text!r} is not a number") from None
            if value is None:
                raise InputError(f"{where}: atom site {label!r}: occupancy is not given ('?'); give a number")
            if not math.isfinite(value) or value > 1.01:
                raise InputError(f"{where}: atom site {label!r}: occupancy {text} is not between 0 and 1")
            if value < MIN_OCCUPANCY:
                what = "negative" if value < 0 else "zero" if value == 0 else f"below {MIN_OCCUPANCY:g}"
                raise InputError(
                    f"{where}: atom site {label!r}: occupancy {text} is {what}; an occupancy must lie in "
                    f"[{MIN_OCCUPANCY:g}, 1] (remove a site that is not there)"
                )
            occ = min(value, 1.0)
        group = _text(row[6]) if row.has(6) else "."
        sites.append(CifSite(label, element[0], element[1], tuple(fract), occ, group))
    return sites


def _expand(fract: np.ndarray, rot: np.ndarray, tran: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Images of every site under every operation, duplicates of one site removed.

    Returns the positions (m, 3) in [0, 1) and the index of the site of each.
    """
    n_ops = len(rot)
    out_pos, out_kind = [], []
    chunk = max(1, 400_000 // (n_ops * n_ops))
    for start in range(0, len(fract), chunk):
        f = fract[start : start + chunk]
        img = np.einsum("oij,sj->soi", rot, f) + tran[None]  # (s, o, 3)
        img = np.mod(img, 1.0)
        img[np.isclose(img, 1.0, atol=1e-12)] = 0.0
        diff = img[:, :, None, :] - img[:, None, :, :]
        diff -= np.round(diff)
        same = np.all(np.abs(diff) < SYMPREC, axis=3)  # (s, o, o)
        earlier = np.tril(np.ones((n_ops, n_ops), dtype=bool), -1)  # [j, i]: i < j
        dup = np.any(same & earlier[None], axis=2)  # image j equals an earlier image of its site
        keep = ~dup
        s_idx, o_idx = np.nonzero(keep)
        out_pos.append(img[s_idx, o_idx])
        out_kind.append(s_idx + start)
    return np.concatenate(out_pos), np.concatenate(out_kind)


def _coinciding(pos: np.ndarray) -> np.ndarray:
    """Pairs (i < j) of positions closer than SYMPREC per axis, periodic in the unit cube."""
    from scipy.spatial import cKDTree

    if len(pos) < 2:
        return np.zeros((0, 2), dtype=int)
    tree = cKDTree(np.mod(pos, 1.0), boxsize=1.0 + 1e-12)
    return tree.query_pairs(SYMPREC, p=np.inf, output_type="ndarray")


def _block(doc, where: str):
    """The data block holding the atom sites (the last one, as other readers do)."""
    blocks = [b for b in doc if len(b.find_values("_atom_site_fract_x")) or len(b.find_values("_atom_site_label"))]
    if not blocks:
        if len(doc) == 0:
            raise InputError(f"{where}: no data block; the file is not a CIF")
        return doc[len(doc) - 1]
    return blocks[-1]


def read_cif(path: str | Path, text: str | None = None):
    """Read a CIF into an ``ase.Atoms`` with the whole unit cell.

    ``atoms.info['occupancy']`` and ``atoms.arrays['spacegroup_kinds']`` follow ase's CIF
    reader (site index -> {symbol: occupancy}); ``atoms.arrays['disorder_group']`` holds the
    CIF disorder group of each atom and ``atoms.info['site_labels']`` the site labels.

    Parameters
    ----------
    path
        The file (named in every message).
    text
        The file's text when already read (e.g. decompressed); else it is read from ``path``.

    Raises
    ------
    InputError
        Syntax errors, missing or non-numeric cell and coordinates, occupancies outside
        [0.01, 1], coinciding sites, an unknown space group.
    """
    import gemmi
    from ase import Atoms

    where = str(path)
    try:
        doc = gemmi.cif.read_string(text) if text is not None else gemmi.cif.read(str(path))
    except (RuntimeError, ValueError) as exc:
        raise InputError(f"{where}: not a readable CIF ({_syntax_reason(exc)})") from None
    block = _block(doc, where)
    sites = _sites(block, where)
    a, b, c, alpha, beta, gamma = _cell(block, where)
    rot, tran, _ = _operations(block, where)
    fract = np.array([s.fract for s in sites], dtype=float)
    pos, kind = _expand(fract, rot, tran)
    pairs = _coinciding(pos)
    occ = np.array([s.occupancy for s in sites])
    table = {str(k): {s.symbol: s.occupancy} for k, s in enumerate(sites)}
    drop = np.zeros(len(pos), dtype=bool)
    for i, j in pairs:
        si, sj = sites[kind[i]], sites[kind[j]]
        if kind[i] == kind[j]:
            drop[j] = True  # images of one site closer than the merge tolerance
            continue
        if occ[kind[i]] < 0.999 and occ[kind[j]] < 0.999 and occ[kind[i]] + occ[kind[j]] <= 1.01:
            table[str(kind[i])].setdefault(sj.symbol, sj.occupancy)
            table[str(kind[j])].setdefault(si.symbol, si.occupancy)
            drop[j] = True
            continue
        where_at = ", ".join(f"{x:.4f}" for x in pos[i])
        raise InputError(
            f"{where}: atom sites {si.label} ({si.symbol}) and {sj.label} ({sj.symbol}) coincide at "
            f"({where_at}); a crystal cannot hold both fully occupied (give occupancies if the site is mixed)"
        )
    pos, kind = pos[~drop], kind[~drop]
    from ase.geometry import cellpar_to_cell

    cell = cellpar_to_cell([a, b, c, alpha, beta, gamma])
    atoms = Atoms(
        numbers=[sites[k].number for k in kind],
        scaled_positions=pos,
        cell=cell,
        pbc=True,
    )
    atoms.set_array("spacegroup_kinds", kind.astype(int))
    atoms.set_array("disorder_group", np.array([sites[k].disorder_group for k in kind], dtype=str))
    atoms.info["occupancy"] = table
    atoms.info["site_labels"] = [s.label for s in sites]
    return atoms


#: the CIF parser's complaints (a pattern of its message) and what they mean for the file
_SYNTAX = (
    (re.compile(r"Wrong number of values in loop (\S+)"), "a row of the table {0} has a value too many or too few"),
    (re.compile(r"Wrong number of values in loop"), "a row of a table (loop_) has a value too many or too few"),
    (re.compile(r"unterminated 'string'"), "a quoted value has no closing quote"),
    (re.compile(r"unterminated text field"), "a text field opened with ';' is not closed"),
    (re.compile(r"duplicate block name: (\S+)"), "two data blocks are named {0}"),
    (re.compile(r"duplicate tag (\S+)"), "the tag {0} is given twice"),
    (re.compile(r"(_\S+) has no value"), "the tag {0} has no value"),
    (re.compile(r"expected block header"), "no data_ block starts the file"),
)


def _syntax_reason(exc: BaseException) -> str:
    """Where and how the text of a CIF breaks the syntax, from the parser's exception (never its words)."""
    text = " ".join(str(exc).split())
    m = re.search(r"^\S*?:(\d+)[: ]", text)
    where = f"line {m.group(1)}: " if m else ""
    for pattern, words in _SYNTAX:
        found = pattern.search(text)
        if found:
            return where + words.format(*found.groups())
    return where + "the text does not follow the CIF syntax"
